"""Curation that can change its mind: edit species, reactions, sets and points; withdraw,
reinstate and remove any record.

Each edit names the version of the record the curator read
(``expected_version``) and is refused when the record changed since (or when
that version never existed); each change is recorded in the history with its
values before and after in the units the curator typed (``diameter 3.5 -> 3.6
Angstrom``), never in the store's SI units alone. The same values again change
nothing and write nothing.

A withdrawn record stays in the store and its history and is left out of fits,
estimates, derived statistics, checks and exports until it is reinstated; the
rules of what a withdrawal implies for the records that refer to it are those of
:mod:`ratebank.store.lifecycle`. Removing for good is only for records nothing
refers to.

>>> from ratebank.services.store_access import open_store                  # doctest: +SKIP
>>> with open_store("group.db").session(write=True) as session:             # doctest: +SKIP
...     withdraw_record(session, "set", "big", reason="contaminated sample")
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, ConflictError, UnitError
from ratebank.numbers import round_significant
from ratebank.science.constants import DEBYE, ELECTRONVOLT_MOLAR
from ratebank.science.formula import parse_formula
from ratebank.services import input_rules
from ratebank.services.validate import (
    ANGSTROM_M,
    BAR_PA,
    CM3_M3,
    G_KG,
    Problems,
    validate_reactions,
    validate_species,
)
from ratebank.store import audit, lifecycle
from ratebank.store.curation_writes import (
    dependants_of_reaction,
    point_for_edit,
    replace_participants,
    set_point_pressures,
)
from ratebank.store.lifecycle import StoredRecord, check_version, find_record, write_changes
from ratebank.store.records import reaction_equations, species_formulas


@dataclass(frozen=True)
class RecordEdit:
    """What an edit changed: each field's (before, after, unit) in the units given."""

    kind: str
    label: str
    version: int
    changed: dict[str, tuple[Any, Any, str]] = field(default_factory=dict)


@dataclass(frozen=True)
class LifecycleChange:
    """A record withdrawn, reinstated or removed."""

    kind: str
    label: str
    action: str
    #: the record's version afterwards (None once removed)
    version: int | None
    reason: str | None = None


# --------------------------------------------------------------------------- common


def _shown(value: Any, factor: float | None) -> Any:
    """A stored SI value in the unit of ``factor`` (SI per unit), rounded as everything shown."""
    if value is None or factor is None or isinstance(value, str):
        return value
    return round_significant(float(value) / factor)


def _finish(
    session: Session,
    record: StoredRecord,
    values: dict[str, Any],
    changed: dict[str, tuple[Any, Any, str]],
) -> RecordEdit:
    """Write the changed values (if any) and record the edit; the same values again write
    nothing."""
    if not changed:
        return RecordEdit(record.kind, record.label, record.version, {})
    version = write_changes(session, record, values)
    audit.record(
        session,
        f"{record.kind}.edit",
        record.target,
        **{record.kind: record.id if record.kind in ("point", "expression") else record.target},
        version=version,
        changed={
            name: {"before": before, "after": after, "unit": unit}
            for name, (before, after, unit) in changed.items()
        },
    )
    return RecordEdit(record.kind, record.label, version, changed)


def _nothing_to_change(record: StoredRecord, names: tuple[str, ...]) -> BadInputError:
    return BadInputError(
        f"nothing to change in {record.label}: give at least one of {', '.join(names)}"
    )


def _refuse(record: StoredRecord, problems: list[tuple[str, str]]) -> BadInputError:
    return BadInputError(
        f"{record.label}: "
        + "; ".join(f"{name}: {message}" for name, message in problems)
        + "; nothing was written",
        argument=problems[0][0],
    )


def _number(
    problems: list[tuple[str, str]], name: str, value: Any, *, positive: bool = True
) -> float | None:
    if value is None:
        return None
    try:
        number = input_rules.parse_number(str(value).strip()) if isinstance(value, str) else value
        number = float(number)
    except (BadInputError, TypeError, ValueError) as exc:
        problems.append((name, str(exc) if isinstance(exc, BadInputError) else "not a number"))
        return None
    if not math.isfinite(number) or (positive and number <= 0) or number < 0:
        want = "a positive number" if positive else "a number of at least 0"
        problems.append((name, f"{value!r} is not {want}"))
        return None
    return number


# --------------------------------------------------------------------------- species

#: The species fields an edit may change: argument (the species file's column, which names
#: the unit) -> (stored field, unit shown, SI per unit).
SPECIES_FIELDS: dict[str, tuple[str, str, float | None]] = {
    "formula": ("formula", "", None),
    "molar_mass_g_per_mol": ("molar_mass", "g/mol", G_KG),
    "diameter_angstrom": ("diameter", "Angstrom", ANGSTROM_M),
    "diameter_kind": ("diameter_kind", "", None),
    "well_depth_K": ("well_depth", "K", 1.0),
    "critical_temperature_K": ("critical_temperature", "K", 1.0),
    "critical_pressure_bar": ("critical_pressure", "bar", BAR_PA),
    "acentric_factor": ("acentric_factor", "", 1.0),
    "boiling_volume_cm3_per_mol": ("boiling_volume", "cm3/mol", CM3_M3),
    "boiling_temperature_K": ("boiling_temperature", "K", 1.0),
    "dipole_moment_debye": ("dipole_moment", "debye", DEBYE),
    "polarizability_angstrom3": ("polarizability", "Angstrom3", ANGSTROM_M**3),
    "ionization_energy_eV": ("ionization_energy", "eV", ELECTRONVOLT_MOLAR),
    "source": ("source", "", None),
}


def edit_species(session: Session, name: str, *, expected_version: int, **given: Any) -> RecordEdit:
    """Change fields of a species; ``given`` uses the species file's column names (each
    names its unit: ``diameter_angstrom``, ``well_depth_K``, ...); None leaves a field.

    Checked exactly as an imported species (a molar mass must match the formula;
    diameters and well depths within plausible bounds). Refused with
    StaleEditError unless ``expected_version`` is the stored version.
    """
    unknown = sorted(set(given) - set(SPECIES_FIELDS))
    if unknown:
        raise BadInputError(
            f"unknown species field {unknown[0]!r}; expected some of {', '.join(SPECIES_FIELDS)}",
            argument=unknown[0],
        )
    record = find_record(session, "species", name)
    check_version(session, record, expected_version)
    cells = {c: _cell(v) for c, v in given.items() if v is not None}
    if not cells:
        raise _nothing_to_change(record, tuple(SPECIES_FIELDS))
    stored = lifecycle.stored_values(session, record)
    new = _validated_species(record, stored, cells)
    values: dict[str, Any] = {}
    changed: dict[str, tuple[Any, Any, str]] = {}
    for column in cells:
        name_, unit, factor = SPECIES_FIELDS[column]
        after = getattr(new, name_)
        if after != stored.get(name_):
            values[name_] = after
            shown = cells[column] if factor is None else float(cells[column])
            changed[name_] = (_shown(stored.get(name_), factor), shown, unit)
    _species_consequences(values, new, cells)
    return _finish(session, record, values, changed)


def _cell(value: Any) -> str:
    return value if isinstance(value, str) else repr(float(value))


def _validated_species(record: StoredRecord, stored: dict[str, Any], cells: dict[str, str]):  # type: ignore[no-untyped-def]
    """The species as it would be after the edit, checked as an import checks it."""
    row: dict[str, str | None] = {"name": record.target, "formula": stored["formula"], **cells}
    if "diameter_kind" in cells and "diameter_angstrom" not in cells and stored.get("diameter"):
        row["diameter_angstrom"] = repr(stored["diameter"] / ANGSTROM_M)
    if "diameter_angstrom" in cells and "diameter_kind" not in cells:
        row["diameter_kind"] = stored.get("diameter_kind")
    given_mass = stored.get("molar_mass_source") == "given"
    if "formula" not in cells and "molar_mass_g_per_mol" not in cells and given_mass:
        row["molar_mass_g_per_mol"] = repr(stored["molar_mass"] / G_KG)
    problems = Problems()
    found = validate_species([(None, row)], set(), problems)
    if problems:
        raise _refuse(record, [(p.column, p.message) for p in problems.sorted()])
    return found[0]


def _species_consequences(values: dict[str, Any], new: Any, cells: Mapping[str, str]) -> None:
    """What follows from the changed fields: a new formula brings its molar mass, a given
    diameter or well depth is marked as given."""
    if "formula" in values or "molar_mass" in values:
        values["molar_mass"] = new.molar_mass
        values["molar_mass_source"] = new.molar_mass_source
    if "diameter" in values:
        values["diameter_method"] = "given"
        values["diameter_kind"] = new.diameter_kind
    if "well_depth" in values:
        values["well_depth_method"] = "given"
    if "diameter_kind" in cells:
        values["diameter_kind"] = new.diameter_kind


# --------------------------------------------------------------------------- reactions

REACTION_FIELDS = ("reaction_class", "notes", "equation")


def edit_reaction(
    session: Session,
    key_or_equation: str,
    *,
    expected_version: int,
    reaction_class: str | None = None,
    notes: str | None = None,
    equation: str | None = None,
) -> RecordEdit:
    """Change a reaction's class, notes or (while no set, expression or efficiency depends
    on it) its equation, checked as an import checks it; an empty text clears a class or
    notes."""
    record = find_record(session, "reaction", key_or_equation)
    check_version(session, record, expected_version)
    if reaction_class is None and notes is None and equation is None:
        raise _nothing_to_change(record, REACTION_FIELDS)
    stored = lifecycle.stored_values(session, record)
    values: dict[str, Any] = {}
    changed: dict[str, tuple[Any, Any, str]] = {}
    for column, text in (("reaction_class", reaction_class), ("notes", notes)):
        if text is not None and (text.strip() or None) != stored.get(column):
            values[column] = text.strip() or None
            changed[column] = (stored.get(column), values[column], "")
    if equation is not None:
        new = _checked_equation(session, record, stored, equation, values.get("reaction_class"))
        if new.equation != stored["equation"]:
            values.update(equation=new.equation, reaction_order=new.order)
            values["third_body"] = new.third_body
            changed["equation"] = (stored["equation"], new.equation, "")
            replace_participants(session, record.id, new)
    return _finish(session, record, values, changed)


def _checked_equation(  # type: ignore[no-untyped-def]
    session: Session,
    record: StoredRecord,
    stored: dict[str, Any],
    equation: str,
    reaction_class: str | None,
):
    dependants = dependants_of_reaction(session, record.id)
    if dependants:
        raise ConflictError(
            f"the equation of {record.label} cannot change while {', '.join(dependants)} "
            "depend on it; nothing was written"
        )
    formulas = {name: parse_formula(text) for name, text in species_formulas(session).items()}
    problems = Problems()
    row = {"key": record.target, "equation": equation, "class": reaction_class}
    others = {e: k for e, k in reaction_equations(session).items() if k != record.target}
    found = validate_reactions([(None, row)], formulas, set(), others, problems)
    if problems:
        raise _refuse(record, [(p.column, p.message) for p in problems.sorted()])
    return found[0]


# --------------------------------------------------------------------------- sets and points

SET_FIELDS = ("reference", "method", "bath_gas", "systematic_uncertainty", "pressure")


def edit_set(
    session: Session,
    name: str,
    *,
    expected_version: int,
    reference: str | None = None,
    method: str | None = None,
    bath_gas: str | None = None,
    systematic_uncertainty: float | None = None,
    pressure: float | None = None,
    pressure_units: str = "bar",
) -> RecordEdit:
    """Change a measurement set's reference, method, bath gas, systematic uncertainty (one
    standard deviation of the set's scale, a fraction of k) or the pressure of all its
    points (in ``pressure_units``); an empty text clears reference, method or bath gas."""
    record = find_record(session, "set", name)
    check_version(session, record, expected_version)
    if all(v is None for v in (reference, method, bath_gas, systematic_uncertainty, pressure)):
        raise _nothing_to_change(record, SET_FIELDS)
    stored = lifecycle.stored_values(session, record)
    problems: list[tuple[str, str]] = []
    systematic = _number(problems, "systematic_uncertainty", systematic_uncertainty, positive=False)
    pressure_si = _pressure(problems, pressure, pressure_units)
    if problems:
        raise _refuse(record, problems)
    values: dict[str, Any] = {}
    changed: dict[str, tuple[Any, Any, str]] = {}
    for column, text in (("reference", reference), ("method", method), ("bath_gas", bath_gas)):
        if text is not None and (text.strip() or None) != stored.get(column):
            values[column] = text.strip() or None
            changed[column] = (stored.get(column), values[column], "")
    if systematic is not None and systematic != stored.get("systematic_uncertainty"):
        values["systematic_uncertainty"] = systematic
        changed["systematic_uncertainty"] = (stored.get("systematic_uncertainty"), systematic, "")
    if pressure_si is not None:
        before = set_point_pressures(session, record.id, pressure_si)
        if before != [pressure_si]:
            factor = pressure_si / float(pressure)  # type: ignore[arg-type]
            shown = [_shown(p, factor) for p in before]
            changed["pressure"] = (shown[0] if len(shown) == 1 else shown, pressure, pressure_units)
    return _finish(session, record, values, changed)


def _pressure(problems: list[tuple[str, str]], value: Any, unit: str) -> float | None:
    number = _number(problems, "pressure", value)
    if number is None:
        return None
    from ratebank.science.pressure import pressure_to_si

    try:
        return float(pressure_to_si(number, unit))
    except UnitError as exc:
        problems.append(("pressure_units", str(exc)))
        return None


POINT_FIELDS = ("T", "k", "uncertainty")


def edit_point(
    session: Session,
    point_id: int | str,
    *,
    expected_version: int,
    T: float | None = None,
    k: float | None = None,
    k_units: str | None = None,
    uncertainty: float | None = None,
) -> RecordEdit:
    """Change a measured point's temperature [K], rate constant (in ``k_units``, by default
    the unit its set was given in) or relative uncertainty (one standard deviation as a
    fraction of k)."""
    record = find_record(session, "point", point_id)
    check_version(session, record, expected_version)
    if T is None and k is None and uncertainty is None:
        raise _nothing_to_change(record, POINT_FIELDS)
    stored, order, set_units = point_for_edit(session, record.id)
    problems: list[tuple[str, str]] = []
    T_new = _number(problems, "T", T)
    if T_new is not None and (why := input_rules.temperature_problem(T_new)):
        problems.append(("T", why))
    k_new = _number(problems, "k", k)
    units = k_units or set_units
    to_si = _rate_factor(problems, units, order) if k_new is not None else None
    u_new = _number(problems, "uncertainty", uncertainty)
    if problems:
        raise _refuse(record, problems)
    values: dict[str, Any] = {}
    changed: dict[str, tuple[Any, Any, str]] = {}
    if T_new is not None and T_new != stored["temperature"]:
        values["temperature"] = T_new
        changed["T"] = (stored["temperature"], T_new, "K")
    if k_new is not None and to_si is not None and k_new * to_si != stored["rate_constant"]:
        values["rate_constant"] = k_new * to_si
        changed["k"] = (_shown(stored["rate_constant"], to_si), k_new, units)
    if u_new is not None and u_new != stored.get("relative_uncertainty"):
        values["relative_uncertainty"] = u_new
        changed["uncertainty"] = (stored.get("relative_uncertainty"), u_new, "relative")
    return _finish(session, record, values, changed)


def _rate_factor(problems: list[tuple[str, str]], units: str, order: int) -> float | None:
    from ratebank.science.units import parse_rate_unit

    try:
        return float(parse_rate_unit(units, order).to_si)
    except UnitError as exc:
        problems.append(("k_units", str(exc)))
        return None


# --------------------------------------------------------------------------- lifecycle


def withdraw_record(
    session: Session, kind: str, ident: str | int, *, reason: str
) -> LifecycleChange:
    """Withdraw a record (kind ``species``, ``reaction``, ``set``, ``point`` or
    ``expression``) with a reason; it stays in the store and its history."""
    if reason is None or not str(reason).strip():
        raise BadInputError("a withdrawal needs a reason; nothing was written", argument="reason")
    record = find_record(session, kind, ident)
    version = lifecycle.withdraw(session, record, str(reason).strip())
    audit.record(
        session,
        f"{record.kind}.withdraw",
        record.target,
        kind=record.kind,
        id=record.id,
        reason=str(reason).strip(),
        version=version,
    )
    return LifecycleChange(record.kind, record.label, "withdrawn", version, str(reason).strip())


def reinstate_record(session: Session, kind: str, ident: str | int) -> LifecycleChange:
    """Put a withdrawn record back in use."""
    record = find_record(session, kind, ident)
    version = lifecycle.reinstate(session, record)
    audit.record(
        session,
        f"{record.kind}.reinstate",
        record.target,
        kind=record.kind,
        id=record.id,
        reason_withdrawn=record.withdrawn_reason,
        version=version,
    )
    return LifecycleChange(record.kind, record.label, "reinstated", version)


def remove_record(session: Session, kind: str, ident: str | int) -> LifecycleChange:
    """Delete a record for good, when nothing refers to it; the history keeps its values."""
    record = find_record(session, kind, ident)
    values = lifecycle.stored_values(session, record)
    lifecycle.remove(session, record)
    audit.record(session, f"{record.kind}.remove", record.target, kind=record.kind, values=values)
    return LifecycleChange(record.kind, record.label, "removed", None)
