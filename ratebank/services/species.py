"""Species: import and add them, list them, show one with the reactions it takes part in.

Every function takes an open :class:`~sqlalchemy.orm.Session` (see
:func:`ratebank.services.store_access.open_store`) and works in its
transaction; the caller commits. Values in and out are SI-molar.
"""

from __future__ import annotations

from collections.abc import Mapping
from operator import attrgetter

from sqlalchemy.orm import Session

from ratebank.science.constants import DEBYE, ELECTRONVOLT_MOLAR
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.updates import (
    RecordKind,
    Shown,
    UpdatePlan,
    apply_import,
    changed_fields,
)
from ratebank.services.validate import (
    ANGSTROM_M,
    BAR_PA,
    CM3_M3,
    G_KG,
    ImportSummary,
    Problems,
    Row,
    cell,
    validate_species,
)
from ratebank.store.listings import (
    SpeciesDetail,
    SpeciesSummary,
    species_detail,
    species_summaries,
)
from ratebank.store.records import NewSpecies, existing_species_names, insert_species
from ratebank.store.updates import stored_species, update_species

#: Each species field an update compares: its file column, the factor from the file's unit
#: to SI (None for text) and the unit's name.
SPECIES_SHOWN: dict[str, Shown] = {
    "formula": ("formula", None, ""),
    "molar_mass": ("molar_mass_g_per_mol", G_KG, "g/mol"),
    "diameter": ("diameter_angstrom", ANGSTROM_M, "Å"),
    "diameter_kind": ("diameter_kind", None, ""),
    "well_depth": ("well_depth_K", 1.0, "K"),
    "critical_temperature": ("critical_temperature_K", 1.0, "K"),
    "critical_pressure": ("critical_pressure_bar", BAR_PA, "bar"),
    "acentric_factor": ("acentric_factor", 1.0, ""),
    "boiling_volume": ("boiling_volume_cm3_per_mol", CM3_M3, "cm3/mol"),
    "boiling_temperature": ("boiling_temperature_K", 1.0, "K"),
    "dipole_moment": ("dipole_moment_debye", DEBYE, "D"),
    "polarizability": ("polarizability_angstrom3", ANGSTROM_M**3, "Å3"),
    "ionization_energy": ("ionization_energy_eV", ELECTRONVOLT_MOLAR, "eV"),
    "source": ("source", None, ""),
}
#: How an import writes species.
SPECIES = RecordKind(
    "species", "species.add", "species.update", "names", attrgetter("name"), insert_species
)
#: Values ratebank estimates itself: a file that leaves them empty keeps the estimate.
_ESTIMATED = {"diameter": "diameter_method", "well_depth": "well_depth_method"}


def import_species(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    update: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add species rows (README column names); all or nothing.

    With ``update``, a row naming a stored species is compared with it: what changed is
    written (and recorded with before and after in the file's units), an identical one is
    left alone; without it, such a row is refused as already in the store.
    """
    progress = progress or NoProgress()
    progress.start("validating species", len(rows))
    problems = Problems()
    names = [name for _, row in rows if (name := cell(row, "name"))]
    existing = existing_species_names(session, names)
    species = validate_species(rows, set() if update else existing, problems)
    progress.advance(len(rows))
    problems.raise_if_any(source)
    new = [s for s in species if s.name not in existing]
    plan, writes = _species_plan(session, rows, species) if update else (UpdatePlan(), {})

    def write() -> None:
        for name, values in writes.items():
            update_species(session, name, values)

    return apply_import(
        session, SPECIES, new, plan, write, source, rows, dry_run=dry_run, update=update
    )


def _species_plan(
    session: Session, rows: list[Row], species: list[NewSpecies]
) -> tuple[UpdatePlan, dict[str, dict[str, object]]]:
    """The changed and unchanged stored species among ``species`` (one per row, in order)
    and the values to write onto each changed one."""
    stored = stored_species(session, [s.name for s in species])
    plan = UpdatePlan()
    writes: dict[str, dict[str, object]] = {}
    for (_, row), new in zip(rows, species, strict=True):
        if new.name not in stored:
            continue
        before = stored[new.name]
        values, texts = changed_fields(before, _stated(row, new, before), SPECIES_SHOWN)
        if values:
            writes[new.name] = values
            plan.changes.append((new.name, texts))
        else:
            plan.unchanged += 1
    return plan, writes


def _stated(row: Mapping[str, str | None], new: NewSpecies, before: Mapping[str, object]):  # type: ignore[no-untyped-def]
    """The stored fields a species row states: those of the columns the file has (an
    estimate the file leaves empty stays)."""
    stated: dict[str, object] = {
        "formula": new.formula,
        "molar_mass": new.molar_mass,
        "molar_mass_source": new.molar_mass_source,
    }
    for name, (column, _, _) in SPECIES_SHOWN.items():
        if name in stated or column not in row or name == "diameter_kind":
            continue
        value = getattr(new, name)
        method = _ESTIMATED.get(name)
        if method is not None:
            if value is None and before.get(method) != "given":
                continue
            stated[method] = "given" if value is not None else None
        stated[name] = value
    if "diameter" in stated:
        stated["diameter_kind"] = new.diameter_kind
    return stated


def add_species(session: Session, **fields: str | None) -> ImportSummary:
    """Add one species; ``fields`` use the species CSV column names."""
    return import_species(session, [(None, fields)], source="command line")


def list_species(
    session: Session,
    *,
    missing_diameter: bool | None = None,
    name_contains: str | None = None,
    include_withdrawn: bool = False,
) -> list[SpeciesSummary]:
    """Species by name: only those without (True) or with (False) a diameter, or whose name
    contains ``name_contains``, when given."""
    return species_summaries(
        session,
        missing_diameter=missing_diameter,
        name_contains=name_contains,
        include_withdrawn=include_withdrawn,
    )


def show_species(session: Session, name: str) -> SpeciesDetail:
    """One species and the reactions it takes part in."""
    return species_detail(session, name)
