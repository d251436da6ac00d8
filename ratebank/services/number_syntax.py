"""The one syntax of a number in curated input, for every importer and command-line number.

The usual decimal syntax and nothing else; :mod:`ratebank.services.input_rules` states
the rules of curated input and gives these under the same names. They stand apart from
the other rules, which need the equation parser and the units, so that the command line
reads its number options without loading those.
"""

from __future__ import annotations

import math
import re
import sys

#: The one accepted spelling of a number (after surrounding spaces are removed).
NUMBER_SYNTAX = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
#: Spaces allowed around a number.
NUMBER_PADDING = " \t"
#: The smallest positive value stored at full precision (the smallest normal double).
SMALLEST_NORMAL = sys.float_info.min
#: How the number syntax is explained in messages.
NUMBER_HINT = "written with the digits 0-9, an optional sign, '.' and exponent (e.g. 1.5e-12)"


def number_text_problem(text: str) -> str | None:
    """Why ``text`` is not a number in the accepted syntax, or None when it is one.

    >>> number_text_problem("1.5e-12") is None, number_text_problem(" 300 ") is None
    (True, True)
    >>> number_text_problem("1_000")
    "'1_000' is not a number written with the digits 0-9, an optional sign, '.' and exponent \
(e.g. 1.5e-12)"
    >>> number_text_problem("nan")
    "'nan' is not a finite number"
    """
    stripped = text.strip(NUMBER_PADDING)
    if NUMBER_SYNTAX.fullmatch(stripped):
        value = float(stripped)
        if not math.isfinite(value):
            return f"{stripped} is too large for a number"
        if value != 0 and abs(value) < SMALLEST_NORMAL:
            return (
                f"{stripped} is too close to zero to be stored at full precision (below "
                f"{SMALLEST_NORMAL:.1e})"
            )
        return None
    shown = text.strip()
    try:
        value = float(text)
    except ValueError:
        return f"{shown!r} is not a number"
    if not math.isfinite(value):
        return f"{shown!r} is not a finite number"
    return f"{shown!r} is not a number {NUMBER_HINT}"


def parse_number(text: str, what: str = "a number") -> float:
    """The value of ``text`` in the accepted syntax; ValueError naming ``what`` otherwise.

    >>> parse_number("-4.9")
    -4.9
    >>> parse_number("３００", "a temperature in K")
    Traceback (most recent call last):
    ...
    ValueError: '３００' is not a number written with the digits 0-9, an optional sign, '.' \
and exponent (e.g. 1.5e-12); expected a temperature in K
    """
    problem = number_text_problem(text)
    if problem is not None:
        raise ValueError(f"{problem}; expected {what}")
    return float(text.strip(NUMBER_PADDING))


#: Characters of the plain syntax: where a column holds only these, Python's ``float``
#: reads exactly the texts :data:`NUMBER_SYNTAX` accepts.
PLAIN_CHARACTERS = re.compile(r"[0-9+\-.eE \t]*")
