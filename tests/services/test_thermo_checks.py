"""The checks thermochemistry makes possible, called through the check service.

Thermochemistry: polynomials ratebank fitted to the NIST-JANAF tables (helpers/thermo.py).
Rate numbers are synthetic, chosen to be physical (the clean store) or deliberately not.
"""

from __future__ import annotations

import math

import pytest
from helpers.cli import run, write
from helpers.thermo import thermo_store
from scipy import constants

from ratebank.science.thermo import fit_reverse_modified_arrhenius
from ratebank.services import checks, reverse, thermo
from ratebank.services.store_access import open_store
from ratebank.store import queries

REACTIONS = """key,equation,class,reverse
oh-h2,OH + H2 -> H2O + H,abstraction,
h-h2o,H + H2O -> OH + H2,abstraction,
"""
FORWARD = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
oh-h2,2.2e8,1.5,14.4,kJ/mol,cm3/mol/s,300,2500,1.3,synthetic
"""
THERMO_CODES = set(checks.CHECK_CODES[-5:])


def _open(db):
    return open_store(db, author="tester")


def _check(db, **options):
    handle = _open(db)
    try:
        with handle.session() as session:
            return checks.check_store(session, **options)
    finally:
        handle.close()


def _consistent_reverse(db) -> str:
    """The expression of H + H2O -> OH + H2 that detailed balance gives from oh-h2's, as an
    expressions file row (SI units)."""
    handle = _open(db)
    try:
        with handle.session() as session:
            (inputs,), _ = (
                list(d.values())
                for d in thermo.reaction_thermo_inputs(
                    session, [queries.find_reaction(session, "oh-h2")]
                )
            )
    finally:
        handle.close()
    fit = fit_reverse_modified_arrhenius(
        2.2e8 * 1e-6, 1.5, 14.4e3, inputs.nu, inputs.polynomials, 300.0, 2500.0
    )
    return f"h-h2o,{fit.A!r},{fit.n!r},{fit.Ea!r},J/mol,m3/mol/s,300,2500,1.3,detailed balance\n"


def _add_expression(db, folder, row: str) -> None:
    header = FORWARD.splitlines()[0] + "\n"
    path = write(folder / "more.csv", header + row)
    assert run(db, "expressions", "import", str(path)).exit_code == 0


@pytest.fixture
def consistent(db_url, tmp_path):
    """oh-h2 and h-h2o stored in both directions, their expressions consistent with Kc."""
    db = thermo_store(db_url, tmp_path, REACTIONS, FORWARD)
    _add_expression(db, tmp_path, _consistent_reverse(db))
    return db


def test_a_clean_store_stays_quiet(consistent):
    """Both directions agree with Kc, Ea is above ΔrH° of the endothermic direction, the
    JANAF-fitted polynomials are continuous at T_mid: nothing is flagged, all is checked."""
    report = _check(consistent)
    assert report.flags == [] and report.unchecked == []
    assert report.clean


def test_the_endothermic_check_fires_on_an_impossible_expression(consistent, tmp_path):
    """H + H2O -> OH + H2 is endothermic (ΔrH° about +63 kJ/mol, NIST-JANAF); an Ea of
    20 kJ/mol is impossible. The flag's value is ΔrH° - Ea at T_ref = (300 K 2000 K)^1/2."""
    _add_expression(consistent, tmp_path, "h-h2o,1e13,0,20,kJ/mol,cm3/mol/s,300,2000,3,wrong\n")
    report = _check(consistent, ignore=["directions-disagree"])
    (flag,) = report.flags
    assert flag.code == "ea-below-reaction-enthalpy" and flag.key == "h-h2o"
    T_ref = (300.0 * 2000.0) ** 0.5
    handle = _open(consistent)
    try:
        with handle.session() as session:
            (row,) = thermo.reaction_thermo(session, "h-h2o", [T_ref]).rows
    finally:
        handle.close()
    assert flag.temperature == pytest.approx(T_ref, rel=1e-12)
    assert flag.value == pytest.approx(row.delta_H - 20e3, rel=1e-9)
    assert 60e3 < row.delta_H < 66e3


def test_directions_that_disagree_with_kc_are_flagged(db_url, tmp_path):
    """The reverse expression ten times too fast: k_f/k_r is a factor 10 from Kc, beyond the
    combined uncertainty exp((2 ln² 1.3)^1/2) = 1.45."""
    db = thermo_store(db_url, tmp_path, REACTIONS, FORWARD)
    row = _consistent_reverse(db).split(",")
    row[1] = repr(float(row[1]) * 10)
    _add_expression(db, tmp_path, ",".join(row))
    (flag,) = _check(db).flags
    assert (flag.code, flag.key) == ("directions-disagree", "oh-h2")
    assert flag.value == pytest.approx(10.0, rel=0.1)
    assert "combined uncertainty (a factor 1.45)" in flag.message


def test_a_reversible_reaction_without_thermochemistry_is_flagged(db_url, tmp_path):
    reactions = REACTIONS.replace(
        "oh-h2,OH + H2 -> H2O + H,abstraction,",
        "oh-h2,OH + H2 -> H2O + H,abstraction,detailed-balance",
    )
    db = thermo_store(db_url, tmp_path, reactions, FORWARD, species=("OH", "H2"))
    flags = [f for f in _check(db).flags if f.code in THERMO_CODES]
    (flag,) = flags
    assert (flag.code, flag.key) == ("reverse-without-thermochemistry", "oh-h2")
    assert "species H, H2O lack thermochemistry" in flag.message


def test_a_reverse_above_the_collision_limit_is_flagged(db_url, tmp_path):
    """k_f = 1e16 exp(-65 kJ/mol / RT) cm3/mol/s for H + H2O -> OH + H2 is physical, but its
    reverse k_f / Kc is over 1e15 cm3/mol/s near room temperature, above the OH + H2
    collision rate (about 3e14 cm3/mol/s)."""
    reactions = REACTIONS.replace(
        "h-h2o,H + H2O -> OH + H2,abstraction,",
        "h-h2o,H + H2O -> OH + H2,abstraction,detailed-balance",
    )
    expressions = FORWARD.splitlines()[0] + "\nh-h2o,1e16,0,65,kJ/mol,cm3/mol/s,300,2000,3,x\n"
    db = thermo_store(db_url, tmp_path, reactions, expressions)
    flags = [f for f in _check(db).flags if f.code in THERMO_CODES]
    (flag,) = flags
    assert (flag.code, flag.key) == ("reverse-above-collision-limit", "h-h2o")
    assert "the reverse (H2 + OH -> H + H2O) of expression" in flag.message
    # the ratio by hand: k_r from the reverse-rate service over the hard-sphere rate
    # z = pi ((d_OH + d_H2)/2)^2 (8 k_B T / (pi mu))^1/2 N_A (Laidler 1987, ch. 3), diameters
    # of helpers/thermo.py, masses from IUPAC atomic weights (H 1.008, O 15.999)
    T = flag.temperature
    handle = _open(db)
    try:
        with handle.session() as session:
            (rate,) = reverse.reverse_rate(session, "h-h2o", [T]).rows
    finally:
        handle.close()
    mu = (17.007 * 2.016 / (17.007 + 2.016)) * 1e-3 / constants.N_A
    sigma = math.pi * ((3.147e-10 + 2.827e-10) / 2) ** 2
    z = sigma * math.sqrt(8 * constants.k * T / (math.pi * mu)) * constants.N_A
    assert flag.value == pytest.approx(rate.k_reverse_si / z, rel=1e-3)
    assert flag.value > 1.0 and 300.0 <= T <= 2000.0


def test_polynomials_that_jump_at_their_midpoint_are_flagged(db_url, tmp_path):
    """a1 of the high range 0.01 above the low range's: Cp jumps by 0.01 R = 0.083 J/(mol K)
    and H by 0.01 R T_mid = 83 J/mol at T_mid = 1000 K (worked by hand)."""
    db = thermo_store(db_url, tmp_path, REACTIONS, FORWARD)
    low = [2.5, 0, 0, 0, 0, 25473.66, -0.446682853]
    high = [2.51, 0, 0, 0, 0, 25473.66, -0.446682853]
    header = ",".join(
        ["species", "T_low_K", "T_mid_K", "T_high_K"]
        + [f"low_{i}" for i in range(1, 8)]
        + [f"high_{i}" for i in range(1, 8)]
    )
    text = header + "\nH,200,1000,6000," + ",".join(map(str, low + high)) + "\n"
    path = write(tmp_path / "jump.csv", text)
    assert run(db, "thermo", "import", str(path), "--replace").exit_code == 0
    flags = [f for f in _check(db).flags if f.code == "thermo-midpoint-jump"]
    (flag,) = flags
    assert flag.key == "species H"
    assert flag.value == pytest.approx(0.01 * 8.314462618 * 1000.0, rel=1e-9)
    assert "H° by 83.1 J/mol" in flag.message


def test_both_directions_in_different_batches_are_reported_once(db_url, tmp_path, monkeypatch):
    """Checked a reaction at a time, the pair stored in both directions is still reported once,
    under the reaction stored first, as when the whole store is checked at once."""
    db = thermo_store(db_url, tmp_path, REACTIONS, FORWARD)
    row = _consistent_reverse(db).split(",")
    row[1] = repr(float(row[1]) * 10)
    _add_expression(db, tmp_path, ",".join(row))
    whole = _check(db)
    monkeypatch.setattr(checks, "BATCH", 1)
    batched = _check(db)
    assert batched == whole
    assert [(f.code, f.key) for f in batched.flags] == [("directions-disagree", "oh-h2")]
