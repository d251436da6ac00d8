"""Chemical formulas: element counts, Hill notation and molar masses.

A formula is written with element symbols (a capital letter and at most one
small letter), whole-number counts and parentheses with multipliers:
``CH3OH``, ``C2H5``, ``HO2``, ``N2O5``, ``(CH3)2CO``, ``CH3(CH2)2OH``, ``Ar``.
Radicals are plain formulas (``OH``, ``CH3``); there is no radical mark.

Refused, each with the 1-based column of the problem: unknown element symbols,
unbalanced or empty parentheses, counts of 0 or with a leading zero, counts
above 9999, spaces and any other character. Charges (``OH-``, ``H3O+``) are
refused because ratebank handles neutral gas-phase species; isotope labels
(``D``, ``T``, mass numbers such as ``13C``) are refused for now because the
atomic-weight table holds natural-abundance weights only.

Atomic weights are the IUPAC standard atomic weights abridged to five
significant figures, 2021 table (conventional values for elements whose
weight is an interval), shipped in ``ratebank/science/data/atomic_weights.csv``
and read on first use. Elements 1 to 92 are listed; those without a standard
atomic weight (Tc, Pm, Po, At, Rn, Fr, Ra, Ac) carry the mass number of their
longest-lived isotope, as the table's notes say.

References
----------
.. [1] T. Prohaska et al., "Standard atomic weights of the elements 2021
   (IUPAC Technical Report)", Pure Appl. Chem. 94, 573-600 (2022),
   doi:10.1515/pac-2019-0603.
.. [2] E. A. Hill, "On a system of indexing chemical literature", J. Am.
   Chem. Soc. 22, 478-494 (1900), doi:10.1021/ja02046a005.
"""

from __future__ import annotations

import functools
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from types import MappingProxyType

from ratebank.errors import FormulaError

__all__ = [
    "MAX_COUNT",
    "Element",
    "add_counts",
    "elements",
    "hill_formula",
    "hill_order",
    "molar_mass",
    "multiply_counts",
    "parse_formula",
    "standard_atomic_weight",
]

#: Largest count accepted after an element or a parenthesised group.
MAX_COUNT = 9999

_UPPER = "ABCDEFGHIJKLMNOPQRSTUVWXYZ"
_LOWER = "abcdefghijklmnopqrstuvwxyz"
_DIGITS = "0123456789"
_ISOTOPE_LABELS = {"D": "deuterium", "T": "tritium"}


@dataclass(frozen=True)
class Element:
    """One row of the atomic-weight table.

    Attributes
    ----------
    symbol : str
        Element symbol, e.g. ``'Cl'``.
    atomic_number : int
        Z.
    standard_atomic_weight : float
        Abridged standard atomic weight (relative atomic mass) [-], numerically
        the molar mass in g mol^-1; for elements without one, the mass number
        of the longest-lived isotope (see ``note``).
    note : str
        Where the value comes from.
    """

    symbol: str
    atomic_number: int
    standard_atomic_weight: float
    note: str


@functools.cache
def elements() -> Mapping[str, Element]:
    """The atomic-weight table, read from the package data on first use.

    Returns
    -------
    Mapping of str to Element
        Read-only, keyed by symbol, in order of atomic number.

    Notes
    -----
    Source: IUPAC CIAAW standard atomic weights 2021, abridged (Prohaska et
    al., Pure Appl. Chem. 94, 573 (2022), doi:10.1515/pac-2019-0603). The
    CSV file's comment rows say how the values were checked.

    Examples
    --------
    >>> table = elements()
    >>> len(table), table["Cl"].standard_atomic_weight, table["Cl"].atomic_number
    (92, 35.45, 17)
    """
    import csv
    from importlib import resources

    text = (
        resources.files("ratebank.science.data")
        .joinpath("atomic_weights.csv")
        .read_text(encoding="utf-8")
    )
    rows = csv.DictReader(line for line in text.splitlines() if line and not line.startswith("#"))
    table = {
        row["symbol"]: Element(
            symbol=row["symbol"],
            atomic_number=int(row["atomic_number"]),
            standard_atomic_weight=float(row["standard_atomic_weight_g_per_mol"]),
            note=row["note"],
        )
        for row in rows
    }
    return MappingProxyType(table)


def standard_atomic_weight(symbol: str) -> float:
    """The abridged IUPAC 2021 standard atomic weight of an element.

    Parameters
    ----------
    symbol : str
        Element symbol, e.g. ``'O'``.

    Returns
    -------
    float
        Relative atomic mass [-] (numerically g mol^-1).

    Raises
    ------
    FormulaError
        For a symbol that is not in the table.

    Examples
    --------
    >>> standard_atomic_weight("O")
    15.999
    """
    element = elements().get(symbol)
    if element is None:
        raise FormulaError(
            f"unknown element symbol '{symbol}': expected a symbol from H to U (Z = 1 to 92)"
        )
    return element.standard_atomic_weight


def hill_order(symbols: Iterable[str]) -> list[str]:
    """Sort element symbols in Hill order.

    Parameters
    ----------
    symbols : iterable of str
        Element symbols (duplicates are kept).

    Returns
    -------
    list of str
        With carbon present: C, then H, then the rest alphabetically. Without
        carbon: all alphabetically, H included (Hill 1900).

    Examples
    --------
    >>> hill_order(["O", "H", "C"]), hill_order(["H", "Cl"])
    (['C', 'H', 'O'], ['Cl', 'H'])
    """
    symbols = list(symbols)
    if "C" not in symbols:
        return sorted(symbols)
    rank = {"C": 0, "H": 1}
    return sorted(symbols, key=lambda symbol: (rank.get(symbol, 2), symbol))


def _quoted(text: str) -> str:
    return f"'{text}'" if text.isprintable() and "'" not in text else repr(text)


def _show(char: str) -> str:
    return f"'{char}'" if char.isprintable() and char != "'" else repr(char)


@functools.lru_cache(maxsize=1024)
def _parse(text: str) -> tuple[tuple[str, int], ...]:
    """Parse a formula into Hill-ordered (symbol, count) pairs; see parse_formula."""
    if not isinstance(text, str):
        raise FormulaError(f"a formula must be given as text, got {type(text).__name__}")
    stripped = text.strip()
    if not stripped:
        raise FormulaError("empty formula: expected element symbols such as 'CH3OH'")
    known = elements()

    def fail(problem: str, index: int, expected: str) -> FormulaError:
        return FormulaError(
            f"{problem} at column {index + 1} in formula {_quoted(stripped)}: {expected}"
        )

    def read_count(index: int) -> tuple[int, int]:
        """Read an optional count at ``index``; return (count, index after it)."""
        end = index
        while end < len(stripped) and stripped[end] in _DIGITS:
            end += 1
        if end == index:
            return 1, index
        digits = stripped[index:end]
        if digits[0] == "0":
            raise fail(
                f"count '{digits}'", index, "counts are whole numbers of at least 1, no leading 0"
            )
        if end - index > len(str(MAX_COUNT)):
            raise fail(f"count '{digits}'", index, f"counts are at most {MAX_COUNT}")
        return int(digits), end

    # One dict of counts per open parenthesis level; the bottom one is the result.
    stack: list[dict[str, int]] = [{}]
    open_columns: list[int] = []
    index = 0
    while index < len(stripped):
        char = stripped[index]
        if char in _UPPER:
            end = index + 1
            if end < len(stripped) and stripped[end] in _LOWER:
                end += 1
            symbol = stripped[index:end]
            if symbol not in known:
                if symbol in _ISOTOPE_LABELS:
                    raise fail(
                        f"isotope label '{symbol}' ({_ISOTOPE_LABELS[symbol]})",
                        index,
                        "isotope labels are not accepted; write the element, 'H'",
                    )
                raise fail(
                    f"unknown element symbol '{symbol}'",
                    index,
                    "expected a symbol from H to U (Z = 1 to 92)",
                )
            count, index = read_count(end)
            level = stack[-1]
            level[symbol] = level.get(symbol, 0) + count
        elif char == "(":
            stack.append({})
            open_columns.append(index)
            index += 1
        elif char == ")":
            if len(stack) == 1:
                raise fail("unmatched ')'", index, "expected a '(' before it")
            group = stack.pop()
            opened = open_columns.pop()
            if not group:
                raise fail("empty parentheses", opened, "expected element symbols inside '( )'")
            count, index = read_count(index + 1)
            level = stack[-1]
            for symbol, number in group.items():
                level[symbol] = level.get(symbol, 0) + number * count
        elif char in _DIGITS:
            end = index
            while end < len(stripped) and stripped[end] in _DIGITS:
                end += 1
            raise fail(
                f"number '{stripped[index:end]}' with no element or ')' before it",
                index,
                "a count follows an element symbol or ')' "
                "(mass numbers and leading coefficients are not accepted)",
            )
        elif char in _LOWER:
            raise fail(
                f"unexpected {_show(char)}",
                index,
                "element symbols start with a capital letter, e.g. 'C' or 'Cl'",
            )
        elif char in "+-":
            raise fail(
                f"charge sign {_show(char)}",
                index,
                "charged species are not accepted; ratebank formulas are neutral",
            )
        else:
            raise fail(
                f"unexpected character {_show(char)}",
                index,
                "expected an element symbol, a count, '(' or ')'",
            )
    if open_columns:
        raise fail("'(' is never closed", open_columns[-1], "expected ')'")
    counts = stack[0]
    return tuple((symbol, counts[symbol]) for symbol in hill_order(counts))


def parse_formula(text: str) -> dict[str, int]:
    """Read a chemical formula into element counts.

    Parameters
    ----------
    text : str
        A formula such as ``'CH3OH'`` or ``'(CH3)2CO'``; surrounding spaces
        are ignored.

    Returns
    -------
    dict of str to int
        Count of atoms of each element, in Hill order.

    Raises
    ------
    FormulaError
        Naming the 1-based column (in the text without its surrounding spaces)
        of the first problem and what was expected there: unknown element,
        unbalanced or empty parentheses, zero count, charge sign, isotope
        label, empty text, any other character.

    Notes
    -----
    Grammar: formula = (element [count] | '(' formula ')' [count])+, where an
    element is a capital letter with an optional small letter and a count is
    a whole number from 1 to 9999 without a leading zero. A group's count
    multiplies every element in it.

    Examples
    --------
    >>> parse_formula("CH3(CH2)2OH")
    {'C': 3, 'H': 8, 'O': 1}
    >>> parse_formula("HO2")
    {'H': 1, 'O': 2}
    """
    return dict(_parse(text))


def _checked_counts(counts: Mapping[str, int]) -> dict[str, int]:
    """Validate a mapping of element counts (positive whole numbers of known elements)."""
    known = elements()
    checked: dict[str, int] = {}
    for symbol, count in counts.items():
        if symbol not in known:
            raise FormulaError(
                f"unknown element symbol {_quoted(str(symbol))}: "
                "expected a symbol from H to U (Z = 1 to 92)"
            )
        if isinstance(count, bool) or not isinstance(count, int) or count < 0:
            raise FormulaError(
                f"count of {symbol} is {count!r}: expected a whole number of at least 0"
            )
        if count:
            checked[symbol] = count
    return checked


def _counts_of(formula_or_counts: str | Mapping[str, int]) -> dict[str, int]:
    if isinstance(formula_or_counts, str):
        return parse_formula(formula_or_counts)
    return _checked_counts(formula_or_counts)


def molar_mass(formula_or_counts: str | Mapping[str, int]) -> float:
    """Molar mass of a formula from the IUPAC standard atomic weights.

    Parameters
    ----------
    formula_or_counts : str or mapping of str to int
        A formula (see :func:`parse_formula`) or element counts.

    Returns
    -------
    float
        Molar mass [kg mol^-1].

    Raises
    ------
    FormulaError
        For an unreadable formula, an unknown element or a negative count, or
        when no atoms are given.

    Notes
    -----
    M = sum_i n_i A_r,i M_u with the abridged 2021 standard atomic weights
    A_r (IUPAC CIAAW, doi:10.1515/pac-2019-0603) and the molar mass constant
    M_u taken as 1e-3 kg mol^-1; its 2019-SI deviation from that, below 1e-9
    relative (CODATA), is far inside the atomic-weight uncertainties.

    Examples
    --------
    >>> round(molar_mass("H2O"), 9)
    0.018015
    >>> round(molar_mass({"C": 1, "O": 2}) * 1000, 3)
    44.009
    """
    counts = _counts_of(formula_or_counts)
    if not counts:
        raise FormulaError("no atoms given: expected a formula such as 'CH4'")
    table = elements()
    grams = sum(count * table[symbol].standard_atomic_weight for symbol, count in counts.items())
    return grams / 1000.0


def hill_formula(formula_or_counts: str | Mapping[str, int]) -> str:
    """Write element counts as a formula in Hill order.

    Parameters
    ----------
    formula_or_counts : str or mapping of str to int
        Element counts, or a formula to be rewritten.

    Returns
    -------
    str
        C first and H second when carbon is present, then the other elements
        alphabetically; without carbon, all elements alphabetically. Counts of
        1 are left out, elements with count 0 are dropped.

    Raises
    ------
    FormulaError
        For an unknown element, a negative count or no atoms at all.

    Examples
    --------
    >>> hill_formula("CH3OH"), hill_formula({"H": 1, "Cl": 1}), hill_formula("N2O5")
    ('CH4O', 'ClH', 'N2O5')
    """
    counts = _counts_of(formula_or_counts)
    if not counts:
        raise FormulaError("no atoms given: expected element counts such as {'C': 1, 'H': 4}")
    return "".join(
        symbol + ("" if counts[symbol] == 1 else str(counts[symbol]))
        for symbol in hill_order(counts)
    )


def add_counts(*counts: Mapping[str, int]) -> dict[str, int]:
    """Sum element counts, for example over the species of one side of an equation.

    Parameters
    ----------
    *counts : mapping of str to int
        Element counts to add.

    Returns
    -------
    dict of str to int
        The sums, in Hill order.

    Examples
    --------
    >>> add_counts({"C": 1, "H": 4}, {"O": 1, "H": 1})
    {'C': 1, 'H': 5, 'O': 1}
    """
    total: dict[str, int] = {}
    for part in counts:
        for symbol, count in part.items():
            total[symbol] = total.get(symbol, 0) + count
    return {symbol: total[symbol] for symbol in hill_order(total)}


def multiply_counts(counts: Mapping[str, int], factor: int) -> dict[str, int]:
    """Multiply element counts by a whole number, e.g. a stoichiometric coefficient.

    Parameters
    ----------
    counts : mapping of str to int
        Element counts.
    factor : int
        Multiplier (at least 1).

    Returns
    -------
    dict of str to int
        ``factor`` times every count.

    Raises
    ------
    FormulaError
        If ``factor`` is not a whole number of at least 1.

    Examples
    --------
    >>> multiply_counts({"O": 1, "H": 1}, 2)
    {'O': 2, 'H': 2}
    """
    if isinstance(factor, bool) or not isinstance(factor, int) or factor < 1:
        raise FormulaError(f"multiplier must be a whole number of at least 1, got {factor!r}")
    return {symbol: count * factor for symbol, count in counts.items()}
