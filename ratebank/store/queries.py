"""Reading the store: typed rows and the queries the services need.

Every read a service makes goes through here (or through the listing queries
of :mod:`ratebank.store.listings`), so no SQL lives above ``store/``. Rows are
plain named tuples in SI units, not ORM objects: fitting, estimating or
exporting a whole mechanism reads tens of thousands of them, and building an
ORM object per row would cost more than the query. Measured points come back
as numpy columns (:mod:`ratebank.store.points`, apart so that listings need no
numpy).

The vocabulary is the rate law's own: ``A`` [SI k unit times K^-n], ``n``
[-], ``Ea`` [J mol^-1], ``T_min`` and ``T_max`` [K].
"""

from __future__ import annotations

from array import array
from collections.abc import Callable, Iterable, Iterator, Sequence
from itertools import chain, groupby
from operator import itemgetter
from typing import Any, NamedTuple

from sqlalchemy import null, or_, select
from sqlalchemy.orm import Session

from ratebank.errors import NotFoundError
from ratebank.science.equation import looks_like_equation, parse_equation
from ratebank.store.bulk import fetch_all, fetch_in
from ratebank.store.in_use import EXPRESSION_IN_USE_SQL, expression_in_use, reaction_in_use
from ratebank.store.models import (
    ORIGINS,
    Expression,
    ProvenanceRun,
    Reaction,
    Species,
    StericRule,
)
from ratebank.store.runs import RunCache


class ReactionRow(NamedTuple):
    """A stored reaction."""

    id: int
    key: str
    equation: str
    order: int
    third_body: bool
    reaction_class: str | None
    notes: str | None
    steric_factor: float | None
    steric_source: str | None

    @property
    def bimolecular(self) -> bool:
        """True for an A + B reaction without a third body (collision theory applies)."""
        return self.order == 2 and not self.third_body


_REACTION_COLUMNS = (
    Reaction.id,
    Reaction.key,
    Reaction.equation,
    Reaction.reaction_order,
    Reaction.third_body,
    Reaction.reaction_class,
    Reaction.notes,
    Reaction.steric_factor,
    Reaction.steric_source,
)


class SpeciesRow(NamedTuple):
    """A stored species (SI units: kg/mol, m, K, Pa, m3/mol)."""

    id: int
    name: str
    formula: str
    molar_mass: float
    molar_mass_source: str
    diameter: float | None
    diameter_kind: str | None
    diameter_method: str | None
    well_depth: float | None
    well_depth_method: str | None
    critical_temperature: float | None
    critical_pressure: float | None
    acentric_factor: float | None
    boiling_volume: float | None
    source: str | None
    dipole_moment: float | None
    boiling_temperature: float | None
    polarizability: float | None
    ionization_energy: float | None

    @property
    def diameter_is_estimated(self) -> bool:
        return self.diameter is not None and self.diameter_method not in (None, "given")


_SPECIES_COLUMNS = tuple(getattr(Species, name) for name in SpeciesRow._fields)


class ExpressionRow(NamedTuple):
    """A stored rate expression and where it came from.

    ``A``, ``n``, ``Ea`` are the single term of ``arrhenius``, term 1 of ``sum``
    (further terms in ``terms``), k0 of ``third-body`` and the high-pressure
    limit of ``falloff`` and ``activated`` (whose low-pressure limit is
    ``A_low``, ``n_low``, ``Ea_low``). ``form`` is as stored: empty for the
    reaction's plain form (:func:`ratebank.store.expressions.form_of`).
    """

    id: int
    reaction_id: int
    origin: str
    A: float | None
    n: float
    Ea: float
    T_min: float | None
    T_max: float | None
    uncertainty_factor: float | None
    uncertainty_g: float | None
    reference: str | None
    provenance: dict[str, Any]
    recommended: bool
    version: int
    created_at: Any
    created_by: str | None
    updated_at: Any
    updated_by: str | None
    form: str | None = None
    A_low: float | None = None
    n_low: float | None = None
    Ea_low: float | None = None
    broadening: str | None = None
    Fc: float | None = None
    N: float | None = None
    troe_alpha: float | None = None
    troe_T3: float | None = None
    troe_T1: float | None = None
    troe_T2: float | None = None
    #: the run whose common provenance ``provenance`` includes (:mod:`ratebank.store.runs`)
    run_id: int | None = None
    #: the further terms (2, 3, ...) of a ``sum``
    terms: tuple[TermRow, ...] = ()

    @property
    def complete(self) -> bool:
        """True when A is known (an expression without A awaits an estimate), and k0 too
        for a form with two limits."""
        if self.form in ("falloff", "activated"):
            return self.A is not None and self.A_low is not None
        return self.A is not None


class TermRow(NamedTuple):
    """A further term of a ``sum`` expression (SI units)."""

    term: int
    A: float
    n: float
    Ea: float
    T_min: float | None
    T_max: float | None


#: The columns of an expression's rate-law form (besides A, n, Ea and the range).
FORM_COLUMNS = (
    Expression.form,
    Expression.A_low,
    Expression.n_low,
    Expression.Ea_low,
    Expression.broadening,
    Expression.Fc,
    Expression.N,
    Expression.troe_alpha,
    Expression.troe_T3,
    Expression.troe_T1,
    Expression.troe_T2,
)

#: The columns of an expression in :class:`ExpressionRow` order.
EXPRESSION_COLUMNS = (
    Expression.id,
    Expression.reaction_id,
    Expression.origin,
    Expression.A,
    Expression.n,
    Expression.Ea,
    Expression.T_min,
    Expression.T_max,
    Expression.uncertainty_factor,
    Expression.uncertainty_g,
    Expression.reference,
    Expression.provenance,
    Expression.recommended,
    Expression.version,
    Expression.created_at,
    Expression.created_by,
    Expression.updated_at,
    Expression.updated_by,
    *FORM_COLUMNS,
    Expression.run_id,
)
_PROVENANCE = ExpressionRow._fields.index("provenance")
_RUN = ExpressionRow._fields.index("run_id")
_ORIGIN = ExpressionRow._fields.index("origin")
_ORIGINS = {origin: origin for origin in ORIGINS}


class _Rows:
    """Turns stored rows into ExpressionRows with their whole provenance (the run's part
    completed by the row's own, each run read once); with ``keys``, only those keys of it."""

    def __init__(self, session: Session, keys: Sequence[str] | None = None) -> None:
        self.runs = RunCache(session)
        self.keys = keys
        #: leave out who made and changed each row, and when
        self.lean = False

    def columns(self) -> list[Any]:
        """The columns to select: without the provenance when no key of it is wanted,
        without the bookkeeping when lean."""
        columns: list[Any] = list(EXPRESSION_COLUMNS)
        if self.keys is not None and not self.keys:
            columns[_PROVENANCE] = null().label("provenance")
            columns[_RUN] = null().label("run_id")
        if self.lean:
            for name in ("created_at", "created_by", "updated_at", "updated_by"):
                where = ExpressionRow._fields.index(name)
                columns[where] = null().label(name)
        return columns

    def __call__(self, row: Sequence[Any]) -> ExpressionRow:
        values = list(row)
        values[_ORIGIN] = _ORIGINS.get(values[_ORIGIN], values[_ORIGIN])  # one string each
        provenance = self.runs.full(values[_PROVENANCE], values[_RUN])
        if self.keys is not None:
            provenance = {k: provenance[k] for k in self.keys if k in provenance}
        values[_PROVENANCE] = provenance
        return ExpressionRow(*values)

    def all(self, rows: Iterable[Sequence[Any]]) -> list[ExpressionRow]:
        rows = list(rows)
        self.runs.load(row[_RUN] for row in rows)
        return [self(row) for row in rows]


# --------------------------------------------------------------------------- lookups


def find_reaction(session: Session, key_or_equation: str) -> ReactionRow:
    """The reaction with this key, or whose equation is any spelling of this one."""
    query = select(*_REACTION_COLUMNS)
    row = session.execute(query.where(Reaction.key == key_or_equation)).first()
    if row is not None:
        return ReactionRow(*row)
    if looks_like_equation(key_or_equation):
        canonical = parse_equation(key_or_equation).canonical
        row = session.execute(query.where(Reaction.equation == canonical)).first()
        if row is not None:
            return ReactionRow(*row)
        raise NotFoundError(f"no reaction {canonical!r} in the store")
    raise NotFoundError(f"no reaction with key {key_or_equation!r} in the store")


def find_reactions(session: Session, keys_or_equations: Iterable[str]) -> list[ReactionRow]:
    """:func:`find_reaction` of each, in the order given."""
    return [find_reaction(session, text) for text in keys_or_equations]


def find_species(session: Session, name: str) -> SpeciesRow:
    row = session.execute(select(*_SPECIES_COLUMNS).where(Species.name == name)).first()
    if row is None:
        raise NotFoundError(f"no species {name!r} in the store")
    return SpeciesRow(*row)


def reactions(
    session: Session,
    *,
    ids: Sequence[int] | None = None,
    reaction_class: str | None = None,
) -> list[ReactionRow]:
    """Reactions by key: those of ``ids``, or the reactions in use of ``reaction_class``, or all
    reactions in use (withdrawn ones are left out unless asked for by id)."""
    if ids is not None:
        columns = ", ".join(column.name for column in _REACTION_COLUMNS)
        found = fetch_in(session, f"SELECT {columns} FROM reaction WHERE id IN ({{marks}})", ids)
        return sorted((ReactionRow(*row) for row in found), key=lambda r: r.key)
    query = select(*_REACTION_COLUMNS).where(reaction_in_use()).order_by(Reaction.key)
    if reaction_class is not None:
        query = query.where(Reaction.reaction_class == reaction_class)
        return [ReactionRow(*row) for row in session.execute(query)]
    # the whole store: plain rows through the driver
    return [ReactionRow(*row) for row in fetch_all(session, query)]


class ReactionHeads(NamedTuple):
    """What a whole-mechanism reader needs of every reaction in use, as plain columns (one
    list per field, by key): no object per reaction."""

    ids: list[int]
    keys: list[str]
    equations: list[str]
    orders: list[int]
    third_body: list[bool]


def reaction_heads(session: Session) -> ReactionHeads:
    """Id, key, equation, order and third body of every reaction in use, by key (the
    reactions of :func:`reactions` without ids), as columns."""
    query = select(
        Reaction.id, Reaction.key, Reaction.equation, Reaction.reaction_order, Reaction.third_body
    ).where(reaction_in_use())
    if session.get_bind().dialect.name == "sqlite":
        # along the primary key, as the rows are stored, then by key here: SQLite orders
        # text by its bytes, which for UTF-8 is Python's order of the characters (reading
        # by the key's index would visit the table's pages in random order)
        rows = fetch_all(session, query.order_by(Reaction.id))
        rows.sort(key=itemgetter(1))
    else:
        rows = fetch_all(session, query.order_by(Reaction.key))  # the database's collation
    if not rows:
        return ReactionHeads([], [], [], [], [])
    ids, keys, equations, orders, third_body = map(list, zip(*rows, strict=True))
    return ReactionHeads(ids, keys, equations, orders, [bool(t) for t in third_body])


def reactants(session: Session, reaction_ids: Sequence[int]) -> dict[int, list[tuple[int, int]]]:
    """(species id, coefficient) of each reaction's reactants, in the order written."""
    found: dict[int, list[tuple[int, int]]] = {i: [] for i in reaction_ids}
    for reaction_id, species_id, coefficient in fetch_in(
        session,
        "SELECT reaction_id, species_id, coefficient FROM participant "
        "WHERE role = 'reactant' AND reaction_id IN ({marks}) ORDER BY reaction_id, id",
        list(reaction_ids),
    ):
        found[reaction_id].append((species_id, coefficient))
    return found


def reactant_columns(session: Session, reaction_ids: Sequence[int]) -> tuple[array, array]:
    """(reaction ids, species ids) of the reactants of ``reaction_ids``, one entry per
    reactant row, by reaction id and then in the order written, as two int64 arrays (the
    reactants of :func:`reactants` as columns: no list per reaction)."""
    reactions, species = array("q"), array("q")
    wanted = sorted(set(reaction_ids))
    query = (
        "SELECT reaction_id, species_id FROM participant "
        "WHERE role = 'reactant' AND reaction_id IN ({marks}) ORDER BY reaction_id, id"
    )
    for start in range(0, len(wanted), 5000):
        for reaction_id, species_id in fetch_in(session, query, wanted[start : start + 5000]):
            reactions.append(reaction_id)
            species.append(species_id)
    return reactions, species


def species_by_id(session: Session, species_ids: Iterable[int]) -> dict[int, SpeciesRow]:
    columns = ", ".join(column.name for column in _SPECIES_COLUMNS)
    query = f"SELECT {columns} FROM species WHERE id IN ({{marks}})"
    return {row[0]: SpeciesRow(*row) for row in fetch_in(session, query, sorted(set(species_ids)))}


def all_species(session: Session) -> list[SpeciesRow]:
    """Every species, by name."""
    query = select(*_SPECIES_COLUMNS).order_by(Species.name)
    return [SpeciesRow(*row) for row in session.execute(query)]


def species_by_name(session: Session, names: Iterable[str]) -> dict[str, SpeciesRow]:
    columns = ", ".join(column.name for column in _SPECIES_COLUMNS)
    query = f"SELECT {columns} FROM species WHERE name IN ({{marks}})"
    return {row[1]: SpeciesRow(*row) for row in fetch_in(session, query, sorted(set(names)))}


def expression(session: Session, expression_id: int) -> ExpressionRow:
    row = session.execute(select(*EXPRESSION_COLUMNS).where(Expression.id == expression_id)).first()
    if row is None:
        raise NotFoundError(f"no expression {expression_id} in the store")
    return with_terms(session, _Rows(session).all([row]))[0]


def expressions_of(
    session: Session,
    reaction_ids: Sequence[int] | None = None,
    *,
    provenance_keys: Sequence[str] | None = None,
    lean: bool = False,
) -> dict[int, list[ExpressionRow]]:
    """Every expression in use of each reaction (all reactions when ``reaction_ids`` is None),
    oldest first; withdrawn expressions, and those of withdrawn reactions, are left out.

    With ``provenance_keys``, each row's provenance holds only those keys (a reader of a
    whole mechanism that needs one of them keeps no more in memory); with none, ``()``, it
    is left empty and not read at all (:func:`ratebank.store.fingerprint.expression_records`
    reads it for chosen expressions). ``lean`` leaves out who made and changed each
    expression, and when (a whole mechanism's computation needs neither)."""
    make = _Rows(session, provenance_keys)
    make.lean = lean
    found = _expressions_by_reaction(session, reaction_ids, make)
    if any(row.form == "sum" for rows in found.values() for row in rows):
        for reaction_id, rows in found.items():
            found[reaction_id] = with_terms(session, rows)
    return found


#: Reactions from which :func:`expressions_reduced` reads the whole store in one pass.
_STREAM_FROM = 5000


def expressions_reduced(
    session: Session,
    reaction_ids: Sequence[int],
    reduce: Callable[[list[ExpressionRow]], list[Any]],
    *,
    provenance_keys: Sequence[str] | None = None,
    lean: bool = False,
) -> dict[int, list[Any]]:
    """:func:`expressions_of` with each reaction's rows passed through ``reduce`` as soon as
    they are read (a reader of most of the store that keeps a little of each expression
    never holds every row); a reaction without expressions gets ``reduce([])``."""
    make = _Rows(session, provenance_keys)
    make.lean = lean
    wanted = list(dict.fromkeys(reaction_ids))
    if len(wanted) > _STREAM_FROM:  # most of the store: one pass, reduced as they stream
        found: dict[int, list[Any]] = dict.fromkeys(wanted)  # type: ignore[arg-type]
        for reaction_id, rows in _stream(session, make):
            if reaction_id in found:
                found[reaction_id] = reduce(rows)
        empty = [key for key, value in found.items() if value is None]
        for key in empty:
            found[key] = reduce([])
        return found
    read = _expressions_by_reaction(session, wanted, make)
    for reaction_id, rows in read.items():
        if any(row.form == "sum" for row in rows):
            rows = with_terms(session, rows)
        read[reaction_id] = reduce(rows)
    return read


def _expressions_by_reaction(
    session: Session, reaction_ids: Sequence[int] | None, make: _Rows
) -> dict[int, list[ExpressionRow]]:
    if reaction_ids is None:
        return dict(_stream(session, make))
    found: dict[int, list[ExpressionRow]] = {i: [] for i in reaction_ids}
    wanted = list(found)
    if len(wanted) > 5000:  # most of the store: one pass beats thousands of IN lists
        for reaction_id, rows in _stream(session, make):
            if reaction_id in found:
                found[reaction_id] = rows
        return found
    query = select(*make.columns()).where(expression_in_use()).order_by(Expression.id)
    for start in range(0, len(wanted), 500):
        chunk = wanted[start : start + 500]
        for row in make.all(session.execute(query.where(Expression.reaction_id.in_(chunk)))):
            found[row.reaction_id].append(row)
    return found


#: Expression rows fetched at a time by :func:`expressions_by_reaction`.
_STREAM_BATCH = 2_000


def expressions_by_reaction(
    session: Session, *, provenance_keys: Sequence[str] | None = ()
) -> Iterator[tuple[int, list[ExpressionRow]]]:
    """(reaction id, its expressions in use, oldest first) for every reaction that has one,
    by reaction id, read in one pass a batch at a time: a reader of the whole mechanism that
    keeps one expression per reaction never holds them all. ``provenance_keys`` as for
    :func:`expressions_of` (none by default); who made and changed each, and when, are left
    out."""
    make = _Rows(session, provenance_keys)
    make.lean = True
    return _stream(session, make)


def _stream(session: Session, make: _Rows) -> Iterator[tuple[int, list[ExpressionRow]]]:
    """The expressions in use grouped by reaction, by reaction id, fetched a batch at a time
    through the raw driver (no list of every row)."""
    if make.keys is None or make.keys:
        make.runs.load(_runs_in_use(session))
    query = (
        select(*make.columns())
        .where(expression_in_use())
        .order_by(Expression.reaction_id, Expression.id)
    )
    connection = session.connection()
    compiled = query.compile(dialect=connection.dialect, compile_kwargs={"literal_binds": True})
    raw = connection.connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    group: list[ExpressionRow] = []
    try:
        cursor.execute(str(compiled))
        while batch := cursor.fetchmany(_STREAM_BATCH):
            rows = [make(row) for row in batch]
            if any(row.form == "sum" for row in rows):
                rows = with_terms(session, rows)
            for row in rows:
                if group and group[0].reaction_id != row.reaction_id:
                    yield group[0].reaction_id, group
                    group = []
                group.append(row)
        if group:
            yield group[0].reaction_id, group
    finally:
        cursor.close()


def stored_expressions_by_reaction(
    session: Session, *, with_a: bool = False
) -> Iterator[tuple[int, list[tuple[Any, ...]]]]:
    """(reaction id, its expressions in use as stored rows, oldest first) for every reaction
    that has one, by reaction id, in one pass through the driver: no object per row. With
    ``with_a``, only the expressions that state A (those awaiting an estimate are never
    exported, and are not read).

    Each row holds the columns :data:`ratebank.store.fingerprint.EXPRESSION_CONTENT`
    names (values as stored: SI numbers, the form's columns), then its own provenance as
    stored and its run (:class:`ratebank.store.fingerprint.ExpressionDigest` takes them)."""
    from ratebank.store.fingerprint import EXPRESSION_CONTENT

    query = (
        f"SELECT {EXPRESSION_CONTENT}, provenance, run_id FROM expression "
        f"WHERE {EXPRESSION_IN_USE_SQL}{' AND a IS NOT NULL' if with_a else ''} "
        "ORDER BY reaction_id, id"
    )
    connection = session.connection()
    raw = connection.connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    try:
        cursor.execute(query)
        rows = iter(lambda: cursor.fetchmany(_STREAM_BATCH), [])
        for reaction_id, group in groupby(chain.from_iterable(rows), itemgetter(1)):
            yield reaction_id, list(group)
    finally:
        cursor.close()


def expression_row(stored: Sequence[Any], terms: Sequence[Sequence[Any]] = ()) -> ExpressionRow:
    """The :class:`ExpressionRow` of a stored row of :func:`stored_expressions_by_reaction`
    as a whole-mechanism reader has it (the rows of :func:`expressions_by_reaction`):
    without its provenance, its run and its bookkeeping; ``terms`` are the further terms
    of a ``sum`` (term, A, n, Ea, T_min, T_max)."""
    origin = stored[2]
    return ExpressionRow(
        *stored[:2],
        _ORIGINS.get(origin, origin),  # one string each
        *stored[3:11],
        {},
        stored[11],
        None,
        None,
        None,
        None,
        None,
        *stored[12:23],
        None,
        tuple(TermRow(*t) for t in terms) if stored[12] == "sum" else (),
    )


def _runs_in_use(session: Session) -> list[int]:
    return list(session.scalars(select(ProvenanceRun.id)))


def newest_fits(session: Session, reaction_ids: Sequence[int]) -> dict[int, ExpressionRow]:
    """The newest measured fit in use of each reaction that has one."""
    columns = ", ".join(_sql_column(c) for c in EXPRESSION_COLUMNS)
    query = (
        f"SELECT {columns} FROM expression WHERE id IN (SELECT MAX(id) FROM expression "
        f"WHERE origin = 'measured-fit' AND {EXPRESSION_IN_USE_SQL} "
        "AND reaction_id IN ({marks}) GROUP BY reaction_id)"
    )
    rows = with_terms(session, _Rows(session).all(fetch_in(session, query, list(reaction_ids))))
    return {row.reaction_id: row for row in rows}


def _sql_column(column: Any) -> str:
    return str(column.expression.name)  # the column's own name (``N`` is ``fc_width``)


def with_terms(session: Session, rows: list[ExpressionRow]) -> list[ExpressionRow]:
    """``rows`` with the further terms of each ``sum`` filled in (one query, none without
    a sum)."""
    sums = [row.id for row in rows if row.form == "sum" and not row.terms]
    if not sums:
        return rows
    query = (
        "SELECT expression_id, term, a, n, ea, t_min, t_max FROM expression_term "
        "WHERE expression_id IN ({marks}) ORDER BY expression_id, term"
    )
    terms: dict[int, list[TermRow]] = {}
    for expression_id, *term in fetch_in(session, query, sums):
        terms.setdefault(expression_id, []).append(TermRow(*term))
    return [row._replace(terms=tuple(terms.get(row.id, ()))) for row in rows]


def measured_fits(session: Session, *, reaction_class: str | None = None) -> list[ExpressionRow]:
    """Every measured k(T) fit in use (plain form: not a fall-off or activated fit, whose A is
    k_inf) of a bimolecular reaction in use (of ``reaction_class``), oldest first."""
    query = (
        select(*EXPRESSION_COLUMNS)
        .join(Reaction, Reaction.id == Expression.reaction_id)
        .where(
            Expression.origin == "measured-fit",
            or_(Expression.form.is_(None), Expression.form == "arrhenius"),
            Reaction.reaction_order == 2,
            Reaction.third_body.is_(False),
            expression_in_use(),
        )
        .order_by(Expression.id)
    )
    if reaction_class is not None:
        query = query.where(Reaction.reaction_class == reaction_class)
    return with_terms(session, _Rows(session).all(session.execute(query)))


def set_labels(session: Session, set_ids: Iterable[int]) -> dict[int, str]:
    """'set name: reference' of each measurement set, by id (the references behind a fit)."""
    query = "SELECT id, name, reference FROM measurement_set WHERE id IN ({marks})"
    return {
        set_id: f"{name}: {reference}" if reference else name
        for set_id, name, reference in fetch_in(session, query, sorted(set(set_ids)))
    }


class StericRuleRow(NamedTuple):
    """A steric factor the curator set for a reaction class."""

    id: int
    reaction_class: str
    steric_factor: float
    uncertainty_factor: float | None
    source: str | None
    note: str | None
    version: int
    updated_at: Any
    updated_by: str | None


def steric_rules(session: Session) -> dict[str, StericRuleRow]:
    """Every class rule, by class."""
    columns = tuple(getattr(StericRule, name) for name in StericRuleRow._fields)
    query = select(*columns).order_by(StericRule.reaction_class)
    return {row[1]: StericRuleRow(*row) for row in session.execute(query)}
