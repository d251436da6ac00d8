"""Reads and writes of an import that updates: the stored records a file's rows match, and
the changes written onto them.

Measurement sets, whose points are numpy columns, are in
:mod:`ratebank.store.set_updates` (a listing must not import numpy). An update
import (``update=True``) compares each row that matches a stored
record with that record, field by field in SI units, and writes only what
changed. The lookups here are batched (one query per few hundred names); the
writes change the matched rows in place, so their ids stay. Values are
SI-molar, as everywhere in the store.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from sqlalchemy import delete, select, update
from sqlalchemy.orm import Session

from ratebank.errors import StaleEditError
from ratebank.store.bulk import insert_rows
from ratebank.store.engine import concurrent_edit_message
from ratebank.store.expressions import _TERM_COLUMNS, ExpressionRecord, _form_columns
from ratebank.store.models import (
    Expression,
    ExpressionTerm,
    MeasurementSet,
    Participant,
    Reaction,
    Species,
    ThirdBodyEfficiency,
    utc_now,
)
from ratebank.store.runs import RunCache

#: Rows per ``IN (...)`` list.
_CHUNK = 500

#: The species columns an import states, as stored (SI units).
SPECIES_FIELDS = (
    "formula",
    "molar_mass",
    "molar_mass_source",
    "diameter",
    "diameter_kind",
    "diameter_method",
    "well_depth",
    "well_depth_method",
    "critical_temperature",
    "critical_pressure",
    "acentric_factor",
    "boiling_volume",
    "boiling_temperature",
    "dipole_moment",
    "polarizability",
    "ionization_energy",
    "source",
)


def _chunks(values: Sequence[Any]) -> Iterable[Sequence[Any]]:
    for start in range(0, len(values), _CHUNK):
        yield values[start : start + _CHUNK]


# --------------------------------------------------------------------------- species


def stored_species(session: Session, names: Iterable[str]) -> dict[str, dict[str, Any]]:
    """The stored fields (:data:`SPECIES_FIELDS`) of those of ``names`` that are stored."""
    columns = [getattr(Species, name) for name in SPECIES_FIELDS]
    found: dict[str, dict[str, Any]] = {}
    for chunk in _chunks(sorted(set(names))):
        for row in session.execute(select(Species.name, *columns).where(Species.name.in_(chunk))):
            found[row[0]] = dict(zip(SPECIES_FIELDS, row[1:], strict=True))
    return found


def update_species(session: Session, name: str, values: Mapping[str, Any]) -> None:
    """Write ``values`` (:data:`SPECIES_FIELDS`, SI units) onto the species ``name``."""
    unknown = set(values) - set(SPECIES_FIELDS)
    if unknown:
        raise ValueError(f"unknown species fields {sorted(unknown)}")
    # a change is a new version: an edit that read the old one is then refused
    session.execute(
        update(Species).where(Species.name == name).values(**values, version=Species.version + 1)
    )


# --------------------------------------------------------------------------- reactions


@dataclass(frozen=True)
class StoredReaction:
    """A stored reaction as an update compares it, and whether data refer to it."""

    id: int
    key: str
    equation: str
    reaction_class: str | None
    notes: str | None
    reverse: str | None
    #: measurement sets, expressions or efficiencies refer to it
    has_data: bool


def stored_reactions(session: Session, keys: Iterable[str]) -> dict[str, StoredReaction]:
    """The stored reactions among ``keys``, by key."""
    found: dict[str, StoredReaction] = {}
    for chunk in _chunks(sorted(set(keys))):
        rows = session.execute(
            select(
                Reaction.id,
                Reaction.key,
                Reaction.equation,
                Reaction.reaction_class,
                Reaction.notes,
                Reaction.reverse,
            ).where(Reaction.key.in_(chunk))
        ).all()
        used = _reactions_with_data(session, [row[0] for row in rows])
        for row in rows:
            found[row[1]] = StoredReaction(*row, has_data=row[0] in used)
    return found


def _reactions_with_data(session: Session, ids: Sequence[int]) -> set[int]:
    used: set[int] = set()
    if not ids:
        return used
    for column in (
        MeasurementSet.reaction_id,
        Expression.reaction_id,
        ThirdBodyEfficiency.reaction_id,
    ):
        used.update(session.scalars(select(column).where(column.in_(list(ids))).distinct()))
    return used


def update_reaction(
    session: Session,
    reaction_id: int,
    values: Mapping[str, Any],
    participants: Sequence[tuple[str, str, int]] | None = None,
) -> None:
    """Write ``values`` (``equation``, ``reaction_order``, ``third_body``,
    ``reaction_class``, ``notes``, ``reverse``) onto a reaction; ``participants`` (species
    name, role, coefficient) replace its participants when given (a new equation)."""
    session.execute(
        update(Reaction)
        .where(Reaction.id == reaction_id)
        .values(**values, version=Reaction.version + 1)
    )
    if participants is None:
        return
    species_ids = dict(
        session.execute(
            select(Species.name, Species.id).where(
                Species.name.in_(sorted({name for name, _, _ in participants}))
            )
        ).all()
    )
    session.execute(delete(Participant).where(Participant.reaction_id == reaction_id))
    insert_rows(
        session,
        "participant",
        ("reaction_id", "species_id", "role", "coefficient"),
        [(reaction_id, species_ids[name], role, count) for name, role, count in participants],
    )


# --------------------------------------------------------------------------- expressions

#: The expression columns an update compares, besides the further terms of a sum.
EXPRESSION_FIELDS = (
    "A",
    "n",
    "Ea",
    "T_min",
    "T_max",
    "uncertainty_factor",
    "uncertainty_g",
    "form",
    "A_low",
    "n_low",
    "Ea_low",
    "broadening",
    "Fc",
    "N",
    "troe_alpha",
    "troe_T3",
    "troe_T1",
    "troe_T2",
)

#: A further term of a sum as compared: (A, n, Ea, T_min, T_max).
TermValues = tuple[float | None, ...]


@dataclass(frozen=True)
class StoredExpression:
    """A stored literature or manual expression as an update compares it (SI units)."""

    id: int
    reaction_id: int
    reference: str | None
    origin: str
    version: int
    values: dict[str, Any]
    terms: tuple[TermValues, ...]
    provenance: dict[str, Any]


def record_values(record: ExpressionRecord) -> tuple[dict[str, Any], tuple[TermValues, ...]]:
    """The columns (:data:`EXPRESSION_FIELDS`) and further terms ``record`` would store."""
    plain = (
        record.A,
        record.n,
        record.Ea,
        record.T_min,
        record.T_max,
        record.uncertainty_factor,
        record.uncertainty_g,
    )
    values = dict(zip(EXPRESSION_FIELDS, (*plain, *_form_columns(record)), strict=True))
    terms = tuple((t.A, t.n, t.Ea, t.T_min, t.T_max) for t in record.terms)
    return values, terms


def stored_expressions(
    session: Session, reaction_ids: Iterable[int], origins: Sequence[str]
) -> list[StoredExpression]:
    """The stored expressions of these reactions and origins, with their further terms."""
    found: list[StoredExpression] = []
    columns = [getattr(Expression, name) for name in EXPRESSION_FIELDS]
    provenances = RunCache(session)
    for chunk in _chunks(sorted(set(reaction_ids))):
        rows = session.execute(
            select(
                Expression.id,
                Expression.reaction_id,
                Expression.reference,
                Expression.origin,
                Expression.version,
                Expression.provenance,
                Expression.run_id,
                *columns,
            ).where(Expression.reaction_id.in_(chunk), Expression.origin.in_(list(origins)))
        ).all()
        terms = _terms_of(session, [row[0] for row in rows])
        provenances.load(row[6] for row in rows)
        for row in rows:
            values = dict(zip(EXPRESSION_FIELDS, row[7:], strict=True))
            provenance = provenances.full(row[5], row[6])
            found.append(StoredExpression(*row[:5], values, terms.get(row[0], ()), provenance))
    return found


def _terms_of(session: Session, ids: Sequence[int]) -> dict[int, tuple[TermValues, ...]]:
    terms: dict[int, list[TermValues]] = {}
    if not ids:
        return {}
    query = (
        select(
            ExpressionTerm.expression_id,
            ExpressionTerm.A,
            ExpressionTerm.n,
            ExpressionTerm.Ea,
            ExpressionTerm.T_min,
            ExpressionTerm.T_max,
        )
        .where(ExpressionTerm.expression_id.in_(list(ids)))
        .order_by(ExpressionTerm.expression_id, ExpressionTerm.term)
    )
    for expression_id, *values in session.execute(query):
        terms.setdefault(expression_id, []).append(tuple(values))
    return {key: tuple(value) for key, value in terms.items()}


def update_expression_numbers(
    session: Session,
    expression_id: int,
    values: Mapping[str, Any],
    terms: Sequence[TermValues] | None,
    provenance: Mapping[str, Any],
    *,
    version_read: int,
) -> int:
    """Write changed numbers (:data:`EXPRESSION_FIELDS`) and, when given, the further terms of
    a sum onto a stored expression; its version rises by one (the optimistic lock). Return
    the new version. An expression changed or removed since ``version_read`` was read is
    refused (StaleEditError); the caller's transaction then writes nothing."""
    expression = session.get(
        Expression, expression_id, with_for_update=True, populate_existing=True
    )
    if expression is None or expression.version != version_read:
        raise StaleEditError(
            concurrent_edit_message(
                f"expression {expression_id}",
                version_read,
                expression.version if expression else None,
                (expression.updated_by or expression.created_by) if expression else None,
                (expression.updated_at or expression.created_at) if expression else None,
            )
        )
    for name, value in values.items():
        if name not in EXPRESSION_FIELDS:
            raise ValueError(f"unknown expression field {name!r}")
        setattr(expression, name, value)
    expression.provenance = dict(provenance)
    expression.run_id = None  # the provenance written is whole
    expression.updated_at = utc_now()
    expression.updated_by = session.info.get("author")
    if terms is not None:
        session.execute(delete(ExpressionTerm).where(ExpressionTerm.expression_id == expression_id))
        if terms:
            insert_rows(
                session,
                "expression_term",
                _TERM_COLUMNS,
                [(expression_id, number, *t) for number, t in enumerate(terms, start=2)],
            )
    session.flush()
    return expression.version


# --------------------------------------------------------------------------- efficiencies


def stated_efficiencies(
    session: Session, reaction_ids: Iterable[int]
) -> dict[tuple[int, int], tuple[float, str | None]]:
    """{(reaction id, species id): (efficiency, source)} stored for these reactions."""
    found: dict[tuple[int, int], tuple[float, str | None]] = {}
    for chunk in _chunks(sorted(set(reaction_ids))):
        query = select(
            ThirdBodyEfficiency.reaction_id,
            ThirdBodyEfficiency.species_id,
            ThirdBodyEfficiency.efficiency,
            ThirdBodyEfficiency.source,
        ).where(ThirdBodyEfficiency.reaction_id.in_(chunk))
        for reaction_id, species_id, efficiency, source in session.execute(query):
            found[(reaction_id, species_id)] = (efficiency, source)
    return found
