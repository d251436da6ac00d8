"""Species thermochemistry: import it (given polynomials, a Cp° table, a NIST-JANAF table),
show it, and the standard reaction properties and equilibrium constants it gives.

Every function takes an open :class:`~sqlalchemy.orm.Session` and works in its
transaction; the caller commits. Values in and out are SI: T [K], H and G
[J mol^-1], S and Cp [J mol^-1 K^-1], Kc [(mol m^-3)^Δn]. The standard state
is the ideal gas at 1 bar; third bodies (M) are not species and take no part
in Δn (:mod:`ratebank.science.thermo`).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, FitError, NotFoundError, ScienceInputError
from ratebank.science.constants import GAS_CONSTANT
from ratebank.science.formula import parse_formula
from ratebank.science.thermo import (
    NasaFit,
    NasaPolynomials,
    fit_inputs_from_table,
    fit_nasa_polynomials,
    reaction_thermochemistry,
    standard_properties,
)
from ratebank.services.thermo_validation import (
    LAYOUTS,
    GivenPolynomials,
    SpeciesRef,
    TabulatedCp,
    validate_coefficients,
    validate_table,
)
from ratebank.services.validate import REVERSE_RULES, Problems, Row, cell
from ratebank.store import audit, queries
from ratebank.store.queries import ReactionRow
from ratebank.store.thermo import (
    NewThermo,
    ThermoRow,
    reverse_rules,
    set_reverse_rule,
    species_formula,
    species_ids_by_name,
    stoichiometry,
    thermo_of,
    write_thermo,
)

#: Temperatures at which ``species show`` gives Cp°, H° and S° [K].
DEFAULT_TEMPERATURES = (298.15, 500.0, 1000.0, 1500.0, 2000.0)
#: How each import method is named where it is stored.
GIVEN_METHOD = "given coefficients"
FITTED_METHOD = "fitted to tabulated Cp"
#: The concentration unit of each unit preset; Kc is in it to the power Δn.
#: An ideal gas has Cp° of at least 5R/2 (a monatomic gas); a table below it is not of a gas.
IDEAL_GAS_MINIMUM_CP = 2.5 * GAS_CONSTANT


def polynomials_of(row: ThermoRow) -> NasaPolynomials:
    """The stored polynomials of one species as the science layer takes them."""
    return NasaPolynomials(row.low, row.high, row.T_low, row.T_mid, row.T_high)


# --------------------------------------------------------------------------- import


@dataclass(frozen=True)
class ThermoStored:
    """The thermochemistry stored (or, in a dry run, that would be) for one species."""

    species: str
    method: str
    source: str | None
    T_low: float
    T_mid: float
    T_high: float
    max_cp_deviation: float | None = None
    max_H_deviation: float | None = None
    max_S_deviation: float | None = None
    fit_points: int | None = None
    replaced: bool = False


@dataclass
class ThermoImportReport:
    """What a thermochemistry import did (or, with ``dry_run``, would do)."""

    source: str
    layout: str
    dry_run: bool
    stored: list[ThermoStored] = field(default_factory=list)
    #: with ``update``: species whose stored polynomials were the same (left alone)
    unchanged: list[str] = field(default_factory=list)


def _species_refs(session: Session, names: Iterable[str]) -> dict[str, SpeciesRef]:
    ids = species_ids_by_name(session, names)
    thermo = thermo_of(session, ids.values())
    return {
        name: SpeciesRef(i, thermo[i].method if i in thermo else None) for name, i in ids.items()
    }


def import_thermo(
    session: Session,
    layout: str,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    replace: bool = False,
    update: bool = False,
) -> ThermoImportReport:
    """Validate and store thermochemistry rows of ``layout`` (``coefficients`` or ``table``);
    all or nothing. With ``update``, a species whose polynomials are already stored is
    compared: the same ones are left alone (``unchanged``), changed ones replaced, with
    their before and after in the history.

    The table layout is fitted species by species
    (:func:`ratebank.science.thermo.fit_nasa_polynomials`: continuous Cp°, H°
    and S° at the midpoint, H° and S° exact at 298.15 K); a species that
    cannot be fitted is a problem of the file like any other.
    """
    if layout not in LAYOUTS:
        raise BadInputError(
            f"unknown layout {layout!r}; expected one of {', '.join(LAYOUTS)}", argument="layout"
        )
    replace = replace or update
    problems = Problems()
    refs = _species_refs(session, {name for _, row in rows if (name := cell(row, "species"))})
    if layout == "coefficients":
        given = validate_coefficients(rows, refs, problems, replace=replace)
        new = [_given_thermo(problems, item) for item in given]
    else:
        tables = validate_table(rows, refs, problems, replace=replace)
        new = [_fitted_thermo(problems, table) for table in tables] if not problems else []
    problems.raise_if_any(source)
    found = [item for item in new if item is not None]
    report = ThermoImportReport(source, layout, dry_run)
    if update:
        found, report.unchanged = _changed_only(session, found, source, dry_run=dry_run)
    report.stored = _stored(found, {name for name, ref in refs.items() if ref.thermo_method})
    if not dry_run and found:
        _write(session, found, source)
    return report


def _changed_only(
    session: Session, found: list[NewThermo], source: str, *, dry_run: bool
) -> tuple[list[NewThermo], list[str]]:
    """(the rows that are new or differ from the stored polynomials, the species whose stored
    ones are the same); each change goes into the history with before and after."""
    stored = thermo_of(session, [item.species_id for item in found])
    changed, same = [], []
    for item in found:
        old = stored.get(item.species_id)
        if old is not None and _same_polynomials(old, item):
            same.append(item.species)
            continue
        changed.append(item)
        if old is not None and not dry_run:
            audit.record(
                session,
                "thermo.update",
                item.species,
                source=source,
                before={"T_K": [old.T_low, old.T_mid, old.T_high], "low": list(old.low),
                        "high": list(old.high)},
                after={"T_K": [item.T_low, item.T_mid, item.T_high], "low": list(item.low),
                       "high": list(item.high)},
            )  # fmt: skip
    return changed, same


def _same_polynomials(old, new: NewThermo) -> bool:  # type: ignore[no-untyped-def]
    return (
        (old.T_low, old.T_mid, old.T_high) == (new.T_low, new.T_mid, new.T_high)
        and tuple(old.low) == tuple(new.low)
        and tuple(old.high) == tuple(new.high)
        and (old.method, old.source) == (new.method, new.source)
    )


def _given_thermo(problems: Problems, item: GivenPolynomials) -> NewThermo | None:
    try:
        polynomials_of_given = NasaPolynomials(
            item.low, item.high, item.T_low, item.T_mid, item.T_high
        )
    except ScienceInputError as exc:
        problems.add(item.line, "", str(exc))
        return None
    return NewThermo(
        item.species_id,
        item.species,
        float(polynomials_of_given.T_low),
        float(polynomials_of_given.T_mid),
        float(polynomials_of_given.T_high),
        item.low,
        item.high,
        GIVEN_METHOD,
        item.source,
    )


def _finite_or_none(value: float) -> float | None:
    return value if math.isfinite(value) else None


def _thermo_of_fit(
    species_id: int, species: str, fit: NasaFit, method: str, source: str | None
) -> NewThermo:
    p = fit.polynomials
    return NewThermo(
        species_id,
        species,
        float(p.T_low),
        float(p.T_mid),
        float(p.T_high),
        tuple(p.low.tolist()),
        tuple(p.high.tolist()),
        method,
        source,
        _finite_or_none(fit.max_cp_deviation),
        _finite_or_none(fit.max_H_deviation),
        _finite_or_none(fit.max_S_deviation),
        fit.n_points,
    )


def _fitted_thermo(problems: Problems, table: TabulatedCp) -> NewThermo | None:
    assert table.H298 is not None and table.S298 is not None
    try:
        fit = fit_nasa_polynomials(table.T, table.Cp, table.H298[0], table.S298[0])
    except FitError as exc:
        problems.add(table.line, "T_K", f"the Cp° of {table.species!r} cannot be fitted: {exc}")
        return None
    return _thermo_of_fit(table.species_id, table.species, fit, FITTED_METHOD, table.source)


def _stored(found: Sequence[NewThermo], had_thermo: set[str]) -> list[ThermoStored]:
    return [
        ThermoStored(
            item.species,
            item.method,
            item.source,
            item.T_low,
            item.T_mid,
            item.T_high,
            item.max_cp_deviation,
            item.max_H_deviation,
            item.max_S_deviation,
            item.fit_points,
            item.species in had_thermo,
        )
        for item in found
    ]


def _write(session: Session, found: Sequence[NewThermo], source: str) -> None:
    replaced = write_thermo(session, found)
    audit.record(
        session,
        "thermo.add",
        source,
        count=len(found),
        species=[item.species for item in found[:20]],
        methods=sorted({item.method for item in found}),
        replaced=replaced[:20],
    )


# --------------------------------------------------------------------------- NIST-JANAF


@dataclass(frozen=True)
class ThermoTable:
    """A thermochemical table of one species in SI (the NIST-JANAF columns)."""

    #: the table's index, e.g. H-064
    index: str
    #: the table's title, e.g. Water (H2O)
    title: str
    #: the table's formula with its phase, e.g. H2O1(g)
    formula: str
    T: np.ndarray
    Cp: np.ndarray
    S: np.ndarray
    H_minus_H298: np.ndarray
    delta_f_H: np.ndarray
    #: where the table comes from, as stored
    source: str


def _table_problem(species: str, formula: str | None, table: ThermoTable) -> str | None:
    """Why ``table`` cannot be the thermochemistry of ``species``, if it cannot."""
    if formula is None:
        return f"unknown species {species!r}; add the species first"
    phase = table.formula[table.formula.find("(") :] if "(" in table.formula else ""
    if phase not in ("(g)", "(ref)"):
        return f"table {table.index} ({table.title}) is of the phase {phase or 'unknown'}, not gas"
    elements = {e: c for e, c in parse_formula(table.formula[: -len(phase)]).items() if c}
    if elements != {e: c for e, c in parse_formula(formula).items() if c}:
        return (
            f"table {table.index} is {table.title}, formula {table.formula}, which is not "
            f"{species!r} ({formula})"
        )
    return None


def store_thermo_tables(
    session: Session,
    tables: Mapping[str, ThermoTable],
    *,
    T_range: tuple[float, float] = (200.0, 6000.0),
    replace: bool = False,
    dry_run: bool = False,
) -> ThermoImportReport:
    """Fit and store the polynomials of each species (name -> its NIST-JANAF table) over the
    table rows in ``T_range`` [K]; all or nothing.

    The fit's largest deviations in Cp°, H° and S° from the table are stored
    with it, and the table is named as its method.
    """
    if not (0 < T_range[0] < T_range[1]):
        raise BadInputError(
            "T_range needs two temperatures, the lower first, both above 0 K", argument="T_range"
        )
    refs = _species_refs(session, tables)
    problems = Problems()
    found: list[NewThermo] = []
    for species, table in tables.items():
        ref = refs.get(species)
        reason = _table_problem(species, species_formula(session, species), table)
        if reason is None and ref is not None and ref.thermo_method and not replace:
            reason = (
                f"{species!r} already has thermochemistry ({ref.thermo_method}); allow "
                "replacing it to overwrite it"
            )
        item = None if reason is not None else _janaf_thermo(species, ref, table, T_range)
        if isinstance(item, str) or reason is not None:
            problems.add(None, species, reason or str(item))
        elif item is not None:
            found.append(item)
    problems.raise_if_any("NIST-JANAF tables")
    report = ThermoImportReport("NIST-JANAF tables", "table", dry_run)
    report.stored = _stored(found, {name for name, ref in refs.items() if ref.thermo_method})
    if not dry_run and found:
        _write(session, found, "NIST-JANAF tables")
    return report


def _janaf_thermo(
    species: str, ref: SpeciesRef | None, table: ThermoTable, T_range: tuple[float, float]
) -> NewThermo | str:
    assert ref is not None
    try:
        inputs = fit_inputs_from_table(
            table.T,
            table.Cp,
            table.S,
            table.H_minus_H298,
            table.delta_f_H,
            T_min=T_range[0],
            T_max=T_range[1],
        )
        if np.any(inputs.Cp < IDEAL_GAS_MINIMUM_CP * (1 - 1e-3)):
            return (
                f"table {table.index} ({table.title}) has Cp° below 5R/2 in "
                f"{T_range[0]:g}-{T_range[1]:g} K, so it is not an ideal-gas table"
            )
        fit = fit_nasa_polynomials(*inputs)
    except FitError as exc:
        return f"table {table.index} ({table.title}) cannot be fitted: {exc}"
    method = f"NIST-JANAF table {table.index} ({table.title})"
    return _thermo_of_fit(ref.id, species, fit, method, table.source)


# --------------------------------------------------------------------------- species


@dataclass(frozen=True)
class PropertyRow:
    """Cp° [J mol-1 K-1], H° [J mol-1] and S° [J mol-1 K-1] at T [K]; None outside the range."""

    T: float
    Cp: float | None
    H: float | None
    S: float | None
    in_range: bool


@dataclass(frozen=True)
class SpeciesThermoView:
    """A species' stored thermochemistry and its values at some temperatures."""

    thermo: ThermoRow
    rows: list[PropertyRow]


def _temperatures(temperatures: Sequence[float] | None) -> list[float]:
    values = list(temperatures) if temperatures else list(DEFAULT_TEMPERATURES)
    bad = [t for t in values if not (math.isfinite(t) and t > 0)]
    if bad:
        raise BadInputError(f"temperature {bad[0]!r} must be above 0 K", argument="temperatures")
    return values


def species_thermo(
    session: Session, name: str, temperatures: Sequence[float] | None = None
) -> SpeciesThermoView | None:
    """Cp°, H° and S° of a species at ``temperatures`` [K] (by default
    :data:`DEFAULT_TEMPERATURES`); None when the species has no thermochemistry."""
    values = _temperatures(temperatures)
    species = queries.find_species(session, name)
    stored = thermo_of(session, [species.id]).get(species.id)
    if stored is None:
        return None
    T = np.array(values)
    inside = (T >= stored.T_low * (1 - 1e-12)) & (T <= stored.T_high * (1 + 1e-12))
    found = standard_properties(polynomials_of(stored), T, extrapolate=True)
    rows = [
        PropertyRow(t, cp, h, s, True) if ok else PropertyRow(t, None, None, None, False)
        for t, cp, h, s, ok in zip(
            values,
            found.Cp.tolist(),
            found.H.tolist(),
            found.S.tolist(),
            inside.tolist(),
            strict=True,
        )
    ]
    return SpeciesThermoView(stored, rows)


def list_thermo(session: Session) -> list[ThermoRow]:
    """Every species' stored thermochemistry, by species name."""
    return list(thermo_of(session).values())


# --------------------------------------------------------------------------- reactions


@dataclass(frozen=True)
class ReactionThermoInputs:
    """What the science layer needs for a reaction's thermochemistry."""

    reaction: ReactionRow
    #: species names, in the order written (no third body)
    species: tuple[str, ...]
    #: ν of each species (reactants negative)
    nu: np.ndarray
    polynomials: NasaPolynomials
    #: the range every species' polynomials hold over [K]
    T_low: float
    T_high: float

    @property
    def delta_n(self) -> int:
        return round(float(self.nu.sum()))


def reaction_thermo_inputs(
    session: Session, reactions: Sequence[ReactionRow]
) -> tuple[dict[int, ReactionThermoInputs], dict[int, list[str]]]:
    """(inputs of each reaction whose species all have thermochemistry, the species without
    it of each other reaction), by reaction id."""
    stoichiometries = stoichiometry(session, [r.id for r in reactions])
    thermo = thermo_of(session, {p.species_id for ps in stoichiometries.values() for p in ps})
    polynomials = {sid: polynomials_of(row) for sid, row in thermo.items()}
    found: dict[int, ReactionThermoInputs] = {}
    missing: dict[int, list[str]] = {}
    for reaction in reactions:
        participants = stoichiometries[reaction.id]
        lacking = [p.species for p in participants if p.species_id not in thermo]
        if lacking:
            missing[reaction.id] = sorted(set(lacking))
            continue
        ids = [p.species_id for p in participants]
        found[reaction.id] = ReactionThermoInputs(
            reaction,
            tuple(p.species for p in participants),
            np.array([p.nu for p in participants], dtype=float),
            NasaPolynomials.stack([polynomials[i] for i in ids]),
            max(thermo[i].T_low for i in ids),
            min(thermo[i].T_high for i in ids),
        )
    return found, missing


def lacking_thermo_message(reaction: ReactionRow, species: Sequence[str]) -> str:
    """Why a reaction has no thermochemistry: the species that lack it."""
    return (
        f"reaction {reaction.key!r} has no thermochemistry: species {', '.join(species)} "
        f"{'has' if len(species) == 1 else 'have'} none (import it first)"
    )


def inputs_of(session: Session, reaction: ReactionRow) -> ReactionThermoInputs:
    """The thermochemistry inputs of one reaction; NotFoundError naming the species that lack
    thermochemistry."""
    found, missing = reaction_thermo_inputs(session, [reaction])
    if reaction.id in missing:
        raise NotFoundError(lacking_thermo_message(reaction, missing[reaction.id]))
    return found[reaction.id]


def check_in_range(inputs: ReactionThermoInputs, T: Sequence[float]) -> None:
    """Refuse a temperature outside the range every species' polynomials hold over."""
    low, high = inputs.T_low, inputs.T_high
    outside = [t for t in T if not (low * (1 - 1e-12) <= t <= high * (1 + 1e-12))]
    if outside:
        raise BadInputError(
            f"T = {outside[0]:g} K is outside {low:g}-{high:g} K, the range over which the "
            f"thermochemistry of every species of {inputs.reaction.key!r} holds",
            argument="temperatures",
        )


@dataclass(frozen=True)
class ReactionThermoRow:
    """Standard reaction properties at T (SI; Kc in (mol m^-3)^Δn)."""

    T: float
    delta_H: float
    delta_S: float
    delta_G: float
    ln_Kp: float
    Kp: float
    ln_Kc: float
    Kc: float


@dataclass(frozen=True)
class ReactionThermoReport:
    key: str
    equation: str
    delta_n: int
    species: list[tuple[str, int]]
    T_low: float
    T_high: float
    rows: list[ReactionThermoRow]


def reaction_thermo(
    session: Session, key: str, temperatures: Sequence[float]
) -> ReactionThermoReport:
    """ΔrH°, ΔrS°, ΔrG°, Kp and Kc of one reaction at ``temperatures`` [K]."""
    if not temperatures:
        raise BadInputError("give at least one temperature", argument="temperatures")
    T = _temperatures(temperatures)
    inputs = inputs_of(session, queries.find_reaction(session, key))
    check_in_range(inputs, T)
    found = reaction_thermochemistry(inputs.nu, inputs.polynomials, np.array(T))
    columns = [
        np.atleast_1d(getattr(found, name)).tolist()
        for name in ("delta_H", "delta_S", "delta_G", "ln_Kp", "Kp", "ln_Kc", "Kc")
    ]
    reaction = inputs.reaction
    return ReactionThermoReport(
        reaction.key,
        reaction.equation,
        inputs.delta_n,
        [(name, int(nu)) for name, nu in zip(inputs.species, inputs.nu.tolist(), strict=True)],
        inputs.T_low,
        inputs.T_high,
        [ReactionThermoRow(t, *values) for t, *values in zip(T, *columns, strict=True)],
    )


def set_reverse(session: Session, key: str, rule: str) -> ReactionRow:
    """Declare how a stored reaction's reverse is obtained (:data:`REVERSE_RULES`)."""
    if rule not in REVERSE_RULES:
        raise BadInputError(
            f"unknown reverse rule {rule!r}; expected one of {', '.join(REVERSE_RULES)}",
            argument="rule",
        )
    reaction = queries.find_reaction(session, key)
    before = reverse_rules(session, [reaction.id]).get(reaction.id, "none")
    set_reverse_rule(session, reaction.id, None if rule == "none" else rule)
    audit.record(session, "reaction.reverse", reaction.key, reverse=rule, before=before)
    return reaction
