"""``rate`` of every form, at a pressure of a bath gas or a mixture, against the published
rate laws written out here independently.

Sources: Lindemann (1922) and Troe's broadening as published by Gilbert, Luther & Troe,
Ber. Bunsenges. Phys. Chem. 87, 169 (1983): Fcent = (1-a) exp(-T/T***) + a exp(-T/T*) +
exp(-T**/T), c = -0.4 - 0.67 log Fcent, N = 0.75 - 1.27 log Fcent, d = 0.14,
log F = log Fcent / (1 + ((log Pr + c)/(N - d (log Pr + c)))^2); the evaluation panels'
fixed-Fc form log F = log Fc / (1 + (log Pr / N)^2), N = 0.75 - 1.27 log Fc (Atkinson et al.,
Atmos. Chem. Phys. 4, 1461, 2004). Constants from scipy.constants (CODATA).
"""

from __future__ import annotations

import math

import pytest
from helpers.cli import csv_rows
from helpers.data import (
    FORMS_EFFICIENCIES_CSV,
    FORMS_EXPRESSIONS_CSV,
)
from scipy import constants

from ratebank.errors import BadInputError, UnitError
from ratebank.services.efficiencies import import_efficiencies
from ratebank.services.expressions import import_expressions
from ratebank.services.rates import rate

R = constants.R
N_A = constants.N_A
TEMPERATURES = [300.0, 800.0, 1500.0]
PRESSURES_BAR = [0.01, 1.0, 100.0]


@pytest.fixture
def rated_store(forms_store):
    with forms_store.session(write=True) as session:
        import_expressions(session, csv_rows(FORMS_EXPRESSIONS_CSV), source="x.csv")
        import_efficiencies(session, csv_rows(FORMS_EFFICIENCIES_CSV), source="e.csv")
    return forms_store


def _arrhenius(A, n, Ea_J, T):
    return A * T**n * math.exp(-Ea_J / (R * T))


def _troe_F(Pr, T, a, T3, T1, T2):
    fcent = (1 - a) * math.exp(-T / T3) + a * math.exp(-T / T1) + math.exp(-T2 / T)
    c = -0.4 - 0.67 * math.log10(fcent)
    N = 0.75 - 1.27 * math.log10(fcent)
    x = math.log10(Pr) + c
    return 10 ** (math.log10(fcent) / (1 + (x / (N - 0.14 * x)) ** 2))


def _fixed_F(Pr, Fc):
    N = 0.75 - 1.27 * math.log10(Fc)
    return 10 ** (math.log10(Fc) / (1 + (math.log10(Pr) / N) ** 2))


@pytest.mark.parametrize("T", TEMPERATURES)
@pytest.mark.parametrize("p_bar", PRESSURES_BAR)
def test_troe_falloff_in_a_mixture_matches_the_published_form(rated_store, T, p_bar):
    # H + O2 + M: k_inf 4.65e12 T^0.44 cm3/mol/s, k0 6.37e20 T^-1.72 exp(-2.19 kJ/mol / RT)
    # cm6/mol2/s, Troe a 0.5, T*** 30, T* 9e4, T** 9e4; colliders N2 (1), H2O (12), Ar (0.5)
    with rated_store.session() as session:
        report = rate(
            session, "h-o2-m", [T], pressure=p_bar, bath=None,
            mixture="N2:0.7,H2O:0.1,Ar:0.2", preset="combustion",
        )  # fmt: skip
    M = p_bar * 1e5 / (R * T) * 1e-6 * (0.7 * 1 + 0.1 * 12 + 0.2 * 0.5)  # mol/cm3
    k_inf = _arrhenius(4.65e12, 0.44, 0.0, T)
    k0 = _arrhenius(6.37e20, -1.72, 2190.0, T)
    Pr = k0 * M / k_inf
    F = _troe_F(Pr, T, 0.5, 30.0, 9e4, 9e4)
    row = report.rows[0]
    assert report.k_units == "cm3/mol/s" and report.form == "falloff"
    assert row.k == pytest.approx(k_inf * Pr / (1 + Pr) * F, rel=1e-12)
    assert (row.k0, row.k_inf) == (pytest.approx(k0, rel=1e-12), pytest.approx(k_inf, rel=1e-12))
    assert (row.Pr, row.F) == (pytest.approx(Pr, rel=1e-12), pytest.approx(F, rel=1e-12))
    assert [c[2] for c in report.conditions.colliders] == [1.0, 12.0, 0.5]


@pytest.mark.parametrize("T", [700.0, 1000.0])
@pytest.mark.parametrize(("p", "unit", "p_pa"), [(760.0, "Torr", 101325.0), (5.0, "kPa", 5e3)])
def test_unimolecular_falloff_with_fixed_fc_in_a_bath_gas(rated_store, T, p, unit, p_pa):
    with rated_store.session() as session:
        report = rate(
            session, "c2h5-m", [T], pressure=p, pressure_units=unit, bath="N2",
            k_units="s-1",
        )  # fmt: skip
    M = p_pa / (R * T) * 1e-6 * N_A  # molecule/cm3 (N2 counts 1)
    k_inf = _arrhenius(1.1e13, 0.0, 167e3, T)
    k0 = _arrhenius(1.7e-6, 0.0, 139e3, T)
    Pr = k0 * M / k_inf
    assert report.rows[0].k == pytest.approx(k_inf * Pr / (1 + Pr) * _fixed_F(Pr, 0.6), rel=1e-12)


def test_third_body_gives_its_coefficient_alone_and_k0_m_eff_with_a_pressure(rated_store):
    with rated_store.session() as session:
        plain = rate(session, "oh-oh-m", [300.0], k_units="cm6/molecule2/s")
        wet = rate(session, "oh-oh-m", [300.0], pressure=1.0, mixture="N2:0.9,H2O:0.1",
                   k_units="cm3/molecule/s")  # fmt: skip
    k0 = 6.9e-31 * 300.0**-0.8
    M_eff = 1e5 / (constants.k * 300.0) * 1e-6 * (0.9 + 0.1 * 6)  # molecule/cm3
    assert plain.rows[0].k == pytest.approx(k0, rel=1e-12)
    assert plain.order == 3 and wet.order == 2
    assert wet.rows[0].k == pytest.approx(k0 * M_eff, rel=1e-12)


def test_sum_adds_its_terms_and_ignores_the_pressure(rated_store):
    with rated_store.session() as session:
        alone = rate(session, "oh-co", [300.0, 1000.0], k_units="cm3/molecule/s")
        at_p = rate(session, "oh-co", [300.0, 1000.0], k_units="cm3/molecule/s", pressure=2.0)
    for T, row in zip([300.0, 1000.0], alone.rows, strict=True):
        assert row.k == pytest.approx(1.5e-13 + 2.0e-12 * math.exp(-1500.0 / T), rel=1e-12)
    assert [r.k for r in at_p.rows] == [r.k for r in alone.rows]


@pytest.mark.parametrize(
    ("kwargs", "error", "message"),
    [
        ({}, BadInputError, "depends on the pressure; give a pressure"),
        ({"pressure": 1.0, "bath": "N2", "mixture": "N2:1"}, BadInputError, "not both"),
        ({"pressure": -1.0}, BadInputError, "must be above 0"),
        ({"pressure": 1.0, "pressure_units": "psi"}, UnitError, "unknown pressure unit 'psi'"),
        ({"pressure": 1.0, "mixture": "N2:0.5"}, BadInputError, "sum to 0.5"),
        ({"bath": "N2"}, BadInputError, "depends on the pressure"),
    ],
)
def test_bad_rate_requests_say_what_is_wrong(rated_store, kwargs, error, message):
    with rated_store.session() as session, pytest.raises(error, match=message):
        rate(session, "h-o2-m", [300.0], **kwargs)


def test_a_bath_gas_without_a_pressure_is_refused_for_a_plain_reaction(rated_store):
    with rated_store.session() as session, pytest.raises(BadInputError, match="needs a pressure"):
        rate(session, "oh-co", [300.0], bath="N2")
