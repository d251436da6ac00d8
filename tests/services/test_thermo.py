"""Species thermochemistry through the services: import (both layouts, NIST-JANAF), the
values shown, and reaction thermochemistry, against the NIST-JANAF tables (Chase 1998, via
the janaf package) and hand computations."""

from __future__ import annotations

import math

import numpy as np
import pytest
from helpers.cli import snapshot, write
from helpers.thermo import JANAF_TABLES, janaf_row, thermo_store
from scipy import constants

from ratebank.errors import BadInputError, ImportValidationError, NotFoundError
from ratebank.io.thermo_files import import_thermo_file
from ratebank.science.units import parse_unit
from ratebank.services import thermo
from ratebank.services.store_access import open_store

R = constants.R
REACTIONS = """key,equation,class,reverse
h-o2,H + O2 -> OH + O,branching,detailed-balance
oh-h2,OH + H2 -> H2O + H,abstraction,
h-o2-m,H + O2 + M -> HO2 + M,recombination,
"""
CHECK_TEMPERATURES = [300.0, 500.0, 1000.0, 2000.0]


@pytest.fixture
def store(db_url, tmp_path):
    handle = open_store(thermo_store(db_url, tmp_path, REACTIONS), author="tester")
    yield handle
    handle.close()


@pytest.fixture
def bare(db_url, tmp_path):
    """Species and reactions, no thermochemistry."""
    handle = open_store(thermo_store(db_url, tmp_path, REACTIONS, species=()), author="tester")
    yield handle
    handle.close()


@pytest.mark.parametrize("species", list(JANAF_TABLES))
def test_janaf_filled_thermochemistry_matches_the_tables(store, species):
    """Cp within 0.5 %, H within 0.5 kJ/mol, S within 0.5 J/(mol K) (NIST-JANAF, the table
    named in helpers/thermo.py)."""
    with store.session() as session:
        view = thermo.species_thermo(session, species, CHECK_TEMPERATURES)
    assert view is not None and view.thermo.method.startswith(
        f"NIST-JANAF table {JANAF_TABLES[species]}"
    )
    worst = 0.0
    for row in view.rows:
        table = janaf_row(species, row.T)
        assert row.in_range
        assert row.Cp == pytest.approx(table["Cp"], rel=5e-3)
        assert row.H == pytest.approx(
            janaf_row(species, 298.15)["dfH"] + table["H_minus_H298"], abs=500.0
        )
        assert row.S == pytest.approx(table["S"], abs=0.5)
        worst = max(worst, abs(row.Cp / table["Cp"] - 1))
    # these rows were fitted: the stored largest deviation covers them
    assert worst <= view.thermo.max_cp_deviation * (1 + 1e-9)


def test_default_temperatures_and_a_temperature_outside_the_range(store):
    with store.session() as session:
        shown = thermo.species_thermo(session, "OH")
        outside = thermo.species_thermo(session, "OH", [100.0, 300.0])
    assert [r.T for r in shown.rows] == [298.15, 500.0, 1000.0, 1500.0, 2000.0]
    assert (outside.rows[0].in_range, outside.rows[0].Cp) == (False, None)
    assert outside.rows[1].in_range


def test_a_species_without_thermochemistry_shows_none(bare):
    with bare.session() as session:
        assert thermo.species_thermo(session, "OH") is None
        with pytest.raises(NotFoundError, match="no species 'XY'"):
            thermo.species_thermo(session, "XY")


def _table_layout(species: str, temperatures: list[float]) -> str:
    rows = ["species,Hf298_kJ_per_mol,S298_J_per_mol_K,T_K,Cp_J_per_mol_K,source"]
    reference = janaf_row(species, 298.15)
    for i, T in enumerate(temperatures):
        head = f"{reference['dfH'] / 1e3!r},{reference['S']!r}" if i == 0 else ","
        rows.append(f"{species},{head},{T!r},{janaf_row(species, T)['Cp']!r},JANAF rows")
    return "\n".join(rows) + "\n"


def test_a_cp_table_is_fitted_and_its_deviation_stored(bare, tmp_path):
    """H2O from twelve NIST-JANAF rows (table H-064): the fit reproduces the table's Cp within
    0.5 %, H(298.15) and S(298.15) exactly, and the stored deviation is the largest one over
    the points given (checked by evaluating the stored polynomials)."""
    temperatures = [
        298.15,
        400.0,
        500.0,
        600.0,
        800.0,
        1000.0,
        1200.0,
        1500.0,
        2000.0,
        2500.0,
        3000.0,
        3500.0,
    ]
    path = write(tmp_path / "t.csv", _table_layout("H2O", temperatures))
    with bare.session(write=True) as session:
        report = import_thermo_file(session, path)
    (stored,) = report.stored
    assert (report.layout, stored.method, stored.fit_points) == (
        "table",
        "fitted to tabulated Cp",
        len(temperatures),
    )
    with bare.session() as session:
        view = thermo.species_thermo(session, "H2O", temperatures)
    cp = np.array([r.Cp for r in view.rows])
    given = np.array([janaf_row("H2O", T)["Cp"] for T in temperatures])
    assert np.max(np.abs(cp / given - 1)) == pytest.approx(stored.max_cp_deviation, rel=1e-6)
    assert stored.max_cp_deviation < 5e-3
    assert view.rows[0].H == pytest.approx(janaf_row("H2O", 298.15)["dfH"], abs=1e-6)
    assert view.rows[0].S == pytest.approx(janaf_row("H2O", 298.15)["S"], abs=1e-9)


MONATOMIC_H = [2.5, 0.0, 0.0, 0.0, 0.0, 25473.66, -0.446682853]


def _coefficients_layout(species="H", T=(200.0, 1000.0, 6000.0), low=None, high=None) -> str:
    low = MONATOMIC_H if low is None else low
    high = MONATOMIC_H if high is None else high
    header = ["species", "T_low_K", "T_mid_K", "T_high_K"]
    header += [f"low_{i}" for i in range(1, 8)] + [f"high_{i}" for i in range(1, 8)] + ["source"]
    cells = [species, *map(repr, T), *map(repr, low), *map(repr, high), "synthetic"]
    return ",".join(header) + "\n" + ",".join(cells) + "\n"


def test_given_coefficients_are_stored_exactly(bare, tmp_path):
    """Cp = 5R/2 for atomic hydrogen (NIST-JANAF H-001 gives 20.786 J/(mol K) at 1000 K)."""
    path = write(tmp_path / "c.csv", _coefficients_layout())
    with bare.session(write=True) as session:
        report = import_thermo_file(session, path)
    assert report.layout == "coefficients" and report.stored[0].method == "given coefficients"
    with bare.session() as session:
        view = thermo.species_thermo(session, "H", [1000.0])
    assert view.thermo.low == tuple(MONATOMIC_H) and view.thermo.high == tuple(MONATOMIC_H)
    assert view.rows[0].Cp == 2.5 * R
    assert view.rows[0].Cp == pytest.approx(janaf_row("H", 1000.0)["Cp"], abs=1e-3)


BAD_INPUTS = [
    pytest.param(
        _coefficients_layout().replace(",0.0,0.0,0.0,0.0,25473.66", ",0.0,,0.0,0.0,25473.66", 1),
        "c.csv:2: low_3: is empty; expected coefficient a3 of the low-range polynomial",
        id="missing-coefficient",
    ),
    pytest.param(
        _coefficients_layout(T=(1000.0, 1000.0, 6000.0)),
        "c.csv:2: T_mid_K: 1000 K must be above T_low_K (1000 K)",
        id="T_low-not-below-T_mid",
    ),
    pytest.param(
        "species,Hf298_kJ_per_mol,S298_J_per_mol_K,T_K,Cp_J_per_mol_K\nH2O,-241.826,188.834,"
        "1000,41.268\n",
        "c.csv:2: T_K: 'H2O' has Cp° at 1 temperature; fitting its polynomials needs Cp° at 4 "
        "or more temperatures",
        id="one-temperature",
    ),
    pytest.param(
        _coefficients_layout(species="XY"),
        "c.csv:2: species: unknown species 'XY'; add the species first",
        id="unknown-species",
    ),
]


@pytest.mark.parametrize(("text", "message"), BAD_INPUTS)
def test_bad_thermochemistry_gives_one_problem_and_writes_nothing(
    bare, db_url, tmp_path, text, message
):
    path = write(tmp_path / "c.csv", text)
    before = snapshot(db_url)
    with bare.session(write=True) as session, pytest.raises(ImportValidationError) as caught:
        import_thermo_file(session, path)
    assert caught.value.total == 1
    assert caught.value.problems[0].replace(str(tmp_path) + "/", "").startswith(message)
    assert snapshot(db_url) == before


def test_thermochemistry_a_species_has_is_replaced_only_when_asked(store, tmp_path):
    path = write(tmp_path / "c.csv", _coefficients_layout())
    with store.session(write=True) as session, pytest.raises(ImportValidationError) as caught:
        import_thermo_file(session, path)
    assert "'H' already has thermochemistry (NIST-JANAF table H-001" in caught.value.problems[0]
    with store.session(write=True) as session:
        report = import_thermo_file(session, path, replace=True)
    assert report.stored[0].replaced
    with store.session() as session:
        assert thermo.species_thermo(session, "H").thermo.method == "given coefficients"


# --------------------------------------------------------------------------- reactions


@pytest.mark.parametrize("T", [500.0, 1000.0, 2000.0])
def test_reaction_thermochemistry_against_the_tables(store, T):
    """log10 Kp of H + O2 + M -> HO2 + M is the sum of the tables' log10 Kf within 0.02
    (NIST-JANAF H-001, O-029, H-043); M takes no part in Δn, so Kc = Kp (p°/RT)^-1."""
    with store.session() as session:
        report = thermo.reaction_thermo(session, "h-o2-m", [T])
    (row,) = report.rows
    expected = sum(n * janaf_row(s, T)["logKf"] for s, n in (("HO2", 1), ("H", -1), ("O2", -1)))
    assert row.ln_Kp / math.log(10) == pytest.approx(expected, abs=0.02)
    assert report.delta_n == -1
    assert sorted(report.species) == [("H", -1), ("HO2", 1), ("O2", -1)]
    assert row.Kc == pytest.approx(row.Kp * (1e5 / (R * T)) ** -1, rel=1e-12)
    assert row.delta_G == pytest.approx(row.delta_H - T * row.delta_S, rel=1e-12)


def test_a_reaction_whose_species_lack_thermochemistry_says_which(db_url, tmp_path):
    db = thermo_store(db_url, tmp_path, REACTIONS, species=("H", "O2", "OH"))
    handle = open_store(db)
    try:
        with handle.session() as session, pytest.raises(NotFoundError) as caught:
            thermo.reaction_thermo(session, "h-o2", [1000.0])
    finally:
        handle.close()
    assert str(caught.value) == (
        "reaction 'h-o2' has no thermochemistry: species O has none (import it first)"
    )


def test_a_temperature_outside_the_polynomials_is_refused(store):
    with store.session() as session, pytest.raises(BadInputError) as caught:
        thermo.reaction_thermo(session, "h-o2", [7000.0])
    assert caught.value.argument == "temperatures"
    assert "outside 200-6000 K" in str(caught.value)


@pytest.mark.parametrize(
    ("preset", "delta_n", "text", "factor"),
    [
        ("combustion", -1, "cm3/mol", 1e-6),
        ("combustion", 1, "mol/cm3", 1e6),
        ("atmospheric", -1, "cm3/molecule", 1e-6 * constants.N_A),
        ("atmospheric", 2, "molecule2/cm6", (1e6 / constants.N_A) ** 2),
        ("si", -2, "m6/mol2", 1.0),
        ("si", 0, "1", 1.0),
    ],
)
def test_kc_units_follow_from_delta_n(preset, delta_n, text, factor):
    """Kc in (concentration)^Δn: the factors are worked out by hand (1 cm3 = 1e-6 m3;
    N_A from scipy.constants)."""
    unit, to_si = thermo.kc_unit(preset, delta_n)
    assert unit == text
    assert to_si == pytest.approx(factor, rel=1e-12)
    if delta_n:
        assert parse_unit(unit).to_si == pytest.approx(factor, rel=1e-12)
