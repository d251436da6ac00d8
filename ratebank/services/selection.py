"""Which expression of a reaction is used (exported, rated, checked), and its k(T).

The precedence (README, The mechanism table): the expression the curator marked
recommended; otherwise the newest measured fit; otherwise the newest complete
literature (then hand-entered) expression; otherwise the newest collision
estimate. Expressions without A are never used.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import NamedTuple

from sqlalchemy import select, update
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError, NotFoundError
from ratebank.services.curate import find_reaction
from ratebank.store import audit
from ratebank.store.bulk import fetch_all
from ratebank.store.models import Expression, Reaction, utc_now

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

    reaction: Reaction
    expression: Expression
    rule: str


def choose(expressions: Iterable[Expression]) -> tuple[Expression, str] | None:
    """The expression to use among one reaction's, with the rule that chose it."""
    complete = [e for e in expressions if e.A is not None]
    if not complete:
        return None
    recommended = [e for e in complete if e.recommended]
    if recommended:
        return max(recommended, key=lambda e: e.id), "recommended"
    best = min(complete, key=lambda e: (_ORIGIN_RANK[e.origin], -e.id))
    return best, CHOICE_RULES[_ORIGIN_RANK[best.origin]]


def chosen_expressions(
    session: Session, reactions: list[Reaction] | None = None
) -> tuple[list[Chosen], list[Reaction]]:
    """(reactions with a usable expression, reactions without one), by key."""
    if reactions is None:
        reactions = list(session.scalars(select(Reaction).order_by(Reaction.key)))
    by_reaction: dict[int, list[Expression]] = {r.id: [] for r in reactions}
    ids = list(by_reaction)
    for start in range(0, len(ids), 500):
        for e in session.scalars(
            select(Expression).where(Expression.reaction_id.in_(ids[start : start + 500]))
        ):
            by_reaction[e.reaction_id].append(e)
    found: list[Chosen] = []
    gaps: list[Reaction] = []
    for reaction in reactions:
        choice = choose(by_reaction[reaction.id])
        if choice is None:
            gaps.append(reaction)
        else:
            found.append(Chosen(reaction, choice[0], choice[1]))
    return found, gaps


def evaluate(expression: Expression, T):  # type: ignore[no-untyped-def]
    """k(T) of a complete expression [SI]."""
    from ratebank.science.arrhenius import modified_arrhenius

    assert expression.A is not None
    return modified_arrhenius(T, expression.A, expression.n, expression.Ea)


def uncertainty_factor(expression: Expression, T):  # type: ignore[no-untyped-def]
    """f(T): from the fit covariance for a measured fit, else the stored factor."""
    import numpy as np

    T = np.asarray(T, dtype=float)
    provenance = expression.provenance or {}
    covariance = provenance.get("covariance")
    if expression.origin == "measured-fit" and covariance is not None:
        from ratebank.science.constants import GAS_CONSTANT

        cov = np.asarray(covariance, dtype=float)
        t_ref = float(provenance.get("T_ref", 1.0))
        # ln k = ln A + n ln T - Ea/(R T): gradient in (ln A, n, Ea)
        gradient = np.stack([np.ones_like(T), np.log(T), -1.0 / (GAS_CONSTANT * T)], axis=-1)
        del t_ref
        variance = np.einsum("...i,ij,...j->...", gradient, cov, gradient)
        return np.exp(np.sqrt(np.maximum(variance, 0.0)))
    factor = expression.uncertainty_factor
    return np.full(T.shape, np.nan if factor is None else factor)


# --------------------------------------------------------------------------- recommend


def recommend(session: Session, key_or_equation: str, expression_id: int) -> Expression:
    """Mark one expression as the curator's choice for its reaction (unmarks the others)."""
    reaction = find_reaction(session, key_or_equation)
    expression = session.get(Expression, expression_id)
    if expression is None:
        raise NotFoundError(f"no expression {expression_id} in the store")
    if expression.reaction_id != reaction.id:
        raise ConflictError(
            f"expression {expression_id} belongs to reaction {expression.reaction.key!r}, "
            f"not {reaction.key!r}"
        )
    if expression.A is None:
        raise ConflictError(
            f"expression {expression_id} has no pre-exponential factor yet; estimate it first "
            "or recommend a complete expression"
        )
    author = session.info.get("author")
    previous = [e.id for e in reaction.expressions if e.recommended and e.id != expression_id]
    if previous:
        session.execute(
            update(Expression)
            .where(Expression.id.in_(previous))
            .values(
                recommended=False,
                updated_at=utc_now(),
                updated_by=author,
                version=Expression.version + 1,
            )
            .execution_options(synchronize_session="fetch")
        )
    expression.recommended = True
    expression.updated_at = utc_now()
    expression.updated_by = author
    session.flush()
    audit.record(
        session,
        "expression.recommend",
        reaction.key,
        expression=expression_id,
        replaced=previous,
    )
    return expression


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
    t_min: float | None
    t_max: float | None
    uncertainty_factor: float | None
    reference: str | None
    steric_factor: float | None
    rule: str


def chosen_rows(session: Session) -> tuple[list[ChosenRow], list[str]]:
    """(the exported expression of every reaction, keys of reactions without one), by key.

    Same precedence as :func:`choose`, in two column queries: this is what a
    100,000-reaction export uses.
    """
    reactions = fetch_all(
        session,
        select(Reaction.id, Reaction.key, Reaction.equation, Reaction.reaction_order).order_by(
            Reaction.key
        ),
    )
    best: dict[int, tuple[tuple[int, int], tuple]] = {}
    query = select(
        Expression.reaction_id,
        Expression.id,
        Expression.origin,
        Expression.A,
        Expression.n,
        Expression.Ea,
        Expression.t_min,
        Expression.t_max,
        Expression.uncertainty_factor,
        Expression.reference,
        Expression.recommended,
        Expression.provenance["steric_factor"].as_float(),
    ).where(Expression.A.is_not(None))
    for row in fetch_all(session, query):
        reaction_id, expression_id, origin, recommended = row[0], row[1], row[2], row[10]
        # lower rank wins: recommended first, then by origin; newer (larger id) first
        rank = (0 if recommended else _ORIGIN_RANK[origin], -expression_id)
        current = best.get(reaction_id)
        if current is None or rank < current[0]:
            best[reaction_id] = (rank, row)
    chosen: list[ChosenRow] = []
    gaps: list[str] = []
    for reaction_id, key, equation, order in reactions:
        found = best.get(reaction_id)
        if found is None:
            gaps.append(key)
            continue
        rank, row = found
        _, expression_id, origin, A, n, Ea, t_min, t_max, factor, reference, _, steric = row
        chosen.append(
            ChosenRow(
                key,
                equation,
                order,
                expression_id,
                origin,
                A,
                n,
                Ea,
                t_min,
                t_max,
                factor,
                reference,
                steric,
                "recommended" if rank[0] == 0 else CHOICE_RULES[rank[0]],
            )
        )
    return chosen, gaps
