"""Validation of curated input, shared by the CSV importers, the ``add`` services and the edit
of an expression.

Every check produces a :class:`Problem` (line, column, message) rather than
raising, so that a whole file is checked before anything is written and every
problem can be reported at once. Values come out converted to SI-molar units.

One function checks the numbers of a rate expression,
:func:`check_expression_values`; the expressions import and the edit of a
stored expression both use it. Measured points are validated column-wise with
numpy in :mod:`ratebank.services.measurement_validation`; this module imports
no numpy, so that the listings, which share service modules with the small
imports, start fast.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from dataclasses import replace as dataclass_replace
from typing import Any, NamedTuple

from sqlalchemy.orm import Session

from ratebank.errors import EquationError, FormulaError, ImportValidationError, UnitError
from ratebank.science.constants import DEBYE, ELECTRONVOLT_MOLAR
from ratebank.science.equation import check_element_balance, looks_like_equation, parse_equation
from ratebank.science.formula import molar_mass, parse_formula
from ratebank.science.units import parse_energy_unit, parse_rate_unit
from ratebank.services import input_rules
from ratebank.services.form_validation import (
    FORM_COLUMNS,
    FormCheck,
    RowForm,
    high_pressure_order,
)
from ratebank.store.expressions import ArrheniusTerm, Broadening
from ratebank.store.records import (
    NewReaction,
    NewSpecies,
    reaction_rows_by_key,
    reactions_by_key_or_equation,
)

SPECIES_COLUMNS = (
    "name",
    "formula",
    "molar_mass_g_per_mol",
    "diameter_angstrom",
    "diameter_kind",
    "well_depth_K",
    "critical_temperature_K",
    "critical_pressure_bar",
    "acentric_factor",
    "boiling_volume_cm3_per_mol",
    "boiling_temperature_K",
    "dipole_moment_debye",
    "polarizability_angstrom3",
    "ionization_energy_eV",
    "source",
)
SPECIES_REQUIRED = ("name", "formula")

REACTION_COLUMNS = ("key", "equation", "class", "notes", "reverse")
REACTION_REQUIRED = ("key", "equation")
#: How a reaction's reverse is obtained: ``none`` (the default) or by detailed balance.
REVERSE_RULES = ("none", "detailed-balance")

MEASUREMENT_COLUMNS = (
    "set",
    "reaction",
    "T_K",
    "k",
    "k_units",
    "k_uncertainty",
    "uncertainty_kind",
    "reference",
    "method",
    "pressure_bar",
    "bath_gas",
    "systematic_uncertainty",
)
MEASUREMENT_REQUIRED = ("set", "reaction", "T_K", "k")

EXPRESSION_COLUMNS = (
    "reaction",
    "A",
    "n",
    "Ea",
    "Ea_units",
    "k_units",
    "T_min_K",
    "T_max_K",
    "uncertainty_factor",
    "f298",
    "g_K",
    "dlogk298",
    "dE_R_K",
    "reference",
    "origin",
    *FORM_COLUMNS,
)
EXPRESSION_REQUIRED = ("reaction", "Ea")
EXPRESSION_ORIGINS = ("literature", "manual")
#: The exported mechanism table's columns that an expressions file does not have: an
#: exported ``mechanism.csv`` imports as an expressions file (:func:`as_expression_rows`).
MECHANISM_COLUMNS = (
    "key",
    "equation",
    "order",
    "steric_factor",
    "references",
    "uncertainty_f298",
    "uncertainty_g_K",
    "linearised_at_K",
    "linearisation_max_ln_deviation",
    "reverse",
    "reverse_max_relative_deviation",
)
#: Every column an expressions file may have: its own and the mechanism table's.
EXPRESSION_FILE_COLUMNS = (*EXPRESSION_COLUMNS, *MECHANISM_COLUMNS)
#: Origins of an exported row that come in as ``literature`` (the store's own fit or
#: estimate of another store is a published number here); the provenance keeps it.
EXPORTED_ORIGINS = ("measured-fit", "collision-estimate")
#: The origin of an exported reverse row: derived from its forward row, not imported.
DERIVED_ORIGIN = "detailed-balance-fit"
#: The mechanism-table columns carried over into expressions-file columns.
_MECHANISM_RENAMED = {
    "key": "reaction",
    "references": "reference",
    "uncertainty_f298": "f298",
    "uncertainty_g_K": "g_K",
}
#: The mechanism table's columns that are derived from others and not read back.
_MECHANISM_DERIVED = ("uncertainty_factor", "origin", "equation", "order")
#: The (internal) cell that carries an exported origin to the provenance.
_EXPORTED_ORIGIN = "exported origin"

DIAMETER_KINDS = ("hard-sphere", "lennard-jones")
UNCERTAINTY_KINDS = ("relative", "absolute", "percent")

#: A given molar mass further than this from the formula's is refused as a typo.
MOLAR_MASS_TOLERANCE = 0.01

ANGSTROM_M = 1e-10
BAR_PA = 1e5
CM3_M3 = 1e-6
G_KG = 1e-3

#: One row of an import: its line in the source (None for a single ``add``) and its cells by
#: column name.
Row = tuple[int | None, Mapping[str, str | None]]


@dataclass(frozen=True)
class Problem:
    """One thing wrong with one cell (or row, when ``column`` is empty)."""

    line: int | None
    column: str
    message: str

    def render(self, source: str) -> str:
        where = f"{source}:{self.line}" if self.line is not None else source
        return (
            f"{where}: {self.column}: {self.message}" if self.column else f"{where}: {self.message}"
        )


class Problems:
    """Collects problems; keeps the first ``limit`` and counts the rest."""

    def __init__(self, limit: int = 50):
        self.limit = limit
        self.shown: list[Problem] = []
        self.total = 0

    def add(self, line: int | None, column: str, message: str) -> None:
        self.total += 1
        if len(self.shown) < self.limit:
            self.shown.append(Problem(line, column, message))

    def __bool__(self) -> bool:
        return self.total > 0

    def sorted(self) -> list[Problem]:
        return sorted(self.shown, key=lambda p: (p.line or 0, p.column))

    def raise_if_any(self, source: str) -> None:
        """Raise :class:`~ratebank.errors.ImportValidationError` naming every problem found in
        ``source``, if there is one."""
        if self:
            raise ImportValidationError(
                source, [p.render(source) for p in self.sorted()], total=self.total
            )


@dataclass(frozen=True)
class ImportSummary:
    """What an import did (or, with ``dry_run``, would do)."""

    kind: str
    source: str
    rows: int
    added: int
    dry_run: bool
    details: dict[str, int] = field(default_factory=dict)
    #: an import that updates (``update=True``): ``added`` counts the new records, and
    #: ``changed`` and ``unchanged`` those that matched a stored one
    update: bool = False
    changed: int = 0
    unchanged: int = 0


#: Longest text the store's columns hold (the same on SQLite and PostgreSQL).
TEXT_LIMITS = {
    "name": 200,
    "formula": 200,
    "key": 200,
    "class": 200,
    "equation": 1000,
    "set": 200,
    "bath_gas": 200,
    "k_units": 100,
}


def too_long(problems: Problems, line: int | None, column: str, value: str | None) -> bool:
    """Report (and say True) if ``value`` is longer than the store keeps for ``column``."""
    limit = TEXT_LIMITS.get(column)
    if value is None or limit is None or len(value) <= limit:
        return False
    problems.add(line, column, f"is {len(value)} characters long; the store keeps at most {limit}")
    return True


def blank(value: str | None) -> bool:
    return value is None or value.strip() == ""


def cell(row: Mapping[str, str | None], column: str) -> str | None:
    """The stripped cell text, or None when empty or absent."""
    value = row.get(column)
    if value is None:
        return None
    value = value.strip()
    return value or None


def parse_number(
    text: str,
    *,
    positive: bool = False,
    minimum: float | None = None,
    temperature: bool = False,
    what: str = "a number",
) -> float:
    """Parse a number in the accepted syntax (:mod:`.input_rules`); ValueError otherwise.

    ``temperature`` also requires the range of
    :data:`~ratebank.services.input_rules.TEMPERATURE_RANGE_K`.
    """
    value = input_rules.parse_number(text, what)
    if positive and value <= 0:
        raise ValueError(f"{text} must be greater than zero; expected {what}")
    if minimum is not None and value < minimum:
        raise ValueError(f"{text} is below {minimum:g}; expected {what}")
    if temperature and (problem := input_rules.temperature_problem(value)) is not None:
        raise ValueError(f"{problem}; expected {what}")
    return value


def _number(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    column: str,
    *,
    positive: bool = False,
    minimum: float | None = None,
    temperature: bool = False,
    what: str = "a number",
) -> float | None:
    text = cell(row, column)
    if text is None:
        return None
    try:
        return parse_number(
            text, positive=positive, minimum=minimum, temperature=temperature, what=what
        )
    except ValueError as exc:
        problems.add(line, column, str(exc))
        return None


# --------------------------------------------------------------------------- species


def validate_species(
    rows: Iterable[Row], existing_names: set[str], problems: Problems
) -> list[NewSpecies]:
    """The species of ``rows`` (species CSV columns) in SI units; every problem goes to
    ``problems``, and nothing may be written while it holds any. ``existing_names`` are the
    names already stored."""
    species: list[NewSpecies] = []
    seen: dict[str, int | None] = {}
    for line, row in rows:
        name = _species_name(problems, line, row, existing_names, seen)
        formula, computed_mass = _species_formula(problems, line, row)
        given_mass = _given_molar_mass(problems, line, row, formula, computed_mass)
        properties = _species_properties(problems, line, row)
        if name is None or formula is None or computed_mass is None:
            continue
        species.append(
            NewSpecies(
                name=name,
                formula=formula,
                molar_mass=given_mass * G_KG if given_mass is not None else computed_mass,
                molar_mass_source="given" if given_mass is not None else "formula",
                source=cell(row, "source"),
                **properties,
            )
        )
    return species


def _species_name(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    existing_names: set[str],
    seen: dict[str, int | None],
) -> str | None:
    name = cell(row, "name")
    if name is None:
        problems.add(line, "name", "is empty; expected the species name")
    elif too_long(problems, line, "name", name):
        name = None
    elif (problem := input_rules.species_name_problem(name)) is not None:
        problems.add(line, "name", problem)
        name = None
    elif name in seen:
        where = f" (first on line {seen[name]})" if seen[name] is not None else ""
        problems.add(line, "name", f"species {name!r} appears twice in the input{where}")
    elif name in existing_names:
        problems.add(line, "name", f"species {name!r} is already in the store")
    if name is not None:
        seen.setdefault(name, line)
    return name


def _species_formula(
    problems: Problems, line: int | None, row: Mapping[str, str | None]
) -> tuple[str | None, float | None]:
    """The formula text and its molar mass [kg/mol] from IUPAC atomic weights."""
    formula = cell(row, "formula")
    if formula is None:
        problems.add(line, "formula", "is empty; expected a formula such as CH3OH")
        return None, None
    if too_long(problems, line, "formula", formula):
        return None, None
    try:
        return formula, molar_mass(parse_formula(formula))
    except FormulaError as exc:
        problems.add(line, "formula", str(exc))
        return formula, None


def _given_molar_mass(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    formula: str | None,
    computed_mass: float | None,
) -> float | None:
    """The molar mass given [g/mol], refused when it is not the formula's."""
    given = _number(
        problems, line, row, "molar_mass_g_per_mol", positive=True, what="a molar mass in g/mol"
    )
    if given is not None and computed_mass is not None:
        computed_g = computed_mass / G_KG
        if abs(given - computed_g) > MOLAR_MASS_TOLERANCE * computed_g:
            problems.add(
                line,
                "molar_mass_g_per_mol",
                f"{given:g} g/mol does not match the formula {formula} "
                f"({computed_g:.4f} g/mol from IUPAC atomic weights); leave it empty to use "
                "the formula's",
            )
    return given


def _species_properties(
    problems: Problems, line: int | None, row: Mapping[str, str | None]
) -> dict[str, float | str | None]:
    """The collision and critical properties of a species row, in SI units."""
    diameter = _number(
        problems, line, row, "diameter_angstrom", positive=True, what="a diameter in Å"
    )
    diameter = _within(
        problems, line, "diameter_angstrom", diameter, input_rules.PLAUSIBLE_DIAMETER_ANGSTROM, "Å"
    )
    kind = _diameter_kind(problems, line, row)
    well_depth = _number(
        problems, line, row, "well_depth_K", positive=True, what="a well depth ε/k_B in K"
    )
    well_depth = _within(
        problems, line, "well_depth_K", well_depth, input_rules.PLAUSIBLE_WELL_DEPTH_K, "K"
    )
    if diameter is not None and kind is None:
        kind = "lennard-jones" if well_depth is not None else "hard-sphere"
    tc = _number(
        problems, line, row, "critical_temperature_K", positive=True, what="a temperature in K"
    )
    pc = _number(
        problems, line, row, "critical_pressure_bar", positive=True, what="a pressure in bar"
    )
    omega = _number(
        problems,
        line,
        row,
        "acentric_factor",
        minimum=-1.0,
        what="an acentric factor (dimensionless, about -0.4 to 1.5)",
    )
    vb = _number(
        problems,
        line,
        row,
        "boiling_volume_cm3_per_mol",
        positive=True,
        what="a molar volume in cm3/mol",
    )
    return {
        **_polarity_and_capture(problems, line, row),
        "diameter": diameter * ANGSTROM_M if diameter is not None else None,
        "diameter_kind": kind if diameter is not None else None,
        "well_depth": well_depth,
        "critical_temperature": tc,
        "critical_pressure": pc * BAR_PA if pc is not None else None,
        "acentric_factor": omega,
        "boiling_volume": vb * CM3_M3 if vb is not None else None,
    }


def _within(
    problems: Problems,
    line: int | None,
    column: str,
    value: float | None,
    bounds: tuple[float, float],
    unit: str,
) -> float | None:
    """``value`` if it lies in the plausible ``bounds``; else None, and the problem."""
    if value is None:
        return None
    problem = input_rules.range_problem(value, bounds, unit)
    if problem is not None:
        problems.add(line, column, f"{problem}; check the value and its unit")
        return None
    return value


def _polarity_and_capture(
    problems: Problems, line: int | None, row: Mapping[str, str | None]
) -> dict[str, float | None]:
    """Dipole moment, boiling temperature, polarizability and ionization energy, in SI."""
    dipole = _number(
        problems, line, row, "dipole_moment_debye", minimum=0.0, what="a dipole moment in D"
    )
    boiling = _number(
        problems,
        line,
        row,
        "boiling_temperature_K",
        positive=True,
        temperature=True,
        what="a temperature in K",
    )
    alpha = _number(
        problems,
        line,
        row,
        "polarizability_angstrom3",
        positive=True,
        what="a polarizability volume in Å3",
    )
    ionization = _number(
        problems, line, row, "ionization_energy_eV", positive=True, what="an energy in eV"
    )
    return {
        "dipole_moment": dipole * DEBYE if dipole is not None else None,
        "boiling_temperature": boiling,
        "polarizability": alpha * ANGSTROM_M**3 if alpha is not None else None,
        "ionization_energy": ionization * ELECTRONVOLT_MOLAR if ionization is not None else None,
    }


def _diameter_kind(
    problems: Problems, line: int | None, row: Mapping[str, str | None]
) -> str | None:
    kind = cell(row, "diameter_kind")
    if kind is None:
        return None
    if kind not in DIAMETER_KINDS:
        problems.add(line, "diameter_kind", f"{kind!r} is not one of {', '.join(DIAMETER_KINDS)}")
    elif blank(row.get("diameter_angstrom")):
        problems.add(line, "diameter_kind", "is given without a diameter_angstrom to describe")
    return kind


# --------------------------------------------------------------------------- reactions


def validate_reactions(
    rows: Iterable[Row],
    species_formulas: Mapping[str, Mapping[str, int]],
    existing_keys: set[str],
    existing_equations: Mapping[str, str],
    problems: Problems,
    *,
    update: bool = False,
) -> list[NewReaction]:
    """The reactions of ``rows``, parsed, balanced and canonical; every problem goes to
    ``problems``, and nothing may be written while it holds any.

    ``species_formulas`` holds the element counts of every stored species by
    name; ``existing_equations`` maps a stored canonical equation to its key.
    With ``update``, a stored key is no problem and a row may repeat its own
    stored reaction's equation.
    """
    reactions: list[NewReaction] = []
    seen_keys: dict[str, int | None] = {}
    seen_equations: dict[str, int | None] = {}
    for line, row in rows:
        key = _reaction_key(problems, line, row, set() if update else existing_keys, seen_keys)
        reverse = cell(row, "reverse") or "none"
        if reverse not in REVERSE_RULES:
            problems.add(line, "reverse", f"{reverse!r} is not one of {', '.join(REVERSE_RULES)}")
        equation = _reaction_equation(problems, line, row, species_formulas)
        if equation is None:
            continue
        canonical = equation.canonical
        if canonical in seen_equations:
            problems.add(
                line,
                "equation",
                f"{canonical!r} appears twice in the input (first on line "
                f"{seen_equations[canonical]})",
            )
            continue
        seen_equations[canonical] = line
        if canonical in existing_equations and not (
            update and existing_equations[canonical] == key
        ):
            problems.add(
                line,
                "equation",
                f"{canonical!r} is already in the store as {existing_equations[canonical]!r}",
            )
            continue
        if key is None:
            continue
        reactions.append(
            NewReaction(
                key=key,
                equation=canonical,
                order=equation.order,
                third_body=equation.third_body,
                reactant_counts=dict(equation.reactant_counts),
                product_counts=dict(equation.product_counts),
                reaction_class=cell(row, "class"),
                notes=cell(row, "notes"),
                reverse=None if reverse == "none" else reverse,
            )
        )
    return reactions


def _reaction_key(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    existing_keys: set[str],
    seen_keys: dict[str, int | None],
) -> str | None:
    key = cell(row, "key")
    if key is None:
        problems.add(line, "key", "is empty; expected a short unique reaction key")
    elif too_long(problems, line, "key", key):
        key = None
    elif any(ch.isspace() for ch in key):
        problems.add(line, "key", f"{key!r} contains spaces; expected a key without spaces")
        key = None
    elif (problem := input_rules.name_problem(key, "reaction key")) is not None:
        problems.add(line, "key", problem)
        key = None
    elif key in seen_keys:
        problems.add(line, "key", f"reaction key {key!r} appears twice in the input")
    elif key in existing_keys:
        problems.add(line, "key", f"reaction key {key!r} is already in the store")
    if key is not None:
        seen_keys.setdefault(key, line)
    return key


def _reaction_equation(  # type: ignore[no-untyped-def]
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    species_formulas: Mapping[str, Mapping[str, int]],
):
    """The parsed equation if it names stored species, balances, fits the store and has an
    order of 1 to 3; else None (and the problem is reported)."""
    text = cell(row, "equation")
    if text is None:
        problems.add(line, "equation", "is empty; expected an equation such as A + B -> C + D")
        return None
    try:
        equation = parse_equation(text)
        unknown = [name for name in equation.species if name not in species_formulas]
        if unknown:
            problems.add(
                line,
                "equation",
                f"unknown species {', '.join(repr(n) for n in unknown)}; add "
                f"{'them as species' if len(unknown) > 1 else 'it as a species'} first",
            )
            return None
        check_element_balance(equation, species_formulas)
    except EquationError as exc:
        problems.add(line, "equation", str(exc))
        return None
    if too_long(problems, line, "equation", equation.canonical) or too_long(
        problems, line, "class", cell(row, "class")
    ):
        return None
    if equation.reactants == equation.products:
        problems.add(
            line,
            "equation",
            f"both sides of {equation.canonical!r} are the same; a reaction turns its "
            "reactants into something else",
        )
        return None
    reaction_class = cell(row, "class")
    if reaction_class is not None and (
        problem := input_rules.name_problem(reaction_class, "reaction class")
    ):
        problems.add(line, "class", problem)
        return None
    if equation.order > 3 or equation.order < 1:
        problems.add(line, "equation", f"has order {equation.order}; ratebank stores orders 1 to 3")
        return None
    return equation


# --------------------------------------------------------------------------- lookups


class ReactionRef(NamedTuple):
    """What validation needs to know of a stored reaction."""

    id: int
    key: str
    order: int
    #: written with M
    third_body: bool = False


class ReactionResolver:
    """Resolves a reaction cell (a key or any spelling of the equation)."""

    def __init__(self, by_key: Mapping[str, ReactionRef], by_equation: Mapping[str, ReactionRef]):
        self.by_key = by_key
        self.by_equation = by_equation
        self._cache: dict[str, ReactionRef | str] = {}

    def prefetch(self, texts: Iterable[str]) -> None:
        """Look up many reaction cells at once (a no-op when everything is loaded)."""
        return None

    def rows_by_key(self, keys: Sequence[str]) -> list[tuple[Any, ...]]:
        """(id, key, order, third body) of each of ``keys`` that is a stored reaction key
        (in the order of :class:`ReactionRef`; the others are left out)."""
        return [tuple(ref) for key in keys if (ref := self.by_key.get(key)) is not None]

    def resolve(self, text: str) -> ReactionRef | str:
        """The reaction, or a message saying why it cannot be found."""
        if text in self._cache:
            return self._cache[text]
        result: ReactionRef | str
        if text in self.by_key:
            result = self.by_key[text]
        elif looks_like_equation(text):
            try:
                canonical = parse_equation(text).canonical
            except EquationError as exc:
                result = str(exc)
            else:
                result = self.by_equation.get(canonical, f"no reaction {canonical!r} in the store")
        else:
            result = f"no reaction with key {text!r} in the store"
        self._cache[text] = result
        return result


class LazyReactionResolver(ReactionResolver):
    """Resolves reaction cells with batched queries for just the keys and equations asked for."""

    def __init__(self, session: Session):
        super().__init__({}, {})
        self.by_key: dict[str, ReactionRef] = {}
        self.by_equation: dict[str, ReactionRef] = {}
        self.session = session

    def prefetch(self, texts: Iterable[str]) -> None:
        wanted = [t for t in texts if t and t not in self.by_key and t not in self._cache]
        equations: dict[str, str] = {}
        for text in wanted:
            if looks_like_equation(text):
                try:
                    equations[text] = parse_equation(text).canonical
                except EquationError:  # reported when resolved
                    continue
        keys = [t for t in wanted if t not in equations]
        canonical = [c for c in set(equations.values()) if c not in self.by_equation]
        for found in reactions_by_key_or_equation(self.session, keys=keys, equations=canonical):
            ref = ReactionRef(found.id, found.key, found.order, bool(found.third_body))
            self.by_key[found.key] = ref
            self.by_equation[found.equation] = ref

    def rows_by_key(self, keys: Sequence[str]) -> list[tuple[Any, ...]]:
        """As :meth:`ReactionResolver.rows_by_key`, in one query per 30,000 keys: a chunk's
        reaction keys come back as the driver's rows, without a record per reaction."""
        return reaction_rows_by_key(self.session, keys)

    def resolve(self, text: str) -> ReactionRef | str:
        if text not in self.by_key and text not in self._cache:
            self.prefetch([text])
        return super().resolve(text)


def resolved_reaction(
    problems: Problems, line: int | None, text: str | None, resolver: ReactionResolver
) -> ReactionRef | None:
    if text is None:
        problems.add(line, "reaction", "is empty; expected a reaction key or equation")
        return None
    resolved = resolver.resolve(text)
    if isinstance(resolved, ReactionRef):
        return resolved
    problems.add(line, "reaction", resolved)
    return None


# --------------------------------------------------------------------------- expressions

#: The numbers of a rate expression k = A T^n exp(-Ea/RT): what each must be, and its bound
#: ("positive", "at least 1" or None).
EXPRESSION_NUMBERS: dict[str, tuple[str, str | None]] = {
    "A": ("a pre-exponential factor above zero", "positive"),
    "n": ("a temperature exponent", None),
    "Ea": ("an activation energy", None),
    "T_min": ("a temperature in K", "positive"),
    "T_max": ("a temperature in K", "positive"),
    "uncertainty_factor": ("an uncertainty factor of at least 1", "at least 1"),
}


@dataclass(frozen=True)
class CheckedExpression:
    """What :func:`check_expression_values` found.

    ``values`` holds the SI value of each valid number given (record names:
    ``A``, ``n``, ``Ea``, ``T_min``, ``T_max``, ``uncertainty_factor``);
    ``problems`` holds (name, message) pairs, in the caller's names.
    """

    values: dict[str, float]
    problems: list[tuple[str, str]]


def check_expression_values(
    order: int | None,
    *,
    A: float | None = None,
    k_units: str | None = None,
    n: float | None = None,
    Ea: float | None = None,
    Ea_units: str | None = None,
    T_min: float | None = None,
    T_max: float | None = None,
    uncertainty_factor: float | None = None,
    stored: Mapping[str, float | None] | None = None,
    names: Mapping[str, str] | None = None,
) -> CheckedExpression:
    """Check the numbers of a rate expression k = A T^n exp(-Ea/RT) and convert them to SI.

    The one validation of an expression's numbers: the expressions import
    checks a whole expression per row with it, and the edit of a stored
    expression checks the numbers that change (``stored`` then holds the stored
    expression's SI ``A``, ``n``, ``T_min`` and ``T_max``, so that the checks
    across numbers see the expression as it will be).

    Parameters
    ----------
    order : int or None
        The reaction's order, which fixes the dimension of A's unit; None when
        the reaction is not known (its problem is reported elsewhere) and
        ``k_units`` is then not checked.
    A, k_units : float, str, optional
        Pre-exponential factor in ``k_units`` times K^-n (above zero).
    n : float, optional
        Temperature exponent [-]; other than 0 only with an A.
    Ea, Ea_units : float, str, optional
        Activation energy in ``Ea_units`` (J/mol, kJ/mol, K for Ea/R, ...).
    T_min, T_max : float, optional
        Valid range [K], above zero, T_max not below T_min.
    uncertainty_factor : float, optional
        Factor (at least 1) by which k is uncertain.
    stored : mapping, optional
        The expression being changed; None for a whole new expression.
    names : mapping, optional
        The caller's name of each argument (e.g. ``{"T_min": "T_min_K"}``),
        used in the problems and their messages.

    Returns
    -------
    CheckedExpression
        The SI values and the problems; None means "not given" throughout.

    Examples
    --------
    >>> checked = check_expression_values(1, A=2e13, k_units="s-1", Ea=200, Ea_units="kJ/mol")
    >>> checked.values, checked.problems
    ({'A': 20000000000000.0, 'Ea': 200000.0}, [])
    >>> check_expression_values(2, A=1e-12, Ea=10, Ea_units="kJ/mol").problems
    [('k_units', 'is empty; A needs its unit (e.g. cm3/molecule/s)')]
    """
    check = _ExpressionCheck(names or {}, partial=stored is not None)
    numbers = {
        "A": A,
        "n": n,
        "Ea": Ea,
        "T_min": T_min,
        "T_max": T_max,
        "uncertainty_factor": uncertainty_factor,
    }
    for name, value in numbers.items():
        if value is not None:
            check.number(name, value)
    check.rate_unit(order, A, k_units)
    check.energy_unit(Ea, Ea_units)
    check.ordered_range(numbers, stored or {})
    check.exponent_needs_A(n, stored or {})
    return CheckedExpression(check.values, check.problems)


class _ExpressionCheck:
    """The steps of :func:`check_expression_values`, collecting values and problems."""

    def __init__(self, names: Mapping[str, str], *, partial: bool):
        self.names = names
        self.partial = partial
        self.values: dict[str, float] = {}
        self.problems: list[tuple[str, str]] = []
        self.invalid: set[str] = set()

    def name(self, field_name: str) -> str:
        return self.names.get(field_name, field_name)

    def problem(self, field_name: str, message: str) -> None:
        self.invalid.add(field_name)
        self.problems.append((self.name(field_name), message))

    def number(self, field_name: str, value: float) -> None:
        what, bound = EXPRESSION_NUMBERS[field_name]
        if not math.isfinite(value):
            self.problem(field_name, f"{value:g} is not a finite number; expected {what}")
        elif bound == "positive" and value <= 0:
            self.problem(field_name, f"{value:g} must be greater than zero; expected {what}")
        elif bound == "at least 1" and value < 1:
            self.problem(field_name, f"{value:g} is below 1; expected {what}")
        elif field_name in ("T_min", "T_max") and (
            outside := input_rules.temperature_problem(value)
        ):
            self.problem(field_name, f"{outside}; expected {what}")
        elif field_name not in ("A", "Ea"):  # those two are converted with their unit
            self.values[field_name] = float(value)

    def rate_unit(self, order: int | None, A: float | None, k_units: str | None) -> None:
        if A is None:
            if k_units and self.partial:
                self.problem("k_units", "is given without A; give the A it is the unit of")
            elif k_units and order is not None:
                self._rate_factor(k_units, order)  # checked, though nothing uses it
            return
        if not k_units:
            self.problem("k_units", "is empty; A needs its unit (e.g. cm3/molecule/s)")
            return
        factor = self._rate_factor(k_units, order) if order is not None else None
        if factor is not None and "A" not in self.invalid:
            self.values["A"] = A * factor

    def _rate_factor(self, k_units: str, order: int) -> float | None:
        try:
            return parse_rate_unit(k_units, order=order).to_si
        except UnitError as exc:
            self.problem("k_units", str(exc))
            return None

    def energy_unit(self, Ea: float | None, Ea_units: str | None) -> None:
        if Ea is None:
            if Ea_units and self.partial:
                self.problem("Ea_units", "is given without Ea; give the Ea it is the unit of")
            elif Ea_units:
                self._energy_factor(Ea_units)
            return
        if not Ea_units:
            self.problem("Ea_units", "is empty; Ea needs its unit (e.g. kJ/mol or K)")
            return
        factor = self._energy_factor(Ea_units)
        if factor is not None and "Ea" not in self.invalid:
            self.values["Ea"] = Ea * factor

    def _energy_factor(self, Ea_units: str) -> float | None:
        try:
            return parse_energy_unit(Ea_units).to_si
        except UnitError as exc:
            self.problem("Ea_units", str(exc))
            return None

    def ordered_range(
        self, given: Mapping[str, float | None], stored: Mapping[str, float | None]
    ) -> None:
        """T_max not below T_min, the stored bound standing in for one not given."""
        if {"T_min", "T_max"} & self.invalid:
            return
        low = self.values["T_min"] if given["T_min"] is not None else stored.get("T_min")
        high = self.values["T_max"] if given["T_max"] is not None else stored.get("T_max")
        if low is not None and high is not None and high < low:
            self.problem("T_max", f"{high:g} K is below {self.name('T_min')} {low:g} K")

    def exponent_needs_A(self, n: float | None, stored: Mapping[str, float | None]) -> None:
        """An expression whose A is still to be estimated keeps n at 0."""
        if n is None or "n" in self.invalid or n == 0.0:
            return
        if self.values.get("A") is None and stored.get("A") is None:
            self.problem(
                "n",
                "is given without A; give A with it, or leave n at 0 while A is to be estimated",
            )


@dataclass(frozen=True)
class ValidExpression:
    """A valid row of an expressions file, in SI units, with the units it was given in."""

    line: int | None
    reaction: ReactionRef
    origin: str
    A: float | None
    n: float
    Ea: float
    T_min: float | None
    T_max: float | None
    uncertainty_factor: float | None
    reference: str | None
    given_units: dict[str, str]
    #: g [K] of f(T) = f(298) exp|g (1/T - 1/298 K)|, None for 0
    uncertainty_g: float | None = None
    form: str = "arrhenius"
    #: the term number of a ``sum`` row (1 for every other form)
    term: int = 1
    #: further terms of a ``sum`` (filled when its rows are grouped)
    terms: tuple[ArrheniusTerm, ...] = ()
    #: k0 (A, n, Ea in SI) of ``falloff`` and ``activated``
    low_pressure: ArrheniusTerm | None = None
    broadening: Broadening | None = None
    #: the origin an exported mechanism row stated, when it came in as literature
    exported_origin: str | None = None


#: The expression file's column of each number of :func:`check_expression_values`.
_EXPRESSION_CELLS = {
    "A": "A",
    "n": "n",
    "Ea": "Ea",
    "T_min": "T_min_K",
    "T_max": "T_max_K",
    "uncertainty_factor": "uncertainty_factor",
}


def validate_expressions(
    rows: Iterable[Row], resolver: ReactionResolver, problems: Problems
) -> list[ValidExpression]:
    """The valid rows of an expressions file (EXPRESSION_COLUMNS); every problem goes to
    ``problems``."""
    rows = list(rows)
    # one batched lookup for the whole file, not a query per row
    resolver.prefetch({text for _, row in rows if (text := cell(row, "reaction")) is not None})
    found = (_valid_expression(problems, line, row, resolver) for line, row in rows)
    return _grouped_sums([expression for expression in found if expression is not None], problems)


def check_expression_header(source: str, header: Sequence[str]) -> None:
    """An expressions file names its reaction in ``reaction`` or, as an exported mechanism
    table does, in ``key``: one of them (the header's other columns are checked on reading)."""
    problems = Problems()
    if "reaction" not in header and "key" not in header:
        problems.add(1, "reaction", "required column is missing from the header")
    if "reaction" in header and "key" in header:
        problems.add(
            1, "key", "the reaction is named twice (reaction and key); keep one of the columns"
        )
    if "key" not in header:
        for column in MECHANISM_COLUMNS:
            if column in header:
                problems.add(
                    1,
                    column,
                    "is a column of an exported mechanism table, which names its reaction in "
                    "key; an expressions file with reaction does not read it",
                )
    if "key" in header:
        for column in ("f298", "g_K", "dlogk298", "dE_R_K", "reference"):
            if column in header:
                problems.add(
                    1,
                    column,
                    "is an expressions-file column, but this is a mechanism table (key); use "
                    "its own column instead",
                )
    problems.raise_if_any(source)


def as_expression_rows(rows: Iterable[Row]) -> list[Row]:
    """Rows of an exported mechanism table (a ``key`` column) as expressions-file rows.

    ``key`` is the reaction, ``references`` the reference, ``uncertainty_f298`` and
    ``uncertainty_g_K`` the uncertainty (``uncertainty_factor``, the largest f(T) over the
    range, is derived from them and not read); the text cells lose the one apostrophe the
    export puts before a formula-like start. An exported ``measured-fit`` or
    ``collision-estimate`` row comes in as ``literature``, its exported origin kept in the
    provenance; a ``detailed-balance-fit`` row (a reverse the export derived from its
    forward row) is left out, since the store derives it again from the reaction's reverse
    rule. ``equation``, ``order``, ``steric_factor``, ``linearised_at_K``,
    ``linearisation_max_ln_deviation``, ``reverse`` and ``reverse_max_relative_deviation``
    are derived columns and are not read. Rows without ``key`` are returned unchanged.
    """
    found: list[Row] = []
    for line, row in rows:
        if "key" not in row:
            found.append((line, row))
            continue
        origin = cell(row, "origin") or "literature"
        if origin == DERIVED_ORIGIN:
            continue
        new: dict[str, str | None] = {
            column: value
            for column, value in row.items()
            if column in EXPRESSION_COLUMNS and column not in _MECHANISM_DERIVED
        }
        for old, renamed in _MECHANISM_RENAMED.items():
            value = row.get(old)
            new[renamed] = value[1:] if value and value.startswith("'") else value
        if origin in EXPORTED_ORIGINS:
            new["origin"] = "literature"
            new[_EXPORTED_ORIGIN] = origin
        else:
            new["origin"] = origin
        found.append((line, new))
    return found


def _grouped_sums(valid: list[ValidExpression], problems: Problems) -> list[ValidExpression]:
    """One expression per ``sum``: rows of one reaction, reference and origin are its terms,
    numbered 1, 2, ... without a gap; term 1 carries the expression, the others its terms."""
    groups: dict[tuple[int, str | None, str], list[ValidExpression]] = {}
    out: list[ValidExpression] = []
    for expression in valid:
        if expression.form != "sum":
            out.append(expression)
        else:
            key = (expression.reaction.id, expression.reference, expression.origin)
            groups.setdefault(key, []).append(expression)
    for rows in groups.values():
        numbers = sorted(r.term for r in rows)
        where = rows[0].line
        if numbers != list(range(1, len(rows) + 1)) or len(rows) < 2:
            problems.add(
                where,
                "term",
                f"the sum of {rows[0].reaction.key!r} ({rows[0].reference or 'no reference'}) "
                f"has terms {', '.join(map(str, numbers))}; expected 1, 2, ... (at least two)",
            )
            continue
        ordered = sorted(rows, key=lambda r: r.term)
        if any(r.A is None for r in ordered):
            problems.add(where, "A", "every term of a sum needs its A")
            continue
        further = tuple(ArrheniusTerm(r.A, r.n, r.Ea, r.T_min, r.T_max) for r in ordered[1:])  # type: ignore[arg-type]
        out.append(dataclass_replace(ordered[0], terms=further))
    return sorted(out, key=lambda e: e.line or 0)


def _valid_expression(
    problems: Problems, line: int | None, row: Mapping[str, str | None], resolver: ReactionResolver
) -> ValidExpression | None:
    before = problems.total
    reaction = resolved_reaction(problems, line, cell(row, "reaction"), resolver)
    shape = _row_form(problems, line, row, reaction)
    numbers = {
        name: _number(problems, line, row, column, what=EXPRESSION_NUMBERS[name][0])
        for name, column in _EXPRESSION_CELLS.items()
    }
    if cell(row, "Ea") is None:
        problems.add(line, "Ea", "is empty; expected an activation energy (0 if none)")
    k_units, Ea_units = cell(row, "k_units"), cell(row, "Ea_units")
    checked = check_expression_values(
        high_pressure_order(shape.form, reaction.order) if reaction and shape else None,
        k_units=k_units,
        Ea_units=Ea_units,
        names=_EXPRESSION_CELLS,
        **numbers,
    )
    for column, message in checked.problems:
        problems.add(line, column, message)
    origin = cell(row, "origin") or "literature"
    if origin not in EXPRESSION_ORIGINS:
        problems.add(line, "origin", f"{origin!r} is not one of {', '.join(EXPRESSION_ORIGINS)}")
    if problems.total > before or reaction is None:
        return None
    units = {"Ea_units": Ea_units or ""}
    if k_units:
        units["k_units"] = k_units
    values = checked.values
    f298, g = _panel_uncertainty(problems, line, row, values.get("uncertainty_factor"))
    if problems.total > before or shape is None:
        return None
    if shape.k_low_units:
        units["k_low_units"] = shape.k_low_units
    return ValidExpression(
        line=line,
        reaction=reaction,
        origin=origin,
        A=values.get("A"),
        n=values.get("n", 0.0),
        Ea=values["Ea"],
        T_min=values.get("T_min"),
        T_max=values.get("T_max"),
        uncertainty_factor=f298,
        reference=cell(row, "reference"),
        given_units=units,
        uncertainty_g=g,
        form=shape.form,
        term=shape.term,
        low_pressure=ArrheniusTerm(*shape.low) if shape.low else None,
        broadening=shape.broadening,
        exported_origin=row.get(_EXPORTED_ORIGIN),
    )


def _row_form(
    problems: Problems, line: int | None, row: Mapping[str, str | None], reaction
) -> RowForm | None:  # type: ignore[no-untyped-def]
    """The form columns of a row (None, with problems, when they cannot be used)."""
    check = FormCheck(
        row,
        lambda column, what, bound: _number(
            problems, line, row, column, positive=bound == "positive", what=what
        ),
    )
    if reaction is None:
        return None
    form = check.form(reaction.third_body)
    shape = None
    if form is not None:
        term = check.term(form)
        low, low_units = check.low_pressure(
            form, reaction.order, cell(row, "k_units"), cell(row, "Ea_units")
        )
        broadening = check.broadening(form)
        shape = RowForm(form, term, low, broadening, low_units)
    for column, message in check.problems:
        problems.add(line, column, message)
    return shape if not check.problems else None


def _panel_uncertainty(
    problems: Problems, line: int | None, row: Mapping[str, str | None], factor: float | None
) -> tuple[float | None, float | None]:
    """f(298) and g of a row: ``f298`` and ``g_K``, or the panels' ``dlogk298`` and
    ``dE_R_K`` (f298 = 10^dlogk298, g = dE/R), or a plain ``uncertainty_factor`` (g = 0).
    One of the three ways only."""
    f298 = _number(problems, line, row, "f298", minimum=1.0, what="a factor of at least 1")
    g = _number(problems, line, row, "g_K", minimum=0.0, what="g in K, not negative")
    dlogk = _number(problems, line, row, "dlogk298", minimum=0.0, what="a log10 k uncertainty")
    de_r = _number(problems, line, row, "dE_R_K", minimum=0.0, what="Δ(E/R) in K, not negative")
    ways = [
        name
        for name, given in (
            ("uncertainty_factor", factor is not None),
            ("f298 and g_K", f298 is not None or g is not None),
            ("dlogk298 and dE_R_K", dlogk is not None or de_r is not None),
        )
        if given
    ]
    if len(ways) > 1:
        problems.add(line, "f298", f"give the uncertainty one way, not as {' and '.join(ways)}")
        return None, None
    if dlogk is not None or de_r is not None:
        if dlogk is None:
            problems.add(line, "dlogk298", "is empty; dE_R_K needs the Δlog10 k at 298 K")
            return None, None
        # the columns' own definition (a change of unit, as the evaluation panels tabulate
        # it): f(298) = 10^dlogk298 and g = Δ(E/R); science.uncertainty's
        # panel_factor_from_log10_form is the same relation, and a test checks they agree
        return 10.0**dlogk, de_r or 0.0
    if g is not None and f298 is None:
        problems.add(line, "f298", "is empty; g_K needs the factor f(298) it widens")
        return None, None
    return (f298, g) if f298 is not None else (factor, None)
