"""Hinshelwood's strong-collision k0 as a modified-Arrhenius expression over a range."""

from __future__ import annotations

import math

import chemicals.lennard_jones as lj
import numpy as np
import pytest
import scipy.constants as sc
from chemicals.identifiers import search_chemical

from ratebank.errors import ScienceInputError
from ratebank.science.falloff import hinshelwood_activated_fraction
from ratebank.science.low_pressure import hinshelwood_estimate

R = sc.R
N_A = sc.N_A


def poling(cas: str) -> tuple[float, float, float]:
    """(diameter [m], well depth [K], molar mass [kg/mol]): chemicals 1.5.2, Poling table."""
    return (
        lj.molecular_diameter(cas, method=lj.POLING) * 1e-10,
        lj.Stockmayer(cas, method=lj.POLING),
        search_chemical(cas).MW * 1e-3,
    )


def independent_k0(T: float, E0: float, s: int, beta: float) -> float:
    """beta Z_LJ (E0/RT)^(s-1)/(s-1)! exp(-E0/RT) (Hinshelwood 1927; Laidler, Chemical
    Kinetics, 1987, ch. 5) for ethane (a stand-in reactant) in N2, with Z_LJ from chemicals'
    Poling Lennard-Jones table and its Neufeld-Janzen-Aziz Omega(2,2)*."""
    d_a, e_a, m_a = poling("74-84-0")
    d_b, e_b, m_b = poling("7727-37-9")
    mu = m_a * m_b / (m_a + m_b) / N_A
    z = (
        math.pi
        * ((d_a + d_b) / 2) ** 2
        * math.sqrt(8 * sc.k * T / (math.pi * mu))
        * N_A
        * lj.collision_integral_Neufeld_Janzen_Aziz(T / math.sqrt(e_a * e_b), 2, 2)
    )
    x = E0 / (R * T)
    return beta * z * x ** (s - 1) / math.factorial(s - 1) * math.exp(-x)


@pytest.mark.parametrize(("s", "beta"), [(1, 1.0), (4, 0.3), (8, 0.1)])
def test_the_fitted_expression_reproduces_k0_across_its_range(s, beta):
    d_a, e_a, m_a = poling("74-84-0")
    d_b, e_b, m_b = poling("7727-37-9")
    E0 = 250e3
    fit = hinshelwood_estimate(
        700.0, 1400.0, E0, s, d_a, d_b, m_a, m_b, e_a, e_b, collision_efficiency=beta
    )
    for T in np.linspace(700.0, 1400.0, 9):
        fitted = fit.A * T**fit.n * math.exp(-fit.Ea / (R * T))
        assert fitted == pytest.approx(independent_k0(T, E0, s, beta), rel=2e-3)
    assert fit.max_relative_deviation < 2e-3
    middle = math.sqrt(700.0 * 1400.0)
    assert fit.k0_at_middle == pytest.approx(independent_k0(middle, E0, s, beta), rel=1e-9)


def test_a_hand_worked_activated_fraction():
    """Worked by hand in the steps of Laidler, Chemical Kinetics (1987), ch. 5 (the numbers
    are ours, not printed there): E0/RT = 20 and s = 5 give (E0/RT)^4/4! = 160000/24 =
    6666.67 and exp(-20) = 2.0612e-9, so f = 1.3741e-5, Hinshelwood's factor 6666.67 above
    Lindemann's exp(-E0/RT)."""
    T = 1000.0
    f = hinshelwood_activated_fraction(T, 20.0 * R * T, 5)
    assert f == pytest.approx(1.3741e-5, rel=1e-4)
    assert f / math.exp(-20.0) == pytest.approx(6666.67, rel=1e-6)


@pytest.mark.parametrize(("T_min", "T_max"), [(800.0, 800.0), (900.0, 600.0), (0.0, 600.0)])
def test_a_range_that_is_not_ordered_and_positive_is_refused(T_min, T_max):
    with pytest.raises(ScienceInputError, match="0 < T_min < T_max"):
        hinshelwood_estimate(T_min, T_max, 2e5, 5, 4e-10, 3.8e-10, 0.03, 0.028, 250.0, 71.4)
