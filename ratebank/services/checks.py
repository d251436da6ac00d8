"""Check every expression against physical limits and the curator's conventions.

Flags (each with a stable code):

- ``above-collision-limit``: a bimolecular k(T) above the hard-sphere
  collision rate z(T) somewhere in its temperature range (ratio and T given).
- ``steric-above-one``: a steric factor above 1, used by an estimate or
  implied by a measured fit (it happens; it needs a reason).
- ``collinear-fit``: a three-parameter fit whose n and Ea are nearly collinear.
- ``extrapolation``: the expression that would be exported does not cover the
  temperature range the mechanism will be used over (``t_range``).
- ``estimated-diameter``: the exported estimate rests on an estimated diameter.
- ``nothing-usable``: a reaction with no complete expression.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.science.arrhenius import modified_arrhenius
from ratebank.science.collision import collision_limit_ratio, collision_rate
from ratebank.services.partners import CollisionPair, PairColumns, collision_pairs
from ratebank.services.selection import Chosen, chosen_expressions
from ratebank.store import queries
from ratebank.store.queries import ExpressionRow, ReactionRow

CHECK_CODES = (
    "above-collision-limit",
    "steric-above-one",
    "collinear-fit",
    "extrapolation",
    "estimated-diameter",
    "nothing-usable",
)
#: Range checked for the collision limit when an expression states none [K].
DEFAULT_LIMIT_RANGE = (200.0, 3000.0)


@dataclass(frozen=True)
class Flag:
    key: str
    code: str
    message: str
    expression_id: int | None = None
    value: float | None = None
    temperature: float | None = None


@dataclass
class CheckReport:
    flags: list[Flag]
    reactions: int
    expressions: int
    t_range: tuple[float, float] | None
    ignored: list[str] = field(default_factory=list)

    @property
    def clean(self) -> bool:
        return not self.flags


def check_store(
    session: Session,
    *,
    T_range: tuple[float, float] | None = None,
    ignore: list[str] | None = None,
    keys: list[str] | None = None,
) -> CheckReport:
    """Run every check; ``ignore`` names codes not to report."""
    ignore = list(ignore or [])
    unknown = [c for c in ignore if c not in CHECK_CODES]
    if unknown:
        raise BadInputError(
            f"unknown check {', '.join(unknown)}; the checks are {', '.join(CHECK_CODES)}",
            argument="ignore",
        )
    if T_range is not None and not (0 < T_range[0] < T_range[1]):
        raise BadInputError(
            "T_range needs two temperatures, the lower first, both above 0 K", argument="T_range"
        )
    reactions = queries.find_reactions(session, keys) if keys else queries.reactions(session)
    by_id = {r.id: r for r in reactions}
    by_reaction = queries.expressions_of(session, list(by_id))
    expressions = sorted((e for own in by_reaction.values() for e in own), key=lambda e: e.id)
    pairs = collision_pairs(session, [r for r in reactions if r.bimolecular])
    chosen, gaps = chosen_expressions(session, reactions)
    flags = [
        *_collision_limit_flags(expressions, pairs, by_id),
        *_expression_flags(expressions, by_id),
        *_gap_flags(gaps),
        *_chosen_flags(chosen, T_range),
    ]
    flags = [f for f in flags if f.code not in ignore]
    flags.sort(key=lambda f: (f.key, CHECK_CODES.index(f.code), f.expression_id or 0))
    return CheckReport(flags, len(reactions), len(expressions), T_range, ignore)


def _collision_limit_flags(
    expressions: list[ExpressionRow],
    pairs: dict[int, CollisionPair | str],
    by_id: dict[int, ReactionRow],
) -> list[Flag]:
    """k(T) above the hard-sphere collision rate, all complete bimolecular expressions at once."""
    rows = [
        (e, pair)
        for e in expressions
        if e.complete and isinstance(pair := pairs.get(e.reaction_id), CollisionPair)
    ]
    if not rows:
        return []
    grid_unit = np.geomspace(1.0, 2.0, 40) - 1.0  # 0..1, denser at the low end
    low = np.array([[e.T_min or DEFAULT_LIMIT_RANGE[0]] for e, _ in rows])
    high = np.array([[e.T_max or DEFAULT_LIMIT_RANGE[1]] for e, _ in rows])
    T = low + (high - low) * grid_unit
    A, n, Ea = (np.array([[getattr(e, name)] for e, _ in rows]) for name in ("A", "n", "Ea"))
    k = modified_arrhenius(T, A, n, Ea)
    arguments = PairColumns.of([pair for _, pair in rows]).rate_arguments("hard-sphere")
    z = collision_rate(T, **{name: _column(v) for name, v in arguments.items()})
    ratio, where = collision_limit_ratio(T, k, z)
    flags = []
    for (e, _pair), r, t in zip(rows, np.atleast_1d(ratio), np.atleast_1d(where), strict=True):
        if r > 1.0:
            flags.append(
                Flag(
                    by_id[e.reaction_id].key,
                    "above-collision-limit",
                    f"expression {e.id} ({e.origin}) is {r:.3g} times the hard-sphere "
                    f"collision rate at {t:.4g} K",
                    e.id,
                    float(r),
                    float(t),
                )
            )
    return flags


def _column(value: object) -> object:
    """A per-reaction array as a column that broadcasts against a (reactions, grid) array."""
    return value[:, None] if isinstance(value, np.ndarray) else value


def _expression_flags(
    expressions: list[ExpressionRow], by_id: dict[int, ReactionRow]
) -> list[Flag]:
    flags = []
    for e in expressions:
        key = by_id[e.reaction_id].key
        steric = e.provenance.get("steric_factor")
        if steric is not None and steric > 1.0:
            what = "is estimated with" if e.origin == "collision-estimate" else "implies"
            flags.append(
                Flag(
                    key,
                    "steric-above-one",
                    f"expression {e.id} ({e.origin}) {what} a steric factor of {steric:.3g} > 1",
                    e.id,
                    float(steric),
                )
            )
        if e.origin == "measured-fit" and "collinear-n-ea" in (e.provenance.get("warnings") or []):
            flags.append(
                Flag(
                    key,
                    "collinear-fit",
                    f"fit {e.id}: n and Ea are nearly collinear over {e.T_min:.4g}-{e.T_max:.4g} K;"
                    " refit with the two-parameter arrhenius form",
                    e.id,
                )
            )
    return flags


def _gap_flags(gaps: list[ReactionRow]) -> list[Flag]:
    return [
        Flag(
            reaction.key,
            "nothing-usable",
            "no complete expression (no fit, no literature A, no estimate)",
        )
        for reaction in gaps
    ]


def _chosen_flags(chosen: list[Chosen], T_range: tuple[float, float] | None) -> list[Flag]:
    flags = []
    for choice in chosen:
        e = choice.expression
        key = choice.reaction.key
        estimated = e.provenance.get("estimated_diameters") or []
        if e.origin == "collision-estimate" and estimated:
            flags.append(
                Flag(
                    key,
                    "estimated-diameter",
                    f"the exported estimate {e.id} uses estimated diameters of "
                    f"{', '.join(estimated)}",
                    e.id,
                )
            )
        if T_range is not None:
            flag = _extrapolation_flag(key, e, T_range)
            if flag is not None:
                flags.append(flag)
    return flags


def _extrapolation_flag(key: str, e: ExpressionRow, T_range: tuple[float, float]) -> Flag | None:
    low, high = T_range
    if e.T_min is None or e.T_max is None:
        return Flag(
            key,
            "extrapolation",
            f"the exported expression {e.id} ({e.origin}) states no valid range; "
            f"it would be used over {low:g}-{high:g} K",
            e.id,
        )
    if e.T_min > low * (1 + 1e-9) or e.T_max < high * (1 - 1e-9):
        return Flag(
            key,
            "extrapolation",
            f"the exported expression {e.id} ({e.origin}) holds over "
            f"{e.T_min:.4g}-{e.T_max:.4g} K, but would be used over {low:g}-{high:g} K",
            e.id,
        )
    return None
