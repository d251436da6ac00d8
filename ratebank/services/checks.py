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

import math
from dataclasses import dataclass, field

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.errors import RatebankError
from ratebank.services.partners import collision_pairs
from ratebank.services.selection import chosen_expressions
from ratebank.store.models import Expression, Reaction

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
    t_range: tuple[float, float] | None = None,
    ignore: list[str] | None = None,
    keys: list[str] | None = None,
) -> CheckReport:
    """Run every check; ``ignore`` names codes not to report."""
    import numpy as np

    from ratebank.science import collision
    from ratebank.science.arrhenius import modified_arrhenius

    ignore = list(ignore or [])
    unknown = [c for c in ignore if c not in CHECK_CODES]
    if unknown:
        raise RatebankError(
            f"unknown check {', '.join(unknown)}; the checks are {', '.join(CHECK_CODES)}"
        )
    if t_range is not None and not (0 < t_range[0] < t_range[1]):
        raise RatebankError("--t-range needs two temperatures, the lower first, both above 0 K")
    if keys:
        from ratebank.services.curate import find_reaction

        reactions = [find_reaction(session, key) for key in keys]
    else:
        reactions = list(session.scalars(select(Reaction).order_by(Reaction.key)))
    by_id = {r.id: r for r in reactions}
    expressions: list[Expression] = []
    ids = list(by_id)
    for start in range(0, len(ids), 500):
        expressions.extend(
            session.scalars(
                select(Expression)
                .where(Expression.reaction_id.in_(ids[start : start + 500]))
                .order_by(Expression.id)
            )
        )
    flags: list[Flag] = []

    # collision limit, vectorized over all complete bimolecular expressions
    bimolecular = [r for r in reactions if r.reaction_order == 2 and not r.third_body]
    pairs = collision_pairs(session, bimolecular)
    grid_unit = np.geomspace(1.0, 2.0, 40) - 1.0  # 0..1, denser at the low end
    rows = []
    for e in expressions:
        pair = pairs.get(e.reaction_id)
        if e.A is None or pair is None or isinstance(pair, str):
            continue
        low = e.t_min or DEFAULT_LIMIT_RANGE[0]
        high = e.t_max or DEFAULT_LIMIT_RANGE[1]
        rows.append((e, pair, low + (high - low) * grid_unit))
    if rows:
        T = np.stack([grid for _, _, grid in rows])
        A = np.array([[e.A] for e, _, _ in rows])
        n = np.array([[e.n] for e, _, _ in rows])
        Ea = np.array([[e.Ea] for e, _, _ in rows])
        k = modified_arrhenius(T, A, n, Ea)
        z = np.stack([pair.collision_rate(grid) for _, pair, grid in rows])
        ratio, where = collision.collision_limit_ratio(T, k, z)
        for (e, _pair, _grid), r, t in zip(
            rows, np.atleast_1d(ratio), np.atleast_1d(where), strict=True
        ):
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

    for e in expressions:
        key = by_id[e.reaction_id].key
        provenance = e.provenance or {}
        steric = provenance.get("steric_factor")
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
        if e.origin == "measured-fit" and "collinear-n-ea" in (provenance.get("warnings") or []):
            flags.append(
                Flag(
                    key,
                    "collinear-fit",
                    f"fit {e.id}: n and Ea are nearly collinear over {e.t_min:.4g}-{e.t_max:.4g} K;"
                    " refit with --form arrhenius",
                    e.id,
                )
            )

    chosen, gaps = chosen_expressions(session, reactions)
    for reaction in gaps:
        flags.append(
            Flag(
                reaction.key,
                "nothing-usable",
                "no complete expression (no fit, no literature A, no estimate)",
            )
        )
    for choice in chosen:
        e = choice.expression
        key = choice.reaction.key
        if e.origin == "collision-estimate":
            estimated = (e.provenance or {}).get("estimated_diameters") or []
            if estimated:
                flags.append(
                    Flag(
                        key,
                        "estimated-diameter",
                        f"the exported estimate {e.id} uses estimated diameters of "
                        f"{', '.join(estimated)}",
                        e.id,
                    )
                )
        if t_range is not None:
            low, high = t_range
            if e.t_min is None or e.t_max is None:
                flags.append(
                    Flag(
                        key,
                        "extrapolation",
                        f"the exported expression {e.id} ({e.origin}) states no valid range; "
                        f"it would be used over {low:g}-{high:g} K",
                        e.id,
                    )
                )
            elif e.t_min > low * (1 + 1e-9) or e.t_max < high * (1 - 1e-9):
                flags.append(
                    Flag(
                        key,
                        "extrapolation",
                        f"the exported expression {e.id} ({e.origin}) holds over "
                        f"{e.t_min:.4g}-{e.t_max:.4g} K, but would be used over "
                        f"{low:g}-{high:g} K",
                        e.id,
                    )
                )
    flags = [f for f in flags if f.code not in ignore]
    flags.sort(key=lambda f: (f.key, CHECK_CODES.index(f.code), f.expression_id or 0))
    return CheckReport(flags, len(reactions), len(expressions), t_range, ignore)


def _finite(value: float | None) -> bool:
    return value is not None and math.isfinite(value)
