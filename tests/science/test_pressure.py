"""Tests of ratebank.science.pressure: pressure units, bath-gas and third-body concentrations.

References: scipy.constants (CODATA; bar, atm, torr, k, N_A, R); NIST SP 811 (2008) B.8 for the
printed Torr; REFERENCE-CHECKS.md sections 1 and 7 for number densities (computed there).
"""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
import scipy.constants as sc

from ratebank.errors import ScienceInputError, UnitError
from ratebank.science import pressure
from ratebank.science.pressure import (
    MIXTURE_NORMALISE_TOLERANCE,
    PRESSURE_UNITS,
    bath_gas_concentration,
    bath_gas_number_density,
    collision_efficiencies,
    effective_third_body_concentration,
    parse_mixture,
    pressure_from_si,
    pressure_to_si,
    pressure_unit_factor,
)

# (unit, expected factor to Pa, source)
UNIT_FACTORS = [
    ("Pa", 1.0, "SI"),
    ("hPa", 100.0, "SI prefix hecto"),
    ("kPa", sc.kilo, "SI prefix kilo (scipy.constants.kilo)"),
    ("MPa", sc.mega, "SI prefix mega (scipy.constants.mega)"),
    ("mbar", sc.bar * sc.milli, "scipy.constants.bar x milli"),
    ("bar", sc.bar, "scipy.constants.bar (1e5 Pa exactly)"),
    ("atm", sc.atm, "scipy.constants.atm (101325 Pa exactly)"),
    ("Torr", sc.torr, "scipy.constants.torr (atm/760 exactly)"),
]


@pytest.mark.parametrize(("unit", "expected", "source"), UNIT_FACTORS)
def test_pressure_unit_factors_are_exact(unit, expected, source):
    assert pressure_unit_factor(unit) == expected


def test_the_table_holds_exactly_the_tested_units():
    assert set(PRESSURE_UNITS) == {unit for unit, _, _ in UNIT_FACTORS}


def test_torr_is_the_printed_nist_value():
    # NIST SP 811 (2008) B.8: 1 torr = 1.333 224 E+02 Pa (7 figures printed).
    assert pressure_unit_factor("Torr") == pytest.approx(133.3224, rel=1e-6)
    assert pressure_unit_factor("Torr") == 101325.0 / 760.0


@pytest.mark.parametrize("unit", list(PRESSURE_UNITS))
def test_conversions_round_trip_and_vectorise(unit):
    values = np.array([[0.0, 1.0], [2.5, 760.0]])
    pascal = pressure_to_si(values, unit)
    assert pascal.shape == (2, 2)
    np.testing.assert_allclose(pressure_from_si(pascal, unit), values, rtol=1e-15)


def test_one_atmosphere_in_other_units():
    # scipy.constants: 1 atm = 1.01325 bar = 760 Torr = 101.325 kPa.
    assert float(pressure_from_si(sc.atm, "bar")) == pytest.approx(1.01325, rel=1e-15)
    assert float(pressure_from_si(sc.atm, "Torr")) == pytest.approx(760.0, rel=1e-15)
    assert float(pressure_from_si(sc.atm, "kPa")) == pytest.approx(101.325, rel=1e-15)


@pytest.mark.parametrize(
    ("unit", "match"),
    [
        ("psi", r"unknown pressure unit 'psi'; accepted pressure units are Pa, hPa, kPa, MPa"),
        ("mmHg", "accepted pressure units are .*Torr"),
        ("torr", "did you mean 'Torr'\\? unit symbols are case-sensitive"),
        ("mPa", "did you mean 'MPa'"),
        ("", "unknown pressure unit ''"),
    ],
)
def test_unknown_pressure_units_are_refused_with_the_accepted_list(unit, match):
    with pytest.raises(UnitError, match=match):
        pressure_unit_factor(unit)


def test_a_unit_must_be_text():
    with pytest.raises(UnitError, match="must be given as text"):
        pressure_unit_factor(1.0)


# --- bath gas ---------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("p", "T", "expected", "rel", "source"),
    [
        (101325.0, 298.15, 2.46149e25, 1e-5, "REFERENCE-CHECKS 7 (computed, 6 figures printed)"),
        (1.0e5, 298.15, 2.42930e25, 1e-5, "REFERENCE-CHECKS 7 (computed, 6 figures printed)"),
        (101325.0, 273.15, 2.686780111798444e25, 1e-12, "Loschmidt constant, CODATA 2018 (RC 1)"),
    ],
)
def test_number_density_matches_reference_values(p, T, expected, rel, source):
    assert bath_gas_number_density(p, T) == pytest.approx(expected, rel=rel)


def test_concentration_and_number_density_agree_with_scipy_and_vectorise():
    p = np.array([1.0, 1e3, 1e5])[None, :]
    T = np.array([200.0, 298.15, 1500.0])[:, None]
    M = bath_gas_concentration(p, T)
    assert M.shape == (3, 3)
    np.testing.assert_allclose(M, p / (sc.R * T), rtol=1e-15)
    np.testing.assert_allclose(bath_gas_number_density(p, T), p / (sc.k * T), rtol=1e-15)
    np.testing.assert_allclose(bath_gas_number_density(p, T) / sc.N_A, M, rtol=1e-14)


def test_molar_volume_at_stp():
    # REFERENCE-CHECKS 1: ideal-gas molar volume 22.413969545014 dm3 mol-1 at 273.15 K, 1 atm.
    assert 1e3 / bath_gas_concentration(101325.0, 273.15) == pytest.approx(
        22.413969545014, rel=1e-12
    )


def test_zero_pressure_gives_zero_concentration():
    assert bath_gas_concentration(0.0, 300.0) == 0.0


@pytest.mark.parametrize(
    ("p", "T", "match"),
    [
        (-1.0, 300.0, "pressure p must be finite and not negative"),
        (np.inf, 300.0, "pressure p must be finite and not negative"),
        (1e5, 0.0, "T must be positive and finite"),
        (1e5, np.nan, "T must be positive and finite"),
    ],
)
def test_bath_gas_refuses_unphysical_inputs(p, T, match):
    with pytest.raises(ScienceInputError, match=match):
        bath_gas_concentration(p, T)
    with pytest.raises(ScienceInputError, match=match):
        bath_gas_number_density(p, T)


# --- effective third-body concentration -----------------------------------------------------


def test_effective_concentration_by_hand():
    # [M]_eff = [M] sum eps_i x_i (Troe 1979): 40 (0.78 + 0.21 + 6 x 0.01) = 42.
    assert effective_third_body_concentration(40.0, [0.78, 0.21, 0.01], [1, 1, 6]) == (
        pytest.approx(42.0, rel=1e-15)
    )


def test_effective_concentration_defaults_to_unit_efficiencies():
    assert effective_third_body_concentration(40.0, [0.5, 0.5]) == pytest.approx(40.0, rel=1e-15)


def test_effective_concentration_vectorises_over_a_grid_and_over_mixtures():
    M = bath_gas_concentration(
        np.array([1e3, 1e5])[None, :], np.array([250.0, 300.0, 350.0])[:, None]
    )
    x = np.array([0.78, 0.21, 0.01])
    eps = np.array([1.0, 0.8, 5.0])
    one_mixture = effective_third_body_concentration(M, x, eps)
    assert one_mixture.shape == (3, 2)
    np.testing.assert_allclose(one_mixture, M * (0.78 + 0.21 * 0.8 + 0.01 * 5.0), rtol=1e-15)
    # a different mixture at each grid point: shape (3, 2, n_species)
    mixtures = np.broadcast_to(x, (3, 2, 3)).copy()
    mixtures[0, 0] = [0.0, 0.0, 1.0]
    many = effective_third_body_concentration(M, mixtures, eps)
    assert many[0, 0] == pytest.approx(5.0 * M[0, 0], rel=1e-15)
    np.testing.assert_allclose(many[1:], one_mixture[1:], rtol=1e-15)


@pytest.mark.parametrize(
    ("M", "x", "eps", "match"),
    [
        (-1.0, [1.0], None, "M must be finite and not negative"),
        (1.0, [-0.1, 1.1], None, "Mole fractions must be finite and not negative"),
        (1.0, [], None, "needs at least one collider"),
        (1.0, [0.5, 0.5], [1.0, -2.0], "efficiencies must be finite and not negative"),
        (1.0, [0.5, 0.5], [1.0, 2.0, 3.0], "There are 2 colliders but 3 efficiencies"),
    ],
)
def test_effective_concentration_refuses_bad_inputs(M, x, eps, match):
    with pytest.raises(ScienceInputError, match=match):
        effective_third_body_concentration(M, x, eps)


# --- mixtures -------------------------------------------------------------------------------


def test_parse_mixture_keeps_order_and_exact_fractions():
    mixture = parse_mixture("N2:0.78,O2:0.21,H2O:0.01")
    assert mixture.names == ("N2", "O2", "H2O")
    np.testing.assert_allclose(mixture.fractions, [0.78, 0.21, 0.01], rtol=1e-15)
    assert math.fsum(mixture.fractions) == pytest.approx(1.0, abs=1e-15)


def test_parse_mixture_normalises_rounding_within_one_percent():
    # dry air to the usual rounding sums to 0.9993
    mixture = parse_mixture(" N2 : 0.78 , O2:0.21, Ar:0.0093 ")
    assert mixture.names == ("N2", "O2", "Ar")
    np.testing.assert_allclose(mixture.fractions, np.array([0.78, 0.21, 0.0093]) / 0.9993)
    assert parse_mixture("Ar:1.0099").fractions.tolist() == [1.0]
    assert MIXTURE_NORMALISE_TOLERANCE == 0.01
    # exactly 1 % off is inside the band, though 0.78 + 0.21 is 0.99000000000000010 in floats
    np.testing.assert_allclose(
        parse_mixture("N2:0.78,O2:0.21").fractions, [0.78 / 0.99, 0.21 / 0.99]
    )


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("N2:0.7,O2:0.2", "the mole fractions sum to 0.9; they must sum to 1"),
        ("N2:0.8,O2:0.3", "the mole fractions sum to 1.1"),
        ("N2:-0.1,O2:1.1", "the mole fraction of N2 is -0.1; it must be a finite number"),
        ("N2:abc", "the mole fraction of N2 is 'abc', which is not a number"),
        ("N2:nan", "the mole fraction of N2 is nan"),
        ("N2:inf", "the mole fraction of N2 is inf"),
        ("N2 0.78,O2:0.22", "mixture entry 1 'N2 0.78' is not of the form name:fraction"),
        (":1.0", "mixture entry 1 ':1.0' is not of the form name:fraction"),
        ("N2:0.5,N2:0.5", "N2 appears twice in the mixture"),
        ("N2:0.5,,O2:0.5", "mixture entry 2 '' is not of the form"),
        ("   ", "no mixture given"),
    ],
)
def test_parse_mixture_refuses_bad_text(text, match):
    with pytest.raises(ScienceInputError, match=match):
        parse_mixture(text)


def test_collision_efficiencies_default_to_one_and_ignore_absent_species():
    eps = collision_efficiencies(("N2", "O2", "H2O"), {"H2O": 6.0, "CO2": 2.0})
    assert eps.tolist() == [1.0, 1.0, 6.0]
    assert collision_efficiencies(("N2",)).tolist() == [1.0]


def test_mixture_and_efficiencies_give_the_effective_concentration():
    mixture = parse_mixture("N2:0.78,O2:0.21,H2O:0.01")
    eps = collision_efficiencies(mixture.names, {"H2O": 6.0})
    M = bath_gas_concentration(1e5, 298.15)
    assert effective_third_body_concentration(M, mixture.fractions, eps) == pytest.approx(
        M * 1.05, rel=1e-14
    )


@pytest.mark.parametrize("value", [-1.0, float("nan"), "6"])
def test_collision_efficiencies_refuse_bad_values(value):
    with pytest.raises(ScienceInputError, match="the collision efficiency of H2O is"):
        collision_efficiencies(("H2O",), {"H2O": value})


def test_errors_are_value_errors_for_notebook_users():
    assert issubclass(UnitError, ValueError) and issubclass(ScienceInputError, ValueError)


def test_doctests():
    result = doctest.testmod(pressure, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
