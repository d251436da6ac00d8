"""Records of the curation listings: SI values turned into the file columns' units."""

from __future__ import annotations

import pytest

from ratebank.report.tables import species_records
from ratebank.store.listings import SpeciesSummary


def test_species_records_use_the_import_files_units():
    """3.798e-10 m is 3.798 Å; 1.85 D is 1.85 * 3.33564e-30 C m (1 D = 1e-21/c, exact);
    13.6 eV per molecule is 13.6 e N_A J/mol; 1.5e-30 m3 is 1.5 Å3."""
    debye = 1e-21 / 299792458.0
    ev_molar = 1.602176634e-19 * 6.02214076e23
    summary = SpeciesSummary(
        "X", "HO", 0.017, "formula", 3.798e-10, "lennard-jones", "given", 80.0,
        None, None, None, None, "test", 1.85 * debye, 373.0, 1.5e-30, 13.6 * ev_molar,
    )  # fmt: skip
    (record,) = species_records([summary])
    assert record["diameter_angstrom"] == pytest.approx(3.798)
    assert record["dipole_moment_debye"] == pytest.approx(1.85)
    assert record["polarizability_angstrom3"] == pytest.approx(1.5)
    assert record["ionization_energy_eV"] == pytest.approx(13.6)
    assert record["molar_mass_g_per_mol"] == pytest.approx(17.0)
    assert record["boiling_temperature_K"] == 373.0
