"""Which expression of a reaction is used (exported, rated, checked), and its k(T).

The precedence (README, The mechanism table): the expression the curator marked
recommended; otherwise the newest measured fit; otherwise the newest complete
literature (then hand-entered) expression; otherwise the newest collision
estimate. Expressions without A are never used.
"""

from __future__ import annotations

import hashlib
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError
from ratebank.science.arrhenius import modified_arrhenius
from ratebank.science.pressure import bath_gas_concentration
from ratebank.science.rate_laws import pressure_free_rate, rate_law
from ratebank.science.uncertainty import panel_uncertainty_factor
from ratebank.store import audit, queries
from ratebank.store.expressions import form_of, set_recommended
from ratebank.store.fingerprint import ExpressionDigest
from ratebank.store.queries import ExpressionRow, ReactionRow

#: Why an expression was chosen, in order of precedence.
CHOICE_RULES = (
    "recommended",
    "newest measured fit",
    "newest literature",
    "newest manual",
    "newest collision estimate",
)
_ORIGIN_RANK = {"measured-fit": 1, "literature": 2, "manual": 3, "collision-estimate": 4}


@dataclass(frozen=True)
class Chosen:
    """The expression that represents a reaction, and why."""

    reaction: ReactionRow
    expression: ExpressionRow
    rule: str


def choose(expressions: Iterable[ExpressionRow]) -> tuple[ExpressionRow, str] | None:
    """The expression to use among one reaction's, with the rule that chose it."""
    complete = [e for e in expressions if e.complete]
    if not complete:
        return None
    recommended = [e for e in complete if e.recommended]
    if recommended:
        return max(recommended, key=lambda e: e.id), "recommended"
    best = min(complete, key=lambda e: (_ORIGIN_RANK[e.origin], -e.id))
    return best, CHOICE_RULES[_ORIGIN_RANK[best.origin]]


def chosen_expressions(
    session: Session,
    reactions: Sequence[ReactionRow] | None = None,
    *,
    provenance_keys: Sequence[str] | None = None,
) -> tuple[list[Chosen], list[ReactionRow]]:
    """(reactions with a usable expression, reactions without one), by key; with
    ``provenance_keys``, each expression's provenance holds only those keys
    (:func:`ratebank.store.queries.expressions_of`)."""
    if reactions is None:
        reactions = queries.reactions(session)
    by_reaction = queries.expressions_of(
        session, [r.id for r in reactions], provenance_keys=provenance_keys
    )
    found: list[Chosen] = []
    gaps: list[ReactionRow] = []
    for reaction in reactions:
        choice = choose(by_reaction[reaction.id])
        if choice is None:
            gaps.append(reaction)
        else:
            found.append(Chosen(reaction, choice[0], choice[1]))
    return found, gaps


def arrhenius_terms(expression: ExpressionRow) -> list[tuple[float, float, float]]:
    """The (A, n, Ea) terms of an expression: its own, then a ``sum``'s further terms."""
    assert expression.A is not None
    first = (expression.A, expression.n, expression.Ea)
    return [first, *((t.A, t.n, t.Ea) for t in expression.terms)]


def low_pressure_limit(expression: ExpressionRow) -> tuple[float, float, float] | None:
    """k0 (A, n, Ea) of a ``falloff`` or ``activated`` expression, else None."""
    if expression.A_low is None:
        return None
    return (expression.A_low, expression.n_low or 0.0, expression.Ea_low or 0.0)


def broadening_of(expression: ExpressionRow):  # type: ignore[no-untyped-def]
    """The science object of an expression's broadening (None for Lindemann or none)."""
    from ratebank.science.falloff import FixedCentreBroadening, TroeBroadening

    if expression.broadening == "troe":
        return TroeBroadening(
            expression.troe_alpha,  # type: ignore[arg-type]
            expression.troe_T3,  # type: ignore[arg-type]
            expression.troe_T1,  # type: ignore[arg-type]
            expression.troe_T2,
        )
    if expression.broadening == "fixed-fc":
        return FixedCentreBroadening(expression.Fc, expression.N)  # type: ignore[arg-type]
    return None


def evaluate(expression: ExpressionRow, T):  # type: ignore[no-untyped-def]
    """k(T) a complete expression states without a pressure [SI]: the plain k, the
    coefficient k0 of a third-body expression, k_inf of a fall-off and k0 of a chemically
    activated one (:func:`ratebank.science.rate_laws.pressure_free_rate`)."""
    if expression.form is None and not expression.terms:
        assert expression.A is not None
        return modified_arrhenius(T, expression.A, expression.n, expression.Ea)
    return pressure_free_rate(
        T,
        expression.form or "arrhenius",
        arrhenius_terms(expression),
        low=low_pressure_limit(expression),
    )


#: The pressure at which the reaction's own-order k of a fall-off form is shown [Pa].
SHOWN_PRESSURE_PA = 1.0e5


def own_order_rate(expression: ExpressionRow, third_body: bool, T):  # type: ignore[no-untyped-def]
    """k(T) [SI] in the reaction's own order, the unit its measured points are stored in.

    Forms that need no pressure give their plain k (a third-body expression its
    coefficient). ``falloff`` and ``activated`` give k at 1 bar of a bath gas
    of efficiency 1 (:data:`SHOWN_PRESSURE_PA`), divided by [M] = P/RT for a
    reaction written with M, as a point measured there is stored.
    """
    form = form_of(expression.form, third_body)
    if form not in ("falloff", "activated"):
        return evaluate(expression, T)
    T = np.asarray(T, dtype=float)
    M = bath_gas_concentration(SHOWN_PRESSURE_PA, T)
    k = rate_at(expression, third_body, T, M).k
    return k / M if third_body else k


def rate_at(expression: ExpressionRow, third_body: bool, T, M=None):  # type: ignore[no-untyped-def]
    """k(T, [M]_eff) of a complete expression with its parts
    (:func:`ratebank.science.rate_laws.rate_law`); ``M`` [mol m-3] or None."""
    return rate_law(
        T,
        form_of(expression.form, third_body),
        arrhenius_terms(expression),
        low=low_pressure_limit(expression),
        broadening=broadening_of(expression),
        M=M,
    )


def uncertainty_factor(expression: ExpressionRow, T):  # type: ignore[no-untyped-def]
    """f(T) = f(298 K) exp|g (1/T - 1/298 K)| of an expression (NaN where none is stated)."""
    T = np.asarray(T, dtype=float)
    if expression.uncertainty_factor is None:
        return np.full(T.shape, np.nan)
    return panel_uncertainty_factor(
        T, expression.uncertainty_factor, expression.uncertainty_g or 0.0
    )


# --------------------------------------------------------------------------- recommend


def recommend(session: Session, key_or_equation: str, expression_id: int) -> ExpressionRow:
    """Mark one expression as the curator's choice for its reaction (unmarks the others).

    This changes which expression is exported, not any expression's numbers,
    so no version rises.
    """
    reaction = queries.find_reaction(session, key_or_equation)
    expression = queries.expression(session, expression_id)
    if expression.reaction_id != reaction.id:
        owner = queries.reactions(session, ids=[expression.reaction_id])[0]
        raise ConflictError(
            f"expression {expression_id} belongs to reaction {owner.key!r}, not {reaction.key!r}"
        )
    if not expression.complete:
        raise ConflictError(
            f"expression {expression_id} has no pre-exponential factor yet; estimate it first "
            "or recommend a complete expression"
        )
    in_use = queries.expressions_of(session, [reaction.id])[reaction.id]
    if expression_id not in {e.id for e in in_use}:
        raise ConflictError(
            f"expression {expression_id} of {reaction.key!r} is withdrawn (or its reaction is); "
            "reinstate it first"
        )
    if expression.recommended and not any(e.recommended for e in in_use if e.id != expression_id):
        return expression  # already the choice: nothing changes, nothing is recorded
    previous = set_recommended(session, reaction.id, expression_id)
    audit.record(
        session,
        "expression.recommend",
        reaction.key,
        expression=expression_id,
        replaced=previous,
    )
    return queries.expression(session, expression_id)


class ChosenRow(NamedTuple):
    """The exported expression of one reaction, read without loading ORM objects."""

    reaction_key: str
    equation: str
    order: int
    expression_id: int
    origin: str
    A: float
    n: float
    Ea: float
    T_min: float | None
    T_max: float | None
    uncertainty_factor: float | None
    uncertainty_g: float | None
    reference: str | None
    steric_factor: float | None
    rule: str
    #: the whole expression (its form, limits, broadening and further terms)
    expression: ExpressionRow | None = None
    #: whether the reaction is written with M (its plain form is then third-body)
    third_body: bool = False
    #: the reaction's place in the table's order (:attr:`ChosenStream.keys`)
    at: int | None = None


class ChosenRows(NamedTuple):
    """The exported expression of every reaction, and what it is made of."""

    rows: list[ChosenRow]
    #: keys of the reactions without a usable expression
    gaps: list[str]
    #: ``sha256:<hex>`` of the chosen expressions as stored, provenance included
    #: (:func:`ratebank.store.fingerprint.expression_records`)
    digest: str


def chosen_rows(session: Session) -> ChosenRows:
    """The exported expression of every reaction, by key, with the keys of reactions
    without one and the digest of the expressions chosen (:class:`ChosenStream`, held)."""
    stream = ChosenStream(session)
    found = {row.reaction_key: row for row in stream}
    rows = [found[key] for key in stream.keys if key in found]
    return ChosenRows(rows, stream.gaps, stream.digest)


class ChosenStream:
    """The exported expression of every reaction, one :class:`ChosenRow` at a time.

    The expressions that state A are read in one pass (one without A is never chosen), by
    reaction id (not by key: ``keys`` gives the order of the table), as stored rows (no
    object per expression), and only each
    reaction's choice is kept; its provenance, read in the same pass, gives its
    ``steric_factor`` and enters the digest of what the rows are made of, a batch of
    chosen expressions at a time. After the iteration, ``gaps`` holds the keys of the
    reactions without a usable expression and ``digest`` the ``sha256:<hex>`` of the
    chosen expressions (:class:`ratebank.store.fingerprint.ExpressionDigest`).
    """

    #: chosen expressions hashed at a time
    BATCH = 1000

    def __init__(self, session: Session) -> None:
        self._session = session
        # every reaction as plain columns, not an object each
        self._heads = queries.reaction_heads(session)
        #: every reaction's key, in the table's order
        self.keys = self._heads.keys
        self.gaps: list[str] = []
        self.digest = ""

    def __iter__(self) -> Iterator[ChosenRow]:
        digest = hashlib.sha256(b"expressions\n")
        hashing = ExpressionDigest(self._session, digest)
        heads = self._heads
        position = {reaction_id: i for i, reaction_id in enumerate(heads.ids)}
        chosen = bytearray(len(heads.ids))  # 1 where the reaction's expression was chosen
        batch: list[tuple[int, tuple[Any, ...], str]] = []
        for reaction_id, stored in queries.stored_expressions_by_reaction(
            self._session, with_a=True
        ):
            at = position.get(reaction_id)
            if at is None or chosen[at]:
                continue
            choice = _choose_stored(stored)
            if choice is None:
                continue
            chosen[at] = 1
            batch.append((at, *choice))
            if len(batch) >= self.BATCH:
                yield from self._rows(batch, hashing)
                batch = []
        yield from self._rows(batch, hashing)
        # by key, as the reactions were read
        self.gaps = [key for key, done in zip(heads.keys, chosen, strict=True) if not done]
        self.digest = "sha256:" + digest.hexdigest()

    def _rows(
        self, batch: list[tuple[int, tuple[Any, ...], str]], hashing: ExpressionDigest
    ) -> Iterator[ChosenRow]:
        if not batch:
            return
        provenances, terms = hashing.add([stored for _, stored, _ in batch])
        heads = self._heads
        keys, equations, orders, third_body = (
            heads.keys,
            heads.equations,
            heads.orders,
            heads.third_body,
        )
        make = queries.expression_row
        for at, stored, rule in batch:
            expression_id = stored[0]
            yield ChosenRow(
                keys[at],
                equations[at],
                orders[at],
                expression_id,
                *stored[2:11],
                provenances[expression_id].get("steric_factor"),
                rule,
                make(stored, terms.get(expression_id, ())),
                third_body[at],
                at,
            )


#: The columns of a stored expression row (:func:`queries.stored_expressions_by_reaction`).
_ID, _ORIGIN, _A, _RECOMMENDED, _FORM, _A_LOW = 0, 2, 3, 11, 12, 13
_TWO_LIMITS = ("falloff", "activated")


def _choose_stored(stored: Sequence[tuple[Any, ...]]) -> tuple[tuple[Any, ...], str] | None:
    """:func:`choose` of one reaction's stored rows (oldest first)."""
    recommended = best = None
    best_rank = len(CHOICE_RULES)
    for row in stored:
        if row[_A] is None or (row[_FORM] in _TWO_LIMITS and row[_A_LOW] is None):
            continue  # not complete
        if row[_RECOMMENDED] and (recommended is None or row[_ID] > recommended[_ID]):
            recommended = row
        rank = _ORIGIN_RANK[row[_ORIGIN]]
        if rank < best_rank or (rank == best_rank and row[_ID] > best[_ID]):  # type: ignore[index]
            best, best_rank = row, rank
    if recommended is not None:
        return recommended, "recommended"
    if best is None:
        return None
    return best, CHOICE_RULES[best_rank]
