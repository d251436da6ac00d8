"""Reverse rates by detailed balance through the services, and the reverse in the export.

Kc comes from polynomials ratebank fitted to the NIST-JANAF tables (helpers/thermo.py);
the relations checked are detailed balance itself, k_r Kc = k_f (Laidler 1987, ch. 1),
and the exported row's recorded deviation, re-evaluated here on a grid of our own. Rate
numbers are synthetic.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from helpers.thermo import thermo_store
from scipy import constants

from ratebank.errors import BadInputError, NotFoundError
from ratebank.io.export import export_mechanism
from ratebank.services import mechanism, rates, reverse, thermo
from ratebank.services.store_access import open_store

R = constants.R
REACTIONS = """key,equation,class,reverse
h-o2,H + O2 -> OH + O,branching,detailed-balance
oh-h2,OH + H2 -> H2O + H,abstraction,detailed-balance
h-o2-m,H + O2 + M -> HO2 + M,recombination,detailed-balance
o-h2,O + H2 -> OH + H,abstraction,
"""
EXPRESSIONS = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
h-o2,3.5e15,-0.4,72,kJ/mol,cm3/mol/s,300,2500,1.5,synthetic
oh-h2,2.2e8,1.5,14.4,kJ/mol,cm3/mol/s,300,2500,1.3,synthetic
h-o2-m,5e17,-0.8,0,kJ/mol,cm6/mol2/s,300,2000,2,synthetic
o-h2,5.0e4,2.67,26.3,kJ/mol,cm3/mol/s,300,2500,1.4,synthetic
"""
TWENTY = np.geomspace(300.0, 2500.0, 20).tolist()


@pytest.fixture
def store(db_url, tmp_path):
    handle = open_store(thermo_store(db_url, tmp_path, REACTIONS, EXPRESSIONS), author="tester")
    yield handle
    handle.close()


@pytest.mark.parametrize("key", ["h-o2", "oh-h2", "h-o2-m", "o-h2"])
def test_reverse_rate_times_kc_is_the_forward_rate(store, key):
    """k_r Kc = k_f to 1e-12 at 20 temperatures, k_f being what `rate` gives (SI)."""
    temperatures = [t for t in TWENTY if t <= 2000.0] if key == "h-o2-m" else TWENTY
    with store.session() as session:
        found = reverse.reverse_rate(session, key, temperatures, preset="si")
        forward = rates.rate(session, key, temperatures, preset="si")
        kc = thermo.reaction_thermo(session, key, temperatures)
    assert len(found.rows) == len(temperatures)
    for row, k_forward, kc_row in zip(found.rows, forward.rows, kc.rows, strict=True):
        assert row.k_forward_si == pytest.approx(k_forward.k, rel=1e-12)
        assert row.Kc_si == pytest.approx(kc_row.Kc, rel=1e-12)
        assert row.k_reverse_si * row.Kc_si == pytest.approx(row.k_forward_si, rel=1e-12)
        assert row.k_reverse == pytest.approx(row.k_reverse_si, rel=1e-12)  # si preset
        assert row.Kc == pytest.approx(row.Kc_si, rel=1e-12)


def test_reverse_order_and_units_follow_from_delta_n(store):
    """H + O2 + M -> HO2 + M is third order (M counted); its reverse HO2 + M is second order,
    in cm3/mol/s, and Kc is in cm3/mol (Δn = -1)."""
    with store.session() as session:
        found = reverse.reverse_rate(session, "h-o2-m", [1000.0])
    assert (found.forward_order, found.order, found.delta_n) == (3, 2, -1)
    assert (found.k_units, found.Kc_units) == ("cm3/mol/s", "cm3/mol")
    assert found.reverse_equation == "HO2 + M -> H + O2 + M"
    (row,) = found.rows
    assert row.k_reverse == pytest.approx(row.k_reverse_si / 1e-6, rel=1e-12)
    assert row.Kc == pytest.approx(row.Kc_si / 1e-6, rel=1e-12)
    assert found.declared == "detailed-balance"


def test_a_reverse_needs_thermochemistry_of_every_species(db_url, tmp_path):
    db = thermo_store(db_url, tmp_path, REACTIONS, EXPRESSIONS, species=("H", "O2", "OH"))
    handle = open_store(db)
    try:
        with handle.session() as session, pytest.raises(NotFoundError, match="species O has"):
            reverse.reverse_rate(session, "h-o2", [1000.0])
        with handle.session() as session, pytest.raises(BadInputError) as caught:
            mechanism.mechanism_table(session, units=mechanism.export_units("combustion"))
    finally:
        handle.close()
    message = str(caught.value)
    assert message.startswith("3 reversible reaction(s) cannot be exported with their reverse")
    assert "reaction 'h-o2' has no thermochemistry: species O has none" in message
    assert "reaction 'oh-h2' has no thermochemistry: species H2, H2O have none" in message


def _row_k(row, T):
    """k of an exported row in SI, from its own units (by hand: cm3/mol/s is 1e-6 m3/mol/s;
    kJ/mol is 1e3 J/mol)."""
    factor = {"cm3/mol/s": 1e-6, "cm6/mol2/s": 1e-12, "s-1": 1.0}[row.k_units]
    return row.A * factor * T**row.n * np.exp(-row.Ea * 1e3 / (R * T))


@pytest.mark.parametrize("key", ["h-o2", "oh-h2", "h-o2-m"])
def test_the_fitted_reverse_row_stays_within_its_recorded_deviation(store, key):
    with store.session() as session:
        table = mechanism.mechanism_table(
            session, units=mechanism.export_units("combustion"), reverse_as_fit=True
        )
        rows = {row.key: row for row in table.rows}
        forward, backward = rows[key], rows[key + ":reverse"]
        T = np.linspace(forward.T_min_K, forward.T_max_K, 997)  # not the fit's 1/T grid
        Kc = np.array([r.Kc for r in thermo.reaction_thermo(session, key, T.tolist()).rows])
    expected = _row_k(forward, T) / Kc
    deviation = np.max(np.abs(_row_k(backward, T) / expected - 1))
    assert 0 < deviation <= backward.reverse_max_relative_deviation * (1 + 1e-6) + 1e-12
    assert (forward.reverse, backward.reverse, backward.origin) == (
        "fitted-row",
        "none",
        "detailed-balance-fit",
    )
    assert (backward.T_min_K, backward.T_max_K) == (forward.T_min_K, forward.T_max_K)
    assert backward.uncertainty_factor == pytest.approx(
        forward.uncertainty_factor * (1 + backward.reverse_max_relative_deviation), rel=1e-12
    )
    assert rows["o-h2"].reverse == "none" and "o-h2:reverse" not in rows


def test_the_export_leaves_the_reverse_to_the_modeller_and_says_how(store, tmp_path):
    """Without reverse rows the table says detailed-balance and the descriptor states the
    rule, the standard state and the species' polynomials; the descriptor is valid Table
    Schema (frictionless package, the reference implementation), with reverse rows too."""
    import frictionless

    with store.session(write=True) as session:
        plain = export_mechanism(session, tmp_path / "m")
        fitted = export_mechanism(session, tmp_path / "f", reverse_as_fit=True)
    rows = {row.key: row for row in plain.table.rows}
    assert {k: r.reverse for k, r in rows.items()} == {
        "h-o2": "detailed-balance",
        "oh-h2": "detailed-balance",
        "h-o2-m": "detailed-balance",
        "o-h2": "none",
    }
    block = json.loads(plain.descriptor_path.read_text())["ratebank"]["reverse"]
    assert block["rule"] == "k_r(T) = k_f(T) / Kc(T)"
    assert "1 bar" in block["standard_state"] and block["standard_pressure_Pa"] == 1e5
    assert sorted(block["reversible"]) == ["h-o2", "h-o2-m", "oh-h2"]
    assert sorted(block["thermochemistry"]) == ["H", "H2", "H2O", "HO2", "O", "O2", "OH"]
    assert len(block["thermochemistry"]["OH"]["low"]) == 7
    for result in (plain, fitted):
        report = frictionless.validate(str(result.descriptor_path))
        assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "note"])
    assert len(fitted.table.rows) == 7
