"""Everything about one reaction on one screen: its record, k(T) of each expression, the
steric factors its expressions carry, and the check flags."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.services.checks import Flag, check_store
from ratebank.services.reactions import show_reaction
from ratebank.services.selection import choose, own_order_rate
from ratebank.store.listings import ReactionDetail
from ratebank.store.queries import expressions_of, find_reaction

#: Temperatures of the k table when the expressions state no range [K].
DEFAULT_GRID = (300.0, 500.0, 1000.0, 1500.0, 2000.0)


@dataclass
class ReactionOverview:
    detail: ReactionDetail
    temperatures: list[float]
    #: expression id -> k at each temperature [SI], in the reaction's own order (a fall-off
    #: form at 1 bar: services.selection.own_order_rate)
    rates: dict[int, list[float]] = field(default_factory=dict)
    chosen_id: int | None = None
    chosen_rule: str | None = None
    #: (expression id, origin, P) of the expressions that carry a steric factor
    steric_factors: list[tuple[int, str, float]] = field(default_factory=list)
    flags: list[Flag] = field(default_factory=list)


def _grid(detail: ReactionDetail) -> list[float]:
    """Five temperatures spread evenly in log T over every range the reaction's data state."""
    lows = [e.T_min for e in detail.expressions if e.T_min]
    highs = [e.T_max for e in detail.expressions if e.T_max]
    lows += [s.T_min for s in detail.sets if s.T_min]
    highs += [s.T_max for s in detail.sets if s.T_max]
    if not lows or not highs:
        return list(DEFAULT_GRID)
    low, high = min(lows), max(highs)
    if high <= low:
        return [float(low)]
    return [float(t) for t in np.round(np.geomspace(low, high, 5), 1)]


def reaction_overview(
    session: Session, key_or_equation: str, *, temperatures: list[float] | None = None
) -> ReactionOverview:
    """The reaction's record, its k at a temperature grid, steric factors and check flags."""
    reaction = find_reaction(session, key_or_equation)
    detail = show_reaction(session, reaction.key)
    grid = [float(t) for t in temperatures] if temperatures else _grid(detail)
    overview = ReactionOverview(detail, grid)
    expressions = expressions_of(session, [reaction.id])[reaction.id]
    for e in expressions:
        if e.complete:
            overview.rates[e.id] = [float(x) for x in own_order_rate(e, reaction.third_body, grid)]
        p = e.provenance.get("steric_factor")
        if p is not None:
            overview.steric_factors.append((e.id, e.origin, float(p)))
    choice = choose(expressions)
    if choice is not None:
        overview.chosen_id, overview.chosen_rule = choice[0].id, choice[1]
    overview.flags = check_store(session, keys=[reaction.key]).flags
    return overview
