"""Commands of thermochemistry and Evans-Polanyi relations: ``thermo ...`` and
``evans-polanyi ...``; and the species-show table of Cp°, H° and S°."""

from __future__ import annotations

from pathlib import Path

import typer

from ratebank.cli.common import JSON_OPTION, calls, opened_store, print_json, say, show
from ratebank.errors import BadInputError
from ratebank.report.thermo import (
    import_message,
    import_records,
    import_table,
    reaction_thermo_records,
    reaction_thermo_table,
    relation_records,
    relation_table,
    rule_records,
    rule_table,
    thermo_records,
    thermo_table,
)
from ratebank.science.unit_presets import energy_unit_for

PRESET_OPTION = typer.Option(
    "combustion", "--units", help="Unit preset: combustion, atmospheric or si."
)
DRY_RUN_OPTION = typer.Option(False, "--dry-run", help="Validate and report; write nothing.")
REPLACE_OPTION = typer.Option(
    False, "--replace", help="Replace the thermochemistry a species already has."
)

thermo_app = typer.Typer(
    help="Species thermochemistry (NASA polynomials), reaction thermochemistry and "
    "reversible reactions.\n\nExample: ratebank thermo reaction oh-ch4 -T 298 -T 1000",
    no_args_is_help=True,
)
evans_polanyi_app = typer.Typer(
    help="Evans-Polanyi relations Ea = E0 + α ΔrH° of reaction classes.\n\n"
    "Example: ratebank evans-polanyi derived",
    no_args_is_help=True,
)


def register(app: typer.Typer) -> None:
    app.add_typer(thermo_app, name="thermo")
    app.add_typer(evans_polanyi_app, name="evans-polanyi")


@thermo_app.command("import")
@calls("import_thermochemistry")
def thermo_import(
    file: Path = typer.Argument(..., help="CSV file of either layout (see the README)."),
    replace: bool = REPLACE_OPTION,
    update: bool = typer.Option(
        False,
        "--update",
        help="Compare with the stored polynomials: leave the same ones, replace changed ones "
        "(before and after in the history), add new ones.",
    ),
    dry_run: bool = DRY_RUN_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Import species thermochemistry (all or nothing).

    Coefficients layout, one row per species: species, T_low_K, T_mid_K, T_high_K,
    low_1 ... low_7, high_1 ... high_7, source. Table layout, one row per temperature:
    species, Hf298_kJ_per_mol, S298_J_per_mol_K (once per species), T_K, Cp_J_per_mol_K,
    source; the polynomials are then fitted. The header tells the layout.

    Example: ratebank thermo import thermo.csv --dry-run
    """
    with opened_store() as store:
        report = store.import_thermochemistry(file, replace=replace, dry_run=dry_run, update=update)
    if as_json:
        print_json(import_records(report))
        return
    show(import_table(report))
    say(import_message(report))


def _pairs(pairs: list[str]) -> dict[str, str]:
    found: dict[str, str] = {}
    for text in pairs:
        species, _, table = text.partition("=")
        if not species.strip() or not table.strip():
            raise BadInputError(
                f"{text!r} is not SPECIES=TABLE (e.g. OH=H-038)", argument="species_tables"
            )
        if species.strip() in found:
            raise BadInputError(f"species {species.strip()!r} is named twice", argument="species")
        found[species.strip()] = table.strip()
    return found


@thermo_app.command("janaf")
@calls("fill_thermochemistry_from_janaf")
def thermo_janaf(
    species_tables: list[str] = typer.Argument(
        ..., help="SPECIES=TABLE pairs: a stored species and its NIST-JANAF table, e.g. OH=H-038."
    ),
    t_range: tuple[float, float] = typer.Option(
        (200.0, 6000.0), "--t-range", help="Rows of the table fitted, TMIN TMAX [K]."
    ),
    replace: bool = REPLACE_OPTION,
    dry_run: bool = DRY_RUN_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Fill thermochemistry from the NIST-JANAF tables (the optional janaf package).

    Each table is fitted with the two polynomials; the largest deviations in Cp°, H°
    and S° are stored, and the table is named as the source.

    Example: ratebank thermo janaf H2O=H-064 OH=H-038 O2=O-029
    """
    pairs = _pairs(species_tables)
    with opened_store() as store:
        report = store.fill_thermochemistry_from_janaf(
            pairs, T_range=(float(t_range[0]), float(t_range[1])), replace=replace, dry_run=dry_run
        )
    if as_json:
        print_json(import_records(report))
        return
    show(import_table(report))
    say(import_message(report))


@thermo_app.command("list")
@calls("thermochemistry")
def thermo_list(as_json: bool = JSON_OPTION) -> None:
    """The species that have thermochemistry, with its range, method and fit deviation.

    Example: ratebank thermo list --json
    """
    with opened_store() as store:
        rows = store.thermochemistry()
    if as_json:
        print_json(thermo_records(rows))
    else:
        show(thermo_table(rows))


@thermo_app.command("reaction")
@calls("reaction_thermochemistry")
def thermo_reaction(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    temperatures: list[float] = typer.Option(..., "-T", "--temperature", help="Temperature [K]."),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """ΔrH°, ΔrS°, ΔrG°, Kp and Kc of a reaction (standard state 1 bar).

    Kc is in the concentration unit of the preset to the power Δn (the change in
    moles; a third body M does not count).

    Example: ratebank thermo reaction h-o2-m -T 298 -T 1000 --units atmospheric
    """
    with opened_store() as store:
        report = store.reaction_thermochemistry(key, temperatures)
    if as_json:
        print_json(reaction_thermo_records(report, preset))
    else:
        show(reaction_thermo_table(report, preset))


@thermo_app.command("set-reverse")
@calls("set_reverse")
def thermo_set_reverse(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    rule: str = typer.Argument(..., help="none or detailed-balance."),
) -> None:
    """Declare how a stored reaction's reverse is obtained: none or detailed-balance.

    Example: ratebank thermo set-reverse oh-h2 detailed-balance
    """
    with opened_store() as store:
        reaction = store.set_reverse(key, rule)
    say(f"Reaction {reaction.key}: reverse {rule}.")


# --------------------------------------------------------------------------- Evans-Polanyi


@evans_polanyi_app.command("derived")
@calls("derived_evans_polanyi")
def evans_polanyi_derived(
    reaction_class: str = typer.Option(None, "--class", help="Only this class."),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Evans-Polanyi relations fitted per class to measured and literature reactions that
    have thermochemistry: E0, α, spread, count.

    Example: ratebank evans-polanyi derived --class h-abstraction
    """
    unit = energy_unit_for(preset)
    with opened_store() as store:
        groups = store.derived_evans_polanyi(reaction_class=reaction_class)
    if as_json:
        print_json(relation_records(groups, unit))
    else:
        show(relation_table(groups, unit))


@evans_polanyi_app.command("set-class")
@calls("set_class_evans_polanyi")
def evans_polanyi_set_class(
    reaction_class: str = typer.Argument(..., help="Reaction class."),
    e0: float = typer.Argument(..., help="Intrinsic barrier E0 (in --E0-units)."),
    alpha: float = typer.Argument(..., help="Slope α (dimensionless)."),
    e0_units: str = typer.Option("kJ/mol", "--E0-units", help="Unit of E0 and --spread."),
    spread: float = typer.Option(
        None, "--spread", help="One standard deviation of Ea about the line (in --E0-units)."
    ),
    source: str = typer.Option(None, "--source", help="Where the relation comes from."),
    expect_version: int = typer.Option(
        None, "--expect-version", help="Refuse if the relation changed since this version."
    ),
) -> None:
    """Set the Evans-Polanyi relation Ea = E0 + α ΔrH°(298.15 K) of a reaction class.

    Example: ratebank evans-polanyi set-class h-abstraction 45 0.5 --E0-units kJ/mol
    """
    with opened_store() as store:
        rule = store.set_class_evans_polanyi(
            reaction_class,
            e0,
            alpha,
            E0_units=e0_units,
            spread=spread,
            source=source,
            expected_version=expect_version,
        )
    say(
        f"Class {rule.reaction_class}: Ea = {rule.E0 / 1e3:.6g} kJ/mol + {rule.alpha:g} ΔrH° "
        f"(version {rule.version})."
    )


@evans_polanyi_app.command("list")
@calls("evans_polanyi_rules")
def evans_polanyi_list(preset: str = PRESET_OPTION, as_json: bool = JSON_OPTION) -> None:
    """The Evans-Polanyi relations set for classes.

    Example: ratebank evans-polanyi list --units si
    """
    unit = energy_unit_for(preset)
    with opened_store() as store:
        rules = store.evans_polanyi_rules()
    if as_json:
        print_json(rule_records(rules, unit))
    else:
        show(rule_table(rules, unit))


@evans_polanyi_app.command("clear-class")
@calls("clear_class_evans_polanyi")
def evans_polanyi_clear_class(
    reaction_class: str = typer.Argument(..., help="Reaction class."),
) -> None:
    """Remove the Evans-Polanyi relation set for a class.

    Example: ratebank evans-polanyi clear-class h-abstraction
    """
    with opened_store() as store:
        store.clear_class_evans_polanyi(reaction_class)
    say(f"Removed the Evans-Polanyi relation of class {reaction_class}.")
