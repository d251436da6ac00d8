"""Curation use cases: put species, reactions, measurements and expressions in; get them out.

Every function takes an open :class:`~sqlalchemy.orm.Session` (see
:func:`ratebank.services.store_access.open_store`) and works in its
transaction; the caller commits. Values in and out are SI-molar.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy import and_, exists, func, insert, select
from sqlalchemy.orm import Session

from ratebank.errors import ImportValidationError, NotFoundError
from ratebank.services import validate as v
from ratebank.services.progress import NoProgress, Progress, chunks
from ratebank.store import audit
from ratebank.store.bulk import (
    SuspendedIndex,
    db_timestamp,
    fetch_in,
    insert_returning_ids,
    insert_rows,
)
from ratebank.store.models import (
    AuditEntry,
    Expression,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
)

#: Reaction status words used by listings and filters, in order of precedence.
STATUSES = ("measured", "complete", "ea-only", "nothing")
#: Points are written in chunks of this many rows (progress is reported per chunk).
POINT_CHUNK = 100_000

STATUS_HELP = {
    "measured": "has measured k(T) sets",
    "complete": "has a complete expression (A, n, Ea) but no measurements",
    "ea-only": "has only an activation energy (A still to be estimated)",
    "nothing": "has neither measurements nor an expression",
}

# --------------------------------------------------------------------------- lookups


def existing_species_names(session: Session, names: Iterable[str] | None = None) -> set[str]:
    query = select(Species.name)
    if names is not None:
        wanted = list(set(names))
        found: set[str] = set()
        for start in range(0, len(wanted), 500):
            chunk = wanted[start : start + 500]
            found.update(session.scalars(query.where(Species.name.in_(chunk))))
        return found
    return set(session.scalars(query))


def species_formulas(session: Session) -> dict[str, dict[str, int]]:
    """Element counts of every stored species, by name."""
    from ratebank.science.formula import parse_formula

    return {
        name: parse_formula(formula)
        for name, formula in session.execute(select(Species.name, Species.formula))
    }


def find_reaction(session: Session, key_or_equation: str) -> Reaction:
    """The reaction with this key, or whose equation is any spelling of this one."""
    reaction = session.scalar(select(Reaction).where(Reaction.key == key_or_equation))
    if reaction is not None:
        return reaction
    if "->" in key_or_equation or "→" in key_or_equation:
        from ratebank.science.equation import parse_equation

        canonical = parse_equation(key_or_equation).canonical
        reaction = session.scalar(select(Reaction).where(Reaction.equation == canonical))
        if reaction is not None:
            return reaction
        raise NotFoundError(f"no reaction {canonical!r} in the store")
    raise NotFoundError(
        f"no reaction with key {key_or_equation!r} in the store (see `ratebank reactions list`)"
    )


def find_species(session: Session, name: str) -> Species:
    species = session.scalar(select(Species).where(Species.name == name))
    if species is None:
        raise NotFoundError(f"no species {name!r} in the store (see `ratebank species list`)")
    return species


# --------------------------------------------------------------------------- writes


@dataclass(frozen=True)
class ImportSummary:
    """What an import did (or, with ``dry_run``, would do)."""

    kind: str
    source: str
    rows: int
    added: int
    dry_run: bool
    details: dict[str, int] = field(default_factory=dict)


def _raise_problems(source: str, problems: v.Problems) -> None:
    if problems:
        raise ImportValidationError(
            source, [p.render(source) for p in problems.sorted()], total=problems.total
        )


def import_species(
    session: Session,
    rows: list[tuple[int | None, Mapping[str, str | None]]],
    *,
    source: str,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add species rows (README column names); all or nothing."""
    progress = progress or NoProgress()
    progress.start("validating species", len(rows))
    problems = v.Problems()
    names = [v.cell(row, "name") for _, row in rows]
    existing = existing_species_names(session, [n for n in names if n])
    records = v.validate_species(rows, existing, problems)
    progress.advance(len(rows))
    _raise_problems(source, problems)
    if not dry_run and records:
        session.execute(
            insert(Species),
            [
                {
                    "name": r.name,
                    "formula": r.formula,
                    "molar_mass": r.molar_mass,
                    "molar_mass_source": r.molar_mass_source,
                    "diameter": r.diameter,
                    "diameter_kind": r.diameter_kind,
                    "diameter_method": "given" if r.diameter is not None else None,
                    "well_depth": r.well_depth,
                    "well_depth_method": "given" if r.well_depth is not None else None,
                    "critical_temperature": r.critical_temperature,
                    "critical_pressure": r.critical_pressure,
                    "acentric_factor": r.acentric_factor,
                    "boiling_volume": r.boiling_volume,
                    "source": r.source,
                }
                for r in records
            ],
        )
        audit.record(
            session, "species.add", source, count=len(records), names=[r.name for r in records[:20]]
        )
    return ImportSummary("species", source, len(rows), len(records), dry_run)


def import_reactions(
    session: Session,
    rows: list[tuple[int | None, Mapping[str, str | None]]],
    *,
    source: str,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add reactions (parsed, balanced, canonical); all or nothing."""
    progress = progress or NoProgress()
    progress.start("validating reactions", len(rows))
    problems = v.Problems()
    formulas = species_formulas(session)
    keys = set(session.scalars(select(Reaction.key)))
    equations = dict(session.execute(select(Reaction.equation, Reaction.key)).all())
    records = v.validate_reactions(rows, formulas, keys, equations, problems)
    progress.advance(len(rows))
    _raise_problems(source, problems)
    if not dry_run and records:
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
            ),
            [
                (r.key, r.equation, r.order, r.third_body, r.reaction_class, r.notes, now)
                for r in records
            ],
        )
        ids_by_key: dict[str, int] = {}
        keys = [r.key for r in records]
        for start, stop in chunks(len(keys), 500):
            ids_by_key.update(
                session.execute(
                    select(Reaction.key, Reaction.id).where(Reaction.key.in_(keys[start:stop]))
                ).all()
            )
        participants = []
        for record in records:
            reaction_id = ids_by_key[record.key]
            for role, counts in (
                ("reactant", record.reactant_counts),
                ("product", record.product_counts),
            ):
                for name, coefficient in counts.items():
                    participants.append((reaction_id, species_ids[name], role, coefficient))
        if participants:
            insert_rows(
                session,
                "participant",
                ("reaction_id", "species_id", "role", "coefficient"),
                participants,
            )
        audit.record(
            session, "reactions.add", source, count=len(records), keys=[r.key for r in records[:20]]
        )
    return ImportSummary("reactions", source, len(rows), len(records), dry_run)


class LazyReactionResolver(v.ReactionResolver):
    """Resolves reaction cells with queries for just the keys and equations asked for."""

    def __init__(self, session: Session):
        super().__init__({}, {})
        self.session = session

    def prefetch(self, texts: Iterable[str]) -> None:
        wanted_keys = [t for t in texts if t and t not in self.by_key and t not in self._cache]
        equations: dict[str, str] = {}
        for text in wanted_keys:
            if "->" in text or "→" in text:
                from ratebank.science.equation import parse_equation

                try:
                    equations[text] = parse_equation(text).canonical
                except Exception:  # reported when resolved
                    continue
        # plain rows through the driver: a big import asks for a hundred thousand keys
        keys = [t for t in wanted_keys if t not in equations]
        canonical = [c for c in set(equations.values()) if c not in self.by_equation]
        for column, values in (("key", keys), ("equation", canonical)):
            for rid, key, equation, order in fetch_in(
                self.session,
                "SELECT id, key, equation, reaction_order FROM reaction "
                f"WHERE {column} IN ({{marks}})",
                values,
            ):
                ref = v.ReactionRef(rid, key, order)
                self.by_key[key] = ref
                self.by_equation[equation] = ref

    def resolve(self, text: str) -> v.ReactionRef | str:
        if text not in self.by_key and text not in self._cache:
            self.prefetch([text])
        return super().resolve(text)


class MeasurementImporter:
    """Streams measured points into the store, chunk by chunk, in one transaction.

    Each chunk is validated completely. Chunks are written only while no
    problem has been found anywhere; once one is, the rest of the file is
    still validated (so every problem is reported) and :meth:`finish` raises,
    which rolls the whole transaction back: nothing is written.
    """

    def __init__(
        self,
        session: Session,
        *,
        source: str,
        default_k_units: str | None = None,
        dry_run: bool = False,
        progress: Progress | None = None,
        problems: v.Problems | None = None,
        expected_rows: int = 0,
    ):
        self.session = session
        self.source = source
        self.dry_run = dry_run
        self.progress = progress or NoProgress()
        self.problems = problems if problems is not None else v.Problems()
        self.rows = 0
        self.points = 0
        known = set(session.scalars(select(MeasurementSet.name)))
        self.validator = v.MeasurementValidator(
            LazyReactionResolver(session),
            lambda names: known.intersection(names),
            self.problems,
            default_k_units=default_k_units,
        )
        self._set_ids: list[int] = []
        self._expected_rows = expected_rows
        self._point_index: SuspendedIndex | None = None
        # a savepoint makes the import all-or-nothing even inside a caller's larger transaction
        self._savepoint = session.begin_nested()
        self.progress.start("importing points", expected_rows)

    def add(self, columns: Mapping[str, Sequence[str]], lines: Sequence[int]) -> None:
        """Validate (and, while the input is clean, write) one chunk of rows."""
        chunk = self.validator.validate_chunk(columns, lines)
        self.rows += len(lines)
        if not self.problems and not self.dry_run:
            self._write(chunk)
        self.points += chunk.n_points
        self.progress.advance(len(lines))

    def _write(self, chunk: v.MeasurementChunk) -> None:
        import numpy as np

        session = self.session
        if chunk.new_sets:
            now = db_timestamp(session)
            set_ids = insert_returning_ids(
                session,
                "measurement_set",
                (
                    "name",
                    "reaction_id",
                    "reference",
                    "method",
                    "bath_gas",
                    "original_k_units",
                    "source_file",
                    "created_at",
                ),
                [
                    (
                        s.name,
                        s.reaction.id,
                        s.reference,
                        s.method,
                        s.bath_gas,
                        s.k_units,
                        self.source,
                        now,
                    )
                    for s in chunk.new_sets
                ],
            )
            for record, set_id in zip(chunk.new_sets, set_ids, strict=True):
                record.id = set_id
            self._set_ids.extend(set_ids)
        # chunks are written in order while the input is clean, so the ids line
        # up with the validator's sets
        point_set_ids = np.asarray(self._set_ids, dtype=np.int64)[chunk.set_index].tolist()

        columns = ["set_id", "temperature", "rate_constant"]
        values = [point_set_ids, chunk.temperature.tolist(), chunk.rate_constant.tolist()]
        for name, array in (
            ("relative_uncertainty", chunk.relative_uncertainty),
            ("pressure", chunk.pressure),
        ):
            missing = np.isnan(array)
            if missing.all():
                continue  # binding a million NULLs costs a fifth of the insert
            listed = array.tolist()
            columns.append(name)
            values.append([None if x != x else x for x in listed] if missing.any() else listed)
        if self._point_index is None:
            self._point_index = SuspendedIndex(session, "point", "ix_point_set_id")
            if SuspendedIndex.worth_it(session, "point", self._expected_rows):
                self._point_index.drop()
        insert_rows(session, "point", columns, zip(*values, strict=True))

    def finish(self) -> ImportSummary:
        if self.problems:
            self._savepoint.rollback()  # brings a suspended index back too
            _raise_problems(self.source, self.problems)
        if self._point_index is not None:
            self._point_index.restore()
        self._savepoint.commit()
        sets = len(self.validator.sets)
        if not self.dry_run and self.points:
            audit.record(self.session, "data.import", self.source, sets=sets, points=self.points)
        return ImportSummary(
            "measurements", self.source, self.rows, self.points, self.dry_run, {"sets": sets}
        )


def import_measurements(
    session: Session,
    columns: Mapping[str, Sequence[str]],
    lines: Sequence[int],
    *,
    source: str,
    default_k_units: str | None = None,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add measured points given column-wise; all or nothing.

    ``columns`` maps each measurement column of the README to its cell texts
    ("" when empty); ``lines`` gives each row's line in the source.
    """
    importer = MeasurementImporter(
        session,
        source=source,
        default_k_units=default_k_units,
        dry_run=dry_run,
        progress=progress,
        expected_rows=len(lines),
    )
    importer.add(columns, lines)
    return importer.finish()


def import_expressions(
    session: Session,
    rows: list[tuple[int | None, Mapping[str, str | None]]],
    *,
    source: str,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add literature or hand-entered expressions; all or nothing."""
    progress = progress or NoProgress()
    progress.start("validating expressions", len(rows))
    problems = v.Problems()
    records = v.validate_expressions(rows, LazyReactionResolver(session), problems)
    progress.advance(len(rows))
    _raise_problems(source, problems)
    if not dry_run and records:
        author = session.info.get("author")
        session.execute(
            insert(Expression),
            [
                {
                    "reaction_id": r.reaction.id,
                    "origin": r.origin,
                    "A": r.A,
                    "n": r.n,
                    "Ea": r.Ea,
                    "t_min": r.t_min,
                    "t_max": r.t_max,
                    "uncertainty_factor": r.uncertainty_factor,
                    "reference": r.reference,
                    "provenance": {
                        "source_file": source,
                        "line": r.line,
                        "given_units": r.given_units,
                    },
                    "recommended": False,
                    "created_by": author,
                }
                for r in records
            ],
        )
        audit.record(session, "expressions.import", source, count=len(records))
    complete = sum(1 for r in records if r.A is not None)
    return ImportSummary(
        "expressions",
        source,
        len(rows),
        len(records),
        dry_run,
        {"complete": complete, "activation_energy_only": len(records) - complete},
    )


def add_species(session: Session, **fields: str | None) -> ImportSummary:
    """Add one species; ``fields`` use the species CSV column names."""
    return import_species(session, [(None, fields)], source="command line")


def add_reaction(
    session: Session,
    key: str,
    equation: str,
    *,
    reaction_class: str | None = None,
    notes: str | None = None,
) -> ImportSummary:
    """Add one reaction, checked exactly as an imported one."""
    row = {"key": key, "equation": equation, "class": reaction_class, "notes": notes}
    return import_reactions(session, [(None, row)], source="command line")


# --------------------------------------------------------------------------- reads


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

    @property
    def diameter_is_estimated(self) -> bool:
        return self.diameter is not None and self.diameter_method not in (None, "given")


def _species_summary(s: Species) -> SpeciesSummary:
    return SpeciesSummary(
        name=s.name,
        formula=s.formula,
        molar_mass=s.molar_mass,
        molar_mass_source=s.molar_mass_source,
        diameter=s.diameter,
        diameter_kind=s.diameter_kind,
        diameter_method=s.diameter_method,
        well_depth=s.well_depth,
        critical_temperature=s.critical_temperature,
        critical_pressure=s.critical_pressure,
        acentric_factor=s.acentric_factor,
        boiling_volume=s.boiling_volume,
        source=s.source,
    )


def list_species(
    session: Session, *, missing_diameter: bool | None = None, name_contains: str | None = None
) -> list[SpeciesSummary]:
    query = select(Species).order_by(Species.name)
    if missing_diameter is True:
        query = query.where(Species.diameter.is_(None))
    elif missing_diameter is False:
        query = query.where(Species.diameter.is_not(None))
    if name_contains:
        query = query.where(Species.name.contains(name_contains, autoescape=True))
    return [_species_summary(s) for s in session.scalars(query)]


@dataclass(frozen=True)
class SpeciesDetail:
    species: SpeciesSummary
    reactions: list[tuple[str, str, str]]  # (key, equation, role)
    #: for a species without a diameter: the estimate collision theory would use
    #: (a ``science.diameters.DiameterEstimate``, not stored), else None
    estimated_diameter: Any = None


def show_species(session: Session, name: str) -> SpeciesDetail:
    species = find_species(session, name)
    rows = session.execute(
        select(Reaction.key, Reaction.equation, Participant.role)
        .join(Participant, Participant.reaction_id == Reaction.id)
        .where(Participant.species_id == species.id)
        .order_by(Reaction.key)
    ).all()
    from ratebank.services.partners import estimated_diameter

    summary = _species_summary(species)
    return SpeciesDetail(summary, [tuple(r) for r in rows], estimated_diameter(summary))


@dataclass(frozen=True)
class ReactionSummary:
    key: str
    equation: str
    order: int
    third_body: bool
    reaction_class: str | None
    sets: int
    points: int
    expressions: int
    status: str


def _status_expression():  # type: ignore[no-untyped-def]
    from sqlalchemy import case

    has_set = exists().where(MeasurementSet.reaction_id == Reaction.id)
    has_complete = exists().where(
        and_(Expression.reaction_id == Reaction.id, Expression.A.is_not(None))
    )
    has_any = exists().where(Expression.reaction_id == Reaction.id)
    return case(
        (has_set, "measured"),
        (has_complete, "complete"),
        (has_any, "ea-only"),
        else_="nothing",
    )


def list_reactions(
    session: Session,
    *,
    species: str | None = None,
    reaction_class: str | None = None,
    status: str | None = None,
) -> list[ReactionSummary]:
    """Reactions, optionally only those involving ``species``, of a class, or a status."""
    if status is not None and status not in STATUSES:
        raise NotFoundError(f"unknown status {status!r}; expected one of {', '.join(STATUSES)}")
    n_sets = (
        select(func.count(MeasurementSet.id))
        .where(MeasurementSet.reaction_id == Reaction.id)
        .scalar_subquery()
    )
    n_points = (
        select(func.count(Point.id))
        .join(MeasurementSet, Point.set_id == MeasurementSet.id)
        .where(MeasurementSet.reaction_id == Reaction.id)
        .scalar_subquery()
    )
    n_expr = (
        select(func.count(Expression.id))
        .where(Expression.reaction_id == Reaction.id)
        .scalar_subquery()
    )
    status_col = _status_expression().label("status")
    query = select(
        Reaction.key,
        Reaction.equation,
        Reaction.reaction_order,
        Reaction.third_body,
        Reaction.reaction_class,
        n_sets,
        n_points,
        n_expr,
        status_col,
    ).order_by(Reaction.key)
    if species is not None:
        species_id = session.scalar(select(Species.id).where(Species.name == species))
        if species_id is None:
            raise NotFoundError(f"no species {species!r} in the store")
        query = query.where(
            exists().where(
                and_(Participant.reaction_id == Reaction.id, Participant.species_id == species_id)
            )
        )
    if reaction_class is not None:
        query = query.where(Reaction.reaction_class == reaction_class)
    if status is not None:
        query = query.where(_status_expression() == status)
    return [ReactionSummary(*row) for row in session.execute(query).all()]


@dataclass(frozen=True)
class ParticipantInfo:
    role: str
    coefficient: int
    species: SpeciesSummary


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
    t_min: float | None
    t_max: float | None


@dataclass(frozen=True)
class ExpressionSummary:
    id: int
    reaction_key: str
    reaction_order: int
    origin: str
    A: float | None
    n: float
    Ea: float
    t_min: float | None
    t_max: float | None
    uncertainty_factor: float | None
    reference: str | None
    recommended: bool
    created_at: Any
    created_by: str | None
    provenance: dict[str, Any]
    version: int = 1


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


def _expression_summary(e: Expression, reaction: Reaction) -> ExpressionSummary:
    return ExpressionSummary(
        id=e.id,
        reaction_key=reaction.key,
        reaction_order=reaction.reaction_order,
        origin=e.origin,
        A=e.A,
        n=e.n,
        Ea=e.Ea,
        t_min=e.t_min,
        t_max=e.t_max,
        uncertainty_factor=e.uncertainty_factor,
        reference=e.reference,
        recommended=e.recommended,
        created_at=e.created_at,
        created_by=e.created_by,
        provenance=dict(e.provenance or {}),
        version=e.version,
    )


def show_reaction(session: Session, key_or_equation: str) -> ReactionDetail:
    reaction = find_reaction(session, key_or_equation)
    participants = [
        ParticipantInfo(p.role, p.coefficient, _species_summary(p.species))
        for p in reaction.participants
    ]
    return ReactionDetail(
        key=reaction.key,
        equation=reaction.equation,
        order=reaction.reaction_order,
        third_body=reaction.third_body,
        reaction_class=reaction.reaction_class,
        notes=reaction.notes,
        steric_factor=reaction.steric_factor,
        steric_source=reaction.steric_source,
        participants=participants,
        sets=list_sets(session, reaction=reaction.key),
        expressions=[_expression_summary(e, reaction) for e in reaction.expressions],
        history=history(session, target=reaction.key, limit=10),
    )


def list_sets(session: Session, *, reaction: str | None = None) -> list[SetSummary]:
    stats = (
        select(
            Point.set_id,
            func.count(Point.id).label("n"),
            func.min(Point.temperature).label("t_min"),
            func.max(Point.temperature).label("t_max"),
        )
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
            stats.c.t_min,
            stats.c.t_max,
        )
        .join(Reaction, Reaction.id == MeasurementSet.reaction_id)
        .outerjoin(stats, stats.c.set_id == MeasurementSet.id)
        .order_by(Reaction.key, MeasurementSet.name)
    )
    if reaction is not None:
        query = query.where(MeasurementSet.reaction_id == find_reaction(session, reaction).id)
    return [SetSummary(*row) for row in session.execute(query).all()]


def list_expressions(
    session: Session, *, reaction: str | None = None, origin: str | None = None
) -> list[ExpressionSummary]:
    query = (
        select(Expression, Reaction)
        .join(Reaction, Reaction.id == Expression.reaction_id)
        .order_by(Reaction.key, Expression.id)
    )
    if reaction is not None:
        query = query.where(Expression.reaction_id == find_reaction(session, reaction).id)
    if origin is not None:
        from ratebank.store.models import ORIGINS

        if origin not in ORIGINS:
            raise NotFoundError(f"unknown origin {origin!r}; expected one of {', '.join(ORIGINS)}")
        query = query.where(Expression.origin == origin)
    return [_expression_summary(e, r) for e, r in session.execute(query).all()]


@dataclass(frozen=True)
class HistoryEntry:
    at: Any
    author: str
    action: str
    target: str | None
    detail: dict[str, Any]


def history(
    session: Session, *, limit: int = 50, target: str | None = None, author: str | None = None
) -> list[HistoryEntry]:
    """The newest audit entries first."""
    query = select(AuditEntry).order_by(AuditEntry.id.desc()).limit(limit)
    if target is not None:
        query = query.where(AuditEntry.target == target)
    if author is not None:
        query = query.where(AuditEntry.author == author)
    return [
        HistoryEntry(e.at, e.author, e.action, e.target, dict(e.detail or {}))
        for e in session.scalars(query)
    ]


def store_counts(session: Session) -> dict[str, int]:
    """How many of each kind of record the store holds."""
    return {
        "species": session.scalar(select(func.count(Species.id))) or 0,
        "reactions": session.scalar(select(func.count(Reaction.id))) or 0,
        "measurement_sets": session.scalar(select(func.count(MeasurementSet.id))) or 0,
        "points": session.scalar(select(func.count(Point.id))) or 0,
        "expressions": session.scalar(select(func.count(Expression.id))) or 0,
    }
