"""What a number and a name may look like in curated input: one rule each, used everywhere.

Numbers
    The usual decimal syntax and nothing else: an optional sign, the digits
    0-9, an optional ``.``, an optional exponent (``1.5e-12``), with spaces
    around allowed. Python's ``float`` reads more than that (``1_000``, digits
    of other scripts such as ``٣٠٠`` or ``３００``, ``inf`` and ``nan``); a
    number written so in a data file is a typo or a file that went through
    something it should not have, so it is refused with the reason. Values too
    close to zero to be stored at full precision (subnormal doubles, below
    about 2.2e-308) are refused too. Every importer and every command-line
    number go through :func:`number_text_problem` (one cell) or
    :func:`number_problems` (a column, looking closely only at suspect cells);
    a property test checks that the two agree.

Names
    Species names, reaction keys, reaction classes and measurement-set names
    hold printable characters only: no control characters, no invisible
    formatting characters (zero-width spaces, joiners, byte-order marks) and
    no bidirectional overrides, which would make two different names look the
    same or reorder what is shown (:func:`name_problem`). Species names must
    also be readable by the equation parser (:func:`species_name_problem`).

Temperatures
    Temperatures of measurements and of validity ranges lie between 10 and
    10000 K (:data:`TEMPERATURE_RANGE_K`).
"""

from __future__ import annotations

import math
import re
import sys
import unicodedata
from collections.abc import Sequence
from typing import Any

#: The one accepted spelling of a number (after surrounding spaces are removed).
NUMBER_SYNTAX = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
#: Spaces allowed around a number.
NUMBER_PADDING = " \t"
#: The smallest positive value stored at full precision (the smallest normal double).
SMALLEST_NORMAL = sys.float_info.min
#: Temperatures [K] ratebank accepts for measurements and validity ranges.
TEMPERATURE_RANGE_K = (10.0, 10000.0)
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


def number_problems(texts: Sequence[str], values: Any, present: Any) -> list[tuple[int, str]]:
    """(index, reason) for each present cell of ``texts`` that is not an accepted number.

    ``values`` holds Python's ``float`` of each text (NaN where it could not
    read it) and ``present`` marks the non-empty cells, both as numpy arrays.
    Every reason comes from :func:`number_text_problem`; only the cells that
    can have one are looked at one by one: those ``float`` could not read or
    read as infinite, NaN or subnormal, and, when the column holds any
    character outside the plain syntax, those cells.
    """
    import numpy as np

    with np.errstate(invalid="ignore"):
        suspects = present & (
            ~np.isfinite(values) | ((values != 0) & (np.abs(values) < SMALLEST_NORMAL))
        )
    if not _PLAIN_CHARACTERS.fullmatch("".join(texts)):
        plain = np.fromiter(
            (_PLAIN_CHARACTERS.fullmatch(text) is not None for text in texts),
            dtype=bool,
            count=len(texts),
        )
        suspects |= present & ~plain
    found = []
    for i in np.flatnonzero(suspects).tolist():
        problem = number_text_problem(texts[i])
        if problem is not None:
            found.append((i, problem))
    return found


#: Characters of the plain syntax: where a column holds only these, Python's ``float``
#: reads exactly the texts :data:`NUMBER_SYNTAX` accepts.
_PLAIN_CHARACTERS = re.compile(r"[0-9+\-.eE \t]*")


def temperature_problem(value: float) -> str | None:
    """Why ``value`` [K] is not a temperature ratebank accepts, or None."""
    low, high = TEMPERATURE_RANGE_K
    if not low <= value <= high:
        return f"{value:g} K is outside {low:g} to {high:g} K, the temperatures ratebank accepts"
    return None


def _describe(char: str) -> str:
    return f"U+{ord(char):04X} ({unicodedata.name(char, 'unnamed character')})"


def name_problem(text: str, what: str) -> str | None:
    """Why ``text`` cannot be a name, key or set name (``what`` says which), or None.

    >>> name_problem("oh-ch4", "reaction key") is None
    True
    >>> name_problem("oh\\u200bch4", "reaction key")
    "reaction key 'oh\\\\u200bch4' contains U+200B (ZERO WIDTH SPACE), an invisible or \
control character; use printable characters only"
    """
    for char in text:
        if not char.isprintable():
            return (
                f"{what} {text!r} contains {_describe(char)}, an invisible or control "
                "character; use printable characters only"
            )
    return None


def species_name_problem(name: str) -> str | None:
    """Why ``name`` cannot be a species name, or None: printable, and readable in equations."""
    from ratebank.errors import EquationError
    from ratebank.science.equation import check_species_name

    problem = name_problem(name, "species name")
    if problem is not None:
        return problem
    try:
        check_species_name(name)
    except EquationError as exc:
        return f"{exc}; a species name must be one an equation can hold"
    return None


# --------------------------------------------------------------------------- plausible values

#: Rate constants a measurement of each reaction order can hold, in the units the trade
#: quotes (common practice, generous bounds: the fastest bimolecular reactions are near
#: 1e-9 cm3 molecule-1 s-1, the slowest measured near 1e-25; a value outside is a unit or
#: exponent typo). Order: (low, high, unit).
PLAUSIBLE_RATE_CONSTANT = {
    1: (1.0e-12, 1.0e16, "s-1"),
    2: (1.0e-30, 1.0e-6, "cm3/molecule/s"),
    3: (1.0e-50, 1.0e-20, "cm6/molecule2/s"),
}
#: Collision diameters [Angstrom] a species can have (common practice: from He at about
#: 2.5 to large organics near 10; a value outside is a unit typo, nm for Angstrom).
PLAUSIBLE_DIAMETER_ANGSTROM = (1.0, 20.0)
#: Lennard-Jones well depths eps/k_B [K] a species can have (common practice).
PLAUSIBLE_WELL_DEPTH_K = (1.0, 5000.0)


def rate_constant_bounds_si(order: int) -> tuple[float, float, str]:
    """(low, high) [SI] of :data:`PLAUSIBLE_RATE_CONSTANT` for ``order``, and how to say it.

    >>> low, high, said = rate_constant_bounds_si(2)
    >>> f"{low:.3e}", said
    ('6.022e-13', '1e-30 to 1e-06 cm3/molecule/s')
    """
    from ratebank.science.units import rate_to_si

    low, high, unit = PLAUSIBLE_RATE_CONSTANT.get(order, PLAUSIBLE_RATE_CONSTANT[2])
    return (
        float(rate_to_si(low, unit, order)),
        float(rate_to_si(high, unit, order)),
        f"{low:g} to {high:g} {unit}",
    )


def range_problem(value: float, bounds: tuple[float, float], unit: str) -> str | None:
    """Why ``value`` lies outside ``bounds``, or None.

    >>> range_problem(0.3828, PLAUSIBLE_DIAMETER_ANGSTROM, "Angstrom")
    '0.3828 Angstrom is outside 1-20 Angstrom'
    """
    low, high = bounds
    if low <= value <= high:
        return None
    return f"{value:g} {unit} is outside {low:g}-{high:g} {unit}"
