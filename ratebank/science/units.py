"""Rate-constant and activation-energy units: a small explicit dimensional parser.

Inside ratebank every rate constant of reaction order n is stored in
(m^3 mol^-1)^(n-1) s^-1 and every activation energy in J mol^-1 (the README, Units
and the rate-law convention). This module converts at the boundaries. It holds its own table of
a dozen unit symbols instead of a general unit library: the table is short
enough to read in full and costs nothing at start-up.

Grammar of a unit text
----------------------
* Factors are separated by spaces, ``*``, ``·`` (U+00B7), ``⋅`` (U+22C5) or
  ``/``. A ``/`` divides by the next factor or parenthesised group only, so
  ``a/b/c`` means a b^-1 c^-1 and ``cm^3/(mol*s)`` means cm^3 mol^-1 s^-1.
* An exponent follows its symbol or ``)`` directly: ``cm3``, ``s-1``,
  ``cm^3``, ``s^-1``, ``s^(-1)``, ``cm**3``, ``cm³``, ``s⁻¹``. Exponents are
  non-zero whole numbers of at most two digits.
* The number ``1`` may stand for "no unit" (``1/s``); a leading ``/`` is read
  the same way (``/s``). No other numbers are accepted.
* A run of letters is always one symbol, following the SI rule that a prefix
  is written against its unit: ``ms`` is the millisecond, never metre times
  second, which must be written ``m s`` or ``m*s``. Two factors written
  against each other without a separator (``cm3s-1``) are refused.

Rate-constant symbols (``RATE_UNIT_SYMBOLS``): lengths ``m``, ``cm``, ``dm``,
``mm``; volume ``L`` or ``l`` (the litre, 1 dm^3); amounts ``mol`` and
``molecule`` (also ``molec``, ``molecules``: 1/N_A mol); times ``s``, ``ms``
(millisecond), ``min`` (60 s), ``h`` (hour, 3600 s); concentration ``M``
(mol L^-1, so ``M-1 s-1`` is a second-order unit).

Energy units (``ENERGY_UNITS``) are molar energies: ``J/mol``, ``kJ/mol``,
``cal/mol``, ``kcal/mol``, ``J/molecule``, ``eV`` (per molecule), ``K``
(E/R, multiplied by R) and ``cm-1`` (a wavenumber per molecule). The calorie
is the thermochemical calorie, exactly 4.184 J.

Physical constants come from :mod:`ratebank.science.constants` (the exact
values of the 2019 SI, checked against :mod:`scipy.constants`); parsed units
are cached.

References
----------
.. [1] BIPM, *The International System of Units (SI)*, 9th edition (2019),
   section 5 (writing unit symbols and prefixes).
.. [2] IUPAC, *Quantities, Units and Symbols in Physical Chemistry* (Green
   Book), 3rd edition (2007), doi:10.1039/9781847557889.
"""

from __future__ import annotations

import functools
import math
import numbers
from dataclasses import dataclass
from typing import Any

from ratebank.errors import UnitError

__all__ = [
    "ENERGY_UNITS",
    "ENERGY_UNIT_SPELLINGS",
    "RATE_UNIT_EXAMPLES",
    "RATE_UNIT_SYMBOLS",
    "EnergyUnit",
    "ParsedUnit",
    "RateUnit",
    "canonical_energy_unit",
    "energy_from_si",
    "energy_to_si",
    "parse_energy_unit",
    "parse_rate_unit",
    "parse_unit",
    "rate_from_si",
    "rate_to_si",
    "rate_unit_label",
    "si_rate_unit",
]

#: Symbols accepted in rate-constant units, with what each one means.
RATE_UNIT_SYMBOLS: dict[str, str] = {
    "m": "metre",
    "cm": "centimetre (1e-2 m)",
    "dm": "decimetre (1e-1 m)",
    "mm": "millimetre (1e-3 m)",
    "L": "litre (1 dm3)",
    "l": "litre (1 dm3)",
    "mol": "mole",
    "molecule": "molecule (1/N_A mol)",
    "molec": "molecule (1/N_A mol)",
    "molecules": "molecule (1/N_A mol)",
    "s": "second",
    "ms": "millisecond (1e-3 s); metre times second is written 'm s'",
    "min": "minute (60 s)",
    "h": "hour (3600 s)",
    "M": "mol/L (1e3 mol m-3)",
}

#: Example spellings of rate-constant units, by reaction order.
RATE_UNIT_EXAMPLES: dict[int, tuple[str, ...]] = {
    1: ("s-1", "1/s", "/s", "min-1", "h-1"),
    2: (
        "cm3/molecule/s",
        "cm3 molecule-1 s-1",
        "cm^3/(mol*s)",
        "cm3/mol/s",
        "cm3 mol-1 s-1",
        "dm3/mol/s",
        "L/mol/s",
        "l mol-1 s-1",
        "M-1 s-1",
        "m3/mol/s",
    ),
    3: (
        "cm6/molecule2/s",
        "cm^6 molecule^-2 s^-1",
        "cm6/mol2/s",
        "L2 mol-2 s-1",
        "M-2 s-1",
        "m6/mol2/s",
    ),
}

#: Accepted activation-energy units (canonical spelling -> meaning).
ENERGY_UNITS: dict[str, str] = {
    "J/mol": "joule per mole",
    "kJ/mol": "kilojoule per mole",
    "cal/mol": "thermochemical calorie (4.184 J) per mole",
    "kcal/mol": "thermochemical kilocalorie (4184 J) per mole",
    "J/molecule": "joule per molecule (times N_A)",
    "eV": "electronvolt per molecule (times e N_A)",
    "K": "E/R in kelvin (times R)",
    "cm-1": "wavenumber per molecule (times h c 100 N_A)",
}

#: Other spellings the energy parser reads, for help texts.
ENERGY_UNIT_SPELLINGS: tuple[str, ...] = (
    "J/mol",
    "J mol-1",
    "kJ/mol",
    "kJ mol-1",
    "kJ mol^-1",
    "cal/mol",
    "kcal/mol",
    "kcal mol-1",
    "J/molecule",
    "eV",
    "eV/molecule",
    "K",
    "cm-1",
    "cm^-1",
    "1/cm",
)

_DIGITS = "0123456789"
_LETTERS = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ"
_SPACES = " \t"
_MULTIPLY = "*·⋅"
_SUPERSCRIPT_DIGITS = {ch: value for value, ch in enumerate("⁰¹²³⁴⁵⁶⁷⁸⁹")}
_SUPERSCRIPT_MINUS = "⁻"
_MAX_EXPONENT = 99
_MAX_NESTING = 8

# Spelling -> canonical symbol, per kind of unit.
_RATE_SPELLINGS: dict[str, str] = {
    "m": "m",
    "cm": "cm",
    "dm": "dm",
    "mm": "mm",
    "L": "L",
    "l": "L",
    "mol": "mol",
    "molecule": "molecule",
    "molec": "molecule",
    "molecules": "molecule",
    "s": "s",
    "ms": "ms",
    "min": "min",
    "h": "h",
    "M": "M",
}
_ENERGY_SPELLINGS: dict[str, str] = {
    "J": "J",
    "kJ": "kJ",
    "cal": "cal",
    "kcal": "kcal",
    "eV": "eV",
    "K": "K",
    "cm": "cm",
    "mol": "mol",
    "molecule": "molecule",
    "molec": "molecule",
    "molecules": "molecule",
}

# Canonical rate symbol -> (integer factor, power of ten, power of N_A,
# (length, amount, time) dimension). Scales are kept as exact integers and
# powers so that cm3 is exactly 1e-6, not (1e-2)**3 rounded twice.
_RATE_BASE: dict[str, tuple[int, int, int, tuple[int, int, int]]] = {
    "m": (1, 0, 0, (1, 0, 0)),
    "cm": (1, -2, 0, (1, 0, 0)),
    "dm": (1, -1, 0, (1, 0, 0)),
    "mm": (1, -3, 0, (1, 0, 0)),
    "L": (1, -3, 0, (3, 0, 0)),
    "mol": (1, 0, 0, (0, 1, 0)),
    "molecule": (1, 0, -1, (0, 1, 0)),
    "s": (1, 0, 0, (0, 0, 1)),
    "ms": (1, -3, 0, (0, 0, 1)),
    "min": (60, 0, 0, (0, 0, 1)),
    "h": (3600, 0, 0, (0, 0, 1)),
    "M": (1, 3, 0, (-3, 1, 0)),
}

# Factor signature of each accepted energy unit -> canonical spelling.
_ENERGY_SIGNATURES: dict[frozenset[tuple[str, int]], str] = {
    frozenset({("J", 1), ("mol", -1)}): "J/mol",
    frozenset({("kJ", 1), ("mol", -1)}): "kJ/mol",
    frozenset({("cal", 1), ("mol", -1)}): "cal/mol",
    frozenset({("kcal", 1), ("mol", -1)}): "kcal/mol",
    frozenset({("J", 1), ("molecule", -1)}): "J/molecule",
    frozenset({("eV", 1)}): "eV",
    frozenset({("eV", 1), ("molecule", -1)}): "eV",
    frozenset({("K", 1)}): "K",
    frozenset({("cm", -1)}): "cm-1",
}


@functools.cache
def _constants() -> Any:
    """The constants module, imported on first use."""
    from ratebank.science import constants

    return constants


def _energy_factor(canonical: str) -> float:
    """J/mol per one unit of the canonical energy unit."""
    if canonical == "J/mol":
        return 1.0
    if canonical == "kJ/mol":
        return 1000.0
    c = _constants()
    factors = {
        "cal/mol": c.CALORIE,
        "kcal/mol": 1000.0 * c.CALORIE,
        "J/molecule": c.AVOGADRO,
        "eV": c.ELEMENTARY_CHARGE * c.AVOGADRO,
        "K": c.GAS_CONSTANT,
        # 1 cm-1 per molecule is the photon energy h c (100 m-1), times N_A.
        "cm-1": c.PLANCK * c.SPEED_OF_LIGHT * 100.0 * c.AVOGADRO,
    }
    return factors[canonical]


def _quote(text: str) -> str:
    """Quote user text for a one-line message (repr when it holds control characters)."""
    return f"'{text}'" if text.isprintable() and "'" not in text else repr(text)


def _show(char: str) -> str:
    """Quote one character of user text for a message."""
    return f"'{char}'" if char.isprintable() and char != "'" else repr(char)


class _FactorReader:
    """Recursive-descent reader of the unit grammar described in the module docstring."""

    def __init__(self, text: str, spellings: dict[str, str], kind: str, symbol_hint: str):
        self.text = text
        self.pos = 0
        self.spellings = spellings
        self.kind = kind
        self.symbol_hint = symbol_hint

    def fail(self, problem: str, pos: int, expected: str = "") -> UnitError:
        tail = f"; {expected}" if expected else ""
        return UnitError(
            f"cannot read {self.kind} {_quote(self.text)}: {problem} at column {pos + 1}{tail}"
        )

    def read(self) -> tuple[tuple[str, int], ...]:
        exponents = self.product(open_pos=None, depth=0)
        return tuple((symbol, power) for symbol, power in exponents.items() if power != 0)

    def skip_spaces(self) -> bool:
        start = self.pos
        while self.pos < len(self.text) and self.text[self.pos] in _SPACES:
            self.pos += 1
        return self.pos > start

    def product(self, open_pos: int | None, depth: int) -> dict[str, int]:
        text = self.text
        exponents: dict[str, int] = {}
        operator_pos: int | None = None  # an operator still waiting for its factor
        invert = False
        factors_read = 0
        touching = False  # the previous factor ended right here, with no separator
        while True:
            if self.skip_spaces():
                touching = False
            at_end = self.pos >= len(text)
            char = "" if at_end else text[self.pos]
            if at_end or char == ")":
                if operator_pos is not None:
                    raise self.fail(
                        f"expected a unit after '{text[operator_pos]}'",
                        self.pos,
                        "a unit symbol or '(' must follow",
                    )
                if open_pos is not None and at_end:
                    raise self.fail("'(' is never closed", open_pos, "expected ')'")
                if open_pos is None and char == ")":
                    raise self.fail("unmatched ')'", self.pos, "expected the end of the unit")
                if factors_read == 0:
                    raise self.fail(
                        "empty parentheses", open_pos or 0, "expected a unit inside '( )'"
                    )
                return exponents
            if char == "/":
                if operator_pos is not None:
                    raise self.fail(
                        f"expected a unit after '{text[operator_pos]}', found '/'", self.pos
                    )
                operator_pos, invert, touching = self.pos, True, False
                self.pos += 1
                continue
            if char in _MULTIPLY:
                if operator_pos is not None or factors_read == 0:
                    raise self.fail(f"'{char}' must stand between two units", self.pos, "remove it")
                operator_pos, touching = self.pos, False
                self.pos += 1
                continue
            if touching and char == "." and text[self.pos - 1] in _DIGITS:
                raise self.fail(
                    "fractional exponent", self.pos, "exponents are non-zero whole numbers"
                )
            if touching and (char in _LETTERS or char in _DIGITS or char == "("):
                raise self.fail(
                    f"{_show(char)} is written against the previous factor",
                    self.pos,
                    "separate factors with a space, '*', '·' or '/' (e.g. 'm s', not 'ms')",
                )
            sign = -1 if invert else 1
            for symbol, power in self.factor(depth):
                exponents[symbol] = exponents.get(symbol, 0) + sign * power
            factors_read += 1
            operator_pos, invert, touching = None, False, True

    def factor(self, depth: int) -> list[tuple[str, int]]:
        text = self.text
        start = self.pos
        char = text[start]
        if char == "(":
            if depth >= _MAX_NESTING:
                raise self.fail("parentheses nested too deeply", start, "simplify the unit")
            self.pos += 1
            inner = self.product(open_pos=start, depth=depth + 1)
            self.pos += 1  # the ')' that product() stopped at
            power = self.exponent()
            return [(symbol, p * power) for symbol, p in inner.items()]
        if char in _LETTERS:
            end = start
            while end < len(text) and text[end] in _LETTERS:
                end += 1
            word = text[start:end]
            symbol = self.spellings.get(word)
            if symbol is None:
                raise self.fail(f"unknown symbol '{word}'", start, self.symbol_hint)
            self.pos = end
            return [(symbol, self.exponent())]
        if char in _DIGITS:
            end = start
            while end < len(text) and text[end] in _DIGITS:
                end += 1
            if text[start:end] != "1":
                raise self.fail(
                    f"number '{text[start:end]}'",
                    start,
                    "a unit holds symbols and exponents only; the number 1 may stand alone (1/s)",
                )
            self.pos = end
            return []
        raise self.fail(
            f"unexpected character {_show(char)}", start, "expected a unit symbol or '('"
        )

    def exponent(self) -> int:
        text = self.text
        start = self.pos
        if start >= len(text):
            return 1
        char = text[start]
        if char in _DIGITS:
            value = self.digits(_DIGITS)
        elif char == "-":
            self.pos += 1
            value = -self.digits(_DIGITS, after="'-'")
        elif char == "^" or text.startswith("**", start):
            self.pos += 1 if char == "^" else 2
            bracket = self.pos < len(text) and text[self.pos] == "("
            if bracket:
                self.pos += 1
            sign = 1
            if self.pos < len(text) and text[self.pos] in "+-":
                sign = -1 if text[self.pos] == "-" else 1
                self.pos += 1
            value = sign * self.digits(_DIGITS, after=f"'{text[start : self.pos]}'")
            if bracket:
                if self.pos >= len(text) or text[self.pos] != ")":
                    raise self.fail("exponent '(' is never closed", self.pos, "expected ')'")
                self.pos += 1
        elif char == _SUPERSCRIPT_MINUS or char in _SUPERSCRIPT_DIGITS:
            sign = 1
            if char == _SUPERSCRIPT_MINUS:
                sign = -1
                self.pos += 1
            value = sign * self.digits("".join(_SUPERSCRIPT_DIGITS), after="'⁻'")
        else:
            return 1
        if value == 0:
            raise self.fail("exponent 0", start, "an exponent is a non-zero whole number")
        if abs(value) > _MAX_EXPONENT:
            raise self.fail(
                f"exponent {value}", start, f"exponents are at most {_MAX_EXPONENT} in size"
            )
        return value

    def digits(self, alphabet: str, after: str = "") -> int:
        text = self.text
        start = self.pos
        while self.pos < len(text) and text[self.pos] in alphabet:
            self.pos += 1
        if self.pos == start:
            raise self.fail(f"expected digits after {after}", start, "e.g. s-1 or cm^3")
        if alphabet == _DIGITS:
            return int(text[start : self.pos])
        return int("".join(str(_SUPERSCRIPT_DIGITS[ch]) for ch in text[start : self.pos]))


def _read_factors(
    text: str, spellings: dict[str, str], kind: str, symbol_hint: str, example: str
) -> tuple[tuple[str, int], ...]:
    """Parse ``text`` into merged (canonical symbol, exponent) pairs, in written order."""
    if not isinstance(text, str):
        raise UnitError(f"a {kind} must be given as text, got {type(text).__name__}")
    if not text.strip():
        raise UnitError(f"no {kind} given: expected text such as {example}")
    return _FactorReader(text, spellings, kind, symbol_hint).read()


@dataclass(frozen=True)
class ParsedUnit:
    """A unit text read into an SI scale factor and a (length, amount, time) dimension.

    Attributes
    ----------
    text : str
        The unit as written (surrounding spaces removed).
    to_si : float
        Multiply a value in this unit by ``to_si`` to get SI-molar units
        (m, mol, s) [-].
    length, amount, time : int
        Exponents of length, amount of substance and time.
    factors : tuple of (str, int)
        Canonical symbols with their net exponents, in written order.
    """

    text: str
    to_si: float
    length: int
    amount: int
    time: int
    factors: tuple[tuple[str, int], ...]

    @property
    def dimension(self) -> tuple[int, int, int]:
        """Exponents (length, amount, time)."""
        return (self.length, self.amount, self.time)


@dataclass(frozen=True)
class RateUnit:
    """A rate-constant unit of a given reaction order.

    Attributes
    ----------
    text : str
        The unit as written, e.g. ``'cm3/molecule/s'``.
    order : int
        Reaction order n the unit belongs to (n >= 1).
    to_si : float
        value_SI = value * to_si, with value_SI in (m^3 mol^-1)^(n-1) s^-1.
    """

    text: str
    order: int
    to_si: float


@dataclass(frozen=True)
class EnergyUnit:
    """A molar-energy unit for activation energies.

    Attributes
    ----------
    text : str
        The unit as written, e.g. ``'kcal/mol'``.
    to_si : float
        value_SI = value * to_si, with value_SI in J mol^-1.
    """

    text: str
    to_si: float


def _dimension_text(length: int, amount: int, time: int) -> str:
    parts = [
        f"{name}{power if power != 1 else ''}"
        for name, power in (("length", length), ("amount", amount), ("time", time))
        if power
    ]
    return " ".join(parts) if parts else "no dimension"


def _expected_for_order(order: int) -> str:
    """Describe the dimension of a rate constant of ``order``, with an example."""
    if order == 1:
        return "time-1 (e.g. s-1)"
    n = order - 1
    volume = "volume" if n == 1 else f"volume{n}"
    molecule = "molecule" if n == 1 else f"molecule{n}"
    mol = "mol" if n == 1 else f"mol{n}"
    return f"{volume} amount-{n} time-1 (e.g. cm{3 * n}/{molecule}/s or cm{3 * n}/{mol}/s)"


def _check_order_argument(order: object) -> int:
    if isinstance(order, bool) or not isinstance(order, int) or order < 1:
        raise UnitError(f"reaction order must be a whole number of at least 1, got {order!r}")
    return order


@functools.lru_cache(maxsize=512)
def parse_unit(text: str) -> ParsedUnit:
    """Read a unit text into an SI scale factor and its dimension.

    Parameters
    ----------
    text : str
        A unit written with the symbols of ``RATE_UNIT_SYMBOLS`` and the
        grammar of the module docstring, e.g. ``'cm^3/(mol*s)'``.

    Returns
    -------
    ParsedUnit
        ``to_si`` converts to m, mol, s; ``length``, ``amount``, ``time`` are
        the dimension exponents.

    Raises
    ------
    UnitError
        With the column of the first character that could not be read and
        what was expected there.

    Notes
    -----
    Scale factors are built from exact integers and powers of ten, then
    multiplied by the Avogadro constant N_A (exact in the 2019 SI)
    to the power of the net number of ``molecule`` factors.

    Examples
    --------
    >>> unit = parse_unit("cm^3/(mol*s)")
    >>> unit.to_si, unit.dimension
    (1e-06, (3, -1, -1))
    >>> parse_unit("M-1 s-1").to_si
    0.001
    """
    factors = _read_factors(
        text,
        _RATE_SPELLINGS,
        "unit",
        symbol_hint="expected one of " + ", ".join(_RATE_SPELLINGS),
        example="'cm3/molecule/s'",
    )
    numerator, denominator, power_of_ten, power_of_avogadro = 1, 1, 0, 0
    length = amount = time = 0
    for symbol, power in factors:
        integer, ten, avogadro, (d_length, d_amount, d_time) = _RATE_BASE[symbol]
        if power > 0:
            numerator *= integer**power
        else:
            denominator *= integer ** (-power)
        power_of_ten += ten * power
        power_of_avogadro += avogadro * power
        length += d_length * power
        amount += d_amount * power
        time += d_time * power
    if power_of_ten >= 0:
        numerator *= 10**power_of_ten
    else:
        denominator *= 10 ** (-power_of_ten)
    try:
        # int / int is correctly rounded, so exact decimal scales stay exact.
        to_si = numerator / denominator
        if power_of_avogadro:
            to_si *= _constants().AVOGADRO ** power_of_avogadro
    except OverflowError:
        to_si = float("inf")
    if not 0.0 < to_si < float("inf"):
        raise UnitError(
            f"unit {_quote(text)} has a scale factor outside the floating-point range: "
            "expected a unit such as cm3/molecule/s"
        )
    return ParsedUnit(text.strip(), to_si, length, amount, time, factors)


def parse_rate_unit(text: str, order: int | None = None) -> RateUnit:
    """Read the unit of a rate constant and infer (or check) its reaction order.

    Parameters
    ----------
    text : str
        Unit text, e.g. ``'cm3/molecule/s'``, ``'cm3 mol-1 s-1'``, ``'s-1'``,
        ``'cm6/molecule2/s'`` (see ``RATE_UNIT_EXAMPLES``).
    order : int, optional
        Reaction order n the unit must belong to; ``None`` infers it.

    Returns
    -------
    RateUnit
        With ``to_si`` converting to (m^3 mol^-1)^(n-1) s^-1.

    Raises
    ------
    UnitError
        If the text cannot be read, if its dimension is not that of a rate
        constant, if it belongs to order 0 or below, or if it belongs to
        another order than ``order``.

    Notes
    -----
    A rate constant of order n, defined by r = k prod [X_i]^nu_i with r in
    amount per volume per time, has dimension (volume/amount)^(n-1) time^-1:
    time exponent -1, length exponent 3(n-1), amount exponent -(n-1). The
    order is read from the amount exponent. Zeroth-order units (amount per
    volume per time) are refused: ratebank handles orders 1 and above (its
    store holds orders 1 to 3).

    Examples
    --------
    >>> parse_rate_unit("cm3/molecule/s").order
    2
    >>> parse_rate_unit("cm6 mol-2 s-1").to_si
    1e-12
    >>> parse_rate_unit("s-1", order=2)
    Traceback (most recent call last):
    ...
    ratebank.errors.UnitError: unit 's-1' is for a rate constant of order 1, \
but this reaction is of order 2: expected volume amount-1 time-1 \
(e.g. cm3/molecule/s or cm3/mol/s)
    """
    if order is not None:
        _check_order_argument(order)
    return _parse_rate_unit(text, order)


@functools.lru_cache(maxsize=512)
def _parse_rate_unit(text: str, order: int | None) -> RateUnit:
    unit = parse_unit(text)
    shape_ok = unit.time == -1 and unit.length == -3 * unit.amount
    if not shape_ok:
        expected = "expected (volume/amount)^(n-1) per time, e.g. cm3/molecule/s"
        if order is not None:
            expected = f"a reaction of order {order} needs {_expected_for_order(order)}"
        dimension = _dimension_text(unit.length, unit.amount, unit.time)
        raise UnitError(
            f"{_quote(unit.text)} is not a rate-constant unit (its dimension is {dimension}): "
            f"{expected}"
        )
    unit_order = 1 - unit.amount
    if unit_order < 1:
        raise UnitError(
            f"{_quote(unit.text)} is the unit of a rate of order {unit_order} "
            "(amount per volume per time): ratebank handles rate constants of order 1 "
            "or above, e.g. s-1 or cm3/molecule/s"
        )
    if order is not None and unit_order != order:
        raise UnitError(
            f"unit {_quote(unit.text)} is for a rate constant of order {unit_order}, "
            f"but this reaction is of order {order}: expected {_expected_for_order(order)}"
        )
    return RateUnit(unit.text, unit_order, unit.to_si)


def _as_rate_unit(unit: str | RateUnit, order: int | None) -> RateUnit:
    if isinstance(unit, RateUnit):
        if order is not None and _check_order_argument(order) != unit.order:
            raise UnitError(
                f"unit {_quote(unit.text)} is for a rate constant of order {unit.order}, "
                f"but this reaction is of order {order}: expected {_expected_for_order(order)}"
            )
        return unit
    return parse_rate_unit(unit, order)


def _scaled(value: Any, factor: float, divide: bool = False) -> Any:
    """value * factor (or / factor) for a Python or numpy scalar, or an array-like."""
    if isinstance(value, numbers.Real):
        return value / factor if divide else value * factor
    import numpy as np

    array = np.asarray(value, dtype=float)
    return array / factor if divide else array * factor


def rate_to_si(value: Any, unit: str | RateUnit, order: int | None = None) -> Any:
    """Convert rate constants from ``unit`` to SI-molar units.

    Parameters
    ----------
    value : float or array_like
        Rate constant(s) in ``unit``.
    unit : str or RateUnit
        Unit of ``value``, e.g. ``'cm3/molecule/s'``.
    order : int, optional
        Reaction order the unit must belong to (see :func:`parse_rate_unit`).

    Returns
    -------
    float or numpy.ndarray
        Rate constant(s) in (m^3 mol^-1)^(n-1) s^-1; an array for array input.

    Notes
    -----
    value_SI = value * to_si, with molecule = 1/N_A mol (N_A exact in the
    2019 SI).

    Examples
    --------
    >>> rate_to_si(1e-10, "cm3/molecule/s")
    60221407.6
    >>> rate_to_si([1.0, 2.0], "dm3/mol/s")
    array([0.001, 0.002])
    """
    return _scaled(value, _as_rate_unit(unit, order).to_si)


def rate_from_si(value: Any, unit: str | RateUnit, order: int | None = None) -> Any:
    """Convert rate constants from SI-molar units to ``unit``.

    Parameters
    ----------
    value : float or array_like
        Rate constant(s) in (m^3 mol^-1)^(n-1) s^-1.
    unit : str or RateUnit
        Target unit, e.g. ``'cm3 mol-1 s-1'``.
    order : int, optional
        Reaction order the unit must belong to.

    Returns
    -------
    float or numpy.ndarray
        Rate constant(s) in ``unit``: value / to_si.

    Examples
    --------
    >>> rate_from_si(1.0, "cm3 mol-1 s-1")
    1000000.0
    >>> rate_from_si(60.0, "min-1")
    3600.0
    """
    return _scaled(value, _as_rate_unit(unit, order).to_si, divide=True)


def si_rate_unit(order: int) -> str:
    """The SI-molar unit text ratebank stores rate constants of ``order`` in.

    Parameters
    ----------
    order : int
        Reaction order n >= 1.

    Returns
    -------
    str
        ``'s-1'`` for n = 1, otherwise ``'m{3(n-1)}/mol{n-1}/s'`` with the
        exponent 1 left out.

    Examples
    --------
    >>> [si_rate_unit(n) for n in (1, 2, 3)]
    ['s-1', 'm3/mol/s', 'm6/mol2/s']
    """
    n = _check_order_argument(order) - 1
    if n == 0:
        return "s-1"
    return f"m{3 * n}/mol{'' if n == 1 else n}/s"


_VOLUMES = {"cm3": "cm6", "dm3": "dm6", "L": "L2", "m3": "m6"}
_AMOUNTS = ("molecule", "mol")


def rate_units_by_order(unit: str) -> dict[int, str]:
    """The k units of orders 1-3 with the same volume and amount as ``unit``.

    A unit of order n is (volume/amount)^(n-1) s^-1, so one bimolecular or
    termolecular unit fixes every order's (IUPAC Green Book, 3rd ed., 2007,
    section 2.12: k has dimension concentration^(1-n) time^-1). The user's own
    spelling is kept for the order of ``unit``.

    Parameters
    ----------
    unit : str
        A rate-constant unit of order 2 or 3 built from cm3, dm3, L or m3 with
        molecule or mol, per second.

    Returns
    -------
    dict
        {1: 's-1', 2: bimolecular unit, 3: termolecular unit}.

    Raises
    ------
    UnitError
        For a first-order unit (it says nothing about volume or amount) or a
        unit not built from those volumes and amounts.

    Examples
    --------
    >>> rate_units_by_order("cm3/molecule/s")[3]
    'cm6/molecule2/s'
    >>> rate_units_by_order("cm6 mol-2 s-1")[2]
    'cm3/mol/s'
    """
    given = parse_rate_unit(unit)
    if given.order == 1:
        raise UnitError(
            f"{unit!r} is a first-order unit and says nothing about volume or amount; give a "
            "bimolecular unit such as cm3/molecule/s"
        )
    # dm3 and L are the same volume: try first the symbol the user wrote
    for volume in sorted(_VOLUMES, key=lambda v: v.rstrip("3") not in unit):
        for amount in _AMOUNTS:
            candidate = parse_rate_unit(f"{volume}/{amount}/s")
            expected = candidate.to_si ** (given.order - 1)
            if math.isclose(given.to_si, expected, rel_tol=1e-12):
                derived = {
                    1: "s-1",
                    2: f"{volume}/{amount}/s",
                    3: f"{_VOLUMES[volume]}/{amount}2/s",
                }
                derived[given.order] = unit  # keep the user's own spelling for its order
                return derived
    raise UnitError(
        f"cannot derive the units of other reaction orders from {unit!r}: give a bimolecular "
        "unit built from cm3, dm3, L or m3 with molecule or mol, per second "
        "(e.g. cm3/molecule/s)"
    )


_SUPERSCRIPT_TEXT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def rate_unit_label(unit: str | RateUnit | int, *, unicode: bool = True) -> str:
    """A tidy label for a rate-constant unit, for tables and plot axes.

    Parameters
    ----------
    unit : str, RateUnit or int
        A unit text or parsed unit; an int is a reaction order and labels the
        SI-molar unit of that order.
    unicode : bool, optional
        Superscript exponents (``cm³``) when true, plain digits (``cm3``)
        otherwise.

    Returns
    -------
    str
        Factors in written order, separated by spaces, with canonical symbols
        (``molec`` becomes ``molecule``, ``l`` becomes ``L``).

    Examples
    --------
    >>> rate_unit_label("cm^3/(molec*s)")
    'cm³ molecule⁻¹ s⁻¹'
    >>> rate_unit_label(3, unicode=False)
    'm6 mol-2 s-1'
    """
    if isinstance(unit, RateUnit):
        text = unit.text
    elif isinstance(unit, int) and not isinstance(unit, bool):
        text = si_rate_unit(unit)
    else:
        text = unit
    parts = []
    for symbol, power in parse_unit(text).factors:
        exponent = "" if power == 1 else str(power)
        if unicode:
            exponent = exponent.translate(_SUPERSCRIPT_TEXT)
        parts.append(symbol + exponent)
    return " ".join(parts)


@functools.lru_cache(maxsize=256)
def _canonical_energy(text: str) -> str:
    accepted = ", ".join(ENERGY_UNITS)
    try:
        factors = _read_factors(
            text,
            _ENERGY_SPELLINGS,
            "energy unit",
            symbol_hint=f"accepted energy units are {accepted}",
            example="'kJ/mol'",
        )
    except UnitError as error:
        if "accepted energy units" in str(error):
            raise
        raise UnitError(f"{error}; accepted energy units are {accepted}") from None
    canonical = _ENERGY_SIGNATURES.get(frozenset(factors))
    if canonical is None:
        raise UnitError(
            f"unknown energy unit {_quote(text.strip())}: accepted energy units are {accepted} "
            "(K means E/R; eV and cm-1 are per molecule)"
        )
    return canonical


@functools.lru_cache(maxsize=256)
def parse_energy_unit(text: str) -> EnergyUnit:
    """Read an activation-energy unit.

    Parameters
    ----------
    text : str
        One of the units of ``ENERGY_UNITS`` in any spelling the unit grammar
        allows, e.g. ``'kJ mol^-1'``, ``'kcal/mol'``, ``'K'``, ``'cm-1'``.

    Returns
    -------
    EnergyUnit
        With ``to_si`` converting to J mol^-1.

    Raises
    ------
    UnitError
        Naming the accepted units when the text is not one of them.

    Notes
    -----
    Factors to J mol^-1 (exact 2019 SI constants): cal is the
    thermochemical calorie, 4.184 J; ``K`` is E/R, times R; ``eV`` is per
    molecule, times e N_A; ``cm-1`` is per molecule, times h c (100 m^-1) N_A;
    ``J/molecule`` times N_A. A bare energy such as ``kcal`` is refused:
    whether it is per mole or per molecule must be written.

    Examples
    --------
    >>> parse_energy_unit("kcal mol-1").to_si
    4184.0
    >>> round(parse_energy_unit("eV").to_si, 5)
    96485.33212
    """
    canonical = _canonical_energy(text)
    return EnergyUnit(text.strip(), _energy_factor(canonical))


def canonical_energy_unit(unit: str | EnergyUnit) -> str:
    """The canonical spelling (a key of ``ENERGY_UNITS``) of an energy unit.

    Parameters
    ----------
    unit : str or EnergyUnit
        Any accepted spelling, e.g. ``'kJ mol^-1'``.

    Returns
    -------
    str
        E.g. ``'kJ/mol'``.

    Examples
    --------
    >>> canonical_energy_unit("kJ mol^-1"), canonical_energy_unit("1/cm")
    ('kJ/mol', 'cm-1')
    """
    return _canonical_energy(unit.text if isinstance(unit, EnergyUnit) else unit)


def _as_energy_unit(unit: str | EnergyUnit) -> EnergyUnit:
    return unit if isinstance(unit, EnergyUnit) else parse_energy_unit(unit)


def energy_to_si(value: Any, unit: str | EnergyUnit) -> Any:
    """Convert activation energies from ``unit`` to J mol^-1.

    Parameters
    ----------
    value : float or array_like
        Energy (or E/R [K] when ``unit`` is ``'K'``) in ``unit``.
    unit : str or EnergyUnit
        See :func:`parse_energy_unit`.

    Returns
    -------
    float or numpy.ndarray
        Energy in J mol^-1: value * to_si.

    Examples
    --------
    >>> energy_to_si(1.0, "kcal/mol")
    4184.0
    >>> round(energy_to_si(1775.0, "K"), 3)
    14758.171
    """
    return _scaled(value, _as_energy_unit(unit).to_si)


def energy_from_si(value: Any, unit: str | EnergyUnit) -> Any:
    """Convert activation energies from J mol^-1 to ``unit``.

    Parameters
    ----------
    value : float or array_like
        Energy in J mol^-1.
    unit : str or EnergyUnit
        Target unit, see :func:`parse_energy_unit`.

    Returns
    -------
    float or numpy.ndarray
        value / to_si; for ``'K'`` this is E/R in kelvin.

    Examples
    --------
    >>> round(energy_from_si(1000.0, "K"), 6)
    120.272355
    >>> energy_from_si(4184.0, "kcal/mol")
    1.0
    """
    return _scaled(value, _as_energy_unit(unit).to_si, divide=True)
