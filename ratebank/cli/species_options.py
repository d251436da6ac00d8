"""The options of a species' data, shared by ``species add`` and ``species edit``.

Each option fills one column of the species file (:data:`COLUMNS`), whose name
carries the unit the option is given in.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import typer

from ratebank.cli.common import number

DIAMETER = typer.Option(None, "--diameter", help="Collision diameter in Å.", parser=number)
DIAMETER_KIND = typer.Option(None, "--diameter-kind", help="hard-sphere or lennard-jones.")
WELL_DEPTH = typer.Option(None, "--well-depth", help="Well depth ε/k_B in K.", parser=number)
CRITICAL_TEMPERATURE = typer.Option(None, "--tc", help="Critical temperature in K.", parser=number)
CRITICAL_PRESSURE = typer.Option(None, "--pc", help="Critical pressure in bar.", parser=number)
ACENTRIC_FACTOR = typer.Option(None, "--acentric", help="Acentric factor.", parser=number)
SOURCE = typer.Option(None, "--source", help="Where the numbers come from.")

#: The species file's column of each option, by the command's parameter name.
COLUMNS = {
    "formula": "formula",
    "molar_mass": "molar_mass_g_per_mol",
    "diameter": "diameter_angstrom",
    "diameter_kind": "diameter_kind",
    "well_depth": "well_depth_K",
    "critical_temperature": "critical_temperature_K",
    "critical_pressure": "critical_pressure_bar",
    "acentric_factor": "acentric_factor",
    "boiling_volume": "boiling_volume_cm3_per_mol",
    "dipole_moment": "dipole_moment_debye",
    "source": "source",
}


def species_fields(arguments: Mapping[str, Any]) -> dict[str, Any]:
    """The species file's columns that a command's ``arguments`` (by parameter name) fill.

    >>> species_fields({"name": "OH", "diameter": 2.75, "source": None})
    {'diameter_angstrom': 2.75, 'source': None}
    """
    return {COLUMNS[name]: value for name, value in arguments.items() if name in COLUMNS}
