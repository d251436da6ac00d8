"""Pressure-resolved data through the real command line: points in the effective unit of a
reaction written with M, listings grouped by pressure, and `fit --form falloff`.

The fall-off data are SYNTHETIC (a Lindemann law with made-up k0 and k_inf, no noise).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from helpers.cli import run, snapshot, write
from helpers.data import MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

from ratebank.services.store_access import open_store
from ratebank.store.points import points

PER_MOLECULE = constants.N_A * 1e-6  # cm3/molecule/s -> m3 mol-1 s-1
WIDE = {"COLUMNS": "200"}
HEADER = "set,reaction,T_K,k,k_units,pressure_bar,bath_gas\n"


@pytest.fixture
def filled(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
    ):
        outcome = run(db_url, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return db_url


def _stored_points(db: str):
    handle = open_store(db)
    try:
        with handle.session() as session:
            return points(session)
    finally:
        handle.close()


def test_an_effective_k_is_stored_as_the_coefficient_per_concentration(filled, tmp_path):
    """k in cm3/molecule/s for H + O2 + M -> HO2 + M at 0.5 bar and 300 K is stored as
    k / [M], [M] = P / (R T) (ideal gas; scipy.constants for N_A and R)."""
    text = HEADER + "eff,h-o2-m,300,2.0e-13,cm3/molecule/s,0.5,N2\n"
    text += "ter,h-o2-m,300,5.0e-32,cm6/molecule2/s,,N2\n"
    outcome = run(filled, "data", "import", str(write(tmp_path / "eff.csv", text)))
    assert outcome.exit_code == 0, outcome.stderr
    stored = _stored_points(filled)
    k = dict(zip(stored.pressure.tolist(), stored.k.tolist(), strict=True))
    concentration = 0.5e5 / (constants.R * 300.0)
    assert k[0.5e5] == pytest.approx(2.0e-13 * PER_MOLECULE / concentration, rel=1e-12)
    # a termolecular k is stored as given (converted to SI)
    termolecular = stored.k[np.isnan(stored.pressure)]
    assert termolecular == pytest.approx([5.0e-32 * PER_MOLECULE**2], rel=1e-12)


def test_an_effective_k_without_a_pressure_is_one_line_and_nothing_is_written(filled, tmp_path):
    text = HEADER + "eff,h-o2-m,300,2.0e-13,cm3/molecule/s,0.5,N2\n"
    text += "eff,h-o2-m,350,1.0e-13,cm3/molecule/s,,N2\n"
    path = write(tmp_path / "eff.csv", text)
    before = snapshot(filled)
    outcome = run(filled, "data", "import", str(path))
    assert outcome.exit_code == 1
    assert snapshot(filled) == before
    problems = [line for line in outcome.stderr.splitlines() if line.startswith(str(path))]
    assert problems == [
        f"{path}:3: pressure_bar: is empty; k in cm3/molecule/s is the effective k of "
        "'h-o2-m' (written with M) at its pressure, so the point needs the pressure it was "
        "measured at; expected a pressure in bar"
    ]
    assert "Traceback" not in outcome.stderr


def test_a_unit_of_neither_order_names_both(filled, tmp_path):
    text = HEADER + "bad,h-o2-m,300,2.0e-3,s-1,0.5,N2\n"
    outcome = run(filled, "data", "import", str(write(tmp_path / "bad.csv", text)))
    assert outcome.exit_code == 1
    assert "also takes k of order 2" in outcome.stderr


def test_data_list_groups_the_points_by_pressure(filled, tmp_path):
    text = HEADER + "".join(
        f"g{p},h-o2-m,{T},1e-13,cm3/molecule/s,{p},N2\n" for p in (0.1, 1) for T in (300, 400)
    )
    assert run(filled, "data", "import", str(write(tmp_path / "g.csv", text))).exit_code == 0
    table = run(filled, "data", "list", "--reaction", "h-o2-m", env=WIDE)
    assert table.exit_code == 0, table.stderr
    assert "Points by pressure" in table.stdout
    rows = [line for line in table.stdout.splitlines() if "h-o2-m" in line and "N2" in line]
    assert len(rows) == 2 and "0.1" in rows[0] and "1: g0.1" in rows[0]
    listed = json.loads(run(filled, "data", "list", "--json").stdout)
    by_set = {s["set"]: s for s in listed}
    assert by_set["s2"]["pressures"] == [
        {"pressure_bar": 1.5, "points": 2, "T_min_K": 800.0, "T_max_K": 1000.0}
    ]
    assert [p["pressure_bar"] for p in by_set["g1"]["pressures"]] == [1.0]


def test_reactions_show_groups_the_points_by_pressure_and_bath_gas(filled):
    shown = json.loads(run(filled, "reactions", "show", "oh-ch4", "--json").stdout)
    assert shown["points_by_pressure"] == [
        {
            "reaction": "oh-ch4",
            "pressure_bar": 0.1,
            "bath_gas": "He",
            "sets": ["s1"],
            "points": 3,
            "T_min_K": 300.0,
            "T_max_K": 400.0,
        },
        {
            "reaction": "oh-ch4",
            "pressure_bar": 1.5,
            "bath_gas": "Ar",
            "sets": ["s2"],
            "points": 2,
            "T_min_K": 800.0,
            "T_max_K": 1000.0,
        },
    ]
    table = run(filled, "reactions", "show", "oh-ch4", env=WIDE)
    assert "Points by pressure" in table.stdout and "He" in table.stdout


def _lindemann_rows() -> str:
    """Exact Lindemann k(T, P) (k0 = 1e9 T^-1.5 m6 mol-2 s-1, k_inf = 2e7 m3 mol-1 s-1),
    k = k0 [M] / (1 + k0 [M] / k_inf), as effective k in cm3/molecule/s."""
    rows = []
    for j, p in enumerate((0.01, 0.1, 1.0, 10.0)):
        for T in (250.0, 300.0, 400.0):
            M = p * 1e5 / (constants.R * T)
            k0 = 1.0e9 * T**-1.5
            k = k0 * M / (1.0 + k0 * M / 2.0e7)
            rows.append(f"L{j},h-o2-m,{T},{k / PER_MOLECULE!r},cm3/molecule/s,{p},N2\n")
    return HEADER + "".join(rows)


def test_fit_form_falloff_recovers_an_exact_law_and_stores_it(filled, tmp_path):
    path = write(tmp_path / "lin.csv", _lindemann_rows())
    assert run(filled, "data", "import", str(path)).exit_code == 0
    outcome = run(
        filled, "fit", "h-o2-m", "--form", "falloff", "--fix", "Ea0=0", "--fix", "n_inf=0",
        "--fix", "Ea_inf=0", "--units", "si", "--json",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    record = json.loads(outcome.stdout)
    values = {p["name"]: p["value"] for p in record["parameters"]}
    assert values["A0"] == pytest.approx(1.0e9, rel=1e-6)
    assert values["n0"] == pytest.approx(-1.5, abs=1e-6)
    assert values["A_inf"] == pytest.approx(2.0e7, rel=1e-6)
    assert record["form"] == "falloff" and record["broadening"] == "none"
    assert record["pressures"] == 4 and record["temperatures"] == 3
    listed = json.loads(run(filled, "expressions", "list", "--json").stdout)
    assert any(e["id"] == record["expression_id"] for e in listed)


def test_fit_form_falloff_at_one_pressure_is_refused_in_one_line(filled, tmp_path):
    text = HEADER + "".join(
        f"one,h-o2-m,{T},1e-13,cm3/molecule/s,1,N2\n" for T in (250, 300, 350, 400)
    )
    assert run(filled, "data", "import", str(write(tmp_path / "one.csv", text))).exit_code == 0
    before = snapshot(filled)
    outcome = run(filled, "fit", "h-o2-m", "--form", "falloff", "--fix", "Ea0=0")
    assert outcome.exit_code == 1
    assert snapshot(filled) == before
    lines = outcome.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: h-o2-m: ")
    assert "A single pressure cannot separate the low- and high-pressure limits" in lines[0]


def test_fit_refuses_pooling_pressures_of_a_reaction_with_m_unless_asked(filled, tmp_path):
    text = HEADER + "".join(
        f"p{p},h-o2-m,{T},1e-13,cm3/molecule/s,{p},N2\n" for p in (0.01, 1) for T in (300, 400)
    )
    assert run(filled, "data", "import", str(write(tmp_path / "p.csv", text))).exit_code == 0
    refused = run(filled, "fit", "h-o2-m", "--form", "arrhenius", "--json")
    assert refused.exit_code == 1
    (row,) = json.loads(refused.stdout)
    assert row["status"] == "failed" and "2 pressures from 0.01 to 1 bar" in row["message"]
    told = run(filled, "fit", "h-o2-m", "--form", "arrhenius")
    assert "--pool-pressures pools them on purpose" in told.stdout
    assert "pool_pressures" not in told.stdout  # the library's argument name stays inside
    pooled = run(filled, "fit", "h-o2-m", "--form", "arrhenius", "--pool-pressures", "--json")
    assert pooled.exit_code == 0, pooled.stderr
    (row,) = json.loads(pooled.stdout)
    assert row["status"] == "stored"
    assert any("pooled" in w for w in row["warnings"])


def test_a_malformed_fix_is_refused(filled):
    before = snapshot(filled)
    outcome = run(filled, "fit", "h-o2-m", "--form", "falloff", "--fix", "Fc")
    assert outcome.exit_code == 2
    assert "expected NAME=VALUE" in outcome.stderr
    assert snapshot(filled) == before
