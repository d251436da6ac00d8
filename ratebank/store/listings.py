"""The listing and detail reads of the curation commands, as typed rows.

Species, measurement sets, expressions and the history; and the detail of
one species or one reaction. Values are SI-molar, as stored. The reactions
listing and the store's counts, which must start fast, are in
:mod:`ratebank.store.quick_listings`.

A listing command must start fast, so nothing here imports numpy. A
reaction or species named by a listing is found with
:func:`ratebank.store.queries.find_reaction` and ``find_species``.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ratebank.store.efficiencies import efficiencies
from ratebank.store.in_use import expression_in_use, set_in_use, species_in_use
from ratebank.store.models import (
    AuditEntry,
    Expression,
    ExpressionTerm,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
)
from ratebank.store.queries import FORM_COLUMNS, find_reaction, find_species
from ratebank.store.runs import RunCache

# --------------------------------------------------------------------------- rows


@dataclass(frozen=True)
class SpeciesSummary:
    name: str
    formula: str
    molar_mass: float  # kg/mol
    molar_mass_source: str
    diameter: float | None  # m
    diameter_kind: str | None
    diameter_method: str | None
    well_depth: float | None  # K
    critical_temperature: float | None  # K
    critical_pressure: float | None  # Pa
    acentric_factor: float | None
    boiling_volume: float | None  # m3/mol
    source: str | None
    dipole_moment: float | None  # C m
    boiling_temperature: float | None  # K
    polarizability: float | None  # m3
    ionization_energy: float | None  # J/mol
    #: why it was withdrawn; None while it is in use
    withdrawn_reason: str | None = None

    @property
    def diameter_is_estimated(self) -> bool:
        return self.diameter is not None and self.diameter_method not in (None, "given")


_SPECIES_FIELDS = tuple(SpeciesSummary.__dataclass_fields__)
#: The model's columns of the same names.
_SPECIES_COLUMNS = tuple(getattr(Species, name) for name in _SPECIES_FIELDS)


@dataclass(frozen=True)
class SpeciesDetail:
    species: SpeciesSummary
    reactions: list[tuple[str, str, str]]  # (key, equation, role)
    #: for a species without a diameter: the estimate collision theory would use
    #: (a ``science.diameters.DiameterEstimate``, not stored, filled in by
    #: ``services.partners.species_detail``), else None
    estimated_diameter: Any = None


@dataclass(frozen=True)
class ParticipantInfo:
    role: str
    coefficient: int
    species: SpeciesSummary


@dataclass(frozen=True)
class PressurePoints:
    """The points of one set at one pressure."""

    pressure: float | None  # Pa; None for points without a stated pressure
    points: int
    T_min: float
    T_max: float


@dataclass(frozen=True)
class SetSummary:
    id: int
    name: str
    reaction_key: str
    reference: str | None
    method: str | None
    bath_gas: str | None
    k_units: str
    points: int
    T_min: float | None
    T_max: float | None
    #: why it (or its reaction) was withdrawn; None while it is in use
    withdrawn: str | None = None
    #: the set's points by pressure, lowest first (no pressure last)
    pressures: tuple[PressurePoints, ...] = ()


@dataclass(frozen=True)
class ExpressionSummary:
    id: int
    reaction_key: str
    reaction_order: int
    origin: str
    A: float | None
    n: float
    Ea: float
    T_min: float | None
    T_max: float | None
    uncertainty_factor: float | None
    uncertainty_g: float | None
    reference: str | None
    recommended: bool
    created_at: Any
    created_by: str | None
    provenance: dict[str, Any]
    version: int = 1
    #: the rate-law form (the reaction's plain form when none is stored)
    form: str = "arrhenius"
    #: k0 (A [SI k unit of the reaction's order times K^-n], n, Ea [J mol-1]) of falloff and
    #: activated, whose A, n, Ea are k_inf
    low: tuple[float, float, float] | None = None
    #: the broadening: {"kind": ..., "Fc": ..., "N": ..., "alpha": ..., "T3": ..., ...}
    broadening: dict[str, Any] | None = None
    #: further terms of a sum: (term, A, n, Ea, T_min, T_max)
    terms: tuple[tuple[Any, ...], ...] = ()
    #: why it (or its reaction) was withdrawn; None while it is in use
    withdrawn: str | None = None


@dataclass(frozen=True)
class HistoryEntry:
    at: Any
    author: str
    action: str
    target: str | None
    detail: dict[str, Any]


@dataclass(frozen=True)
class ReactionDetail:
    key: str
    equation: str
    order: int
    third_body: bool
    reaction_class: str | None
    notes: str | None
    steric_factor: float | None
    steric_source: str | None
    participants: list[ParticipantInfo]
    sets: list[SetSummary]
    expressions: list[ExpressionSummary]
    history: list[HistoryEntry]
    #: stated third-body efficiencies (species, efficiency, source); others count 1
    efficiencies: list[tuple[str, float, str | None]] = field(default_factory=list)


# --------------------------------------------------------------------------- species


def species_summaries(
    session: Session,
    *,
    missing_diameter: bool | None = None,
    name_contains: str | None = None,
    include_withdrawn: bool = False,
) -> list[SpeciesSummary]:
    """Species in use by name (withdrawn ones too with ``include_withdrawn``): those without
    (True) or with (False) a diameter, or whose name contains ``name_contains`` (literally)."""
    query = select(*_SPECIES_COLUMNS).order_by(Species.name)
    if not include_withdrawn:
        query = query.where(species_in_use())
    if missing_diameter is True:
        query = query.where(Species.diameter.is_(None))
    elif missing_diameter is False:
        query = query.where(Species.diameter.is_not(None))
    if name_contains:
        query = query.where(Species.name.contains(name_contains, autoescape=True))
    return [SpeciesSummary(*row) for row in session.execute(query)]


def species_detail(session: Session, name: str) -> SpeciesDetail:
    """One species and the reactions it takes part in (NotFoundError if it is not stored)."""
    species = find_species(session, name)
    reactions = session.execute(
        select(Reaction.key, Reaction.equation, Participant.role)
        .join(Participant, Participant.reaction_id == Reaction.id)
        .where(Participant.species_id == species.id)
        .order_by(Reaction.key)
    ).all()
    summary = SpeciesSummary(
        *session.execute(select(*_SPECIES_COLUMNS).where(Species.id == species.id)).one()
    )
    return SpeciesDetail(summary, [tuple(r) for r in reactions])


# --------------------------------------------------------------------------- reactions


def reaction_detail(
    session: Session, key_or_equation: str, *, history_limit: int = 10
) -> ReactionDetail:
    """One reaction (by key or any spelling of its equation) with its participants, sets,
    expressions and newest history entries."""
    reaction = find_reaction(session, key_or_equation)
    participants = session.execute(
        select(Participant.role, Participant.coefficient, *_SPECIES_COLUMNS)
        .join(Species, Species.id == Participant.species_id)
        .where(Participant.reaction_id == reaction.id)
        .order_by(Participant.id)
    ).all()
    return ReactionDetail(
        key=reaction.key,
        equation=reaction.equation,
        order=reaction.order,
        third_body=reaction.third_body,
        reaction_class=reaction.reaction_class,
        notes=reaction.notes,
        steric_factor=reaction.steric_factor,
        steric_source=reaction.steric_source,
        participants=[
            ParticipantInfo(role, coefficient, SpeciesSummary(*species))
            for role, coefficient, *species in participants
        ],
        sets=_set_summaries(session, reaction.id),
        expressions=_expression_summaries(session, reaction.id, None),
        history=history(session, target=reaction.key, limit=history_limit),
        efficiencies=[
            (e.species, e.efficiency, e.source) for e in efficiencies(session, [reaction.id])
        ],
    )


# --------------------------------------------------------------------------- sets


def set_summaries(
    session: Session, *, reaction: str | None = None, include_withdrawn: bool = False
) -> list[SetSummary]:
    """Measurement sets in use (withdrawn ones too with ``include_withdrawn``) by reaction key
    and name, with their point counts and temperature ranges; only those of ``reaction`` (a
    key or equation) when given."""
    reaction_id = None if reaction is None else find_reaction(session, reaction).id
    return _set_summaries(session, reaction_id, include_withdrawn=include_withdrawn)


def _set_summaries(
    session: Session, reaction_id: int | None, *, include_withdrawn: bool = True
) -> list[SetSummary]:
    stats = (
        select(
            Point.set_id,
            func.count(Point.id).label("n"),
            func.min(Point.temperature).label("T_min"),
            func.max(Point.temperature).label("T_max"),
        )
        .where(Point.withdrawn_at.is_(None))
        .group_by(Point.set_id)
        .subquery()
    )
    query = (
        select(
            MeasurementSet.id,
            MeasurementSet.name,
            Reaction.key,
            MeasurementSet.reference,
            MeasurementSet.method,
            MeasurementSet.bath_gas,
            MeasurementSet.original_k_units,
            func.coalesce(stats.c.n, 0),
            stats.c.T_min,
            stats.c.T_max,
            func.coalesce(MeasurementSet.withdrawn_reason, Reaction.withdrawn_reason),
        )
        .join(Reaction, Reaction.id == MeasurementSet.reaction_id)
        .outerjoin(stats, stats.c.set_id == MeasurementSet.id)
        .order_by(Reaction.key, MeasurementSet.name)
    )
    if reaction_id is not None:
        query = query.where(MeasurementSet.reaction_id == reaction_id)
    if not include_withdrawn:
        query = query.where(set_in_use())
    by_pressure = _points_by_pressure(session, reaction_id)
    return [
        SetSummary(*row, pressures=tuple(by_pressure.get(row[0], ())))
        for row in session.execute(query).all()
    ]


def _points_by_pressure(session: Session, reaction_id: int | None) -> dict[int, list]:
    """{set id: [PressurePoints, ...]}, each set's points grouped by their pressure."""
    query = (
        select(
            Point.set_id,
            Point.pressure,
            func.count(Point.id),
            func.min(Point.temperature),
            func.max(Point.temperature),
        )
        .where(Point.withdrawn_at.is_(None))
        .group_by(Point.set_id, Point.pressure)
        .order_by(Point.set_id, Point.pressure.is_(None), Point.pressure)
    )
    if reaction_id is not None:
        query = query.join(MeasurementSet, MeasurementSet.id == Point.set_id).where(
            MeasurementSet.reaction_id == reaction_id
        )
    found: dict[int, list[PressurePoints]] = {}
    for set_id, pressure, n, T_min, T_max in session.execute(query).all():
        found.setdefault(set_id, []).append(PressurePoints(pressure, n, T_min, T_max))
    return found


def set_sources(session: Session, set_ids: list[int]) -> dict[int, tuple[str, str | None]]:
    """(name, reference) of each measurement set, by id."""
    if not set_ids:
        return {}
    query = select(MeasurementSet.id, MeasurementSet.name, MeasurementSet.reference).where(
        MeasurementSet.id.in_(set_ids)
    )
    return {set_id: (name, reference) for set_id, name, reference in session.execute(query)}


# --------------------------------------------------------------------------- expressions

_EXPRESSION_COLUMNS = (
    Expression.id,
    Reaction.key,
    Reaction.reaction_order,
    Expression.origin,
    Expression.A,
    Expression.n,
    Expression.Ea,
    Expression.T_min,
    Expression.T_max,
    Expression.uncertainty_factor,
    Expression.uncertainty_g,
    Expression.reference,
    Expression.recommended,
    Expression.created_at,
    Expression.created_by,
    Expression.provenance,
    Expression.version,
    Reaction.third_body,
    *FORM_COLUMNS,
    func.coalesce(Expression.withdrawn_reason, Reaction.withdrawn_reason),
    Expression.run_id,
)
_BROADENING_FIELDS = ("Fc", "N", "alpha", "T3", "T1", "T2")


def expression_summaries(
    session: Session,
    *,
    reaction: str | None = None,
    origin: str | None = None,
    include_withdrawn: bool = False,
) -> list[ExpressionSummary]:
    """Expressions in use (withdrawn ones too with ``include_withdrawn``) by reaction key and
    id; only those of ``reaction`` (a key or equation) or of ``origin`` when given."""
    reaction_id = None if reaction is None else find_reaction(session, reaction).id
    return _expression_summaries(session, reaction_id, origin, include_withdrawn=include_withdrawn)


def _expression_summaries(
    session: Session, reaction_id: int | None, origin: str | None, *, include_withdrawn: bool = True
) -> list[ExpressionSummary]:
    query = (
        select(*_EXPRESSION_COLUMNS)
        .join(Reaction, Reaction.id == Expression.reaction_id)
        .order_by(Reaction.key, Expression.id)
    )
    if reaction_id is not None:
        query = query.where(Expression.reaction_id == reaction_id)
    if origin is not None:
        query = query.where(Expression.origin == origin)
    if not include_withdrawn:
        query = query.where(expression_in_use())
    rows = session.execute(query).all()
    terms = _sum_terms(session, [row[0] for row in rows if row[18] == "sum"])
    provenances = RunCache(session)
    provenances.load(row[-1] for row in rows)
    summaries = []
    for row in rows:
        head, (provenance, version, third_body, form, A_low, n_low, Ea_low, kind, *b) = (
            row[:15],
            row[15:-2],
        )
        broadening = None
        if kind is not None:
            given = dict(zip(_BROADENING_FIELDS, b, strict=True))
            broadening = {"kind": kind, **{k: v for k, v in given.items() if v is not None}}
        summaries.append(
            ExpressionSummary(
                *head,
                provenances.full(provenance, row[-1]),
                version,
                form=form or ("third-body" if third_body else "arrhenius"),
                low=None if A_low is None else (A_low, n_low or 0.0, Ea_low or 0.0),
                broadening=broadening,
                terms=tuple(terms.get(row[0], ())),
                withdrawn=row[-2],
            )
        )
    return summaries


def _sum_terms(session: Session, expression_ids: list[int]) -> dict[int, list[tuple[Any, ...]]]:
    if not expression_ids:
        return {}
    query = (
        select(
            ExpressionTerm.expression_id,
            ExpressionTerm.term,
            ExpressionTerm.A,
            ExpressionTerm.n,
            ExpressionTerm.Ea,
            ExpressionTerm.T_min,
            ExpressionTerm.T_max,
        )
        .where(ExpressionTerm.expression_id.in_(expression_ids))
        .order_by(ExpressionTerm.expression_id, ExpressionTerm.term)
    )
    found: dict[int, list[tuple[Any, ...]]] = {}
    for expression_id, *term in session.execute(query):
        found.setdefault(expression_id, []).append(tuple(term))
    return found


# --------------------------------------------------------------------------- history


def history(
    session: Session, *, limit: int = 50, target: str | None = None, author: str | None = None
) -> list[HistoryEntry]:
    """The newest audit entries first; only those about ``target`` or by ``author``."""
    query = (
        select(
            AuditEntry.at,
            AuditEntry.author,
            AuditEntry.action,
            AuditEntry.target,
            AuditEntry.detail,
        )
        .order_by(AuditEntry.id.desc())
        .limit(limit)
    )
    if target is not None:
        query = query.where(AuditEntry.target == target)
    if author is not None:
        query = query.where(AuditEntry.author == author)
    return [
        HistoryEntry(_aware(at), who, action, about, dict(detail or {}))
        for at, who, action, about, detail in session.execute(query)
    ]


def _aware(at: Any) -> Any:
    """A stored time with its time zone: UTC, which SQLite stores without saying so."""
    if isinstance(at, dt.datetime):
        return at.replace(tzinfo=dt.UTC) if at.tzinfo is None else at.astimezone(dt.UTC)
    return at
