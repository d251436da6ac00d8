"""Reaction equations: ratebank's plain equation syntax, canonical form, element balance.

Syntax
------
``reactants -> products``, for example ``CH4 + OH -> CH3 + H2O``.

* One arrow, written ``->``. Text without it is not an equation, and the
  message shows how one is written. ratebank stores one direction per
  reaction; the reverse reaction is entered as a reaction of its own.
* Species are separated by ``+``. Species names never contain ``+``, so a
  ``+`` always separates and the spaces around it are optional
  (``H+O2+M->HO2+M`` is read like ``H + O2 + M -> HO2 + M``). Ions are not
  handled.
* A species name starts with a letter, with ``(``, or with a numeric locant
  followed by a hyphen (``1-C4H8``, ``1,3-C4H6``), and holds letters, digits
  and the characters ``( ) _ - , ' *``; its parentheses balance (``CH2(S)``).
* A stoichiometric coefficient is a whole number from 1 to 20 written before
  the name and separated from it by a space: ``2 OH -> H2O2``. A number
  written against the name (``2OH``) is refused rather than guessed at.
  Repeating a species is the same as a coefficient: ``HO2 + HO2``.
* A third body is the name ``M``, written once on each side:
  ``H + O2 + M -> HO2 + M``. ``M`` is not accepted as an ordinary species,
  with a coefficient, on one side only, twice on a side, or as the only
  entry of a side.
* A species name is valid only if this parser reads it, alone, as that one
  species (:func:`check_species_name`); the store keeps no species that
  could not be written in an equation.

Canonical form
--------------
Each side lists its species sorted by name (plain string order), with
coefficients written out as repeated names (``2 OH`` becomes ``OH + OH``)
and ``+ M`` last; single spaces around ``+`` and ``->``. Parsing the canonical
text gives the same :class:`Equation`, and any reordering of the species of
an equation gives the same canonical text.

Rate-law convention (the README (Units and the rate-law convention)): the rate of reaction is
r = k prod [X_i]^nu_i over the reactants, so for A + A -> products,
r = k [A]^2 and d[A]/dt = -2 r.
"""

from __future__ import annotations

import re
import unicodedata
from collections.abc import Iterable, Mapping
from dataclasses import dataclass

from ratebank.errors import EquationError, FormulaError
from ratebank.science.formula import add_counts, hill_order, parse_formula

__all__ = [
    "ARROW",
    "MAX_COEFFICIENT",
    "THIRD_BODY",
    "Equation",
    "canonical_equation",
    "check_element_balance",
    "check_species_name",
    "looks_like_equation",
    "parse_equation",
]

#: The arrow ratebank writes between reactants and products.
ARROW = "->"
#: Name of the third body (any collision partner).
THIRD_BODY = "M"
#: Largest stoichiometric coefficient accepted.
MAX_COEFFICIENT = 20

_LETTERS = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ"
_DIGITS = "0123456789"
_NAME_CHARACTERS = frozenset(_LETTERS + _DIGITS + "()_-,'*")
#: Characters that draw an arrow; a run of them is one token, and only ``->`` is an arrow.
_ARROW_CHARACTERS = "<=>-"
_LOCANT = re.compile(r"[0-9][0-9,]*-")
_NUMBER = re.compile(r"[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?|[0-9]+/[0-9]+")
_WORD = re.compile(r"\S+")
_EXAMPLE = "e.g. 'CH4 + OH -> CH3 + H2O'"


def _quoted(text: str) -> str:
    return f"'{text}'" if text.isprintable() and "'" not in text else repr(text)


def _show(char: str) -> str:
    shown = f"'{char}'" if char.isprintable() and char != "'" else repr(char)
    if char.isascii():
        return shown
    # a look-alike from another script must be told apart from the letter it resembles
    return f"{shown} (U+{ord(char):04X} {unicodedata.name(char, 'unnamed character')})"


@dataclass(frozen=True)
class Equation:
    """A parsed reaction equation.

    Attributes
    ----------
    reactants : tuple of str
        Reactant names with coefficients expanded (``2 OH`` gives two
        ``'OH'``), sorted, without the third body.
    products : tuple of str
        Product names, likewise.
    third_body : bool
        Whether ``M`` appears on both sides.

    Notes
    -----
    The tuples are sorted on construction, so equations built by hand
    compare equal to parsed ones.

    Examples
    --------
    >>> equation = Equation(("OH", "CH4"), ("H2O", "CH3"))
    >>> equation.canonical, equation.order, equation.is_bimolecular
    ('CH4 + OH -> CH3 + H2O', 2, True)
    """

    reactants: tuple[str, ...]
    products: tuple[str, ...]
    third_body: bool = False

    def __post_init__(self) -> None:
        for side, names in (("reactants", self.reactants), ("products", self.products)):
            names = tuple(names)
            if not names:
                raise EquationError(f"an equation needs at least one of its {side}")
            if any(not isinstance(name, str) or not name for name in names):
                raise EquationError(f"{side} must be non-empty species names, got {names!r}")
            if THIRD_BODY in names:
                raise EquationError(
                    f"'{THIRD_BODY}' among the {side}: the third body is given as "
                    "third_body=True, not as a species"
                )
            # Frozen dataclass: sorting on construction needs object.__setattr__.
            object.__setattr__(self, side, tuple(sorted(names)))
        object.__setattr__(self, "third_body", bool(self.third_body))

    @classmethod
    def from_counts(
        cls,
        reactant_counts: Mapping[str, int],
        product_counts: Mapping[str, int],
        third_body: bool = False,
    ) -> Equation:
        """Build an equation from name -> coefficient mappings.

        Parameters
        ----------
        reactant_counts, product_counts : mapping of str to int
            Species name -> stoichiometric coefficient (a whole number >= 1),
            without the third body.
        third_body : bool, optional
            Whether ``M`` appears on both sides.

        Returns
        -------
        Equation
            With each name repeated as often as its coefficient says.

        Raises
        ------
        EquationError
            For a coefficient that is not a whole number of at least 1.

        Examples
        --------
        >>> Equation.from_counts({"OH": 2}, {"H2O2": 1}).canonical
        'OH + OH -> H2O2'
        """
        return cls(_expand(reactant_counts), _expand(product_counts), third_body)

    @property
    def order(self) -> int:
        """Reaction order: number of reactant molecules, plus 1 for a third body."""
        return len(self.reactants) + (1 if self.third_body else 0)

    @property
    def is_unimolecular(self) -> bool:
        """One reactant molecule and no third body."""
        return self.order == 1

    @property
    def is_bimolecular(self) -> bool:
        """Two reactant molecules and no third body (collision theory applies)."""
        return self.order == 2 and not self.third_body

    @property
    def is_termolecular(self) -> bool:
        """Order 3, with or without a third body."""
        return self.order == 3

    @property
    def is_self_reaction(self) -> bool:
        """A bimolecular reaction of two identical reactants, A + A."""
        return self.is_bimolecular and self.reactants[0] == self.reactants[1]

    @property
    def species(self) -> tuple[str, ...]:
        """Sorted unique species names on both sides, without the third body."""
        return tuple(sorted(set(self.reactants) | set(self.products)))

    @property
    def reactant_counts(self) -> dict[str, int]:
        """Reactant name -> stoichiometric coefficient, sorted by name."""
        return _counts(self.reactants)

    @property
    def product_counts(self) -> dict[str, int]:
        """Product name -> stoichiometric coefficient, sorted by name."""
        return _counts(self.products)

    @property
    def canonical(self) -> str:
        """Canonical text, e.g. ``'H + O2 + M -> HO2 + M'``."""
        tail = (THIRD_BODY,) if self.third_body else ()
        left = " + ".join(self.reactants + tail)
        right = " + ".join(self.products + tail)
        return f"{left} {ARROW} {right}"

    def __str__(self) -> str:
        return self.canonical


def _counts(names: Iterable[str]) -> dict[str, int]:
    counts: dict[str, int] = {}
    for name in sorted(names):
        counts[name] = counts.get(name, 0) + 1
    return counts


def _expand(counts: Mapping[str, int]) -> tuple[str, ...]:
    names: list[str] = []
    for name, coefficient in counts.items():
        if isinstance(coefficient, bool) or not isinstance(coefficient, int) or coefficient < 1:
            raise EquationError(
                f"coefficient of '{name}' is {coefficient!r}: expected a whole number of at least 1"
            )
        names.extend([name] * coefficient)
    return tuple(names)


class _Reader:
    """Reads one equation text; every error names a 1-based column of ``text``."""

    def __init__(self, text: str, subject: str = "equation"):
        self.text = text
        self.subject = subject

    def fail(self, problem: str, index: int, expected: str) -> EquationError:
        return EquationError(
            f"{problem} at column {index + 1} in {self.subject} {_quoted(self.text)}: {expected}"
        )

    def find_arrow(self) -> int:
        """Return the index of the single '->'."""
        text = self.text
        arrows: list[int] = []
        index = 0
        while index < len(text):
            if text[index] in _ARROW_CHARACTERS:
                end = index
                while end < len(text) and text[end] in _ARROW_CHARACTERS:
                    end += 1
                # Only the run '->' is an arrow; a run of hyphens belongs to a species
                # name (n-C3H7), and any other run makes a malformed equation.
                if text[index:end] == ARROW:
                    arrows.append(index)
                index = end
            else:
                index += 1
        if not arrows:
            raise EquationError(
                f"no '{ARROW}' in equation {_quoted(text)}: expected reactants {ARROW} products, "
                f"{_EXAMPLE}"
            )
        if len(arrows) > 1:
            raise self.fail(
                f"a second '{ARROW}'", arrows[1], "expected exactly one arrow in an equation"
            )
        return arrows[0]

    def side(self, start: int, end: int, arrow: int, which: str) -> tuple[list[str], int | None]:
        """Read the species between ``start`` and ``end``: (names, index of M or None)."""
        text = self.text
        role = "reactants" if which == "left" else "products"
        if not text[start:end].strip():
            where = "before" if which == "left" else "after"
            raise self.fail(f"no {role} {where} '{ARROW}'", arrow, f"expected {role}, {_EXAMPLE}")
        pluses = [i for i in range(start, end) if text[i] == "+"]
        bounds = [start, *(p + 1 for p in pluses)]
        ends = [*pluses, end]
        names: list[str] = []
        third_body_at: int | None = None
        for number, (term_start, term_end) in enumerate(zip(bounds, ends, strict=True)):
            words = [
                (match.start(), match.group())
                for match in _WORD.finditer(text, term_start, term_end)
            ]
            if not words:
                if number == 0:
                    raise self.fail(
                        "missing species before '+'", pluses[0], "expected a species name"
                    )
                raise self.fail(
                    "missing species after '+'", pluses[number - 1], "expected a species name"
                )
            coefficient, name_at, name, explicit = self.term(words)
            if name == THIRD_BODY:
                if explicit:
                    raise self.fail(
                        f"coefficient before the third body '{THIRD_BODY}'",
                        words[0][0],
                        f"write '+ {THIRD_BODY}' once, without a coefficient",
                    )
                if third_body_at is not None:
                    raise self.fail(
                        f"a second third body '{THIRD_BODY}' on the {which} side",
                        name_at,
                        f"write '+ {THIRD_BODY}' once on each side",
                    )
                third_body_at = name_at
                continue
            names.extend([name] * coefficient)
        if not names:
            raise self.fail(
                f"the {which} side holds only the third body '{THIRD_BODY}'",
                third_body_at or 0,
                f"expected {role} besides '{THIRD_BODY}'",
            )
        return names, third_body_at

    def term(self, words: list[tuple[int, str]]) -> tuple[int, int, str, bool]:
        """Read '[coefficient] name': (coefficient, index of name, name, coefficient given)."""
        first_at, first = words[0]
        if len(words) == 1:
            if all(ch in _DIGITS for ch in first) or _NUMBER.fullmatch(first):
                raise self.fail(
                    f"coefficient '{first}' with no species after it",
                    first_at,
                    "expected a species name after the coefficient, e.g. '2 OH'",
                )
            self.check_name(first, first_at)
            return 1, first_at, first, False
        name_at, name = words[1]
        if len(words) > 2:
            raise self.fail(
                f"'{words[2][1]}' follows '{name}' without a '+'",
                words[2][0],
                "expected '+' between species (names contain no spaces)",
            )
        if not all(ch in _DIGITS for ch in first):
            if _NUMBER.fullmatch(first):
                raise self.fail(
                    f"coefficient '{first}'",
                    first_at,
                    f"a coefficient is a whole number from 1 to {MAX_COEFFICIENT}",
                )
            raise self.fail(
                f"'{name}' follows '{first}' without a '+'",
                name_at,
                "expected '+' between species (names contain no spaces)",
            )
        if len(first) > len(str(MAX_COEFFICIENT)) or not 1 <= int(first) <= MAX_COEFFICIENT:
            raise self.fail(
                f"coefficient '{first}'",
                first_at,
                f"a coefficient is a whole number from 1 to {MAX_COEFFICIENT}",
            )
        self.check_name(name, name_at)
        return int(first), name_at, name, True

    def check_name(self, name: str, at: int) -> None:
        """Refuse a species name that breaks the naming rule of the module docstring."""
        for offset, char in enumerate(name):
            if char not in _NAME_CHARACTERS:
                raise self.fail(
                    f"unexpected character {_show(char)} in species '{name}'",
                    at + offset,
                    "species names use letters, digits and ( ) _ - , ' *",
                )
        first = name[0]
        if first in _DIGITS and not _LOCANT.match(name):
            raise self.fail(
                f"species '{name}' starts with a number",
                at,
                "put a space between a coefficient and its species, e.g. '2 OH'",
            )
        if first not in _DIGITS and first not in _LETTERS and first != "(":
            raise self.fail(
                f"species '{name}' starts with {_show(first)}",
                at,
                "a species name starts with a letter, '(' or a locant such as '1-'",
            )
        opened: list[int] = []
        for offset, char in enumerate(name):
            if char == "(":
                opened.append(offset)
            elif char == ")":
                if not opened:
                    raise self.fail(
                        f"unmatched ')' in species '{name}'", at + offset, "expected '(' before it"
                    )
                opened.pop()
        if opened:
            raise self.fail(
                f"'(' is never closed in species '{name}'", at + opened[-1], "expected ')'"
            )


def looks_like_equation(text: str) -> bool:
    """True when ``text`` holds an arrow, so that it is meant as an equation, not a key.

    >>> looks_like_equation("OH + CH4 -> CH3 + H2O"), looks_like_equation("oh-ch4")
    (True, False)
    """
    return ARROW in text


def parse_equation(text: str) -> Equation:
    """Read a reaction equation written in ratebank's plain syntax.

    Parameters
    ----------
    text : str
        E.g. ``'CH4 + OH -> CH3 + H2O'``, ``'2 OH -> H2O2'``,
        ``'H + O2 + M -> HO2 + M'``; the syntax is described in the module
        docstring. Surrounding spaces are ignored.

    Returns
    -------
    Equation
        With sorted, coefficient-expanded sides.

    Raises
    ------
    EquationError
        Naming the 1-based column (in the text without its surrounding
        spaces) and what was expected: a missing or repeated arrow,
        empty side, missing species between ``+`` signs, a coefficient that
        is not a whole number from 1 to 20, a bad species name, or a third
        body ``M`` used other than once on each side.

    Examples
    --------
    >>> parse_equation("O3 + O -> 2 O2").canonical
    'O + O3 -> O2 + O2'
    >>> parse_equation("H + O2 + M -> HO2 + M").order
    3
    >>> parse_equation("OH + CH4 CH3 + H2O")
    Traceback (most recent call last):
    ...
    ratebank.errors.EquationError: no '->' in equation 'OH + CH4 CH3 + H2O': expected \
reactants -> products, e.g. 'CH4 + OH -> CH3 + H2O'
    """
    if not isinstance(text, str):
        raise EquationError(f"an equation must be given as text, got {type(text).__name__}")
    stripped = text.strip()
    if not stripped:
        raise EquationError(f"empty equation: expected reactants {ARROW} products, {_EXAMPLE}")
    reader = _Reader(stripped)
    arrow = reader.find_arrow()
    arrow_length = len(ARROW) if stripped.startswith(ARROW, arrow) else 1
    reactants, left_m = reader.side(0, arrow, arrow, "left")
    products, right_m = reader.side(arrow + arrow_length, len(stripped), arrow, "right")
    if (left_m is None) != (right_m is None):
        where = "left" if left_m is not None else "right"
        other = "right" if left_m is not None else "left"
        at = left_m if left_m is not None else right_m
        raise reader.fail(
            f"the third body '{THIRD_BODY}' is on the {where} side only",
            at or 0,
            f"write '+ {THIRD_BODY}' on the {other} side too",
        )
    return Equation(tuple(reactants), tuple(products), left_m is not None)


def check_species_name(name: str) -> None:
    """Refuse a species name that this parser would not read as that one species.

    The name is read by the parser's own rules for one term of an equation,
    so a name the store keeps can always be written in an equation.

    Parameters
    ----------
    name : str
        A species name, e.g. ``'OH'``, ``'CH2(S)'``, ``'1-C4H8'``.

    Raises
    ------
    EquationError
        Saying why: a space or ``+`` (both separate terms), the third body's
        name ``M``, or a character or start the naming rule of the module
        docstring does not allow.

    Examples
    --------
    >>> check_species_name("CH2(S)")
    >>> check_species_name("=1+1 x")
    Traceback (most recent call last):
    ...
    ratebank.errors.EquationError: '+' at column 3 in species name '=1+1 x': '+' separates \
species in an equation, so a name cannot hold it
    """
    if not isinstance(name, str) or not name:
        raise EquationError("a species name must not be empty")
    reader = _Reader(name, subject="species name")
    if "+" in name:
        raise reader.fail(
            "'+'", name.index("+"), "'+' separates species in an equation, so a name cannot hold it"
        )
    space = next((i for i, ch in enumerate(name) if ch.isspace()), None)
    if space is not None:
        raise reader.fail(
            "a space",
            space,
            "names hold no spaces (in an equation a space separates a coefficient from its "
            "species)",
        )
    if name == THIRD_BODY:
        raise reader.fail(
            f"'{THIRD_BODY}'", 0, "M is the third body in equations; choose another name"
        )
    reader.term([(0, name)])


def canonical_equation(text: str) -> str:
    """The canonical text of an equation.

    Parameters
    ----------
    text : str
        An equation in ratebank's syntax.

    Returns
    -------
    str
        Sides sorted by species name, coefficients written out, ``+ M`` last.

    Examples
    --------
    >>> canonical_equation("HO2+HO2->O2+H2O2")
    'HO2 + HO2 -> H2O2 + O2'
    """
    return parse_equation(text).canonical


def check_element_balance(
    equation: Equation | str, formulas: Mapping[str, Mapping[str, int] | str]
) -> None:
    """Check that every element is conserved by an equation.

    Parameters
    ----------
    equation : Equation or str
        The equation (text is parsed with :func:`parse_equation`).
    formulas : mapping of str to (mapping of str to int, or str)
        Element counts (or a formula text) of every species in the equation.

    Raises
    ------
    EquationError
        Naming the first species without a formula (``unknown species 'XY'``),
        or the first unbalanced element in Hill order with its two sums:
        ``equation 'A -> B' does not balance: O is 1 on the left and 2 on the
        right``. The third body carries no atoms.

    Examples
    --------
    >>> formulas = {"CH4": "CH4", "OH": "OH", "CH3": "CH3", "H2O": "H2O"}
    >>> check_element_balance("CH4 + OH -> CH3 + H2O", formulas)
    >>> check_element_balance("CH4 + OH -> CH3 + H2O + OH", formulas)
    Traceback (most recent call last):
    ...
    ratebank.errors.EquationError: equation 'CH4 + OH -> CH3 + H2O + OH' does not \
balance: H is 5 on the left and 6 on the right
    """
    if isinstance(equation, str):
        equation = parse_equation(equation)
    canonical = equation.canonical
    counts: dict[str, Mapping[str, int]] = {}
    for name in (*dict.fromkeys(equation.reactants), *dict.fromkeys(equation.products)):
        if name in counts:
            continue
        if name not in formulas:
            raise EquationError(
                f"unknown species '{name}' in equation '{canonical}': no formula is known for it"
            )
        formula = formulas[name]
        if isinstance(formula, str):
            try:
                formula = parse_formula(formula)
            except FormulaError as error:
                raise EquationError(f"formula of species '{name}': {error}") from None
        counts[name] = formula
    left = add_counts(*(counts[name] for name in equation.reactants))
    right = add_counts(*(counts[name] for name in equation.products))
    for element in hill_order(set(left) | set(right)):
        on_left, on_right = left.get(element, 0), right.get(element, 0)
        if on_left != on_right:
            raise EquationError(
                f"equation '{canonical}' does not balance: {element} is {on_left} on the left "
                f"and {on_right} on the right"
            )
