"""Commands that let curation change its mind: edit species, reactions, sets and points;
withdraw, reinstate and remove any record.

Attached to the application by :func:`register`, the edits to their groups by
:func:`attach_edits`.
"""

from __future__ import annotations

from typing import Any

import typer

from ratebank.cli import species_options
from ratebank.cli.common import calls, number, opened_store, say

EXPECT_VERSION = typer.Option(
    ...,
    "--expect-version",
    help="The version you read; the edit is refused if someone changed it since.",
)
KIND_ARGUMENT = typer.Argument(..., help="species, reaction, set, point or expression.")
RECORD_ARGUMENT = typer.Argument(
    ..., help="Species name, reaction key, set name, or the point's or expression's number."
)


def register(app: typer.Typer) -> None:
    """Attach ``withdraw``, ``reinstate`` and ``remove``."""
    app.command("withdraw")(withdraw)
    app.command("reinstate")(reinstate)
    app.command("remove")(remove)


def attach_edits(
    species_app: typer.Typer, reactions_app: typer.Typer, data_app: typer.Typer
) -> None:
    """Attach the edit commands to their groups."""
    species_app.command("edit")(species_edit)
    reactions_app.command("edit")(reactions_edit)
    data_app.command("edit-set")(data_edit_set)
    data_app.command("edit-point")(data_edit_point)


def _said(result: Any) -> None:
    if not result.changed:
        say(
            f"{result.label[0].upper()}{result.label[1:]} already has these values; nothing "
            f"changed (version {result.version})."
        )
        return
    changes = ", ".join(
        f"{name} {before} -> {after}{f' {unit}' if unit else ''}"
        for name, (before, after, unit) in result.changed.items()
    )
    say(f"{result.label[0].upper()}{result.label[1:]}: {changes}; now version {result.version}.")


@calls("withdraw")
def withdraw(
    kind: str = KIND_ARGUMENT,
    record: str = RECORD_ARGUMENT,
    reason: str = typer.Option(..., "--reason", help="Why it is withdrawn (kept in the history)."),
) -> None:
    """Withdraw a record: it stays in the store and its history, and is left out of fits,
    estimates, derived statistics, checks and exports until reinstated.

    A withdrawn reaction takes its sets, points and expressions out with it; a species
    is withdrawn only after the reactions that involve it.

    Example: ratebank withdraw set big --reason "contaminated sample"
    """
    with opened_store() as store:
        result = store.withdraw(kind, record, reason=reason)
    say(f"Withdrew {result.label} (now version {result.version}): {result.reason}.")


@calls("reinstate")
def reinstate(kind: str = KIND_ARGUMENT, record: str = RECORD_ARGUMENT) -> None:
    """Put a withdrawn record back in use.

    Example: ratebank reinstate set big
    """
    with opened_store() as store:
        result = store.reinstate(kind, record)
    say(f"Reinstated {result.label} (now version {result.version}).")


@calls("remove")
def remove(kind: str = KIND_ARGUMENT, record: str = RECORD_ARGUMENT) -> None:
    """Delete a record for good, only when nothing refers to it; the history keeps its values.

    Example: ratebank remove species XY
    """
    with opened_store() as store:
        result = store.remove(kind, record)
    say(f"Removed {result.label} for good; the history keeps its values.")


@calls("edit_species")
def species_edit(
    name: str = typer.Argument(..., help="Species name."),
    expect_version: int = EXPECT_VERSION,
    formula: str = typer.Option(None, "--formula", help="Formula, e.g. CH3OH."),
    molar_mass: float = typer.Option(None, "--molar-mass", help="g/mol.", parser=number),
    diameter: float = species_options.DIAMETER,
    diameter_kind: str = species_options.DIAMETER_KIND,
    well_depth: float = species_options.WELL_DEPTH,
    critical_temperature: float = species_options.CRITICAL_TEMPERATURE,
    critical_pressure: float = species_options.CRITICAL_PRESSURE,
    acentric_factor: float = species_options.ACENTRIC_FACTOR,
    dipole_moment: float = typer.Option(
        None, "--dipole", help="Dipole moment in debye.", parser=number
    ),
    source: str = species_options.SOURCE,
) -> None:
    """Change a species (refused if it changed since you read it).

    Example: ratebank species edit OH --diameter 2.75 --expect-version 1
    """
    fields = species_options.species_fields(locals())
    with opened_store() as store:
        result = store.edit_species(name, expected_version=expect_version, **fields)
    _said(result)


@calls("edit_reaction")
def reactions_edit(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    expect_version: int = EXPECT_VERSION,
    reaction_class: str = typer.Option(None, "--class", help="Reaction class (empty: none)."),
    notes: str = typer.Option(None, "--notes", help="Notes (empty: none)."),
    equation: str = typer.Option(
        None, "--equation", help="New equation (only while no data depends on it)."
    ),
) -> None:
    """Change a reaction's class, notes or equation (refused if it changed since you read it).

    Example: ratebank reactions edit oh-ch4 --class h-abstraction --expect-version 1
    """
    with opened_store() as store:
        result = store.edit_reaction(
            key,
            expected_version=expect_version,
            reaction_class=reaction_class,
            notes=notes,
            equation=equation,
        )
    _said(result)


@calls("edit_set")
def data_edit_set(
    name: str = typer.Argument(..., help="Measurement set name."),
    expect_version: int = EXPECT_VERSION,
    reference: str = typer.Option(None, "--reference", help="Where the data come from."),
    method: str = typer.Option(None, "--method", help="Experimental method."),
    bath_gas: str = typer.Option(None, "--bath-gas", help="Bath gas."),
    pressure: float = typer.Option(
        None, "--pressure", help="Pressure of every point, in --pressure-units.", parser=number
    ),
    pressure_units: str = typer.Option(
        "bar", "--pressure-units", help="Pa, kPa, bar, atm, Torr or mbar."
    ),
    systematic_uncertainty: float = typer.Option(
        None,
        "--systematic-uncertainty",
        help="One standard deviation of the set's scale, a fraction of k.",
        parser=number,
    ),
) -> None:
    """Change a measurement set (refused if it changed since you read it).

    Example: ratebank data edit-set big --reference "Smith 2001" --expect-version 1
    """
    with opened_store() as store:
        result = store.edit_set(
            name,
            expected_version=expect_version,
            reference=reference,
            method=method,
            bath_gas=bath_gas,
            systematic_uncertainty=systematic_uncertainty,
            pressure=pressure,
            pressure_units=pressure_units,
        )
    _said(result)


@calls("edit_point")
def data_edit_point(
    point: int = typer.Argument(..., help="The point's number."),
    expect_version: int = EXPECT_VERSION,
    T: float = typer.Option(None, "--T", help="Temperature in K.", parser=number),
    k: float = typer.Option(None, "--k", help="Rate constant, in --k-units.", parser=number),
    k_units: str = typer.Option(
        None, "--k-units", help="Unit of --k (default: the unit the set was given in)."
    ),
    uncertainty: float = typer.Option(
        None, "--uncertainty", help="Relative uncertainty of k (a fraction).", parser=number
    ),
) -> None:
    """Change a measured point (refused if it changed since you read it).

    Example: ratebank data edit-point 17 --k 6.1e-15 --expect-version 1
    """
    with opened_store() as store:
        result = store.edit_point(
            point,
            expected_version=expect_version,
            T=T,
            k=k,
            k_units=k_units,
            uncertainty=uncertainty,
        )
    _said(result)
