"""Validation of curated input, shared by the CSV importers and the ``add`` commands.

Every check produces a :class:`Problem` (line, column, message) rather than
raising, so that a whole file is checked before anything is written and every
problem can be reported at once. Values come out converted to SI-molar units.

Measurement points are validated column-wise with numpy: a million rows are
checked in one pass, and only the failing rows are looked at one by one to
name their lines.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

from ratebank.errors import EquationError, FormulaError, UnitError

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
    "source",
)
SPECIES_REQUIRED = ("name", "formula")

REACTION_COLUMNS = ("key", "equation", "class", "notes")
REACTION_REQUIRED = ("key", "equation")

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
    "reference",
    "origin",
)
EXPRESSION_REQUIRED = ("reaction", "Ea")
EXPRESSION_ORIGINS = ("literature", "manual")

DIAMETER_KINDS = ("hard-sphere", "lennard-jones")
UNCERTAINTY_KINDS = ("relative", "absolute")

#: A given molar mass further than this from the formula's is refused as a typo.
MOLAR_MASS_TOLERANCE = 0.01

ANGSTROM_M = 1e-10
BAR_PA = 1e5
CM3_M3 = 1e-6
G_KG = 1e-3


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
    what: str = "a number",
) -> float:
    """Parse a finite float; raises ValueError with the expected form."""
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"{text!r} is not a number; expected {what}") from None
    if not math.isfinite(value):
        raise ValueError(f"{text!r} is not a finite number; expected {what}")
    if positive and value <= 0:
        raise ValueError(f"{text} must be greater than zero; expected {what}")
    if minimum is not None and value < minimum:
        raise ValueError(f"{text} is below {minimum:g}; expected {what}")
    return value


def _number(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    column: str,
    **kwargs: Any,
) -> float | None:
    text = cell(row, column)
    if text is None:
        return None
    try:
        return parse_number(text, **kwargs)
    except ValueError as exc:
        problems.add(line, column, str(exc))
        return None


# --------------------------------------------------------------------------- species


@dataclass
class SpeciesRecord:
    line: int | None
    name: str
    formula: str
    molar_mass: float
    molar_mass_source: str
    diameter: float | None = None
    diameter_kind: str | None = None
    well_depth: float | None = None
    critical_temperature: float | None = None
    critical_pressure: float | None = None
    acentric_factor: float | None = None
    boiling_volume: float | None = None
    source: str | None = None


def validate_species(
    rows: Iterable[tuple[int | None, Mapping[str, str | None]]],
    existing_names: set[str],
    problems: Problems,
) -> list[SpeciesRecord]:
    from ratebank.science.formula import molar_mass, parse_formula

    records: list[SpeciesRecord] = []
    seen: dict[str, int | None] = {}
    for line, row in rows:
        name = cell(row, "name")
        formula = cell(row, "formula")
        if name is None:
            problems.add(line, "name", "is empty; expected the species name")
        elif too_long(problems, line, "name", name):
            name = None
        elif name in seen:
            where = f" (first on line {seen[name]})" if seen[name] is not None else ""
            problems.add(line, "name", f"species {name!r} appears twice in the input{where}")
        elif name in existing_names:
            problems.add(line, "name", f"species {name!r} is already in the store")
        if name is not None:
            seen.setdefault(name, line)
        computed_mass = None
        if formula is None:
            problems.add(line, "formula", "is empty; expected a formula such as CH3OH")
        elif too_long(problems, line, "formula", formula):
            formula = None
        else:
            try:
                computed_mass = molar_mass(parse_formula(formula))
            except FormulaError as exc:
                problems.add(line, "formula", str(exc))
        given_mass = _number(
            problems, line, row, "molar_mass_g_per_mol", positive=True, what="a molar mass in g/mol"
        )
        if given_mass is not None and computed_mass is not None:
            computed_g = computed_mass / G_KG
            if abs(given_mass - computed_g) > MOLAR_MASS_TOLERANCE * computed_g:
                problems.add(
                    line,
                    "molar_mass_g_per_mol",
                    f"{given_mass:g} g/mol does not match the formula {formula} "
                    f"({computed_g:.4f} g/mol from IUPAC atomic weights); leave it empty to use "
                    "the formula's",
                )
        diameter = _number(
            problems, line, row, "diameter_angstrom", positive=True, what="a diameter in Å"
        )
        kind = cell(row, "diameter_kind")
        if kind is not None:
            if kind not in DIAMETER_KINDS:
                problems.add(
                    line, "diameter_kind", f"{kind!r} is not one of {', '.join(DIAMETER_KINDS)}"
                )
            elif blank(row.get("diameter_angstrom")):
                problems.add(
                    line, "diameter_kind", "is given without a diameter_angstrom to describe"
                )
        well_depth = _number(
            problems, line, row, "well_depth_K", positive=True, what="a well depth ε/k_B in K"
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
        if name is None or formula is None or computed_mass is None:
            continue
        records.append(
            SpeciesRecord(
                line=line,
                name=name,
                formula=formula,
                molar_mass=given_mass * G_KG if given_mass is not None else computed_mass,
                molar_mass_source="given" if given_mass is not None else "formula",
                diameter=diameter * ANGSTROM_M if diameter is not None else None,
                diameter_kind=kind if diameter is not None else None,
                well_depth=well_depth,
                critical_temperature=tc,
                critical_pressure=pc * BAR_PA if pc is not None else None,
                acentric_factor=omega,
                boiling_volume=vb * CM3_M3 if vb is not None else None,
                source=cell(row, "source"),
            )
        )
    return records


# --------------------------------------------------------------------------- reactions


@dataclass
class ReactionRecord:
    line: int | None
    key: str
    equation: str
    order: int
    third_body: bool
    reactant_counts: dict[str, int]
    product_counts: dict[str, int]
    reaction_class: str | None = None
    notes: str | None = None


def validate_reactions(
    rows: Iterable[tuple[int | None, Mapping[str, str | None]]],
    species_formulas: Mapping[str, Mapping[str, int]],
    existing_keys: set[str],
    existing_equations: Mapping[str, str],
    problems: Problems,
) -> list[ReactionRecord]:
    """``existing_equations`` maps canonical equation -> key of the stored reaction."""
    from ratebank.science.equation import check_element_balance, parse_equation

    records: list[ReactionRecord] = []
    seen_keys: dict[str, int | None] = {}
    seen_equations: dict[str, int | None] = {}
    for line, row in rows:
        key = cell(row, "key")
        text = cell(row, "equation")
        if key is None:
            problems.add(line, "key", "is empty; expected a short unique reaction key")
        elif too_long(problems, line, "key", key):
            key = None
        elif any(ch.isspace() for ch in key):
            problems.add(line, "key", f"{key!r} contains spaces; expected a key without spaces")
            key = None
        elif key in seen_keys:
            problems.add(line, "key", f"reaction key {key!r} appears twice in the input")
        elif key in existing_keys:
            problems.add(line, "key", f"reaction key {key!r} is already in the store")
        if key is not None:
            seen_keys.setdefault(key, line)
        if text is None:
            problems.add(line, "equation", "is empty; expected an equation such as A + B -> C + D")
            continue
        try:
            equation = parse_equation(text)
        except EquationError as exc:
            problems.add(line, "equation", str(exc))
            continue
        unknown = [name for name in equation.species if name not in species_formulas]
        if unknown:
            problems.add(
                line,
                "equation",
                f"unknown species {', '.join(repr(n) for n in unknown)}; add "
                f"{'them' if len(unknown) > 1 else 'it'} with `ratebank species` first",
            )
            continue
        try:
            check_element_balance(equation, species_formulas)
        except EquationError as exc:
            problems.add(line, "equation", str(exc))
            continue
        canonical = equation.canonical
        if too_long(problems, line, "equation", canonical) or too_long(
            problems, line, "class", cell(row, "class")
        ):
            continue
        if equation.order > 3 or equation.order < 1:
            problems.add(
                line, "equation", f"has order {equation.order}; ratebank stores orders 1 to 3"
            )
            continue
        if canonical in seen_equations:
            problems.add(
                line,
                "equation",
                f"{canonical!r} appears twice in the input (first on line "
                f"{seen_equations[canonical]})",
            )
            continue
        seen_equations[canonical] = line
        if canonical in existing_equations:
            problems.add(
                line,
                "equation",
                f"{canonical!r} is already in the store as {existing_equations[canonical]!r}",
            )
            continue
        if key is None:
            continue
        records.append(
            ReactionRecord(
                line=line,
                key=key,
                equation=canonical,
                order=equation.order,
                third_body=equation.third_body,
                reactant_counts=dict(equation.reactant_counts),
                product_counts=dict(equation.product_counts),
                reaction_class=cell(row, "class"),
                notes=cell(row, "notes"),
            )
        )
    return records


# --------------------------------------------------------------------------- lookups


class ReactionRef(NamedTuple):
    """What validation needs to know of a stored reaction."""

    id: int
    key: str
    order: int


class ReactionResolver:
    """Resolves a reaction cell (a key or any spelling of the equation)."""

    def __init__(self, by_key: Mapping[str, ReactionRef], by_equation: Mapping[str, ReactionRef]):
        self.by_key = by_key
        self.by_equation = by_equation
        self._cache: dict[str, ReactionRef | str] = {}

    def prefetch(self, texts: Iterable[str]) -> None:
        """Look up many reaction cells at once (a no-op when everything is loaded)."""
        return None

    def resolve(self, text: str) -> ReactionRef | str:
        """The reaction, or a message saying why it cannot be found."""
        if text in self._cache:
            return self._cache[text]
        result: ReactionRef | str
        if text in self.by_key:
            result = self.by_key[text]
        elif "->" in text or "→" in text:
            from ratebank.science.equation import parse_equation

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


# --------------------------------------------------------------------------- measurements


@dataclass(slots=True)
class MeasurementSetRecord:
    name: str
    reaction: ReactionRef
    k_units: str
    reference: str | None
    method: str | None
    bath_gas: str | None
    first_line: int
    factor: float = float("nan")
    valid: bool = True
    id: int | None = None


@dataclass
class MeasurementChunk:
    """Validated points of one chunk, column-wise, SI units."""

    new_sets: list[MeasurementSetRecord]
    set_index: Any  # numpy int array: index into MeasurementValidator.sets per point
    temperature: Any
    rate_constant: Any
    relative_uncertainty: Any  # NaN where not given
    pressure: Any  # NaN where not given

    @property
    def n_points(self) -> int:
        return len(self.temperature)


def _column_numbers(
    texts: Sequence[str],
    lines: Sequence[int],
    column: str,
    problems: Problems,
    *,
    required: bool,
    positive: bool,
    what: str,
):
    """Parse a column of number texts with numpy; report the bad cells by line."""
    import numpy as np

    n = len(texts)
    values = np.full(n, np.nan)
    if not required and (n == 0 or (texts[0] == "" and texts.count("") == n)):
        return values  # an absent or empty optional column: nothing to parse or report
    if "" in texts:
        present = np.fromiter((t != "" for t in texts), dtype=bool, count=n)
        candidates = [t for t in texts if t != ""]
    else:
        present = np.ones(n, dtype=bool)
        candidates = list(texts)
    # a cell that is not a number is reported as that, not a second time as empty
    empty = ~present
    try:
        values[present] = np.array(candidates, dtype=np.float64)
    except ValueError:
        for i, text in enumerate(texts):
            if text == "":
                continue
            try:
                values[i] = float(text)
            except ValueError:
                problems.add(lines[i], column, f"{text.strip()!r} is not a number; expected {what}")
                present[i] = False
    finite = np.isfinite(values)
    for i in np.flatnonzero(present & ~finite):
        problems.add(
            lines[i], column, f"{texts[i].strip()!r} is not a finite number; expected {what}"
        )
    if positive:
        for i in np.flatnonzero(present & finite & (values <= 0)):
            problems.add(
                lines[i], column, f"{texts[i].strip()} must be greater than zero; expected {what}"
            )
    if required:
        for i in np.flatnonzero(empty):
            problems.add(lines[i], column, f"is empty; expected {what}")
    return values


class MeasurementValidator:
    """Validates measurement rows chunk by chunk, keeping the sets seen so far.

    Validation is column-wise (numpy) so that a million rows are checked in a
    few passes; rows are looked at one by one only to name problems. The
    result is the same whatever the chunk size (a test checks this).
    """

    def __init__(
        self,
        resolver: ReactionResolver,
        set_exists: Any,
        problems: Problems,
        *,
        default_k_units: str | None = None,
    ):
        self.resolver = resolver
        self.set_exists = set_exists  # callable: list of names -> set of names in the store
        self.problems = problems
        self.default_k_units = default_k_units or ""
        self.sets: list[MeasurementSetRecord] = []
        self.by_name: dict[str, int] = {}
        self._unit_cache: dict[tuple[str, int], float | str] = {}

    def _unit_factor(self, text: str, order: int) -> float | str:
        from ratebank.science.units import parse_rate_unit

        key = (text, order)
        if key not in self._unit_cache:
            try:
                self._unit_cache[key] = parse_rate_unit(text, order=order).to_si
            except UnitError as exc:
                self._unit_cache[key] = str(exc)
        return self._unit_cache[key]

    def _new_set(self, name: str, row: Mapping[str, str], line: int) -> MeasurementSetRecord:
        problems = self.problems
        reaction_text = row["reaction"]
        unit_text = row["k_units"] or self.default_k_units
        record = MeasurementSetRecord(
            name=name,
            reaction=ReactionRef(-1, reaction_text, 0),
            k_units=unit_text,
            reference=row["reference"] or None,
            method=row["method"] or None,
            bath_gas=row["bath_gas"] or None,
            first_line=line,
            valid=False,
        )
        ok = True
        if reaction_text == "":
            problems.add(line, "reaction", "is empty; expected a reaction key or equation")
            ok = False
        else:
            resolved = self.resolver.resolve(reaction_text)
            if isinstance(resolved, ReactionRef):
                record.reaction = resolved
            else:
                problems.add(line, "reaction", resolved)
                ok = False
        if unit_text == "":
            problems.add(line, "k_units", "is empty and no --k-units was given; expected a unit")
            ok = False
        elif record.reaction.id != -1:
            factor = self._unit_factor(unit_text, record.reaction.order)
            if isinstance(factor, str):
                problems.add(line, "k_units", factor)
                ok = False
            else:
                record.factor = factor
        record.valid = ok
        return record

    def validate_chunk(self, columns: Mapping[str, Sequence[str]], lines: Sequence[int]):
        """Validate one chunk of rows given column-wise (raw cell texts)."""
        import numpy as np

        problems = self.problems
        n = len(lines)
        empty = [""] * n

        def stripped(name: str) -> list[str]:
            values = columns.get(name)
            if values is None:
                return empty
            # strip each distinct text once: a million cells hold few distinct ones
            table = {text: text.strip() for text in dict.fromkeys(values)}
            if all(text == clean for text, clean in table.items()):
                return values  # no cell is padded
            return [table[text] for text in values]

        set_names = stripped("set")
        reactions = stripped("reaction")
        units = stripped("k_units")
        kinds = stripped("uncertainty_kind")
        references = stripped("reference")
        methods = stripped("method")
        baths = stripped("bath_gas")

        temperature = _column_numbers(
            columns["T_K"],
            lines,
            "T_K",
            problems,
            required=True,
            positive=True,
            what="a temperature in K greater than zero",
        )
        rate_constant = _column_numbers(
            columns["k"],
            lines,
            "k",
            problems,
            required=True,
            positive=True,
            what="a rate constant greater than zero",
        )
        uncertainty = _column_numbers(
            columns.get("k_uncertainty", empty),
            lines,
            "k_uncertainty",
            problems,
            required=False,
            positive=True,
            what="an uncertainty greater than zero",
        )
        pressure = _column_numbers(
            columns.get("pressure_bar", empty),
            lines,
            "pressure_bar",
            problems,
            required=False,
            positive=True,
            what="a pressure in bar greater than zero",
        )

        # sets: the first row of each new set defines it. Rows of one set are
        # usually consecutive, so look at the first row of each run only.
        names_array = np.array(set_names, dtype=object)
        run_starts = (
            np.flatnonzero(np.concatenate(([True], names_array[1:] != names_array[:-1]))).tolist()
            if n
            else []
        )
        first_rows: dict[str, int] = {}
        for i in run_starts:
            name = set_names[i]
            if name not in first_rows:
                first_rows[name] = i
        new_sets: list[MeasurementSetRecord] = []
        if "" in first_rows:
            for i in (j for j, name in enumerate(set_names) if name == ""):
                problems.add(lines[i], "set", "is empty; expected the name of the measurement set")
        for column, values in (("set", set_names), ("bath_gas", baths), ("k_units", units)):
            limit = TEXT_LIMITS[column]
            if max(map(len, values), default=0) > limit:
                for i in first_rows.values():
                    too_long(problems, lines[i], column, values[i])
        fresh = [name for name in first_rows if name and name not in self.by_name]
        existing = self.set_exists(fresh) if fresh else set()
        self.resolver.prefetch({reactions[first_rows[name]] for name in fresh})
        resolve = self.resolver.resolve
        by_key = self.resolver.by_key
        unit_cache = self._unit_cache
        default_units = self.default_k_units
        for name in fresh:
            i = first_rows[name]
            # the common case in a few steps: a known reaction, a known unit
            reaction_text, unit_text = reactions[i], units[i] or default_units
            resolved = (
                (by_key.get(reaction_text) or resolve(reaction_text))
                if reaction_text and unit_text
                else None
            )
            factor = (
                unit_cache.get((unit_text, resolved.order))
                if isinstance(resolved, ReactionRef)
                else None
            )
            if isinstance(factor, float):
                record = MeasurementSetRecord(
                    name,
                    resolved,  # type: ignore[arg-type]
                    unit_text,
                    references[i] or None,
                    methods[i] or None,
                    baths[i] or None,
                    lines[i],
                    factor,
                )
            else:  # everything else, problems included, the long way
                row = {
                    "reaction": reaction_text,
                    "k_units": units[i],
                    "reference": references[i],
                    "method": methods[i],
                    "bath_gas": baths[i],
                }
                record = self._new_set(name, row, lines[i])
            if name in existing:
                problems.add(lines[i], "set", f"measurement set {name!r} is already in the store")
                record.valid = False
            self.by_name[name] = len(self.sets)
            self.sets.append(record)
            new_sets.append(record)
        by_name = self.by_name
        run_index = np.array([by_name.get(set_names[i], -1) for i in run_starts], dtype=np.int64)
        run_lengths = np.diff(np.append(run_starts, n))
        set_index = np.repeat(run_index, run_lengths)
        run_first_row = np.repeat(np.asarray(run_starts, dtype=np.int64), run_lengths)
        run_starts = np.asarray(run_starts, dtype=np.int64)
        # work on the sets this chunk touches only, so that cost does not grow with the file
        local_sets, local_index = np.unique(set_index, return_inverse=True)
        local_index = local_index.reshape(-1)
        touched = [self.sets[i] if i >= 0 else None for i in local_sets.tolist()]
        factor_of_set = np.array([r.factor if r is not None else np.nan for r in touched])

        # every row of a set must agree with the set's first row
        units_filled = [u or self.default_k_units for u in units] if self.default_k_units else units
        for column, values in (
            ("reaction", reactions),
            ("k_units", units_filled),
            ("reference", references),
            ("method", methods),
            ("bath_gas", baths),
        ):
            self._check_agreement(
                touched, local_index, run_starts, run_first_row, set_names, values, column, lines
            )

        kind_array = np.array(kinds, dtype=object)
        absolute = kind_array == "absolute"
        unknown = ~(absolute | (kind_array == "relative") | (kind_array == ""))
        for i in np.flatnonzero(unknown):
            problems.add(
                lines[i], "uncertainty_kind", f"{kinds[i]!r} is not one of relative, absolute"
            )

        factor = factor_of_set[local_index]
        rate_si = rate_constant * factor
        with np.errstate(invalid="ignore", divide="ignore"):
            relative = np.where(absolute, uncertainty * factor / rate_si, uncertainty)
        return MeasurementChunk(
            new_sets=new_sets,
            set_index=set_index,
            temperature=temperature,
            rate_constant=rate_si,
            relative_uncertainty=relative,
            pressure=pressure * BAR_PA,
        )

    def _check_agreement(  # type: ignore[no-untyped-def]
        self, touched, local_index, run_starts, run_first_row, set_names, values, column, lines
    ) -> None:
        import numpy as np

        if column == "reaction":
            expected = [
                r.reaction.key if r is not None and r.reaction.id != -1 else None for r in touched
            ]
        else:
            expected = [(getattr(r, column) or "") if r is not None else None for r in touched]
        expected_array = np.array(expected, dtype=object)
        n = len(values)
        # one text in the whole chunk (a unit, an absent column): every row
        # repeats its run's first cell, so the run starts decide
        uniform = n == 0 or values.count(values[0]) == n
        given = (
            np.array([values[i] for i in run_starts.tolist()], dtype=object)
            if uniform
            else np.array(values, dtype=object)
        )

        def disagree(rows, cells):  # type: ignore[no-untyped-def]
            reference = expected_array[local_index[rows]]
            return (cells != reference) & (cells != "") & (reference != None)  # noqa: E711

        # A row's verdict depends only on its cell and its set, so a row that
        # repeats the first cell of its run shares that row's verdict: when
        # every run starts clean, only the rows that differ need a look.
        start_cells = given if uniform else given[run_starts]
        if not disagree(run_starts, start_cells).any():
            if uniform:
                return
            candidates = np.flatnonzero(given != given[run_first_row])
            suspects = candidates[disagree(candidates, given[candidates])]
        else:
            if uniform:
                given = np.array(values, dtype=object)
            suspects = np.flatnonzero(disagree(slice(None), given))
        for i in suspects:
            record = touched[local_index[i]]
            if lines[i] == record.first_line:
                continue
            if column == "reaction":
                resolved = self.resolver.resolve(values[i])
                if isinstance(resolved, ReactionRef) and resolved.id == record.reaction.id:
                    continue
                self.problems.add(
                    lines[i],
                    "reaction",
                    f"set {set_names[i]!r} was given for reaction {record.reaction.key!r} on "
                    f"line {record.first_line}; one set belongs to one reaction",
                )
            elif column == "k_units":
                self.problems.add(
                    lines[i],
                    "k_units",
                    f"{values[i]!r} differs from {record.k_units!r} used for set "
                    f"{set_names[i]!r} on line {record.first_line}; one set uses one unit",
                )
            else:
                self.problems.add(
                    lines[i],
                    column,
                    f"{values[i]!r} differs from {expected[local_index[i]]!r} given for set "
                    f"{set_names[i]!r} on line {record.first_line}",
                )


# --------------------------------------------------------------------------- expressions


@dataclass
class ExpressionRecord:
    line: int | None
    reaction: ReactionRef
    origin: str
    A: float | None
    n: float
    Ea: float
    t_min: float | None
    t_max: float | None
    uncertainty_factor: float | None
    reference: str | None
    given_units: dict[str, str]


def validate_expressions(
    rows: Iterable[tuple[int | None, Mapping[str, str | None]]],
    resolver: ReactionResolver,
    problems: Problems,
) -> list[ExpressionRecord]:
    from ratebank.science.units import parse_energy_unit, parse_rate_unit

    rows = list(rows)
    # one batched lookup for the whole file, not a query per row
    resolver.prefetch({text for _, row in rows if (text := cell(row, "reaction")) is not None})
    records: list[ExpressionRecord] = []
    for line, row in rows:
        reaction_text = cell(row, "reaction")
        reaction: ReactionRef | None = None
        if reaction_text is None:
            problems.add(line, "reaction", "is empty; expected a reaction key or equation")
        else:
            resolved = resolver.resolve(reaction_text)
            if isinstance(resolved, ReactionRef):
                reaction = resolved
            else:
                problems.add(line, "reaction", resolved)
        a_value = _number(
            problems, line, row, "A", positive=True, what="a pre-exponential factor above zero"
        )
        n_value = _number(problems, line, row, "n", what="a temperature exponent")
        ea_value = _number(problems, line, row, "Ea", what="an activation energy")
        if cell(row, "Ea") is None:
            problems.add(line, "Ea", "is empty; expected an activation energy (0 if none)")
        ea_units = cell(row, "Ea_units")
        ea_factor = None
        if ea_units is None:
            if cell(row, "Ea") is not None:
                problems.add(line, "Ea_units", "is empty; expected a unit such as kJ/mol or K")
        else:
            try:
                ea_factor = parse_energy_unit(ea_units).to_si
            except UnitError as exc:
                problems.add(line, "Ea_units", str(exc))
        k_units = cell(row, "k_units")
        a_factor = None
        if a_value is not None:
            if k_units is None:
                problems.add(line, "k_units", "is empty; A needs its unit (e.g. cm3/molecule/s)")
            elif reaction is not None:
                try:
                    a_factor = parse_rate_unit(k_units, order=reaction.order).to_si
                except UnitError as exc:
                    problems.add(line, "k_units", str(exc))
        elif k_units is not None and reaction is not None:
            try:
                parse_rate_unit(k_units, order=reaction.order)
            except UnitError as exc:
                problems.add(line, "k_units", str(exc))
        if a_value is None and n_value not in (None, 0.0):
            problems.add(line, "n", "is given without A; leave n empty when A is to be estimated")
        t_min = _number(problems, line, row, "T_min_K", positive=True, what="a temperature in K")
        t_max = _number(problems, line, row, "T_max_K", positive=True, what="a temperature in K")
        if t_min is not None and t_max is not None and t_max < t_min:
            problems.add(line, "T_max_K", f"{t_max:g} K is below T_min_K {t_min:g} K")
        factor = _number(
            problems,
            line,
            row,
            "uncertainty_factor",
            minimum=1.0,
            what="an uncertainty factor of at least 1",
        )
        origin = cell(row, "origin") or "literature"
        if origin not in EXPRESSION_ORIGINS:
            problems.add(
                line, "origin", f"{origin!r} is not one of {', '.join(EXPRESSION_ORIGINS)}"
            )
        if reaction is None or ea_value is None or ea_factor is None:
            continue
        if a_value is not None and a_factor is None:
            continue
        units = {"Ea_units": ea_units or ""}
        if k_units:
            units["k_units"] = k_units
        records.append(
            ExpressionRecord(
                line=line,
                reaction=reaction,
                origin=origin,
                A=a_value * a_factor if a_value is not None and a_factor is not None else None,
                n=n_value or 0.0,
                Ea=ea_value * ea_factor,
                t_min=t_min,
                t_max=t_max,
                uncertainty_factor=factor,
                reference=cell(row, "reference"),
                given_units=units,
            )
        )
    return records
