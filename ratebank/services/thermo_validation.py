"""Validation of thermochemistry files, in either of their two layouts.

The coefficients layout gives a species' two seven-coefficient polynomials
(McBride, Gordon & Reno, NASA TM-4513, 1993), one row per species. The table
layout gives what curators usually have, one row per temperature: ΔfH°(298.15
K) and S°(298.15 K) once per species, Cp° at each temperature; the polynomials
are then fitted (:mod:`ratebank.services.thermo`). As everywhere, problems are
collected as (line, column, message) and nothing is written while any remains;
values come out in SI units.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

from ratebank.science.thermo import MINIMUM_CP_TEMPERATURES
from ratebank.services.validate import Problems, Row, cell, parse_number
from ratebank.store.models import HIGH_COEFFICIENTS, LOW_COEFFICIENTS

COEFFICIENT_COLUMNS = (
    "species",
    "T_low_K",
    "T_mid_K",
    "T_high_K",
    *LOW_COEFFICIENTS,
    *HIGH_COEFFICIENTS,
    "source",
)
COEFFICIENT_REQUIRED = COEFFICIENT_COLUMNS[:-1]
TABLE_COLUMNS = (
    "species",
    "Hf298_kJ_per_mol",
    "S298_J_per_mol_K",
    "T_K",
    "Cp_J_per_mol_K",
    "source",
)
TABLE_REQUIRED = ("species", "T_K", "Cp_J_per_mol_K")
#: The two layouts, by name.
LAYOUTS = {
    "coefficients": (COEFFICIENT_COLUMNS, COEFFICIENT_REQUIRED),
    "table": (TABLE_COLUMNS, TABLE_REQUIRED),
}
KJ = 1e3


def layout_of(header: Iterable[str]) -> str | None:
    """``coefficients`` or ``table`` from the columns a file's header names; None when it
    names columns of both or of neither."""
    names = set(header)
    coefficients = bool(names & (set(COEFFICIENT_COLUMNS) - set(TABLE_COLUMNS)))
    table = bool(names & (set(TABLE_COLUMNS) - set(COEFFICIENT_COLUMNS)))
    if coefficients == table:
        return None
    return "coefficients" if coefficients else "table"


@dataclass(frozen=True)
class SpeciesRef:
    """What validation knows of a stored species: its id and the method of the thermochemistry
    it already has (None when it has none)."""

    id: int
    thermo_method: str | None


@dataclass(frozen=True)
class GivenPolynomials:
    """A valid row of the coefficients layout (T in K, coefficients as given)."""

    line: int | None
    species_id: int
    species: str
    T_low: float
    T_mid: float
    T_high: float
    low: tuple[float, ...]
    high: tuple[float, ...]
    source: str | None


@dataclass
class TabulatedCp:
    """The rows of one species in the table layout, SI units."""

    line: int | None
    species_id: int
    species: str
    T: list[float] = field(default_factory=list)
    Cp: list[float] = field(default_factory=list)
    lines: list[int | None] = field(default_factory=list)
    #: ΔfH°(298.15 K) [J mol-1] and the line that gave it
    H298: tuple[float, int | None] | None = None
    #: S°(298.15 K) [J mol-1 K-1] and the line that gave it
    S298: tuple[float, int | None] | None = None
    source: str | None = None


def _number(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    column: str,
    what: str,
    *,
    positive: bool = False,
) -> float | None:
    text = cell(row, column)
    if text is None:
        problems.add(line, column, f"is empty; expected {what}")
        return None
    try:
        return parse_number(text, positive=positive, what=what)
    except ValueError as exc:
        problems.add(line, column, str(exc))
        return None


def _species(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    species: Mapping[str, SpeciesRef],
    replace: bool,
) -> tuple[str, SpeciesRef] | None:
    name = cell(row, "species")
    if name is None:
        problems.add(line, "species", "is empty; expected the name of a stored species")
        return None
    ref = species.get(name)
    if ref is None:
        problems.add(line, "species", f"unknown species {name!r}; add the species first")
        return None
    if ref.thermo_method is not None and not replace:
        problems.add(
            line,
            "species",
            f"{name!r} already has thermochemistry ({ref.thermo_method}); allow replacing it "
            "to overwrite it",
        )
        return None
    return name, ref


# --------------------------------------------------------------------------- coefficients


def validate_coefficients(
    rows: Iterable[Row], species: Mapping[str, SpeciesRef], problems: Problems, *, replace: bool
) -> list[GivenPolynomials]:
    """The valid rows of the coefficients layout; every problem goes to ``problems``.

    ``species`` maps every stored species named in the file to its
    :class:`SpeciesRef`; ``replace`` allows thermochemistry a species already
    has to be replaced.
    """
    found: list[GivenPolynomials] = []
    seen: dict[str, int | None] = {}
    for line, row in rows:
        before = problems.total
        named = _species(problems, line, row, species, replace)
        if named is not None and named[0] in seen:
            problems.add(
                line,
                "species",
                f"{named[0]!r} appears twice in the file (first on line {seen[named[0]]})",
            )
        elif named is not None:
            seen[named[0]] = line
        limits = [
            _number(problems, line, row, column, "a temperature in K", positive=True)
            for column in ("T_low_K", "T_mid_K", "T_high_K")
        ]
        coefficients = [
            _number(
                problems,
                line,
                row,
                column,
                f"coefficient a{column[-1]} of the {column.split('_')[0]}-range polynomial",
            )
            for column in (*LOW_COEFFICIENTS, *HIGH_COEFFICIENTS)
        ]
        _ordered(problems, line, limits)
        if problems.total > before or named is None:
            continue
        T_low, T_mid, T_high = (float(t) for t in limits if t is not None)
        values = tuple(float(c) for c in coefficients if c is not None)
        found.append(
            GivenPolynomials(
                line,
                named[1].id,
                named[0],
                T_low,
                T_mid,
                T_high,
                values[:7],
                values[7:],
                cell(row, "source"),
            )
        )
    return found


def _ordered(problems: Problems, line: int | None, limits: list[float | None]) -> None:
    T_low, T_mid, T_high = limits
    if T_low is not None and T_mid is not None and not T_low < T_mid:
        problems.add(
            line,
            "T_mid_K",
            f"{T_mid:g} K must be above T_low_K ({T_low:g} K): the low range "
            "runs from T_low_K up to T_mid_K",
        )
    if T_mid is not None and T_high is not None and not T_mid < T_high:
        problems.add(
            line,
            "T_high_K",
            f"{T_high:g} K must be above T_mid_K ({T_mid:g} K): the high "
            "range runs from T_mid_K up to T_high_K",
        )


# --------------------------------------------------------------------------- table


def validate_table(
    rows: Iterable[Row], species: Mapping[str, SpeciesRef], problems: Problems, *, replace: bool
) -> list[TabulatedCp]:
    """The species of the table layout with their Cp° points; every problem goes to
    ``problems``. Fitting comes after (it needs every row of a species)."""
    tables: dict[str, TabulatedCp] = {}
    refused: set[str] = set()
    for line, row in rows:
        name = cell(row, "species")
        if name in refused:
            continue
        named = _species(problems, line, row, species, replace)
        if named is None:
            if name is not None:
                refused.add(name)
            continue
        table = tables.setdefault(name, TabulatedCp(line, named[1].id, name))
        _table_row(problems, line, row, table)
    for table in tables.values():
        _complete(problems, table)
    return list(tables.values())


def _table_row(
    problems: Problems, line: int | None, row: Mapping[str, str | None], table: TabulatedCp
) -> None:
    T = _number(problems, line, row, "T_K", "a temperature in K", positive=True)
    Cp = _number(problems, line, row, "Cp_J_per_mol_K", "Cp° in J/(mol K)", positive=True)
    if T is not None and T in table.T:
        first = table.lines[table.T.index(T)]
        problems.add(
            line, "T_K", f"{T:g} K appears twice for {table.species!r} (first on line {first})"
        )
    elif T is not None and Cp is not None:
        table.T.append(T)
        table.Cp.append(Cp)
        table.lines.append(line)
    for column, what, scale in (
        ("Hf298_kJ_per_mol", "ΔfH°(298.15 K) in kJ/mol", KJ),
        ("S298_J_per_mol_K", "S°(298.15 K) in J/(mol K)", 1.0),
    ):
        if cell(row, column) is None:
            continue
        value = _number(problems, line, row, column, what, positive=column.startswith("S"))
        if value is None:
            continue
        attribute = "H298" if column.startswith("H") else "S298"
        given = getattr(table, attribute)
        if given is not None and given[0] != value * scale:
            problems.add(
                line,
                column,
                f"gives {table.species!r} a second value ({value:g}; line "
                f"{given[1]} gave {given[0] / scale:g}); give it once per species",
            )
        elif given is None:
            setattr(table, attribute, (value * scale, line))
    table.source = table.source or cell(row, "source")


def _complete(problems: Problems, table: TabulatedCp) -> None:
    """Refuse a species without ΔfH°(298.15 K), S°(298.15 K) or enough temperatures."""
    for attribute, column, what in (
        ("H298", "Hf298_kJ_per_mol", "its ΔfH°(298.15 K) in kJ/mol"),
        ("S298", "S298_J_per_mol_K", "its S°(298.15 K) in J/(mol K)"),
    ):
        if getattr(table, attribute) is None:
            problems.add(
                table.line,
                column,
                f"is not given for {table.species!r}; expected {what} on one of its rows",
            )
    distinct = len(set(table.T))
    if table.T and distinct < MINIMUM_CP_TEMPERATURES:
        problems.add(
            table.line,
            "T_K",
            f"{table.species!r} has Cp° at {distinct} temperature"
            f"{'' if distinct == 1 else 's'}; fitting its polynomials needs Cp° at "
            f"{MINIMUM_CP_TEMPERATURES} or more temperatures spanning the range of use",
        )
