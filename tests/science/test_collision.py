"""Tests of ratebank.science.collision against published and library values."""

from __future__ import annotations

import csv
import doctest
import math
import re
from pathlib import Path

import chemicals.lennard_jones as lj
import numpy as np
import pytest
import scipy.constants as sc
from chemicals.identifiers import search_chemical
from hypothesis import given
from hypothesis import strategies as st

from ratebank.errors import ScienceInputError
from ratebank.science import arrhenius, collision, constants
from ratebank.science.collision import (
    activation_energy_from_threshold_energy,
    arrhenius_to_half_order,
    collision_limit_ratio,
    collision_rate_activation_energy,
    collision_rate_constant,
    collision_theory_rate_constant,
    derived_steric_factor,
    half_order_to_arrhenius,
    hard_sphere_cross_section,
    lennard_jones_collision_rate_constant,
    mean_relative_speed,
    mean_speed,
    omega22_neufeld,
    omega22_neufeld_log_slope,
    reduced_mass,
    threshold_energy_from_activation_energy,
)

HERE = Path(__file__).parent
R = sc.R
N_A = sc.N_A
ANGSTROM = 1e-10
CM3_PER_MOLECULE = 1e-6 / N_A  # m3 mol-1 s-1 -> cm3 molecule-1 s-1 is a factor 1e6 / N_A


def read_table(name: str) -> list[dict[str, str]]:
    with open(HERE / name, newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


def poling(cas: str) -> tuple[float, float, float]:
    """(diameter [m], well depth [K], molar mass [kg/mol]) from chemicals 1.5.2's gas-phase table."""
    sigma = lj.molecular_diameter(cas, method=lj.POLING)
    well_depth = lj.Stockmayer(cas, method=lj.POLING)
    return sigma * ANGSTROM, well_depth, search_chemical(cas).MW * 1e-3


PAIRS = read_table("ref_collision_pairs.csv")
PAIR_IDS = [f"{row['species_a']}+{row['species_b']}" for row in PAIRS]


def pair_inputs(row):
    da, ea, ma = poling(row["cas_a"])
    db, eb, mb = poling(row["cas_b"])
    return da, db, ma, mb, ea, eb


# --- constants ---------------------------------------------------------------


@pytest.mark.parametrize(
    ("name", "expected", "source"),
    [
        ("BOLTZMANN", 1.380649e-23, "CODATA 2018 / SI 2019, exact"),
        ("AVOGADRO", 6.02214076e23, "CODATA 2018 / SI 2019, exact"),
        ("ANGSTROM", 1e-10, "SI definition, exact"),
        ("ATMOSPHERE", 101325.0, "standard atmosphere, exact"),
        ("CALORIE", 4.184, "thermochemical calorie, NIST SP 811, exact"),
    ],
)
def test_exact_constants(name, expected, source):
    assert getattr(constants, name) == expected  # source: see parametrize


def test_gas_constant_is_k_times_avogadro():
    # CODATA 2018: R = k_B N_A = 8.31446261815324 J mol-1 K-1 (exact).
    assert pytest.approx(8.31446261815324, rel=1e-15) == constants.GAS_CONSTANT
    assert constants.GAS_CONSTANT == sc.R


# --- kinetic-theory quantities -----------------------------------------------


@pytest.mark.parametrize(
    ("T", "expected", "rel", "source"),
    [
        (298.15, 474.70, 1e-4, "REFERENCE-CHECKS s7, sqrt(8RT/pi M) computed"),
        (298.0, 474.58, 1e-4, "REFERENCE-CHECKS s7, sqrt(8RT/pi M) computed"),
        (298.15, 475.0, 1e-3, "Atkins, Physical Chemistry: 475 m/s for N2 at 25 C (from memory)"),
    ],
)
def test_mean_speed_of_nitrogen(T, expected, rel, source):
    assert mean_speed(T, 28.0134e-3) == pytest.approx(expected, rel=rel)


def test_mean_relative_speed_of_like_molecules_is_sqrt2_times_mean_speed():
    # Kinetic theory: mu = m/2 for like molecules, so c_rel = sqrt(2) c (REFERENCE-CHECKS s7).
    ratio = mean_relative_speed(298.15, 28.0134e-3, 28.0134e-3) / mean_speed(298.15, 28.0134e-3)
    assert ratio == pytest.approx(math.sqrt(2.0), rel=1e-12)
    assert mean_relative_speed(298.15, 28.0134e-3, 28.0134e-3) == pytest.approx(671.33, rel=1e-4)


def test_reduced_mass_of_like_molecules_is_half_the_molecular_mass():
    # mu = m m / (m + m) = m / 2, m = M / N_A (definition).
    M = 31.9988e-3
    assert reduced_mass(M, M) == pytest.approx(M / N_A / 2.0, rel=1e-15)


def test_cross_section_from_atkins_nitrogen():
    # Atkins, collision cross-section of N2 0.43 nm^2 (from memory) <-> d = 3.700 Angstrom
    # (REFERENCE-CHECKS s7).
    d = 3.700e-10
    assert hard_sphere_cross_section(d, d) == pytest.approx(0.43e-18, rel=1e-3)


# --- simple collision theory table -------------------------------------------


@pytest.mark.parametrize("row", PAIRS, ids=PAIR_IDS)
def test_collision_rate_table(row):
    # Source column of ref_collision_pairs.csv; tolerance rel 1e-4 (REFERENCE-CHECKS s8).
    da, db, ma, mb, ea, eb = pair_inputs(row)
    T = 298.15
    z_molecule = collision_rate_constant(T, da, db, ma, mb, per_molecule=True)
    assert z_molecule * 1e6 == pytest.approx(float(row["sigma_c"]), rel=1e-4)
    z_molar = collision_rate_constant(T, da, db, ma, mb)
    assert z_molar * 1e3 == pytest.approx(float(row["sigma_c_NA"]), rel=1e-4)
    assert z_molar == pytest.approx(z_molecule * N_A, rel=1e-14)
    omega = omega22_neufeld(T / math.sqrt(ea * eb))
    assert omega == pytest.approx(float(row["omega22"]), rel=1e-4)
    z_lj = lennard_jones_collision_rate_constant(T, da, db, ma, mb, ea, eb, per_molecule=True)
    assert z_lj * 1e6 == pytest.approx(float(row["sigma_c_omega"]), rel=1e-4)
    # The two-parameter A of the half-order estimate is sqrt(e) sigma c (README, Estimates and steric factors).
    A, _ = half_order_to_arrhenius(z_molecule / math.sqrt(T), 0.0, T)
    assert pytest.approx(float(row["sqrt_e_sigma_c"]), rel=1e-4) == A * 1e6
    if row["half_sigma_c"]:
        z_self = collision_rate_constant(T, da, db, ma, mb, identical=True, per_molecule=True)
        assert z_self * 1e6 == pytest.approx(float(row["half_sigma_c"]), rel=1e-4)


@pytest.mark.parametrize("row", PAIRS, ids=PAIR_IDS)
def test_collision_rates_are_of_gas_kinetic_order(row):
    # Common practice: gas-kinetic rate constants are "of order 1e-10 cm3 molecule-1 s-1";
    # every pair falls in 3e-11..3e-9 with or without the 1/2, sqrt(e) or Omega factors.
    da, db, ma, mb, ea, eb = pair_inputs(row)
    rates = [
        collision_rate_constant(298.15, da, db, ma, mb, per_molecule=True),
        collision_rate_constant(298.15, da, da, ma, ma, identical=True, per_molecule=True),
        lennard_jones_collision_rate_constant(298.15, da, db, ma, mb, ea, eb, per_molecule=True),
    ]
    for z in rates:
        assert 3e-11 < z * 1e6 < 3e-9


# --- activation energies -----------------------------------------------------


def numerical_activation_energy(ln_k, T, step=1e-3):
    """-R d ln k / d(1/T) by a central difference in 1/T (step = 1e-3 T)."""
    T_hi, T_lo = T * (1 + step), T * (1 - step)
    return -R * (ln_k(T_hi) - ln_k(T_lo)) / (1 / T_hi - 1 / T_lo)


@pytest.mark.parametrize(
    ("E0_kJ", "T", "numerical_Ea_kJ", "source"),
    [
        (0.0, 298.15, 1.239478, "REFERENCE-CHECKS s8, central difference"),
        (0.0, 1000.0, 4.157229, "REFERENCE-CHECKS s8, central difference"),
        (10.0, 298.15, 11.239478, "REFERENCE-CHECKS s8, central difference"),
        (50.0, 1000.0, 54.157229, "REFERENCE-CHECKS s8, central difference"),
    ],
)
def test_hard_sphere_estimate_has_ea_equal_e0_plus_half_rt(E0_kJ, T, numerical_Ea_kJ, source):
    d_n2, _, m_n2 = poling("7727-37-9")
    d_o2, _, m_o2 = poling("7782-44-7")

    def ln_k(t):
        z = collision_rate_constant(t, d_n2, d_o2, m_n2, m_o2)
        return np.log(collision_theory_rate_constant(t, 1.0, z, E0_kJ * 1e3))

    numerical = numerical_activation_energy(ln_k, T)
    assert numerical / 1e3 == pytest.approx(numerical_Ea_kJ, rel=1e-6)
    analytic = activation_energy_from_threshold_energy(E0_kJ * 1e3, T)
    assert numerical == pytest.approx(analytic, rel=1e-6)
    assert collision_rate_activation_energy(T) == pytest.approx(0.5 * R * T, rel=1e-15)


@pytest.mark.parametrize(
    ("T", "Ea_over_R", "source"),
    [
        (200.0, 36.0, "REFERENCE-CHECKS s8, Neufeld via chemicals"),
        (298.15, 77.0, "REFERENCE-CHECKS s8, Neufeld via chemicals"),
        (1000.0, 349.6, "REFERENCE-CHECKS s8, Neufeld via chemicals"),
        (2000.0, 704.9, "REFERENCE-CHECKS s8, Neufeld via chemicals"),
    ],
)
def test_lennard_jones_collision_activation_energy(T, Ea_over_R, source):
    # N2 + O2 with the Poling well depths 71.4 and 106.7 K; tolerance 0.5 %.
    d_n2, e_n2, m_n2 = poling("7727-37-9")
    d_o2, e_o2, m_o2 = poling("7782-44-7")
    analytic = collision_rate_activation_energy(
        T, model="lennard-jones", well_depth_a=e_n2, well_depth_b=e_o2
    )
    assert analytic / R == pytest.approx(Ea_over_R, rel=5e-3)
    assert analytic < 0.5 * R * T  # Omega falls with T (README, Estimates and steric factors)

    def ln_z(t):
        return np.log(lennard_jones_collision_rate_constant(t, d_n2, d_o2, m_n2, m_o2, e_n2, e_o2))

    # The analytic derivative agrees with a central difference of the rate itself.
    assert analytic == pytest.approx(numerical_activation_energy(ln_z, T), rel=1e-5)


def test_threshold_from_lennard_jones_activation_energy_reproduces_ea():
    # E0 = Ea - E_z(T_ref) with the model's own E_z (README, Estimates and steric factors): the estimate's numerical
    # Ea at T_ref is then the Ea it was made from (central difference, common practice).
    d_n2, e_n2, m_n2 = poling("7727-37-9")
    d_o2, e_o2, m_o2 = poling("7782-44-7")
    T_ref, Ea = 500.0, 20e3
    E_z = collision_rate_activation_energy(
        T_ref, model="lennard-jones", well_depth_a=e_n2, well_depth_b=e_o2
    )
    E0 = threshold_energy_from_activation_energy(Ea, T_ref, E_z)

    def ln_k(t):
        z = lennard_jones_collision_rate_constant(t, d_n2, d_o2, m_n2, m_o2, e_n2, e_o2)
        return np.log(collision_theory_rate_constant(t, 0.1, z, E0))

    assert numerical_activation_energy(ln_k, T_ref) == pytest.approx(Ea, rel=1e-6)
    assert activation_energy_from_threshold_energy(E0, T_ref, E_z) == pytest.approx(Ea, rel=1e-15)


def test_threshold_and_activation_energy_are_inverse():
    # Ea = E0 + RT/2 (Laidler, Chemical Kinetics, ch. 3).
    T = np.array([250.0, 500.0, 1500.0])
    E0 = np.array([-2e3, 0.0, 45e3])
    Ea = activation_energy_from_threshold_energy(E0, T)
    np.testing.assert_allclose(Ea, E0 + 0.5 * R * T, rtol=1e-15)
    np.testing.assert_allclose(threshold_energy_from_activation_energy(Ea, T), E0, atol=1e-9)


# --- form conversions --------------------------------------------------------


@pytest.mark.parametrize(
    ("A_half", "E0", "T_ref", "source"),
    [
        (
            4.2e7,
            0.0,
            298.15,
            "README, Estimates and steric factors: A = A_half sqrt(T_ref) e^(1/2), Ea = E0 + R T_ref/2",
        ),
        (1.3e5, 35e3, 1000.0, "README, Estimates and steric factors"),
        (2.0e6, -4e3, 220.0, "README, Estimates and steric factors"),
    ],
)
def test_half_order_and_arrhenius_forms_agree_at_t_ref(A_half, E0, T_ref, source):
    A, Ea = half_order_to_arrhenius(A_half, E0, T_ref)
    k_half = arrhenius.modified_arrhenius(T_ref, A_half, 0.5, E0)
    k_two = arrhenius.arrhenius(T_ref, A, Ea)
    assert k_two == pytest.approx(k_half, rel=1e-12)
    # Local Ea of the half-order form is E0 + R T/2 (Ea_local = Ea + n R T).
    assert Ea == pytest.approx(arrhenius.local_activation_energy(T_ref, 0.5, E0), rel=1e-12)
    back_A_half, back_E0 = arrhenius_to_half_order(A, Ea, T_ref)
    assert back_A_half == pytest.approx(A_half, rel=1e-12)
    assert back_E0 == pytest.approx(E0, rel=1e-12, abs=1e-9)


# --- steric factors and limits -----------------------------------------------


def test_derived_steric_factor_recovers_p_and_keeps_p_above_one():
    # P = k / (z exp(-E0/RT)) with E0 = Ea - RT/2 (README, Estimates and steric factors); P > 1 is not clipped.
    T = np.array([300.0, 300.0])
    z = np.array([1.6e8, 1.6e8])
    P = np.array([3e-3, 4.0])
    E0 = 12e3
    k = collision_theory_rate_constant(T, P, z, E0)
    Ea = E0 + 0.5 * R * T
    np.testing.assert_allclose(derived_steric_factor(k, Ea, T, z), P, rtol=1e-12)


@pytest.mark.parametrize(
    ("a", "b", "A_cm3", "E_over_R", "P2", "source"),
    [
        # JPL 19-5 rate expressions (from memory); Svehla sigma for OH and O (from memory,
        # uncertain); P2 = A_loc / (sqrt(e) sigma c) from REFERENCE-CHECKS s9.
        (("OH", 3.147e-10, 17.007e-3), ("CH4", 3.758e-10, 16.043e-3), 2.45e-12, 1775.0, 4.5e-3,
         "JPL 19-5 (from memory); REFERENCE-CHECKS s9"),
        (("OH", 3.147e-10, 17.007e-3), ("H2", 2.827e-10, 2.016e-3), 2.8e-12, 1800.0, 3.2e-3,
         "JPL 19-5 (from memory); REFERENCE-CHECKS s9"),
        (("O", 3.050e-10, 15.999e-3), ("O3", 4.100e-10, 47.998e-3), 8.0e-12, 2060.0, 1.7e-2,
         "JPL 19-5 (from memory); REFERENCE-CHECKS s9"),
    ],
)  # fmt: skip
def test_steric_factors_of_evaluated_reactions(a, b, A_cm3, E_over_R, P2, source):
    T = 298.0
    z = collision_rate_constant(T, a[1], b[1], a[2], b[2])
    k = arrhenius.arrhenius(T, A_cm3 * 1e-6 * N_A, E_over_R * R)
    P = derived_steric_factor(k, E_over_R * R, T, z)
    assert 0.0 < P <= 1.0  # REFERENCE-CHECKS s9: every listed reaction has 0 < P <= 1
    assert pytest.approx(P2, rel=0.05) == P  # printed to 2 significant digits


def test_collision_limit_ratio_batches_over_reactions():
    T = np.linspace(300.0, 2000.0, 18)
    z = collision_rate_constant(T, 3.5e-10, 3.5e-10, 30e-3, 30e-3)
    k = np.stack([0.5 * z, z * (T / 1000.0), np.full_like(T, 1e3)])
    ratio, where = collision_limit_ratio(T, k, z)
    assert ratio.shape == where.shape == (3,)
    np.testing.assert_allclose(ratio, [0.5, 2.0, 1e3 / z[0]], rtol=1e-12)
    assert where[1] == 2000.0
    assert where[2] == 300.0  # z grows with T, so a constant k is closest to it at 300 K
    single = collision_limit_ratio(T, k[1], z)
    assert isinstance(single[0], float)
    assert single == pytest.approx((2.0, 2000.0), rel=1e-12)


# --- collision integrals -----------------------------------------------------

T_STAR_GRID = np.geomspace(0.3, 100.0, 301)


def test_omega22_matches_chemicals_neufeld():
    # chemicals 1.5.2 collision_integral_Neufeld_Janzen_Aziz(T*, l=2, s=2), same fit: rel 1e-10.
    expected = [lj.collision_integral_Neufeld_Janzen_Aziz(t, 2, 2) for t in T_STAR_GRID]
    np.testing.assert_allclose(omega22_neufeld(T_STAR_GRID), expected, rtol=1e-10)


def test_omega22_matches_kim_monroe():
    # Kim & Monroe (2014), J. Comput. Phys. 273, 358, via chemicals 1.5.2 (l=2, s=2): 0.2 %.
    expected = [lj.collision_integral_Kim_Monroe(t, 2, 2) for t in T_STAR_GRID]
    np.testing.assert_allclose(omega22_neufeld(T_STAR_GRID), expected, rtol=2e-3)


@pytest.mark.parametrize("row", read_table("ref_omega22.csv"), ids=lambda row: row["T_star"])
def test_omega22_matches_hirschfelder_curtiss_bird_table(row):
    # Source column of ref_omega22.csv (from memory; only T* >= 1.5).
    expected = float(row["hcb_1954"])
    assert omega22_neufeld(float(row["T_star"])) == pytest.approx(
        expected, rel=float(row["tolerance"])
    )


def test_omega22_log_slope_matches_derivative_of_chemicals_fit():
    # Central difference in ln T* of chemicals' Neufeld (2,2) fit (common practice).
    h = 1e-5
    for t in (0.3, 0.7, 1.0, 3.0, 10.0, 40.0, 100.0):
        up = lj.collision_integral_Neufeld_Janzen_Aziz(t * math.exp(h), 2, 2)
        down = lj.collision_integral_Neufeld_Janzen_Aziz(t * math.exp(-h), 2, 2)
        numerical = (math.log(up) - math.log(down)) / (2 * h)
        assert omega22_neufeld_log_slope(t, extrapolate=True) == pytest.approx(numerical, rel=1e-6)


@pytest.mark.parametrize("T_star", [0.25, 150.0])
def test_omega22_refuses_reduced_temperature_outside_the_fit(T_star):
    # Neufeld, Janzen & Aziz (1972) fitted 0.3 <= T* <= 100.
    with pytest.raises(ScienceInputError, match=r"valid for 0\.3 <= T\* <= 100\.0; got T\* = "):
        omega22_neufeld(T_star)
    with pytest.raises(ScienceInputError, match=re.escape("valid for 0.3 <= T* <= 100.0")):
        omega22_neufeld_log_slope(T_star)
    assert omega22_neufeld(T_star, extrapolate=True) == pytest.approx(
        lj.collision_integral_Neufeld_Janzen_Aziz(T_star, 2, 2), rel=1e-10
    )


def test_lennard_jones_rate_refuses_water_far_below_its_well_depth():
    # H2O + H2O at 200 K: T* = 200/809.1 = 0.25 < 0.3 (Poling well depth).
    with pytest.raises(ScienceInputError, match=re.escape("T* = 0.2472")):
        lennard_jones_collision_rate_constant(
            200.0, 2.641e-10, 2.641e-10, 18.015e-3, 18.015e-3, 809.1, 809.1, identical=True
        )


# --- errors -------------------------------------------------------------------


def test_non_positive_temperature_is_refused():
    with pytest.raises(ScienceInputError, match=r"T must be positive and finite \[K\]; got -5\.0"):
        mean_speed(np.array([300.0, -5.0]), 28e-3)


def test_identical_partners_must_be_identical():
    with pytest.raises(ScienceInputError, match="diameter_b must equal diameter_a"):
        collision_rate_constant(300.0, 3.5e-10, 3.6e-10, 30e-3, 30e-3, identical=True)


def test_unknown_collision_model_is_refused():
    with pytest.raises(
        ScienceInputError,
        match="Unknown collision model 'soft-sphere'; expected one of hard-sphere, lennard-jones",
    ):
        collision_rate_activation_energy(300.0, model="soft-sphere")


def test_lennard_jones_model_needs_well_depths():
    with pytest.raises(ScienceInputError, match="needs well_depth_a and well_depth_b"):
        collision_rate_activation_energy(300.0, model="lennard-jones", well_depth_a=100.0)


def test_collision_theory_refuses_non_finite_threshold():
    with pytest.raises(ScienceInputError, match="threshold_energy must be finite"):
        collision_theory_rate_constant(300.0, 0.1, 1e8, np.nan)


# --- properties ---------------------------------------------------------------

temperatures = st.floats(min_value=50.0, max_value=5000.0)
diameters = st.floats(min_value=1e-10, max_value=1e-9)
masses = st.floats(min_value=1e-3, max_value=0.5)


@given(temperatures, diameters, diameters, masses, masses)
def test_collision_rate_is_symmetric_in_the_partners(T, da, db, ma, mb):
    # sigma_AB and mu are symmetric in A and B (definition).
    assert collision_rate_constant(T, da, db, ma, mb) == pytest.approx(
        collision_rate_constant(T, db, da, mb, ma), rel=1e-13
    )


@given(temperatures, diameters, diameters, masses, masses, st.floats(0.1, 10.0))
def test_collision_rate_scales_as_square_root_of_temperature(T, da, db, ma, mb, factor):
    # z is proportional to c_rel, which is proportional to T^(1/2) (definition).
    ratio = collision_rate_constant(factor * T, da, db, ma, mb) / collision_rate_constant(
        T, da, db, ma, mb
    )
    assert ratio == pytest.approx(math.sqrt(factor), rel=1e-12)


@given(temperatures, diameters, masses)
def test_self_reaction_is_half_the_distinguishable_rate(T, d, m):
    # README, rate-law convention: r = k[A]^2 with d[A]/dt = -2r, so z(A + A) = z(A + B with B = A) / 2.
    assert collision_rate_constant(T, d, d, m, m, identical=True) == pytest.approx(
        0.5 * collision_rate_constant(T, d, d, m, m), rel=1e-14
    )


# --- doctests -----------------------------------------------------------------


def test_doctests():
    result = doctest.testmod(collision, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
