"""Inputs that make sense, or one clear refusal with nothing written (DESIGN section 13)."""

from __future__ import annotations

import json

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import REACTIONS_CSV, SPECIES_CSV

from ratebank.science.uncertainty import panel_factor_from_log10_form

MEASUREMENT_HEADER = "set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind\n"
SPECIES_HEADER = (
    "name,formula,molar_mass_g_per_mol,diameter_angstrom,well_depth_K,dipole_moment_debye\n"
)


@pytest.fixture
def store(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", SPECIES_CSV),
        ("reactions", "r.csv", REACTIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    return db_url


#: (file kind, rows, the one problem reported). Values: synthetic typos.
BAD = [
    (
        "data",
        MEASUREMENT_HEADER + "a,oh-ch4,300,6.4e-15,cm3/molecule/s,20,\n",
        ":2: k_uncertainty: 20 as a relative uncertainty is 2000 % of k",
    ),
    (
        "data",
        MEASUREMENT_HEADER + "a,oh-ch4,300,1e300,cm3/molecule/s,,\n",
        ":2: k: 1e+300 cm3/molecule/s is outside what a rate constant of order 2 can be",
    ),
    (
        "data",
        MEASUREMENT_HEADER + "a,oh-ch4,300,1e-40,cm3/molecule/s,,\n",
        "is outside what a rate constant of order 2 can be (1e-30 to 1e-06 cm3/molecule/s)",
    ),
    (
        "data",
        MEASUREMENT_HEADER + "a,oh-ch4,1e9,6.4e-15,cm3/molecule/s,,\n",
        ":2: T_K: ",
    ),
    (
        "data",
        MEASUREMENT_HEADER
        + "a,oh-ch4,300,6.4e-15,cm3/molecule/s,0.1,\na,oh-ch4,400,2.6e-14,cm3/molecule/s,,\n",
        ":3: k_uncertainty: set 'a' states an uncertainty for some points but not for this one",
    ),
    (
        "species",
        SPECIES_HEADER + "X1,HO,,0.3828,,\n",
        ":2: diameter_angstrom: 0.3828 Å is outside 1-20 Å",
    ),
    ("species", SPECIES_HEADER + "X1,HO,,51,,\n", ":2: diameter_angstrom: 51 Å is outside 1-20 Å"),
    ("species", SPECIES_HEADER + "X1,HO,,3.1,6000,\n", ":2: well_depth_K: 6000 K is outside"),
    ("species", SPECIES_HEADER + "X1,HO,18.1,,,\n", ":2: molar_mass_g_per_mol: 18.1 g/mol does"),
    ("species", SPECIES_HEADER + "X1,HO,,,,-1\n", ":2: dipole_moment_debye: -1 is below 0"),
    (
        "expressions",
        "reaction,A,Ea,Ea_units,k_units,uncertainty_factor,f298\n"
        "oh-ch4,1e-11,0,K,cm3/molecule/s,2,1.5\n",
        ":2: f298: give the uncertainty one way, not as uncertainty_factor and f298 and g_K",
    ),
    (
        "expressions",
        "reaction,A,Ea,Ea_units,k_units,dE_R_K\noh-ch4,1e-11,0,K,cm3/molecule/s,100\n",
        ":2: dlogk298: is empty; dE_R_K needs the Δlog10 k at 298 K",
    ),
]


@pytest.mark.parametrize(("kind", "rows", "expected"), BAD)
def test_implausible_input_is_refused_with_one_line(store, tmp_path, kind, rows, expected):
    path = write(tmp_path / "in.csv", rows)
    before = snapshot(store)
    outcome = run(store, kind, "import", str(path))
    assert outcome.exit_code == 1
    assert expected in outcome.stderr
    assert "1 problem(s)" in outcome.stderr
    assert "Traceback" not in outcome.stderr
    assert snapshot(store) == before


def test_a_percent_uncertainty_is_read_as_a_percentage(store, tmp_path):
    rows = MEASUREMENT_HEADER + "a,oh-ch4,300,6.4e-15,cm3/molecule/s,20,percent\n"
    assert run(store, "data", "import", str(write(tmp_path / "p.csv", rows))).exit_code == 0
    (point_set,) = json.loads(run(store, "data", "list", "--json").stdout)
    assert point_set["points"] == 1
    fitted = run(store, "fit", "oh-ch4", "--json")
    assert fitted.exit_code == 1  # one point cannot be fitted; the import itself was fine


def test_literature_uncertainty_in_the_panels_forms(store, tmp_path):
    """f298 and g_K are stored as given; dlogk298 = 0.1 and dE_R_K = 100 K give
    f298 = 10^0.1 and g = 100 K (JPL 19-5 convention, from memory; the same relation as
    science.uncertainty.panel_factor_from_log10_form)."""
    rows = (
        "reaction,A,Ea,Ea_units,k_units,f298,g_K,dlogk298,dE_R_K\n"
        "oh-ch4,1e-11,1000,K,cm3/molecule/s,1.2,50,,\n"
        "ho2-ho2,2e-12,-500,K,cm3/molecule/s,,,0.1,100\n"
    )
    assert run(store, "expressions", "import", str(write(tmp_path / "e.csv", rows))).exit_code == 0
    listed = {
        e["reaction"]: e for e in json.loads(run(store, "expressions", "list", "--json").stdout)
    }
    assert (listed["oh-ch4"]["uncertainty_factor"], listed["oh-ch4"]["uncertainty_g_K"]) == (
        1.2,
        50.0,
    )
    panel = panel_factor_from_log10_form(0.1, 100.0)
    assert listed["ho2-ho2"]["uncertainty_factor"] == pytest.approx(float(panel.f298), rel=1e-12)
    assert listed["ho2-ho2"]["uncertainty_g_K"] == pytest.approx(float(panel.g), rel=1e-12)


def test_a_sets_systematic_uncertainty_is_read_once_per_set(store, tmp_path):
    header = "set,reaction,T_K,k,k_units,k_uncertainty,systematic_uncertainty\n"
    good = header + "".join(
        f"a,oh-ch4,{T},{3e-11 * 2.718281828 ** (-1100 / T):.6e},cm3/molecule/s,0.01,0.1\n"
        for T in (250, 300, 350, 400)
    )
    assert run(store, "data", "import", str(write(tmp_path / "g.csv", good))).exit_code == 0
    assert run(store, "fit", "oh-ch4", "--form", "arrhenius").exit_code == 0
    (fit,) = [
        e
        for e in json.loads(run(store, "expressions", "list", "--json").stdout)
        if e["origin"] == "measured-fit"
    ]
    assert fit["uncertainty_factor"] >= 1.1  # the 10 % scale is not averaged away
    before = snapshot(store)
    bad = (
        header
        + "b,oh-ch4,300,6e-15,cm3/molecule/s,0.1,0.1\nb,oh-ch4,400,2e-14,cm3/molecule/s,0.1,0.2\n"
    )
    refused = run(store, "data", "import", str(write(tmp_path / "b.csv", bad)))
    assert refused.exit_code == 1
    assert (
        ":3: systematic_uncertainty: '0.2' differs from '0.1' given for set 'b'" in refused.stderr
    )
    too_big = header + "c,oh-ch4,300,6e-15,cm3/molecule/s,0.1,1.5\n"
    refused = run(store, "data", "import", str(write(tmp_path / "c.csv", too_big)))
    assert ":2: systematic_uncertainty: 1.5 is 150 % of k" in refused.stderr
    assert snapshot(store) == before
