"""Species: import and add them, list them, show one with the reactions it takes part in.

Every function takes an open :class:`~sqlalchemy.orm.Session` (see
:func:`ratebank.services.store_access.open_store`) and works in its
transaction; the caller commits. Values in and out are SI-molar.
"""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.services.progress import NoProgress, Progress
from ratebank.services.validate import (
    ImportSummary,
    Problems,
    Row,
    cell,
    validate_species,
)
from ratebank.store import audit
from ratebank.store.listings import (
    SpeciesDetail,
    SpeciesSummary,
    species_detail,
    species_summaries,
)
from ratebank.store.records import existing_species_names, insert_species


def import_species(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add species rows (README column names); all or nothing."""
    progress = progress or NoProgress()
    progress.start("validating species", len(rows))
    problems = Problems()
    names = [name for _, row in rows if (name := cell(row, "name"))]
    species = validate_species(rows, existing_species_names(session, names), problems)
    progress.advance(len(rows))
    problems.raise_if_any(source)
    if not dry_run and species:
        insert_species(session, species)
        audit.record(
            session, "species.add", source, count=len(species), names=[s.name for s in species[:20]]
        )
    return ImportSummary("species", source, len(rows), len(species), dry_run)


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
