"""Tests of ratebank.science.thermo against the NIST-JANAF tables, scipy and hand computations."""

from __future__ import annotations

import csv
import doctest
import functools
import math
import re
from pathlib import Path

import janaf
import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad

from ratebank.errors import FitError, ScienceInputError
from ratebank.science import thermo
from ratebank.science.arrhenius import modified_arrhenius
from ratebank.science.thermo import (
    NasaPolynomials,
    equilibrium_constant_kc,
    fit_inputs_from_table,
    fit_nasa_polynomials,
    fit_reverse_modified_arrhenius,
    midpoint_jumps,
    reaction_thermochemistry,
    reduced_properties,
    reverse_rate_constant,
    standard_properties,
)

HERE = Path(__file__).parent
R = sc.R
P_STANDARD = 1.0e5  # NIST-JANAF: 0.1 MPa (confirmed by test_janaf_standard_pressure_is_one_bar)
CHECK_TEMPERATURES = [300.0, 500.0, 1000.0, 2000.0]

# Single-range polynomial with every coefficient in play (synthetic; roughly a triatomic gas).
SYNTHETIC = [3.2, 2.5e-3, -8.0e-7, 1.2e-10, -6.5e-15, -30000.0, 6.0]


def read_table(name: str) -> list[dict[str, str]]:
    with open(HERE / name, newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


SPECIES = read_table("ref_thermo_janaf_species.csv")
SPECIES_NAMES = [row["species"] for row in SPECIES]
REACTIONS = read_table("ref_thermo_reactions.csv")


@functools.cache
def janaf_columns(table: str) -> dict[str, np.ndarray]:
    """A NIST-JANAF table in SI: T [K], Cp and S [J/(mol K)], H-H298, dfH [J/mol], log Kf [-]."""
    frame = janaf.Table(table).df
    column = {name: frame[name].to_numpy().astype(float) for name in frame.columns[:-1]}
    return {
        "T": column["T(K)"],
        "Cp": column["Cp"],
        "S": column["S"],
        "H_minus_H298": 1000.0 * column["H-H(Tr)"],  # the table prints kJ/mol
        "dfH": 1000.0 * column["delta-f H"],
        "logKf": column["log Kf"],
    }


def janaf_row(table: str, T: float) -> dict[str, float]:
    columns = janaf_columns(table)
    (index,) = np.flatnonzero(np.isclose(columns["T"], T, rtol=0, atol=1e-6))
    return {name: float(values[index]) for name, values in columns.items()}


@pytest.mark.parametrize("row", SPECIES, ids=SPECIES_NAMES)
def test_janaf_tables_are_the_ones_named(row):
    assert janaf.Table(row["janaf_table"]).name == row["janaf_name"]


@functools.cache
def janaf_fit(species: str) -> thermo.NasaFit:
    row = next(row for row in SPECIES if row["species"] == species)
    columns = janaf_columns(row["janaf_table"])
    inputs = fit_inputs_from_table(
        columns["T"],
        columns["Cp"],
        columns["S"],
        columns["H_minus_H298"],
        columns["dfH"],
        T_min=float(row["T_min"]),
        T_max=float(row["T_max"]),
    )
    return fit_nasa_polynomials(*inputs)


@functools.cache
def janaf_species_set() -> NasaPolynomials:
    return NasaPolynomials.stack([janaf_fit(name).polynomials for name in SPECIES_NAMES])


def stoichiometry_vector(text: str) -> np.ndarray:
    nu = np.zeros(len(SPECIES_NAMES))
    for pair in text.split():
        name, value = pair.split(":")
        nu[SPECIES_NAMES.index(name)] = float(value)
    return nu


def single_range(coefficients, T_low=200.0, T_mid=1000.0, T_high=6000.0) -> NasaPolynomials:
    return NasaPolynomials(coefficients, coefficients, T_low, T_mid, T_high)


def monatomic(H298: float, S298: float) -> NasaPolynomials:
    """Cp = 5R/2 exactly, with H(298.15) = H298 and S(298.15) = S298."""
    a = [2.5, 0, 0, 0, 0, H298 / R - 2.5 * 298.15, S298 / R - 2.5 * math.log(298.15)]
    return single_range(a)


# --- the reference's own convention ----------------------------------------------


def test_janaf_standard_pressure_is_one_bar():
    # Sackur-Tetrode entropy of argon (no electronic degeneracy) at 298.15 K; M(Ar) =
    # 39.948 g/mol (IUPAC standard atomic weight, from memory); constants from scipy.constants.
    # At 1 bar it matches NIST-JANAF table Ar-001 (S = 154.845), at 1 atm it is 0.109 lower.
    T, mass = 298.15, 39.948e-3 / sc.N_A

    def sackur_tetrode(p):
        thermal = (2 * math.pi * mass * sc.k * T / sc.h**2) ** 1.5
        return R * (math.log(thermal * sc.k * T / p) + 2.5)

    tabulated = janaf_row("Ar-001", 298.15)["S"]
    assert sackur_tetrode(P_STANDARD) == pytest.approx(tabulated, abs=2e-3)
    assert abs(sackur_tetrode(sc.atm) - tabulated) > 0.1
    assert thermo.STANDARD_PRESSURE == P_STANDARD


# --- evaluation --------------------------------------------------------------------


def test_constant_heat_capacity_matches_the_argon_table():
    # NIST-JANAF table Ar-001: Cp = 20.786 = 5R/2 at every T; H - H(298.15) and S tabulated
    # to 0.001 kJ/mol and 0.001 J/(mol K). The polynomial is written by hand, not fitted.
    argon = monatomic(0.0, janaf_row("Ar-001", 298.15)["S"])
    columns = janaf_columns("Ar-001")
    rows = (columns["T"] >= 200.0) & (columns["T"] <= 6000.0)
    properties = standard_properties(argon, columns["T"][rows])
    np.testing.assert_allclose(properties.Cp, columns["Cp"][rows], atol=6e-4)
    # The table's H grows with its rounded Cp = 20.786, 1.6e-4 below 5R/2: 0.9 J/mol by 6000 K,
    # on top of the 0.5 J/mol printing.
    np.testing.assert_allclose(properties.H, columns["H_minus_H298"][rows], atol=1.5)
    np.testing.assert_allclose(properties.S, columns["S"][rows], atol=1.5e-3)


@pytest.mark.parametrize(("T1", "T2"), [(300.0, 900.0), (1100.0, 4500.0), (250.0, 5000.0)])
def test_enthalpy_and_entropy_integrate_the_heat_capacity(T1, T2):
    # H(T2) - H(T1) = integral of Cp dT, S(T2) - S(T1) = integral of Cp/T dT (scipy quad);
    # the last interval crosses T_mid, where the high range is a different polynomial.
    high = np.array(SYNTHETIC) * [1.05, 0.9, 1.0, 1.0, 1.0, 1.0, 1.0]
    polynomials = NasaPolynomials(SYNTHETIC, high, 200.0, 1000.0, 6000.0)

    def integral(function):
        pieces = [(T1, 1000.0), (1000.0, T2)] if T1 < 1000.0 < T2 else [(T1, T2)]
        return sum(quad(function, a, b, epsabs=0.0, epsrel=1e-13)[0] for a, b in pieces)

    def cp(T):
        return float(standard_properties(polynomials, T).Cp)

    jump = midpoint_jumps(polynomials)
    crosses = T1 < 1000.0 < T2
    dH = integral(cp) + (float(jump.H) if crosses else 0.0)
    dS = integral(lambda T: cp(T) / T) + (float(jump.S) if crosses else 0.0)
    H1, H2 = standard_properties(polynomials, [T1, T2]).H
    S1, S2 = standard_properties(polynomials, [T1, T2]).S
    assert H2 - H1 == pytest.approx(dH, rel=1e-10)
    assert S2 - S1 == pytest.approx(dS, rel=1e-10)


def test_reduced_and_standard_properties_agree():
    polynomials = single_range(SYNTHETIC)
    T = np.array([300.0, 1500.0])
    cp_R, h_RT, s_R, g_RT = reduced_properties(polynomials, T)
    Cp, H, S, G = standard_properties(polynomials, T)
    np.testing.assert_allclose(Cp, R * cp_R, rtol=1e-14)
    np.testing.assert_allclose(H, R * T * h_RT, rtol=1e-14)
    np.testing.assert_allclose(G, H - T * S, rtol=1e-12)
    np.testing.assert_allclose(g_RT, h_RT - s_R, rtol=1e-14)


def test_shapes_are_species_times_temperatures():
    first, second = single_range(SYNTHETIC), monatomic(217999.0, 114.716)
    both = NasaPolynomials.stack([first, second, first])
    T = np.array([[300.0, 400.0, 500.0, 600.0], [700.0, 1200.0, 2500.0, 4000.0]])
    values = standard_properties(both, T)
    assert values.H.shape == (3, 2, 4)
    np.testing.assert_array_equal(values.H[1], standard_properties(second, T).H)
    np.testing.assert_array_equal(values.S[2], standard_properties(first, T).S)
    assert standard_properties(first, 500.0).Cp.shape == ()


def test_midpoint_jumps_by_hand():
    # High range = low range + 0.01 in a1: jumps 0.01 R, 0.01 R T_mid and 0.01 R ln T_mid.
    high = np.array(SYNTHETIC)
    high[0] += 0.01
    jumps = midpoint_jumps(NasaPolynomials(SYNTHETIC, high, 200.0, 1200.0, 6000.0))
    assert jumps.Cp == pytest.approx(0.01 * R, rel=1e-9)
    assert jumps.H == pytest.approx(0.01 * R * 1200.0, rel=1e-9)
    assert jumps.S == pytest.approx(0.01 * R * math.log(1200.0), rel=1e-9)


def test_extrapolation_is_refused_unless_asked():
    polynomials = NasaPolynomials.stack([single_range(SYNTHETIC), single_range(SYNTHETIC, 300.0)])
    with pytest.raises(ScienceInputError, match=r"T = 250 K is outside the range 300-6000 K"):
        standard_properties(polynomials, [250.0, 1000.0])
    extrapolated = standard_properties(polynomials, [250.0], extrapolate=True)
    assert extrapolated.H[0, 0] == extrapolated.H[1, 0]
    assert np.all(np.isfinite(standard_properties(polynomials, [300.0, 6000.0]).Cp))


# --- fitting to NIST-JANAF ------------------------------------------------------------


def fit_cases():
    for row in SPECIES:
        for T in CHECK_TEMPERATURES:
            yield pytest.param(row, T, id=f"{row['species']}-{T:g}K")


@pytest.mark.parametrize(("row", "T"), list(fit_cases()))
def test_polynomials_fitted_to_janaf_reproduce_it(row, T):
    # Tolerances: 0.5 % in Cp, 0.5 kJ/mol in the absolute enthalpy dfH(298) + [H - H(298)],
    # 0.2 J/(mol K) in S. Reference: the NIST-JANAF table named in row["janaf_table"].
    reference = janaf_row(row["janaf_table"], T)
    fitted = standard_properties(janaf_fit(row["species"]).polynomials, T)
    H298 = janaf_row(row["janaf_table"], 298.15)["dfH"]
    assert float(fitted.Cp) == pytest.approx(reference["Cp"], rel=5e-3)
    assert float(fitted.H) == pytest.approx(H298 + reference["H_minus_H298"], abs=500.0)
    assert float(fitted.S) == pytest.approx(reference["S"], abs=0.2)


@pytest.mark.parametrize("row", SPECIES, ids=SPECIES_NAMES)
def test_fit_meets_its_constraints_and_reports_its_deviations(row):
    fit = janaf_fit(row["species"])
    reference = janaf_row(row["janaf_table"], 298.15)
    at_298 = standard_properties(fit.polynomials, 298.15)
    assert float(at_298.H) == pytest.approx(reference["dfH"], abs=1e-6)
    assert float(at_298.S) == pytest.approx(reference["S"], abs=1e-9)
    jumps = midpoint_jumps(fit.polynomials)
    assert abs(float(jumps.Cp)) < 1e-9 and abs(float(jumps.H)) < 1e-6 and abs(float(jumps.S)) < 1e-9
    # The reported largest deviations are the real ones over the fitted rows.
    columns = janaf_columns(row["janaf_table"])
    rows = (columns["T"] >= float(row["T_min"])) & (columns["T"] <= float(row["T_max"]))
    fitted = standard_properties(fit.polynomials, columns["T"][rows])
    worst_cp = np.max(np.abs(fitted.Cp / columns["Cp"][rows] - 1))
    assert fit.max_cp_deviation == pytest.approx(worst_cp, rel=1e-12)
    worst_H = np.max(np.abs(fitted.H - reference["dfH"] - columns["H_minus_H298"][rows]))
    assert fit.max_H_deviation == pytest.approx(worst_H, rel=1e-9)
    assert fit.max_cp_deviation < 0.02 and fit.max_H_deviation < 500.0


def test_fit_through_four_points_is_smooth_between_them():
    # Cp of CO2 (NIST-JANAF C-095) at 4 temperatures only: the fit passes through them, and
    # the smoothest curve stays within 1.5 % of the table between them (observed 0.9 %).
    columns = janaf_columns("C-095")
    pick = np.isin(columns["T"], [300.0, 500.0, 1000.0, 1500.0])
    reference = janaf_row("C-095", 298.15)
    fit = fit_nasa_polynomials(columns["T"][pick], columns["Cp"][pick], reference["dfH"], 213.795)
    assert fit.max_cp_deviation < 1e-5
    assert float(fit.polynomials.T_low) == 298.15 and float(fit.polynomials.T_high) == 1500.0
    rows = (columns["T"] >= 298.15) & (columns["T"] <= 1500.0)
    fitted = standard_properties(fit.polynomials, columns["T"][rows]).Cp
    assert np.max(np.abs(fitted / columns["Cp"][rows] - 1)) < 0.015


def test_default_midpoint_is_clipped_into_the_data():
    T = [300.0, 400.0, 500.0, 600.0, 700.0]
    fit = fit_nasa_polynomials(T, [29.0, 29.5, 30.0, 30.6, 31.1], 0.0, 200.0)
    assert float(fit.polynomials.T_mid) == 600.0  # the second-highest distinct temperature
    assert math.isnan(fit.max_H_deviation) and math.isnan(fit.max_S_deviation)
    explicit = fit_nasa_polynomials(T, [29.0, 29.5, 30.0, 30.6, 31.1], 0.0, 200.0, T_mid=450.0)
    assert float(explicit.polynomials.T_mid) == 450.0


def test_fit_inputs_from_table_skip_the_zero_kelvin_row():
    columns = janaf_columns("O-001")
    inputs = fit_inputs_from_table(
        columns["T"], columns["Cp"], columns["S"], columns["H_minus_H298"], columns["dfH"]
    )
    assert inputs.T[0] == 100.0 and inputs.T[-1] == 6000.0
    assert inputs.H298 == 249173.0 and inputs.S298 == 161.058  # NIST-JANAF O-001, 298.15 K row
    assert inputs.H[inputs.T == 1000.0][0] == pytest.approx(249173.0 + 14860.0)


# --- reactions ----------------------------------------------------------------------


def reaction_cases():
    for row in REACTIONS:
        for T in (500.0, 1000.0, 2000.0):
            yield pytest.param(row, T, id=f"{row['reaction']} {T:g}K")


@pytest.mark.parametrize(("row", "T"), list(reaction_cases()))
def test_log_kp_matches_janaf_formation_constants(row, T):
    # log10 Kp = sum nu_i log10 Kf_i from the NIST-JANAF tables named in the row's source;
    # tolerance 0.02 (observed agreement about 1e-3).
    nu = stoichiometry_vector(row["stoichiometry"])
    result = reaction_thermochemistry(nu, janaf_species_set(), T)
    expected = sum(
        value * janaf_row(SPECIES[i]["janaf_table"], T)["logKf"]
        for i, value in enumerate(nu)
        if value
    )
    assert float(result.ln_Kp) / math.log(10) == pytest.approx(expected, abs=0.02)
    assert float(result.delta_n) == float(row["delta_n"])


@pytest.mark.parametrize("row", REACTIONS, ids=[row["reaction"] for row in REACTIONS])
def test_reaction_enthalpy_at_298_is_the_sum_of_formation_enthalpies(row):
    nu = stoichiometry_vector(row["stoichiometry"])
    expected = sum(
        value * janaf_row(SPECIES[i]["janaf_table"], 298.15)["dfH"]
        for i, value in enumerate(nu)
        if value
    )
    result = reaction_thermochemistry(nu, janaf_species_set(), 298.15)
    assert float(result.delta_H) == pytest.approx(expected, abs=1e-5)
    assert float(result.delta_G) == pytest.approx(
        float(result.delta_H) - 298.15 * float(result.delta_S), rel=1e-12
    )


def test_many_reactions_at_once():
    nu = np.stack([stoichiometry_vector(row["stoichiometry"]) for row in REACTIONS])
    T = np.array([500.0, 1000.0, 2000.0])
    batch = reaction_thermochemistry(nu, janaf_species_set(), T)
    assert batch.ln_Kp.shape == (len(REACTIONS), 3) and batch.delta_n.shape == (len(REACTIONS),)
    for i, row in enumerate(nu):
        single = reaction_thermochemistry(row, janaf_species_set(), T)
        np.testing.assert_allclose(batch.ln_Kc[i], single.ln_Kc, rtol=1e-13)


def test_kc_by_hand_for_an_association():
    # A + B -> AB, Delta n = -1: Kc = Kp R T / p°, in m3/mol. R = 8.31446261815324 (exact).
    assert equilibrium_constant_kc(2.0, 1000.0, -1) == pytest.approx(
        2.0 * 8.31446261815324 * 1000.0 / 1e5, rel=1e-14
    )
    # H + O2 -> HO2 at 1500 K: put the gases at partial pressures with p_HO2 / p° = Kp
    # (p_H / p°)(p_O2 / p°), turn them into concentrations c = p/(RT) and form Kc by hand.
    nu = stoichiometry_vector("H:-1 O2:-1 HO2:1")
    result = reaction_thermochemistry(nu, janaf_species_set(), 1500.0)
    p_H, p_O2 = 2.0e3, 3.0e4
    p_HO2 = float(result.Kp) * (p_H / 1e5) * (p_O2 / 1e5) * 1e5
    c_H, c_O2, c_HO2 = (p / (R * 1500.0) for p in (p_H, p_O2, p_HO2))
    assert float(result.Kc) == pytest.approx(c_HO2 / (c_H * c_O2), rel=1e-12)
    assert float(result.Kc) == pytest.approx(
        equilibrium_constant_kc(float(result.Kp), 1500.0, -1), rel=1e-12
    )


def test_reverse_times_kc_is_forward():
    # Forward expression (synthetic): k = 1e8 T^0.5 exp(-60 kJ/mol / RT) m3/mol/s.
    nu = stoichiometry_vector("H:-1 O2:-1 OH:1 O:1")
    T = np.linspace(300.0, 3000.0, 20)
    Kc = reaction_thermochemistry(nu, janaf_species_set(), T).Kc
    k_forward = modified_arrhenius(T, 1e8, 0.5, 60e3)
    k_reverse = reverse_rate_constant(k_forward, Kc)
    np.testing.assert_allclose(k_reverse * Kc, k_forward, rtol=1e-12)


def test_reverse_fit_stays_within_its_recorded_deviation():
    # H + O2 -> HO2 (Delta n = -1), forward expression synthetic. The recorded deviation is the
    # largest on a 2001-point grid; 50 other temperatures may exceed it by rounding only.
    nu = stoichiometry_vector("H:-1 O2:-1 HO2:1")
    species = janaf_species_set()
    fit = fit_reverse_modified_arrhenius(2e6, -0.8, 0.0, nu, species, 300.0, 2500.0)
    T = np.concatenate([[300.0, 2500.0], np.random.default_rng(7).uniform(300.0, 2500.0, 48)])
    Kc = reaction_thermochemistry(nu, species, T).Kc
    exact = modified_arrhenius(T, 2e6, -0.8, 0.0) / Kc
    deviation = np.abs(modified_arrhenius(T, fit.A, fit.n, fit.Ea) / exact - 1)
    assert np.all(deviation <= fit.max_relative_deviation * (1 + 1e-3) + 1e-12)
    # A real approximation (Delta Cp varies with T), yet a usable one: observed 8 % at worst.
    assert 1e-3 < fit.max_relative_deviation < 0.15


def test_reverse_fit_is_exact_with_constant_heat_capacities():
    # With constant Cp (monatomic sketches, synthetic), dH = dH0 + dCp T and
    # dS = dS0 + dCp ln T, so ln Kc = (dS0 - dCp)/R + (dCp/R - dn) ln T - dH0/(RT) + dn ln(p°/R)
    # and k_r = k_f / Kc is exactly A_r T^n_r exp(-Ea_r/RT) with (derivation by hand)
    # A_r = A_f exp((dCp - dS0)/R) (R/p°)^dn, n_r = n_f + dn - dCp/R, Ea_r = Ea_f - dH0.
    H298, S298 = np.array([100e3, 50e3, -20e3]), np.array([120.0, 130.0, 140.0])
    species = NasaPolynomials.stack([monatomic(h, s) for h, s in zip(H298, S298, strict=True)])
    for nu in ([-1.0, -1.0, 2.0], [-1.0, -1.0, 1.0]):
        dn, dCp = sum(nu), 2.5 * R * sum(nu)
        dH0 = np.dot(nu, H298) - dCp * 298.15
        dS0 = np.dot(nu, S298) - dCp * math.log(298.15)
        fit = fit_reverse_modified_arrhenius(1e7, 1.0, 30e3, nu, species, 300.0, 3000.0)
        assert fit.A == pytest.approx(1e7 * math.exp((dCp - dS0) / R) * (R / 1e5) ** dn, rel=1e-7)
        assert fit.n == pytest.approx(1.0 + dn - dCp / R, abs=1e-9)
        assert fit.Ea == pytest.approx(30e3 - dH0, rel=1e-9)
        assert fit.max_relative_deviation < 1e-10


# --- errors -------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (([1.0] * 6, [1.0] * 7, 200.0, 1000.0, 6000.0), "low-range polynomial needs 7 coeff"),
        (([1.0] * 7, [1.0] * 7 + [0.0], 200.0, 1000.0, 6000.0), "high-range polynomial needs 7"),
        (
            ([1.0, 0, np.nan, 0, 0, 0, 0], [1.0] * 7, 200.0, 1000.0, 6000.0),
            "Coefficient a3 of the low-range polynomial is not finite",
        ),
        (
            ([[1.0] * 7, [1.0, 0, 0, 0, 0, np.inf, 0]], [[1.0] * 7] * 2, 200.0, 1000.0, 6000.0),
            "Coefficient a6 of the low-range polynomial of species 1 is not finite",
        ),
        (
            ([1.0] * 7, [1.0] * 7, 1000.0, 1000.0, 6000.0),
            "T_low must be below T_mid; got T_low = 1000 K, T_mid = 1000 K",
        ),
        (
            ([[1.0] * 7] * 2, [[1.0] * 7] * 2, 200.0, [1000.0, 7000.0], 6000.0),
            "T_mid must be below T_high of species 1",
        ),
        (([1.0] * 7, [1.0] * 7, 200.0, 1000.0, np.nan), "T_high must be a positive, finite"),
        (([[1.0] * 7] * 2, [1.0] * 7, 200.0, 1000.0, 6000.0), "differ in shape"),
    ],
)
def test_bad_coefficients_are_refused(args, message):
    with pytest.raises(ScienceInputError, match=message):
        NasaPolynomials(*args)


@pytest.mark.parametrize(
    ("T", "Cp", "kwargs", "message"),
    [
        ([1000.0], [30.0], {}, "needs Cp at 4 or more distinct temperatures; got 1"),
        ([300.0, 300.0, 400.0, 500.0], [30.0] * 4, {}, "4 or more distinct temperatures; got 3"),
        ([100.0, 150.0, 200.0, 250.0], [30.0] * 4, {}, "must reach above 298.15 K"),
        ([300.0, 400.0, 500.0], [30.0] * 4, {}, "got 3 temperatures and 4 heat capacities"),
        ([300.0, 400.0, 500.0, 600.0], [30.0, 0.0, 30.0, 30.0], {}, "Every Cp must be positive"),
        ([300.0, 400.0, 500.0, 600.0], [30.0] * 4, {"T_mid": 700.0}, "T_mid must lie strictly"),
        ([300.0, 400.0, 500.0, 600.0], [30.0] * 4, {"smoothing": -1.0}, "smoothing must be non"),
        ([300.0, 400.0, 500.0, 600.0], [30.0] * 4, {"H": [1.0, 2.0]}, "H has 2 values but"),
        ([300.0, 400.0, 500.0, 600.0], [30.0] * 4, {"S298": -5.0}, "S298 positive and finite"),
    ],
)
def test_bad_fit_inputs_are_refused(T, Cp, kwargs, message):
    arguments = {"H298": 0.0, "S298": 200.0} | kwargs
    with pytest.raises(FitError, match=message):
        fit_nasa_polynomials(T, Cp, **arguments)


def test_other_errors():
    species = NasaPolynomials.stack([single_range(SYNTHETIC)] * 2)
    with pytest.raises(ScienceInputError, match=re.escape("one coefficient per species (2)")):
        reaction_thermochemistry([-1, 1, 1], species, 1000.0)
    with pytest.raises(ScienceInputError, match="Every stoichiometric coefficient must be finite"):
        reaction_thermochemistry([-1, np.nan], species, 1000.0)
    with pytest.raises(ScienceInputError, match="Kp must be positive and finite"):
        equilibrium_constant_kc(-1.0, 1000.0, 0)
    with pytest.raises(ScienceInputError, match="Kc must be positive and finite"):
        reverse_rate_constant(1.0, np.inf)
    with pytest.raises(ScienceInputError, match="k_forward must be finite and non-negative"):
        reverse_rate_constant(-1.0, 2.0)
    with pytest.raises(ScienceInputError, match="0 < T_min < T_max"):
        fit_reverse_modified_arrhenius(1.0, 0.0, 0.0, [-1, 1], species, 2000.0, 300.0)
    with pytest.raises(ScienceInputError, match="K is outside the range 200-6000 K"):
        fit_reverse_modified_arrhenius(1.0, 0.0, 0.0, [-1, 1], species, 300.0, 7000.0)
    with pytest.raises(FitError, match=r"no finite row at 298\.15 K"):
        fit_inputs_from_table([300.0, 400.0], [30.0] * 2, [200.0] * 2, [0.0] * 2, [0.0] * 2)
    with pytest.raises(ScienceInputError, match="T must be positive and finite"):
        standard_properties(species, [0.0])


def test_doctests():
    result = doctest.testmod(thermo, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
