"""Tests of ratebank.science.capture against quadrature, atomic units and measured rates."""

from __future__ import annotations

import csv
import doctest
import math
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
from scipy.integrate import quad
from scipy.optimize import brentq, minimize_scalar
from scipy.special import gamma

from ratebank.errors import ScienceInputError
from ratebank.science import capture
from ratebank.science.capture import (
    DISPERSION_CAPTURE_PREFACTOR,
    dispersion_capture_cross_section,
    dispersion_capture_rate_constant,
    london_capture_rate_constant,
    london_dispersion_coefficient,
)
from ratebank.science.collision import collision_rate_constant

HERE = Path(__file__).parent
N_A = sc.N_A
K_B = sc.k
AMU = sc.atomic_mass
EV_MOLAR = sc.eV * sc.N_A  # J mol-1 per eV
ANGSTROM3 = 1e-30
# Atomic unit of C6, E_h a_0^6 [J m^6] (scipy.constants, CODATA 2022).
C6_ATOMIC_UNIT = (
    sc.physical_constants["Hartree energy"][0] * sc.physical_constants["Bohr radius"][0] ** 6
)


def read_table(name: str) -> list[dict[str, str]]:
    with open(HERE / name, newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


SPECIES = read_table("ref_capture_species.csv")
RATES = read_table("ref_capture_rates.csv")


# --- London C6 -----------------------------------------------------------------------


@pytest.mark.parametrize("row", SPECIES, ids=[r["species"] for r in SPECIES])
def test_london_c6_in_atomic_units(row):
    # London (1937): C6 = (3/4) I alpha^2 for like atoms, evaluated here in atomic units
    # (alpha in a_0^3, I in E_h; conversions from scipy.constants), an independent unit path.
    alpha = float(row["polarizability_A3"]) * ANGSTROM3
    ionization = float(row["ionization_eV"]) * EV_MOLAR
    ours = london_dispersion_coefficient(alpha, alpha, ionization, ionization) / C6_ATOMIC_UNIT
    alpha_au = alpha / sc.physical_constants["Bohr radius"][0] ** 3
    ionization_au = float(row["ionization_eV"]) * sc.eV / sc.physical_constants["Hartree energy"][0]
    assert ours == pytest.approx(0.75 * ionization_au * alpha_au**2, rel=1e-12)


@pytest.mark.parametrize("row", SPECIES, ids=[r["species"] for r in SPECIES])
def test_london_c6_falls_short_of_accurate_values(row):
    # Source column (Kumar & Meath 1985, from memory): London's C6 is 10-35 % below the accurate
    # values for the rare gases; loose check of magnitude and sign of the error.
    alpha = float(row["polarizability_A3"]) * ANGSTROM3
    ionization = float(row["ionization_eV"]) * EV_MOLAR
    ratio = (
        london_dispersion_coefficient(alpha, alpha, ionization, ionization)
        / C6_ATOMIC_UNIT
        / float(row["c6_accurate_au"])
    )
    assert 0.6 < ratio < 0.95


def test_london_c6_of_an_unlike_pair_uses_the_harmonic_ionization_energy():
    # London (1937): I_A I_B / (I_A + I_B); for like partners it is I/2 (arithmetic identity).
    ar, xe = SPECIES[2], SPECIES[4]
    values = [
        (float(r["polarizability_A3"]) * ANGSTROM3, float(r["ionization_eV"]) * EV_MOLAR)
        for r in (ar, xe)
    ]
    (alpha_a, i_a), (alpha_b, i_b) = values
    expected = 1.5 * alpha_a * alpha_b * i_a * i_b / (i_a + i_b) / N_A
    assert london_dispersion_coefficient(alpha_a, alpha_b, i_a, i_b) == pytest.approx(
        expected, rel=1e-14
    )
    assert london_dispersion_coefficient(alpha_b, alpha_a, i_b, i_a) == pytest.approx(
        expected, rel=1e-14
    )


# --- capture cross-section, derived numerically --------------------------------------


def numeric_capture_cross_section(energy, c6):
    """pi b_max^2 from the centrifugal barrier, found numerically (no closed form used).

    Lengths in Angstrom and energies in units of `energy` keep the optimizer well scaled.
    """
    c6_reduced = c6 / (energy * 1e-60)  # V/E = b^2/r^2 - c6_reduced / r^6, r and b in Angstrom

    def barrier(b):
        result = minimize_scalar(
            lambda r: -(b * b / r**2 - c6_reduced / r**6),
            bounds=(0.1, 100.0),
            method="bounded",
            options={"xatol": 1e-12},
        )
        return -result.fun

    b_max = brentq(lambda b: barrier(b) - 1.0, 0.5, 50.0, xtol=1e-13)
    return math.pi * (b_max * 1e-10) ** 2


@pytest.mark.parametrize(
    ("energy_molar", "c6"), [(2494.3, 6.0e-78), (500.0, 2.0e-77), (2.0e4, 1.0e-78)]
)
def test_cross_section_matches_the_numerically_found_barrier(energy_molar, c6):
    # Independent derivation: maximize E b^2/r^2 - C6/r^6 over r, solve V_max(b) = E for b.
    numeric = numeric_capture_cross_section(energy_molar / N_A, c6)
    assert dispersion_capture_cross_section(energy_molar, c6) == pytest.approx(numeric, rel=1e-6)


def test_prefactor_in_closed_form():
    # 2^(11/6) sqrt(pi) Gamma(2/3) with scipy.special.gamma; Georgievskii & Klippenstein (2005,
    # from memory) write the isotropic C6 capture rate with this Gamma(2/3) structure.
    expected = 2 ** (11 / 6) * math.sqrt(math.pi) * gamma(2 / 3)
    assert pytest.approx(expected, rel=1e-15) == DISPERSION_CAPTURE_PREFACTOR
    assert pytest.approx(8.5530, abs=5e-5) == DISPERSION_CAPTURE_PREFACTOR


@pytest.mark.parametrize("T", [10.0, 300.0, 2000.0])
def test_rate_constant_equals_maxwell_boltzmann_quadrature(T):
    # Independent computation: k = integral sigma(v) v f(v) dv over the Maxwell-Boltzmann
    # distribution of relative speeds f(v) = 4 pi v^2 (mu/(2 pi kT))^(3/2) exp(-mu v^2/(2kT)),
    # with sigma(E) from the numerically found barrier at one energy, scaled as E^(-1/3)
    # (the -C6/r^6 potential is homogeneous, so sigma depends on C6/E only).
    c6, mass_a, mass_b = 6.0e-78, 15.035e-3, 17.007e-3
    mu = mass_a * mass_b / (mass_a + mass_b) / N_A
    kT = K_B * T
    sigma_ref = numeric_capture_cross_section(kT, c6)
    v_T = math.sqrt(2 * kT / mu)

    def integrand(x):  # x = v / v_T
        v = x * v_T
        energy = 0.5 * mu * v * v
        sigma = sigma_ref * (kT / energy) ** (1 / 3)
        return sigma * v * 4 * math.pi * x * x * math.exp(-x * x) / math.pi**1.5

    value, error = quad(integrand, 0.0, np.inf, epsabs=0.0, epsrel=1e-12, limit=200)
    ours = dispersion_capture_rate_constant(T, c6, mass_a, mass_b, per_molecule=True)
    assert ours == pytest.approx(value, rel=1e-6)
    assert error < 1e-9 * value


def test_rate_constant_scales_as_t_to_the_one_sixth():
    # k proportional to T^(1/6) (dimensional analysis of the -C6/r^6 capture).
    T = np.array([100.0, 6400.0])
    k = dispersion_capture_rate_constant(T, 6.0e-78, 15e-3, 17e-3)
    assert k[1] / k[0] == pytest.approx(64 ** (1 / 6), rel=1e-14)


def test_molar_and_per_molecule_units():
    # m3 mol-1 s-1 = N_A x m3 molecule-1 s-1 (definition).
    molar = dispersion_capture_rate_constant(300.0, 6.0e-78, 15e-3, 17e-3)
    single = dispersion_capture_rate_constant(300.0, 6.0e-78, 15e-3, 17e-3, per_molecule=True)
    assert molar == pytest.approx(single * N_A, rel=1e-15)


def test_identical_partners_carry_the_factor_one_half_as_collision_rates_do():
    # Same convention as ratebank.science.collision.collision_rate_constant (DESIGN s3):
    # r = k[A]^2, so the A + A rate is half that of two distinguishable partners of equal mass.
    distinct = dispersion_capture_rate_constant(300.0, 6.0e-78, 15e-3, 15e-3)
    same = dispersion_capture_rate_constant(300.0, 6.0e-78, 15e-3, 15e-3, identical=True)
    assert same == pytest.approx(0.5 * distinct, rel=1e-15)
    collision_ratio = collision_rate_constant(
        300.0, 4e-10, 4e-10, 15e-3, 15e-3, identical=True
    ) / collision_rate_constant(300.0, 4e-10, 4e-10, 15e-3, 15e-3)
    assert same / distinct == pytest.approx(collision_ratio, rel=1e-15)


@pytest.mark.parametrize("row", RATES, ids=[r["pair"] for r in RATES])
def test_capture_bounds_a_measured_radical_recombination(row):
    # Source column (from memory, uncertain): capture is an upper bound of the same order.
    k = london_capture_rate_constant(
        float(row["T_K"]),
        float(row["polarizability_a_A3"]) * ANGSTROM3,
        float(row["polarizability_b_A3"]) * ANGSTROM3,
        float(row["ionization_a_eV"]) * EV_MOLAR,
        float(row["ionization_b_eV"]) * EV_MOLAR,
        float(row["molar_mass_a_g_mol"]) * 1e-3,
        float(row["molar_mass_b_g_mol"]) * 1e-3,
        identical=row["identical"] == "true",
        per_molecule=True,
    )
    ratio = k * 1e6 / float(row["k_measured_cm3_s"])
    assert 1.0 <= ratio <= 10.0


def test_london_capture_combines_the_two_steps():
    alpha, ionization = 1.6411e-30, 15.7596 * EV_MOLAR
    c6 = london_dispersion_coefficient(alpha, 2 * alpha, ionization, 0.8 * ionization)
    assert london_capture_rate_constant(
        300.0, alpha, 2 * alpha, ionization, 0.8 * ionization, 40e-3, 84e-3
    ) == pytest.approx(dispersion_capture_rate_constant(300.0, c6, 40e-3, 84e-3), rel=1e-15)


def test_vectorized_over_temperature_and_pairs():
    T = np.array([[200.0], [400.0]])
    c6 = np.array([1e-78, 5e-78, 2e-77])
    k = dispersion_capture_rate_constant(T, c6, 30e-3, 30e-3)
    assert k.shape == (2, 3)
    assert k[1, 2] == pytest.approx(dispersion_capture_rate_constant(400.0, 2e-77, 30e-3, 30e-3))


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: dispersion_capture_rate_constant(0.0, 6e-78, 15e-3, 17e-3), "T must be positive"),
        (
            lambda: dispersion_capture_rate_constant(300.0, -1.0, 15e-3, 17e-3),
            "c6 must be positive",
        ),
        (
            lambda: dispersion_capture_rate_constant(300.0, 6e-78, 15e-3, 17e-3, identical=True),
            "identical=True describes a self-reaction",
        ),
        (
            lambda: london_capture_rate_constant(
                300.0, 2e-30, 3e-30, 1e6, 1e6, 15e-3, 15e-3, identical=True
            ),
            "polarizability_b must equal polarizability_a",
        ),
        (lambda: london_dispersion_coefficient(2e-30, 2e-30, 0.0, 1e6), "ionization_energy_a"),
        (lambda: dispersion_capture_cross_section(-5.0, 6e-78), "collision_energy"),
    ],
)
def test_errors(call, message):
    with pytest.raises(ScienceInputError, match=message):
        call()


# --- doctests ---------------------------------------------------------------------------


def test_doctests():
    result = doctest.testmod(capture, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
