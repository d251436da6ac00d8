"""Writing curated records, and the lookups validation makes before it writes.

Species, reactions with their participants, measurement sets and their points
go in here; expressions go through :mod:`ratebank.store.expressions`, the one
write path for them (an edit of a stored expression is read here, locked, and
written there). Values are SI-molar. Reactions, participants, sets and points
take the driver's bulk path (:mod:`ratebank.store.bulk`): an import brings
them by the hundred thousand.

Nothing here imports numpy, so that the listing commands, which share their
service modules with the small imports, start fast.
"""

from __future__ import annotations

import statistics
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple

from sqlalchemy import insert, select, update
from sqlalchemy.orm import Session
from sqlalchemy.orm.exc import StaleDataError

from ratebank.errors import NotFoundError, StaleEditError
from ratebank.store.bulk import (
    SuspendedIndex,
    db_timestamp,
    fetch_in,
    insert_returning_ids,
    insert_rows,
)
from ratebank.store.engine import concurrent_edit_message
from ratebank.store.expressions import update_expression
from ratebank.store.models import Expression, MeasurementSet, Point, Reaction, Species

#: Rows per ``IN (...)`` list of the ORM lookups.
_LOOKUP_CHUNK = 500


def _chunks(values: Sequence[Any], size: int = _LOOKUP_CHUNK) -> Iterable[Sequence[Any]]:
    for start in range(0, len(values), size):
        yield values[start : start + size]


# --------------------------------------------------------------------------- species


@dataclass(frozen=True)
class NewSpecies:
    """A validated species to add (SI units: kg/mol, m, K, Pa, m3/mol)."""

    name: str
    formula: str
    molar_mass: float
    #: ``given`` or ``formula`` (computed from IUPAC atomic weights)
    molar_mass_source: str
    diameter: float | None = None
    diameter_kind: str | None = None
    well_depth: float | None = None
    critical_temperature: float | None = None
    critical_pressure: float | None = None
    acentric_factor: float | None = None
    boiling_volume: float | None = None
    source: str | None = None
    dipole_moment: float | None = None
    boiling_temperature: float | None = None
    polarizability: float | None = None
    ionization_energy: float | None = None


def existing_species_names(session: Session, names: Iterable[str] | None = None) -> set[str]:
    """Those of ``names`` that are stored species (every stored name when ``names`` is None)."""
    query = select(Species.name)
    if names is None:
        return set(session.scalars(query))
    found: set[str] = set()
    for chunk in _chunks(list(set(names))):
        found.update(session.scalars(query.where(Species.name.in_(chunk))))
    return found


def species_formulas(session: Session) -> dict[str, str]:
    """The formula of every stored species, by name."""
    return dict(session.execute(select(Species.name, Species.formula)).all())


def insert_species(session: Session, species: Sequence[NewSpecies]) -> None:
    """Add species; a diameter or well depth given here is marked as ``given``."""
    if not species:
        return
    session.execute(
        insert(Species),
        [
            {
                "name": s.name,
                "formula": s.formula,
                "molar_mass": s.molar_mass,
                "molar_mass_source": s.molar_mass_source,
                "diameter": s.diameter,
                "diameter_kind": s.diameter_kind,
                "diameter_method": "given" if s.diameter is not None else None,
                "well_depth": s.well_depth,
                "well_depth_method": "given" if s.well_depth is not None else None,
                "critical_temperature": s.critical_temperature,
                "critical_pressure": s.critical_pressure,
                "acentric_factor": s.acentric_factor,
                "boiling_volume": s.boiling_volume,
                "source": s.source,
                "dipole_moment": s.dipole_moment,
                "boiling_temperature": s.boiling_temperature,
                "polarizability": s.polarizability,
                "ionization_energy": s.ionization_energy,
            }
            for s in species
        ],
    )


# --------------------------------------------------------------------------- reactions


@dataclass(frozen=True)
class NewReaction:
    """A validated reaction to add: its canonical equation and participants by species name."""

    key: str
    equation: str
    order: int
    third_body: bool
    reactant_counts: Mapping[str, int] = field(default_factory=dict)
    product_counts: Mapping[str, int] = field(default_factory=dict)
    reaction_class: str | None = None
    notes: str | None = None
    #: "detailed-balance", or None when irreversible as written
    reverse: str | None = None


class ReactionKeyRow(NamedTuple):
    """What validation needs to know of a stored reaction."""

    id: int
    key: str
    equation: str
    order: int
    third_body: bool


def reaction_keys(session: Session) -> set[str]:
    """Every stored reaction key."""
    return set(session.scalars(select(Reaction.key)))


def reaction_equations(session: Session) -> dict[str, str]:
    """The key of every stored reaction, by canonical equation."""
    return dict(session.execute(select(Reaction.equation, Reaction.key)).all())


def reactions_by_key_or_equation(
    session: Session, *, keys: Sequence[str] = (), equations: Sequence[str] = ()
) -> list[ReactionKeyRow]:
    """The stored reactions whose key is one of ``keys`` or whose canonical equation is one of
    ``equations``, in one batched query each (a large import asks for a hundred thousand)."""
    found: list[ReactionKeyRow] = []
    for column, values in (("key", list(keys)), ("equation", list(equations))):
        found.extend(
            ReactionKeyRow(*row)
            for row in fetch_in(
                session,
                "SELECT id, key, equation, reaction_order, third_body FROM reaction "
                f"WHERE {column} IN ({{marks}})",
                values,
            )
        )
    return found


def reaction_rows_by_key(session: Session, keys: Sequence[str]) -> list[tuple[Any, ...]]:
    """(id, key, order, third body) of the stored reactions whose key is one of ``keys``, as
    the driver's plain rows: one query for up to 30,000 keys (a chunk of a measurements
    file names about ten thousand), no object per reaction."""
    return fetch_in(
        session,
        "SELECT id, key, reaction_order, third_body FROM reaction WHERE key IN ({marks})",
        keys,
        batch=30_000,
    )


def _reaction_ids(session: Session, keys: Sequence[str]) -> dict[str, int]:
    ids: dict[str, int] = {}
    for chunk in _chunks(keys):
        ids.update(
            session.execute(select(Reaction.key, Reaction.id).where(Reaction.key.in_(chunk))).all()
        )
    return ids


def insert_reactions(session: Session, reactions: Sequence[NewReaction]) -> None:
    """Add reactions and their participants (every species named must be stored)."""
    if not reactions:
        return
    species_ids = dict(session.execute(select(Species.name, Species.id)).all())
    now = db_timestamp(session)
    insert_rows(
        session,
        "reaction",
        (
            "key",
            "equation",
            "reaction_order",
            "third_body",
            "reaction_class",
            "notes",
            "created_at",
            "reverse",
        ),
        [
            (r.key, r.equation, r.order, r.third_body, r.reaction_class, r.notes, now, r.reverse)
            for r in reactions
        ],
    )
    ids = _reaction_ids(session, [r.key for r in reactions])
    participants = [
        (ids[r.key], species_ids[name], role, coefficient)
        for r in reactions
        for role, counts in (("reactant", r.reactant_counts), ("product", r.product_counts))
        for name, coefficient in counts.items()
    ]
    if participants:
        insert_rows(
            session,
            "participant",
            ("reaction_id", "species_id", "role", "coefficient"),
            participants,
        )


# --------------------------------------------------------------------------- measurements


class NewSet(NamedTuple):
    """A validated measurement set to add (its points follow with :func:`insert_points`)."""

    name: str
    reaction_id: int
    reference: str | None
    method: str | None
    bath_gas: str | None
    #: the unit the points were given in, kept for the record
    k_units: str
    #: one standard deviation of the set's scale, a fraction of k
    systematic_uncertainty: float | None = None


#: The point columns :func:`insert_points` writes; ``set_id``, ``temperature`` and
#: ``rate_constant`` are always given.
POINT_COLUMNS = ("set_id", "temperature", "rate_constant", "relative_uncertainty", "pressure")


def measurement_set_names(session: Session) -> set[str]:
    """The name of every stored measurement set."""
    return set(session.scalars(select(MeasurementSet.name)))


def insert_sets(session: Session, sets: Sequence[NewSet], *, source: str) -> list[int]:
    """Add measurement sets read from ``source``; return their new ids, in order."""
    if not sets:
        return []
    now = db_timestamp(session)
    return insert_returning_ids(
        session,
        "measurement_set",
        (
            "name",
            "reaction_id",
            "reference",
            "method",
            "bath_gas",
            "original_k_units",
            "systematic_uncertainty",
            "source_file",
            "created_at",
        ),
        [(*s, source, now) for s in sets],
    )


def insert_points(session: Session, columns: Mapping[str, Sequence[object]]) -> None:
    """Add points given column-wise (SI units; None where a value is not given).

    A column left out is stored as NULL: binding a million NULLs would cost a
    fifth of the insert.
    """
    unknown = set(columns) - set(POINT_COLUMNS)
    if unknown:
        raise ValueError(f"unknown point columns {sorted(unknown)}")
    names = [name for name in POINT_COLUMNS if name in columns]
    insert_rows(session, "point", names, zip(*(columns[n] for n in names), strict=True))


def suspend_point_index(session: Session, expected_rows: int) -> SuspendedIndex:
    """The point index, dropped for the rest of the transaction if an import of
    ``expected_rows`` points is large enough to rebuild it instead (call ``restore()`` before
    committing; a rollback restores it anyway)."""
    index = SuspendedIndex(session, "point", "ix_point_set_id")
    if SuspendedIndex.worth_it(session, "point", expected_rows):
        index.drop()
    return index


# --------------------------------------------------------------------------- expression edits


@dataclass(frozen=True)
class EditableExpression:
    """A stored expression as an edit reads it (SI units), with its reaction's key and order."""

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
    #: g [K] of f(T) = f(298 K) exp|g (1/T - 1/298 K)|
    uncertainty_g: float | None
    reference: str | None
    provenance: dict[str, Any]
    version: int
    created_at: Any
    created_by: str | None
    updated_at: Any
    updated_by: str | None
    #: the loaded row that :func:`ratebank.store.expressions.update_expression` writes
    _loaded: Expression = field(repr=False, compare=False)

    @property
    def A_order(self) -> int:
        """The order of A's unit: the reaction's, or one fewer for the high-pressure limit of
        a falloff or activated expression."""
        limits = self._loaded.form in ("falloff", "activated")
        return self.reaction_order - 1 if limits else self.reaction_order


def _full_provenance(expression: Expression) -> dict[str, Any]:
    """The loaded expression's whole provenance (its run's part completed by its own)."""
    from sqlalchemy.orm import object_session

    from ratebank.store.runs import full_provenance

    session = object_session(expression)
    if expression.run_id is None or session is None:
        return dict(expression.provenance or {})
    return full_provenance(session, expression.provenance, expression.run_id)


def _editable(expression: Expression, reaction: Reaction) -> EditableExpression:
    return EditableExpression(
        id=expression.id,
        reaction_key=reaction.key,
        reaction_order=reaction.reaction_order,
        origin=expression.origin,
        A=expression.A,
        n=expression.n,
        Ea=expression.Ea,
        T_min=expression.T_min,
        T_max=expression.T_max,
        uncertainty_factor=expression.uncertainty_factor,
        uncertainty_g=expression.uncertainty_g,
        reference=expression.reference,
        provenance=_full_provenance(expression),
        version=expression.version,
        created_at=expression.created_at,
        created_by=expression.created_by,
        updated_at=expression.updated_at,
        updated_by=expression.updated_by,
        _loaded=expression,
    )


def _load_expression(
    session: Session, expression_id: int, *, lock: bool
) -> EditableExpression | None:
    query = select(Expression).where(Expression.id == expression_id)
    if lock:
        query = query.with_for_update()
    expression = session.scalar(query.execution_options(populate_existing=True))
    if expression is None:
        return None
    reaction = session.get(Reaction, expression.reaction_id)
    assert reaction is not None  # a foreign key
    return _editable(expression, reaction)


def expression_for_edit(session: Session, expression_id: int) -> EditableExpression:
    """The expression, read afresh and locked (``FOR UPDATE`` where the database has it)."""
    found = _load_expression(session, expression_id, lock=True)
    if found is None:
        raise NotFoundError(f"no expression {expression_id} in the store")
    return found


def stale_edit_error(
    expression_id: int, version_read: int, current: EditableExpression | None
) -> StaleEditError:
    """The refusal of an edit of a version that is no longer the stored one, naming who changed
    it and when (or that it was removed)."""
    label = f"expression {expression_id}"
    if current is None:
        return StaleEditError(concurrent_edit_message(label, version_read, None, None, None))
    if current.version > version_read:
        return StaleEditError(
            concurrent_edit_message(
                label,
                version_read,
                current.version,
                current.updated_by or current.created_by,
                current.updated_at or current.created_at,
            )
        )
    if version_read > current.version:
        return StaleEditError(
            f"version {version_read} never existed; {label} is at version "
            f"{current.version}; nothing was written"
        )
    return StaleEditError(
        f"{label} is at version {current.version}, not {version_read}; nothing was written; "
        "read it again before changing it"
    )


def write_expression_edit(
    session: Session, expression: EditableExpression, changes: Mapping[str, Any]
) -> int:
    """Write ``changes`` (record names, SI units) through the expression write path; return
    the expression's new version.

    A row changed or removed by someone else between the read and this write
    (possible where ``FOR UPDATE`` is not honoured) rolls the session back and
    raises :class:`~ratebank.errors.StaleEditError` naming who and when.
    """
    try:
        update_expression(session, expression._loaded, changes)
    except StaleDataError:
        session.rollback()
        current = _load_expression(session, expression.id, lock=False)
        raise stale_edit_error(expression.id, expression.version, current) from None
    return expression._loaded.version


def fill_missing_uncertainties(session: Session, set_ids: Sequence[int]) -> dict[int, float]:
    """Give each point of these sets that states no uncertainty the median relative
    uncertainty of the set's other points; return the value used per set."""
    used: dict[int, float] = {}
    for set_id in set_ids:
        stated = sorted(
            session.scalars(
                select(Point.relative_uncertainty).where(
                    Point.set_id == set_id, Point.relative_uncertainty.is_not(None)
                )
            )
        )
        if not stated:
            continue
        median = statistics.median(stated)
        session.execute(
            update(Point)
            .where(Point.set_id == set_id, Point.relative_uncertainty.is_(None))
            .values(relative_uncertainty=median)
        )
        used[set_id] = median
    return used
