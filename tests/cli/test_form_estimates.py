"""`estimate --low-pressure`, k_inf of an association, and `check` of the rate-law forms,
driven through the command line (synthetic data)."""

from __future__ import annotations

import json

import pytest
from helpers.cli import run, snapshot, write

SPECIES = """name,formula,diameter_angstrom,diameter_kind,well_depth_K,source
H,H,2.05,lennard-jones,145,synthetic
O2,O2,3.467,lennard-jones,106.7,Poling App. B
HO2,HO2,3.458,lennard-jones,107.4,synthetic
N2,N2,3.798,lennard-jones,71.4,Poling App. B
C2H5,C2H5,4.302,lennard-jones,252.3,synthetic
C2H4,C2H4,4.163,lennard-jones,224.7,synthetic
"""
REACTIONS = """key,equation
h-o2-m,H + O2 + M -> HO2 + M
c2h5-m,C2H5 + M -> C2H4 + H + M
"""
EXPRESSIONS = """reaction,form,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,troe_alpha,troe_T3_K,troe_T1_K,troe_T2_K,T_min_K,T_max_K,reference
h-o2-m,falloff,,0,0,kJ/mol,cm3/mol/s,6.37e20,-1.72,2.19,cm6/mol2/s,troe,0.5,30,90000,90000,300,2500,synthetic
c2h5-m,,,,160,kJ/mol,,,,,,,,,,,600,1200,synthetic
"""


@pytest.fixture
def forms(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, text in (
        ("species", SPECIES),
        ("reactions", REACTIONS),
        ("expressions", EXPRESSIONS),
    ):
        path = write(tmp_path / f"{command}.csv", text)
        outcome = run(db_url, command, "import", str(path))
        assert outcome.exit_code == 0, outcome.stderr
    return db_url


def test_low_pressure_estimate_records_its_inputs(forms):
    outcome = run(
        forms, "estimate", "c2h5-m", "--low-pressure", "--oscillators", "6", "--efficiency",
        "0.3", "--bath", "N2", "--json",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    (row,) = json.loads(outcome.stdout)["estimated"]
    assert (row["oscillators"], row["collision_efficiency"], row["bath_gas"]) == (6, 0.3, "N2")
    assert row["uncertainty_factor"] == 10 and row["threshold_energy"] == pytest.approx(160.0)
    assert row["k_units"] == "cm3/mol/s" and row["form"] == "third-body"
    table = run(forms, "estimate", "c2h5-m", "--low-pressure", "--oscillators", "6",
                "--efficiency", "0.3", "--bath", "N2")  # fmt: skip
    assert table.exit_code == 0 and "order-of-magnitude guidance" in table.stdout


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        (
            [
                "h-o2-m",
                "--low-pressure",
                "--oscillators",
                "6",
                "--efficiency",
                "0.3",
                "--bath",
                "N2",
            ],
            "Error: reaction 'h-o2-m' (H + O2 + M -> HO2 + M) is not a unimolecular "
            "decomposition written with M",
        ),
        (
            ["c2h5-m", "--low-pressure", "--oscillators", "6", "--efficiency", "2", "--bath", "N2"],
            "Error: collision_efficiency 2.0 must be a number in (0, 1] (option --efficiency)",
        ),
        (
            ["c2h5-m", "--low-pressure", "--oscillators", "6", "--efficiency", "0.3"],
            "Error: a low-pressure estimate needs bath",
        ),
        (
            ["c2h5-m", "--oscillators", "6"],
            "Error: oscillators only apply to a low-pressure estimate",
        ),
        (
            [
                "c2h5-m",
                "--low-pressure",
                "--oscillators",
                "6",
                "--efficiency",
                "0.3",
                "--bath",
                "Xe",
            ],
            "Error: no species 'Xe' in the store",
        ),
    ],
)
def test_a_bad_low_pressure_request_is_one_line_and_writes_nothing(forms, arguments, message):
    before = snapshot(forms)
    outcome = run(forms, "estimate", *arguments)
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith(message) and len(outcome.stderr.strip().splitlines()) == 1
    assert "Traceback" not in outcome.stderr + outcome.stdout
    assert snapshot(forms) == before


def test_k_inf_of_an_association_then_check(forms):
    estimated = run(forms, "estimate", "h-o2-m", "--steric", "0.3", "--json")
    assert estimated.exit_code == 0, estimated.stderr
    checked = run(forms, "check", "h-o2-m", "--json")
    report = json.loads(checked.stdout)
    # the estimate is P = 0.3 times the collision rate: within the limit; only the note
    assert report["flags"] == [] and checked.exit_code == 0
    assert [n["code"] for n in report["notes"]] == ["no-efficiencies"]
    over = run(forms, "estimate", "h-o2-m", "--steric", "5", "--json")
    assert over.exit_code == 0
    flagged = run(forms, "check", "h-o2-m", "--ignore", "steric-above-one")
    assert flagged.exit_code == 1 and "k_inf of expression" in flagged.stdout
