"""Number formatting for tables: 3-4 significant digits, units in the headers."""

from __future__ import annotations

import math


def sig(value: float | None, digits: int = 4) -> str:
    """A number to ``digits`` significant digits; empty for None.

    >>> sig(6.02214076e23)
    '6.022e+23'
    >>> sig(298.15)
    '298.1'
    >>> sig(None)
    ''
    """
    if value is None:
        return ""
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    if value == 0:
        return "0"
    magnitude = abs(value)
    if 1e-3 <= magnitude < 1e5:
        return f"{value:.{digits}g}"
    return f"{value:.{digits - 1}e}"


def trange(t_min: float | None, t_max: float | None) -> str:
    """A temperature range such as ``250-400``; empty when unknown.

    >>> trange(250.0, 400.0)
    '250-400'
    """
    if t_min is None and t_max is None:
        return ""
    return f"{sig(t_min)}-{sig(t_max)}"


#: Longest table drawn in a terminal; the rest is counted (``--json`` gives all).
MAX_TABLE_ROWS = 200


def shown(rows: list, limit: int = MAX_TABLE_ROWS) -> tuple[list, str]:
    """The rows to draw and a note about the ones left out.

    >>> shown([1, 2, 3], limit=2)
    ([1, 2], '... and 1 more row(s) not shown; use --json for all')
    """
    if len(rows) <= limit:
        return rows, ""
    return rows[:limit], f"... and {len(rows) - limit} more row(s) not shown; use --json for all"
