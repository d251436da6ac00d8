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
    number go through :func:`number_text_problem` (one cell; the number rule
    lives in :mod:`ratebank.services.number_syntax`, which needs neither the
    equation parser nor the units, and is given here under the same names) or
    :func:`~ratebank.services.measurement_validation.number_problems` (a column,
    looking closely only at suspect cells);
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

import unicodedata

from ratebank.errors import EquationError
from ratebank.science.equation import check_species_name
from ratebank.science.units import rate_to_si
from ratebank.services.number_syntax import NUMBER_HINT as NUMBER_HINT
from ratebank.services.number_syntax import NUMBER_PADDING as NUMBER_PADDING
from ratebank.services.number_syntax import NUMBER_SYNTAX as NUMBER_SYNTAX
from ratebank.services.number_syntax import PLAIN_CHARACTERS as PLAIN_CHARACTERS
from ratebank.services.number_syntax import SMALLEST_NORMAL as SMALLEST_NORMAL
from ratebank.services.number_syntax import number_text_problem as number_text_problem
from ratebank.services.number_syntax import parse_number as parse_number

#: Temperatures [K] ratebank accepts for measurements and validity ranges.
TEMPERATURE_RANGE_K = (10.0, 10000.0)


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
