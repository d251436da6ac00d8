"""The checks the rate-law forms make possible (called by :mod:`ratebank.services.checks`).

- ``falloff-not-monotonic``: a ``falloff`` k(T, P) that falls somewhere as the
  pressure rises (or an ``activated`` one that rises), on a grid of pressures
  from 0.1 Pa to 1000 bar at four temperatures across the expression's range.
  Lindemann's k = k_inf Pr/(1 + Pr) rises with [M]; a broadening function
  with a centre above 1 can bend it back.
- ``fc-out-of-range``: a centre broadening factor outside (0, 1]: the stored Fc
  of ``fixed-fc``, or Troe's Fcent(T) anywhere in the expression's range.
- ``troe-temperature-not-positive``: Troe's T*** or T* (or T**, when given) not
  above 0 K.
- ``sum-ranges-inconsistent``: a ``sum`` some of whose terms state a range and
  others not, or whose terms' ranges differ (disjoint: the terms never hold
  together; overlapping: together only over the common part).
- ``efficiency-unknown-species``: an efficiency for a species not in the store.
- ``efficiency-unused``: efficiencies stated for a reaction that uses no [M]_eff
  (written without M and with no ``falloff`` or ``activated`` expression).
- ``no-efficiencies`` (a note, not a flag): a reaction written with M that
  states no efficiency, so every collider counts 1.

Each function takes plain rows and returns findings (key, code, message,
expression id, value, temperature).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import NamedTuple

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science.falloff import troe_centre
from ratebank.science.pressure import bath_gas_concentration
from ratebank.services.selection import rate_at
from ratebank.store.efficiency_species import StatedEfficiency
from ratebank.store.expressions import form_of
from ratebank.store.queries import ExpressionRow, ReactionRow

FORM_CODES = (
    "falloff-not-monotonic",
    "fc-out-of-range",
    "troe-temperature-not-positive",
    "sum-ranges-inconsistent",
    "efficiency-unknown-species",
    "efficiency-unused",
)
#: Findings that inform without failing a check.
NOTE_CODES = ("no-efficiencies",)
#: Pressures the fall-off curve is followed over [Pa] (0.1 Pa to 1000 bar).
PRESSURE_GRID = np.geomspace(0.1, 1.0e8, 81)
#: Range used where an expression states none [K].
DEFAULT_RANGE = (200.0, 3000.0)
#: A relative step of k smaller than this is rounding, not a turn of the curve.
_TOLERANCE = 1e-9


class Finding(NamedTuple):
    key: str
    code: str
    message: str
    expression_id: int | None = None
    value: float | None = None
    temperature: float | None = None


def _temperatures(e: ExpressionRow, count: int) -> np.ndarray:
    low = e.T_min or DEFAULT_RANGE[0]
    high = e.T_max or DEFAULT_RANGE[1]
    return np.geomspace(low, high, count) if high > low else np.array([low])


def monotonic_findings(
    expressions: Iterable[ExpressionRow], by_id: dict[int, ReactionRow]
) -> list[Finding]:
    """``falloff-not-monotonic`` for every complete fall-off or activated expression."""
    found = []
    for e in expressions:
        if e.form not in ("falloff", "activated") or not e.complete:
            continue
        reaction = by_id[e.reaction_id]
        T = _temperatures(e, 4)[:, None]
        M = bath_gas_concentration(PRESSURE_GRID[None, :], T)
        try:
            k = np.asarray(rate_at(e, reaction.third_body, T, M).k, dtype=float)
        except ScienceInputError:
            continue  # parameters the formula refuses are flagged by the checks below
        step = np.diff(k, axis=1) / k[:, :-1]
        wrong = step < -_TOLERANCE if e.form == "falloff" else step > _TOLERANCE
        if not wrong.any():
            continue
        row, column = np.argwhere(wrong)[0]
        direction = "falls" if e.form == "falloff" else "rises"
        found.append(
            Finding(
                reaction.key,
                "falloff-not-monotonic",
                f"expression {e.id} ({e.form}): k {direction} as the pressure rises from "
                f"{PRESSURE_GRID[column]:.3g} to {PRESSURE_GRID[column + 1]:.3g} Pa at "
                f"{T[row, 0]:.4g} K (k of {e.form} should "
                + ("rise" if e.form == "falloff" else "fall")
                + " with pressure)",
                e.id,
                float(PRESSURE_GRID[column]),
                float(T[row, 0]),
            )
        )
    return found


def broadening_findings(
    expressions: Iterable[ExpressionRow], by_id: dict[int, ReactionRow]
) -> list[Finding]:
    """``fc-out-of-range`` and ``troe-temperature-not-positive``."""
    found = []
    for e in expressions:
        key = by_id[e.reaction_id].key
        if e.broadening == "fixed-fc" and e.Fc is not None and not 0.0 < e.Fc <= 1.0:
            found.append(
                Finding(
                    key,
                    "fc-out-of-range",
                    f"expression {e.id}: Fc = {e.Fc:.4g} lies outside (0, 1]",
                    e.id,
                    float(e.Fc),
                )
            )
        if e.broadening != "troe":
            continue
        named = {"T***": e.troe_T3, "T*": e.troe_T1, "T**": e.troe_T2}
        bad = [f"{name} = {value:.4g} K" for name, value in named.items() if _not_positive(value)]
        if bad:
            found.append(
                Finding(
                    key,
                    "troe-temperature-not-positive",
                    f"expression {e.id}: Troe's {', '.join(bad)} must be above 0 K",
                    e.id,
                )
            )
            continue
        flag = _troe_centre_finding(key, e)
        if flag is not None:
            found.append(flag)
    return found


def _not_positive(value: float | None) -> bool:
    return value is not None and not value > 0.0


def _troe_centre_finding(key: str, e: ExpressionRow) -> Finding | None:
    if e.troe_alpha is None or e.troe_T3 is None or e.troe_T1 is None:
        return None
    T = _temperatures(e, 50)
    try:
        Fcent = np.asarray(troe_centre(T, e.troe_alpha, e.troe_T3, e.troe_T1, e.troe_T2))
    except ScienceInputError as exc:
        return Finding(key, "fc-out-of-range", f"expression {e.id}: {exc}", e.id)
    outside = ~((Fcent > 0.0) & (Fcent <= 1.0 + _TOLERANCE))
    if not outside.any():
        return None
    i = int(np.argmax(outside))
    return Finding(
        key,
        "fc-out-of-range",
        f"expression {e.id}: Troe's centre Fcent = {Fcent[i]:.4g} at {T[i]:.4g} K lies "
        "outside (0, 1]",
        e.id,
        float(Fcent[i]),
        float(T[i]),
    )


def sum_range_findings(
    expressions: Iterable[ExpressionRow], by_id: dict[int, ReactionRow]
) -> list[Finding]:
    """``sum-ranges-inconsistent`` for every ``sum`` with more than one term."""
    found = []
    for e in expressions:
        if e.form != "sum" or not e.terms:
            continue
        ranges = [(e.T_min, e.T_max), *((t.T_min, t.T_max) for t in e.terms)]
        message = _range_problem(ranges)
        if message is not None:
            found.append(
                Finding(
                    by_id[e.reaction_id].key,
                    "sum-ranges-inconsistent",
                    f"expression {e.id} (sum): {message}",
                    e.id,
                )
            )
    return found


def _range_problem(ranges: Sequence[tuple[float | None, float | None]]) -> str | None:
    """Why the terms' ranges of a sum do not agree, or None."""
    stated = [(low, high) for low, high in ranges if low is not None and high is not None]
    if not stated:
        return None
    if len(stated) < len(ranges):
        without = [str(i) for i, (low, high) in enumerate(ranges, 1) if low is None or high is None]
        return f"term(s) {', '.join(without)} state no range while the others do"
    if len(set(stated)) == 1:
        return None
    common = (max(low for low, _ in stated), min(high for _, high in stated))
    spans = ", ".join(f"{low:.4g}-{high:.4g} K" for low, high in stated)
    if common[0] > common[1]:
        return f"the terms' ranges ({spans}) are disjoint: they never hold together"
    return (
        f"the terms' ranges differ ({spans}); the sum holds only over "
        f"{common[0]:.4g}-{common[1]:.4g} K"
    )


def efficiency_findings(
    reactions: Sequence[ReactionRow],
    by_reaction: dict[int, list[ExpressionRow]],
    stated: Sequence[StatedEfficiency],
) -> tuple[list[Finding], list[Finding]]:
    """(flags, notes): efficiencies for unknown species or for reactions without [M]_eff;
    reactions written with M that state no efficiency."""
    by_id = {r.id: r for r in reactions}
    own: dict[int, list[StatedEfficiency]] = {}
    for row in stated:
        own.setdefault(row.reaction_id, []).append(row)
    flags, notes = [], []
    for reaction_id, rows in own.items():
        key = by_id[reaction_id].key
        for row in rows:
            if row.species is None:
                flags.append(
                    Finding(
                        key,
                        "efficiency-unknown-species",
                        f"efficiency {row.efficiency:.4g} names species id {row.species_id}, "
                        "which is not in the store",
                        value=float(row.efficiency),
                    )
                )
        if not _uses_third_body(by_id[reaction_id], by_reaction.get(reaction_id, [])):
            names = ", ".join(r.species or f"id {r.species_id}" for r in rows)
            flags.append(
                Finding(
                    key,
                    "efficiency-unused",
                    f"efficiencies stated for {names}, but the reaction is written without M "
                    "and has no falloff or activated expression: they are never used",
                )
            )
    for reaction in reactions:
        if reaction.third_body and reaction.id not in own:
            notes.append(
                Finding(
                    reaction.key,
                    "no-efficiencies",
                    "written with M but states no third-body efficiency: every collider counts 1",
                )
            )
    return flags, notes


def _uses_third_body(reaction: ReactionRow, expressions: Iterable[ExpressionRow]) -> bool:
    forms = {form_of(e.form, reaction.third_body) for e in expressions}
    return reaction.third_body or bool(forms & {"falloff", "activated"})
