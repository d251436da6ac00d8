"""Tests of ratebank.science.diameters against chemicals 1.5.2 and the Poling gas-phase table."""

from __future__ import annotations

import csv
import doctest
import re
from pathlib import Path

import chemicals.lennard_jones as lj
import pytest
from chemicals import acentric, critical, phase_change

from ratebank.errors import DiameterError
from ratebank.science import diameters
from ratebank.science.diameters import (
    DIAMETER_METHODS,
    DiameterEstimate,
    estimate_diameter,
    estimate_well_depth,
    outside_correlations,
    sigma_bird_stewart_lightfoot_boiling,
    sigma_bird_stewart_lightfoot_critical,
    sigma_tee_gotoh_stewart,
    well_depth_bird_stewart_lightfoot_boiling,
    well_depth_bird_stewart_lightfoot_critical,
    well_depth_tee_gotoh_stewart,
)

HERE = Path(__file__).parent
ANGSTROM = 1e-10
ATM = 101325.0  # Pa, exact


def read_table(name: str) -> list[dict[str, str]]:
    with open(HERE / name, newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


SPECIES = read_table("ref_species.csv")
NONPOLAR = [row for row in SPECIES if row["kind"] == "nonpolar"]


def inputs(row):
    return (
        float(row["Tc"]),
        float(row["Pc"]),
        float(row["omega"]),
        float(row["Tb"]),
        float(row["Vb"]) * 1e-6,
    )


# --- the reference table is what the library says -----------------------------


@pytest.mark.parametrize("row", SPECIES, ids=lambda row: row["species"])
def test_species_table_matches_chemicals(row):
    # Pins ref_species.csv to chemicals 1.5.2 (its source column).
    cas = row["cas"]
    assert critical.Tc(cas) == pytest.approx(float(row["Tc"]), rel=1e-9)
    assert critical.Pc(cas) == pytest.approx(float(row["Pc"]), rel=1e-9)
    assert acentric.omega(cas) == pytest.approx(float(row["omega"]), rel=1e-9)
    assert phase_change.Tb(cas) == pytest.approx(float(row["Tb"]), rel=1e-5)
    assert lj.molecular_diameter(cas, method=lj.POLING) == float(row["sigma_poling"])
    assert lj.Stockmayer(cas, method=lj.POLING) == float(row["well_depth_poling"])


# --- formulas against chemicals ----------------------------------------------

FORMULA_CASES = [(float(r["Tc"]), float(r["Pc"]), float(r["omega"])) for r in SPECIES] + [
    (560.1, 4550000.0, 0.245)  # chemicals docstring example inputs
]


@pytest.mark.parametrize(("Tc", "Pc", "omega"), FORMULA_CASES)
def test_critical_point_correlations_match_chemicals(Tc, Pc, omega):
    # chemicals 1.5.2 sigma_Tee_Gotoh_Steward_1/2 and sigma_Bird_Stewart_Lightfoot_critical_2,
    # which take Pc in Pa and return Angstrom.
    assert sigma_tee_gotoh_stewart(Tc, Pc) / ANGSTROM == pytest.approx(
        lj.sigma_Tee_Gotoh_Steward_1(Tc, Pc), rel=1e-12
    )
    assert sigma_tee_gotoh_stewart(Tc, Pc, omega) / ANGSTROM == pytest.approx(
        lj.sigma_Tee_Gotoh_Steward_2(Tc, Pc, omega), rel=1e-12
    )
    assert sigma_bird_stewart_lightfoot_critical(Tc, Pc) / ANGSTROM == pytest.approx(
        lj.sigma_Bird_Stewart_Lightfoot_critical_2(Tc, Pc), rel=1e-12
    )
    # chemicals 1.5.2 epsilon_* functions (K).
    assert well_depth_tee_gotoh_stewart(Tc) == pytest.approx(
        lj.epsilon_Tee_Gotoh_Steward_1(Tc), rel=1e-12
    )
    assert well_depth_tee_gotoh_stewart(Tc, omega) == pytest.approx(
        lj.epsilon_Tee_Gotoh_Steward_2(Tc, omega), rel=1e-12
    )
    assert well_depth_bird_stewart_lightfoot_critical(Tc) == pytest.approx(
        lj.epsilon_Bird_Stewart_Lightfoot_critical(Tc), rel=1e-12
    )


@pytest.mark.parametrize(
    ("Vb", "Tb"), [(float(r["Vb"]) * 1e-6, float(r["Tb"])) for r in SPECIES] + [(0.0001015, 357.85)]
)
def test_boiling_point_correlations_match_chemicals(Vb, Tb):
    # chemicals 1.5.2 sigma_Bird_Stewart_Lightfoot_boiling (Vb in m3/mol, sigma in Angstrom)
    # and epsilon_Bird_Stewart_Lightfoot_boiling.
    assert sigma_bird_stewart_lightfoot_boiling(Vb) / ANGSTROM == pytest.approx(
        lj.sigma_Bird_Stewart_Lightfoot_boiling(Vb), rel=1e-12
    )
    assert well_depth_bird_stewart_lightfoot_boiling(Tb) == pytest.approx(
        lj.epsilon_Bird_Stewart_Lightfoot_boiling(Tb), rel=1e-12
    )


@pytest.mark.parametrize(
    ("function", "args", "expected_angstrom", "source"),
    [
        (sigma_tee_gotoh_stewart, (560.1, 4550000.0), 5.48402779790962, "chemicals docstring"),
        (sigma_bird_stewart_lightfoot_critical, (560.1, 4550000.0), 5.658657684653222,
         "chemicals docstring"),
        (sigma_bird_stewart_lightfoot_boiling, (0.0001015,), 5.439018856944655,
         "chemicals docstring"),
        (sigma_bird_stewart_lightfoot_critical, (126.2, 33.5 * ATM), 3.7966,
         "BSL 2.44 (Tc/Pc)^(1/3) by hand, REFERENCE-CHECKS s6"),
    ],
)  # fmt: skip
def test_published_examples(function, args, expected_angstrom, source):
    rel = 1e-4 if "by hand" in source else 1e-12
    assert function(*args) / ANGSTROM == pytest.approx(expected_angstrom, rel=rel)


# --- agreement with the gas-phase table ----------------------------------------


@pytest.mark.parametrize("method", DIAMETER_METHODS)
@pytest.mark.parametrize("row", NONPOLAR, ids=lambda row: row["species"])
def test_correlations_reproduce_poling_diameters_within_seven_percent(row, method):
    # REFERENCE-CHECKS s6: estimate / Poling (2001) sigma within +-7 % for nonpolar,
    # non-quantum gases (worst seen -5.5 %, C3H8 with TGS-omega).
    Tc, Pc, omega, _, Vb = inputs(row)
    estimate = estimate_diameter(Tc=Tc, Pc=Pc, omega=omega, boiling_volume=Vb, method=method)
    tabulated = float(row["sigma_poling"]) * ANGSTROM
    assert estimate.diameter == pytest.approx(tabulated, rel=0.07)


@pytest.mark.parametrize(
    "row", [r for r in SPECIES if r["kind"] != "nonpolar"], ids=lambda row: row["species"]
)
def test_out_of_scope_species_are_far_from_the_table(row):
    # Why they are refused: REFERENCE-CHECKS s6 shows 15-42 % errors for H2, He, H2O.
    Tc, Pc, omega, _, _ = inputs(row)
    ratio = sigma_tee_gotoh_stewart(Tc, Pc, omega) / (float(row["sigma_poling"]) * ANGSTROM)
    assert ratio > 1.14


# --- estimate_diameter ----------------------------------------------------------


def test_default_method_prefers_acentric_then_critical_then_boiling():
    # Order documented in estimate_diameter (Tee, Gotoh & Stewart 1966 with omega first).
    Tc, Pc, omega, _, Vb = inputs(NONPOLAR[0])
    full = estimate_diameter(Tc=Tc, Pc=Pc, omega=omega, boiling_volume=Vb)
    assert full.method == "tee-gotoh-stewart-acentric"
    assert full.diameter == pytest.approx(lj.sigma_Tee_Gotoh_Steward_2(Tc, Pc, omega) * 1e-10)
    assert "doi:10.1021/i160019a011" in full.source
    assert dict(full.inputs) == {"Tc": Tc, "Pc": Pc, "omega": omega}
    assert estimate_diameter(Tc=Tc, Pc=Pc, boiling_volume=Vb).method == "tee-gotoh-stewart"
    boiling = estimate_diameter(Tc=Tc, boiling_volume=Vb)
    assert boiling.method == "bird-stewart-lightfoot-boiling"
    assert boiling.diameter == pytest.approx(lj.sigma_Bird_Stewart_Lightfoot_boiling(Vb) * 1e-10)
    assert "Transport Phenomena" in boiling.source
    assert isinstance(boiling, DiameterEstimate)


def test_named_method_with_missing_input_says_what_it_needs():
    with pytest.raises(
        DiameterError,
        match=re.escape(
            "The diameter method tee-gotoh-stewart-acentric needs Tc, Pc and omega; "
            "omega is missing."
        ),
    ):
        estimate_diameter(Tc=126.192, Pc=3395800.0, method="tee-gotoh-stewart-acentric")
    with pytest.raises(DiameterError, match="needs Tc and Pc; Tc and Pc are missing"):
        estimate_diameter(boiling_volume=3.45e-5, method="bird-stewart-lightfoot-critical")


def test_no_usable_input_lists_every_method():
    with pytest.raises(DiameterError) as caught:
        estimate_diameter(Tc=126.192)
    message = str(caught.value)
    assert message.startswith("Not enough data to estimate a diameter: ")
    assert "tee-gotoh-stewart-acentric needs Tc, Pc and omega; " in message
    assert "bird-stewart-lightfoot-boiling needs boiling_volume" in message


def test_unknown_method_lists_the_valid_ones():
    with pytest.raises(
        DiameterError,
        match=re.escape(
            "Unknown diameter method 'flynn'; expected one of tee-gotoh-stewart-acentric, "
            "tee-gotoh-stewart, bird-stewart-lightfoot-critical, bird-stewart-lightfoot-boiling."
        ),
    ):
        estimate_diameter(Tc=126.192, Pc=3395800.0, method="flynn")


def test_non_positive_input_is_refused():
    with pytest.raises(DiameterError, match=r"Pc must be positive and finite \[Pa\]"):
        estimate_diameter(Tc=126.192, Pc=-1.0)


@pytest.mark.parametrize(
    ("formula", "reason", "source"),
    [
        (
            "H2",
            "quantum gas",
            "REFERENCE-CHECKS s6 (+15-24 % error); README, Estimates and steric factors",
        ),
        (
            "He",
            "quantum gas",
            "REFERENCE-CHECKS s6 (+22-42 % error); README, Estimates and steric factors",
        ),
        ("D2", "quantum gas", "common practice"),
    ],
)
def test_quantum_gases_are_refused(formula, reason, source):
    assert reason in outside_correlations(formula)
    with pytest.raises(
        DiameterError,
        match=f"The diameter correlations do not apply: {formula} is a quantum gas.*; "
        "enter a measured or tabulated diameter instead.",
    ):
        estimate_diameter(Tc=33.145, Pc=1296400.0, formula=formula)
    with pytest.raises(DiameterError, match="enter a measured or tabulated well depth"):
        estimate_well_depth(Tc=33.145, formula=formula)


#: Dipole moments [D], CRC Handbook of Chemistry and Physics, "Dipole moments" table
#: (from memory, +-0.05 D); polarity is decided by the value, not the name.
DIPOLES = [
    ("H2O", 1.85, "REFERENCE-CHECKS s6 (+19-33 % error); CRC (from memory)"),
    ("NH3", 1.47, "CRC (from memory)"),
    ("HCl", 1.11, "CRC (from memory)"),
    ("SO2", 1.63, "CRC (from memory); a name list used to let it pass"),
    ("CH2O", 2.33, "CRC (from memory); a name list used to let it pass"),
]


@pytest.mark.parametrize(("formula", "debye", "source"), DIPOLES)
def test_strongly_polar_molecules_are_refused_by_their_dipole_moment(formula, debye, source):
    from ratebank.science.diameters import DEBYE

    assert "strongly polar" in outside_correlations(formula, debye * DEBYE)
    with pytest.raises(DiameterError, match="strongly polar"):
        estimate_diameter(Tc=400.0, Pc=6e6, formula=formula, dipole_moment=debye * DEBYE)
    with pytest.raises(DiameterError, match="strongly polar"):
        estimate_well_depth(Tc=400.0, formula=formula, dipole_moment=debye * DEBYE)


def test_one_debye_is_exact():
    """1 D = 1e-21 / c C m = 3.33564095e-30 C m (exact, IUPAC Green Book)."""
    from ratebank.science.diameters import DEBYE

    assert DEBYE == pytest.approx(3.33564095e-30, rel=1e-9)
    assert outside_correlations("CO", 0.11 * DEBYE) is None  # CRC (from memory): 0.11 D


@pytest.mark.parametrize("formula", ["N2", "CH4", "C3H8", None])
def test_ordinary_species_are_within_the_correlations(formula):
    assert outside_correlations(formula) is None
    assert estimate_diameter(Tc=126.192, Pc=3395800.0, formula=formula).diameter > 0


# --- estimate_well_depth -------------------------------------------------------


def test_well_depth_estimates_name_their_method():
    # Formulas of chemicals 1.5.2 epsilon_* functions.
    n2 = NONPOLAR[0]
    Tc, _, omega, Tb, _ = inputs(n2)
    assert estimate_well_depth(Tc=Tc, omega=omega, Tb=Tb).method == "tee-gotoh-stewart-acentric"
    plain = estimate_well_depth(Tc=Tc, Tb=Tb)
    assert plain.method == "tee-gotoh-stewart"
    assert plain.well_depth == pytest.approx(lj.epsilon_Tee_Gotoh_Steward_1(Tc), rel=1e-12)
    boiling = estimate_well_depth(Tb=Tb)
    assert boiling.method == "bird-stewart-lightfoot-boiling"
    assert boiling.well_depth == pytest.approx(lj.epsilon_Bird_Stewart_Lightfoot_boiling(Tb))
    named = estimate_well_depth(Tc=Tc, method="bird-stewart-lightfoot-critical")
    assert named.well_depth == pytest.approx(lj.epsilon_Bird_Stewart_Lightfoot_critical(Tc))
    assert dict(named.inputs) == {"Tc": Tc}


def test_well_depth_errors():
    with pytest.raises(DiameterError, match="Not enough data to estimate a well depth: "):
        estimate_well_depth(omega=0.04)
    with pytest.raises(
        DiameterError, match="bird-stewart-lightfoot-boiling needs Tb; Tb is missing"
    ):
        estimate_well_depth(Tc=126.0, method="bird-stewart-lightfoot-boiling")
    with pytest.raises(DiameterError, match="Unknown well depth method 'guess'"):
        estimate_well_depth(Tc=126.0, method="guess")


# --- doctests -----------------------------------------------------------------


def test_doctests():
    result = doctest.testmod(diameters)
    assert result.attempted > 0
    assert result.failed == 0
