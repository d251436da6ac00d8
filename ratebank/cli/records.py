"""The commands of the records: species, reactions, measured data and expressions.

Loaded by the command line when one of their groups (or a command that
:func:`register` attaches with them) runs.
"""

from __future__ import annotations

from pathlib import Path

import typer

from ratebank.cli import admin as admin_commands
from ratebank.cli import curation as curation_commands
from ratebank.cli import species_options
from ratebank.cli.common import (
    JSON_OPTION,
    STATE,
    calls,
    number,
    opened_store,
    print_json,
    say,
    show,
)
from ratebank.cli.progress import progress_bar
from ratebank.report import tables
from ratebank.report.set_view import set_detail_record, set_detail_tables
from ratebank.report.tables import import_message
from ratebank.report.thermo import species_thermo_record, species_thermo_table

species_app = typer.Typer(
    help="Species and their physical data.\n\nExample: ratebank species list",
    no_args_is_help=True,
)
reactions_app = typer.Typer(
    help="Reactions, their equations and classes.\n\nExample: ratebank reactions list --species OH",
    no_args_is_help=True,
)
data_app = typer.Typer(
    help="Measured k(T) data sets.\n\nExample: ratebank data import points.csv",
    no_args_is_help=True,
)
expressions_app = typer.Typer(
    help="Rate expressions (fitted, literature, estimated, hand-entered).\n\n"
    "Example: ratebank expressions list --reaction oh-ch4",
    no_args_is_help=True,
)
# the edits first, as their groups list them
curation_commands.attach_edits(species_app, reactions_app, data_app)
expressions_app.command("edit")(admin_commands.expressions_edit)


def register(app: typer.Typer) -> None:
    """Attach the groups ``species``, ``reactions``, ``data`` and ``expressions``, with the
    curation and safe-keeping commands that add to them."""
    app.add_typer(species_app, name="species")
    app.add_typer(reactions_app, name="reactions")
    app.add_typer(data_app, name="data")
    app.add_typer(expressions_app, name="expressions")
    curation_commands.register(app)
    admin_commands.register(app)


DRY_RUN_OPTION = typer.Option(False, "--dry-run", help="Validate and report; write nothing.")
UPDATE_OPTION = typer.Option(
    False,
    "--update",
    help="Rows matching stored records update them when changed (identical ones are left "
    "alone, the history keeps before and after); without it they are refused.",
)
PRESET_OPTION = typer.Option(
    "combustion",
    "--units",
    help="Unit preset for rate constants and energies: combustion, atmospheric or si.",
)


# --------------------------------------------------------------------------- species


@species_app.command("add")
@calls("add_species")
def species_add(
    name: str = typer.Argument(..., help="Species name as used in equations, e.g. OH."),
    formula: str = typer.Argument(..., help="Formula, e.g. HO or CH3OH."),
    molar_mass: float = typer.Option(
        None, "--molar-mass", help="g/mol (default: from formula).", parser=number
    ),
    diameter: float = species_options.DIAMETER,
    diameter_kind: str = species_options.DIAMETER_KIND,
    well_depth: float = species_options.WELL_DEPTH,
    critical_temperature: float = species_options.CRITICAL_TEMPERATURE,
    critical_pressure: float = species_options.CRITICAL_PRESSURE,
    acentric_factor: float = species_options.ACENTRIC_FACTOR,
    boiling_volume: float = typer.Option(
        None,
        "--boiling-volume",
        help="Molar volume at the normal boiling point, cm3/mol.",
        parser=number,
    ),
    source: str = species_options.SOURCE,
) -> None:
    """Add one species.

    Example: ratebank species add CH3OH CH3OH --tc 512.6 --pc 80.97
    """
    fields = species_options.species_fields(locals())
    with opened_store() as store:
        store.add_species(name, **fields)
    say(f"Added species {name}.")


@species_app.command("import")
@calls("import_species")
def species_import(
    file: Path = typer.Argument(..., help="CSV file with a header row."),
    dry_run: bool = DRY_RUN_OPTION,
    update: bool = UPDATE_OPTION,
) -> None:
    """Import species from a CSV file (all or nothing).

    Columns: name, formula (required), molar_mass_g_per_mol, diameter_angstrom,
    diameter_kind, well_depth_K, critical_temperature_K, critical_pressure_bar,
    acentric_factor, boiling_volume_cm3_per_mol, source.

    Example: ratebank species import species.csv
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        summary = store.import_species(file, dry_run=dry_run, update=update, progress=progress)
    say(import_message(summary))


@species_app.command("list")
@calls("species")
def species_list(
    missing_diameter: bool = typer.Option(
        None, "--missing-diameter/--with-diameter", help="Only species without / with a diameter."
    ),
    name: str = typer.Option(None, "--name", help="Only names containing this text."),
    include_withdrawn: bool = typer.Option(
        False, "--include-withdrawn", help="List withdrawn ones too."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """List species with their masses and diameters.

    Example: ratebank species list --missing-diameter
    """
    with opened_store() as store:
        rows = store.species(
            missing_diameter=missing_diameter,
            name_contains=name,
            include_withdrawn=include_withdrawn,
        )
    if as_json:
        print_json(tables.species_records(rows))
    else:
        show(tables.species_table(rows))


@species_app.command("show")
@calls("species_detail")
def species_show(
    name: str = typer.Argument(..., help="Species name."),
    temperatures: list[float] = typer.Option(
        None, "-T", "--temperature", help="Temperatures [K] for Cp°, H° and S° (repeatable)."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """Everything about one species, its thermochemistry and the reactions it takes part in.

    Example: ratebank species show OH -T 300 -T 1000
    """
    with opened_store() as store:
        detail = store.species_detail(name, temperatures=temperatures or None)
    thermo_record = species_thermo_record(detail.thermochemistry)
    if as_json:
        print_json(
            {**tables.species_detail_record(detail.species), "thermochemistry": thermo_record}
        )
    else:
        show(
            *tables.species_detail_tables(detail.species),
            species_thermo_table(name, detail.thermochemistry),
        )


# --------------------------------------------------------------------------- reactions


@reactions_app.command("add")
@calls("add_reaction")
def reactions_add(
    key: str = typer.Argument(..., help="Short unique key, e.g. oh-ch4."),
    equation: str = typer.Argument(..., help="Equation, e.g. 'OH + CH4 -> CH3 + H2O'."),
    reaction_class: str = typer.Option(None, "--class", help="Reaction class."),
    notes: str = typer.Option(None, "--notes", help="Free text."),
) -> None:
    """Add one reaction (checked for known species and element balance).

    Example: ratebank reactions add oh-ch4 'OH + CH4 -> CH3 + H2O' --class h-abstraction
    """
    with opened_store() as store:
        added = store.add_reaction(key, equation, reaction_class=reaction_class, notes=notes)
    say(f"Added reaction {key}: {added.equation}")


@reactions_app.command("import")
@calls("import_reactions")
def reactions_import(
    file: Path = typer.Argument(..., help="CSV file with a header row."),
    dry_run: bool = DRY_RUN_OPTION,
    update: bool = UPDATE_OPTION,
) -> None:
    """Import reactions from a CSV file (all or nothing).

    Columns: key, equation (required), class, notes.

    Example: ratebank reactions import reactions.csv
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        summary = store.import_reactions(file, dry_run=dry_run, update=update, progress=progress)
    say(import_message(summary))


@reactions_app.command("list")
@calls("reactions")
def reactions_list(
    species: str = typer.Option(None, "--species", help="Only reactions involving this species."),
    reaction_class: str = typer.Option(None, "--class", help="Only this reaction class."),
    status: str = typer.Option(
        None,
        "--status",
        help="Only reactions that are: measured, complete, ea-only (A to estimate) or nothing.",
    ),
    include_withdrawn: bool = typer.Option(
        False, "--include-withdrawn", help="List withdrawn ones too."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """List reactions with what the store knows of each.

    Example: ratebank reactions list --species OH --status ea-only
    """
    with opened_store() as store:
        rows = store.reactions(
            species=species,
            reaction_class=reaction_class,
            status=status,
            include_withdrawn=include_withdrawn,
        )
    if as_json:
        print_json(tables.reaction_records(rows))
    else:
        show(tables.reactions_table(rows))


@reactions_app.command("show")
@calls("reaction_overview")
def reactions_show(
    reaction: str = typer.Argument(..., help="Reaction key or equation."),
    temperatures: list[float] = typer.Option(
        None,
        "-T",
        "--temperature",
        help="Temperatures [K] for the k table (repeatable).",
        parser=number,
    ),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Everything about one reaction: participants, data sets, expressions, k(T), flags, history.

    Example: ratebank reactions show 'CH4 + OH -> CH3 + H2O' -T 300 -T 1000
    """
    with opened_store() as store:
        overview = store.reaction_overview(reaction, temperatures=temperatures or None)
    if as_json:
        print_json(tables.reaction_overview_record(overview, preset))
    else:
        show(*tables.reaction_overview_tables(overview, preset))


# --------------------------------------------------------------------------- data


@data_app.command("import")
@calls("import_measurements")
def data_import(
    file: Path = typer.Argument(..., help="CSV file, one row per measured point."),
    k_units: str = typer.Option(
        None, "--k-units", help="Unit of k for rows whose k_units cell is empty."
    ),
    fill_uncertainty: str = typer.Option(
        None,
        "--fill-uncertainty",
        help="In a set that states some uncertainties, give the points without one the "
        "set's median (the only choice: median). Recorded in the history.",
    ),
    dry_run: bool = DRY_RUN_OPTION,
    update: bool = UPDATE_OPTION,
) -> None:
    """Import measured k(T) points (all or nothing).

    Columns: set, reaction, T_K, k (required), k_units, k_uncertainty,
    uncertainty_kind (relative|absolute), reference, method, pressure_bar, bath_gas.

    With --update, a set whose name is stored is compared with it as a whole and
    rewritten when its points or metadata changed; its fits stay until the next fit.

    Example: ratebank data import points.csv --k-units cm3/molecule/s
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        summary = store.import_measurements(
            file,
            k_units=k_units,
            dry_run=dry_run,
            update=update,
            progress=progress,
            fill_uncertainty=fill_uncertainty,
        )
    say(import_message(summary))


@data_app.command("show")
@calls("measurement_set")
def data_show(
    name: str = typer.Argument(..., help="The measurement set's name."),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Show one measurement set: its reaction, reference, method, bath gas, pressures and
    systematic uncertainty; its points (T, k in the unit it was given in and in the preset's,
    uncertainty, pressure); the fits that used it; whether anything in it is withdrawn.

    Example: ratebank data show s1 --units atmospheric
    """
    with opened_store() as store:
        detail = store.measurement_set(name)
    if as_json:
        print_json(set_detail_record(detail, preset))
    else:
        show(*set_detail_tables(detail, preset))


@data_app.command("list")
@calls("measurement_sets")
def data_list(
    reaction: str = typer.Option(None, "--reaction", help="Only sets of this reaction."),
    include_withdrawn: bool = typer.Option(
        False, "--include-withdrawn", help="List withdrawn ones too."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """List measurement sets with their temperature ranges, and their points by pressure
    (sets and points at each pressure and bath gas).

    Example: ratebank data list --reaction oh-ch4
    """
    with opened_store() as store:
        rows = store.measurement_sets(reaction=reaction, include_withdrawn=include_withdrawn)
    if as_json:
        print_json(tables.set_records(rows))
    else:
        show(tables.sets_table(rows))
        if (by_pressure := tables.pressure_groups_table(rows)) is not None:
            show(by_pressure)


# --------------------------------------------------------------------------- expressions


@expressions_app.command("import")
@calls("import_expressions")
def expressions_import(
    file: Path = typer.Argument(..., help="CSV file of expressions."),
    dry_run: bool = DRY_RUN_OPTION,
    update: bool = UPDATE_OPTION,
) -> None:
    """Import literature or hand-entered expressions (all or nothing).

    Columns: reaction, Ea (required), A, n, Ea_units, k_units, T_min_K, T_max_K,
    uncertainty_factor, reference, origin (literature|manual). Leave A empty for an
    activation energy whose A is to be estimated.

    Example: ratebank expressions import literature.csv
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        summary = store.import_expressions(file, dry_run=dry_run, update=update, progress=progress)
    say(import_message(summary))


@expressions_app.command("list")
@calls("expressions")
def expressions_list(
    reaction: str = typer.Option(None, "--reaction", help="Only expressions of this reaction."),
    origin: str = typer.Option(
        None,
        "--origin",
        help="Only this origin: measured-fit, literature, collision-estimate or manual.",
    ),
    preset: str = PRESET_OPTION,
    include_withdrawn: bool = typer.Option(
        False, "--include-withdrawn", help="List withdrawn ones too."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """List stored rate expressions in a unit preset.

    Example: ratebank expressions list --units atmospheric
    """
    with opened_store() as store:
        rows = store.expressions(
            reaction=reaction, origin=origin, include_withdrawn=include_withdrawn
        )
    if as_json:
        print_json(tables.expression_records(rows, preset))
    else:
        show(tables.expressions_table(rows, preset))
