"""Numbers as the user wrote them: rounding away the noise of unit conversions.

A value that went into SI and back (1500 K, 1.7e-13 cm3/molecule/s) can come
back one unit in the last place off (1499.9999999999998, 1.6999999999999998e-13).
Everything ratebank shows or writes is rounded to 15 significant digits, which
a double always carries (DBL_DIG = 15), so the noise goes and no information a
user could have typed is lost. Like ``ratebank.errors``, every layer may import
this module.
"""

from __future__ import annotations

import math
from typing import Any

#: Significant digits of every number shown or written.
SIGNIFICANT_DIGITS = 15


def round_significant(value: float, digits: int = SIGNIFICANT_DIGITS) -> float:
    """``value`` rounded to ``digits`` significant digits; infinities and NaN unchanged.

    >>> round_significant(1499.9999999999998)
    1500.0
    >>> round_significant(-459.99999999999994)
    -460.0
    >>> round_significant(1.6999999999999998e-13)
    1.7e-13
    >>> round_significant(2.0 / 3.0)
    0.666666666666667
    """
    if not math.isfinite(value) or value == 0:
        return value
    return float(f"{value:.{digits}g}")


#: Types passed through as they are; checked first, as most values of a listing are these.
_UNCHANGED = frozenset((str, int, bool, type(None)))


def rounded(data: Any, digits: int = SIGNIFICANT_DIGITS) -> Any:
    """``data`` (nested dicts, lists and tuples) with every float rounded.

    >>> rounded({"T_K": [1499.9999999999998, 300], "ok": True, "A": None})
    {'T_K': [1500.0, 300], 'ok': True, 'A': None}
    """
    if isinstance(data, float):
        return round_significant(data, digits)
    if isinstance(data, dict):
        return {
            key: value if type(value) in _UNCHANGED else rounded(value, digits)
            for key, value in data.items()
        }
    if isinstance(data, list | tuple):
        return [value if type(value) in _UNCHANGED else rounded(value, digits) for value in data]
    return data
