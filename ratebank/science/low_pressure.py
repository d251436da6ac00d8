"""Hinshelwood's strong-collision k0 as a modified-Arrhenius expression over a range.

:func:`ratebank.science.falloff.hinshelwood_low_pressure_limit` gives k0(T) of
a unimolecular decomposition at each temperature; a store keeps rate laws as
k = A T^n exp(-Ea/RT). :func:`hinshelwood_estimate` evaluates k0 on a grid
over [T_min, T_max] and fits ln k0 = ln A + n ln T - Ea/(RT) to it by linear
least squares, reporting the largest relative deviation of the fit.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science.constants import GAS_CONSTANT
from ratebank.science.falloff import hinshelwood_low_pressure_limit

#: Temperatures of the fitted grid.
GRID_POINTS = 25


class LowPressureEstimate(NamedTuple):
    """k0 = A T^n exp(-Ea/RT) [m^3 mol^-1 s^-1 K^-n, -, J mol^-1] fitted to Hinshelwood's k0,
    the largest relative deviation of the fit on its grid [-], and k0 at the grid's
    geometric middle [m^3 mol^-1 s^-1]."""

    A: float
    n: float
    Ea: float
    max_relative_deviation: float
    k0_at_middle: float
    T_middle: float


def hinshelwood_estimate(
    T_min: float,
    T_max: float,
    threshold_energy: float,
    oscillators: float,
    diameter: float,
    bath_diameter: float,
    molar_mass: float,
    bath_molar_mass: float,
    well_depth: float,
    bath_well_depth: float,
    *,
    collision_efficiency: float = 1.0,
) -> LowPressureEstimate:
    """Hinshelwood's strong-collision k0 over a range, as a modified-Arrhenius expression.

    k0(T) = beta_c Z_LJ(T) (E0/RT)^(s-1) / (s-1)! exp(-E0/RT)   (Hinshelwood 1927)

    evaluated at 25 temperatures spaced evenly in 1/T over [T_min, T_max] and fitted
    with ln k0 = ln A + n ln T - Ea/(RT) (ordinary linear least squares, numpy).

    Parameters
    ----------
    T_min, T_max : float
        Range [K]; 0 < T_min < T_max.
    threshold_energy : float
        E0 [J mol^-1]; positive.
    oscillators : float
        Effective number of oscillators s [-]; at least 1.
    diameter, bath_diameter : float
        Lennard-Jones diameters of the reactant and the bath gas [m].
    molar_mass, bath_molar_mass : float
        [kg mol^-1].
    well_depth, bath_well_depth : float
        Lennard-Jones well depths eps/k_B [K].
    collision_efficiency : float, optional
        beta_c [-], in (0, 1].

    Returns
    -------
    LowPressureEstimate
        A [m^3 mol^-1 s^-1 K^-n], n [-], Ea [J mol^-1], the fit's largest relative
        deviation, and k0 at the geometric middle of the range.

    Raises
    ------
    ScienceInputError
        For a range that is not ordered and positive, or an input
        :func:`~ratebank.science.falloff.hinshelwood_low_pressure_limit` refuses.

    References
    ----------
    Hinshelwood, *Proc. R. Soc. London A* 1927, 113, 230; Laidler, *Chemical Kinetics*,
    3rd ed. (1987), ch. 5.

    Examples
    --------
    >>> e = hinshelwood_estimate(600.0, 1200.0, 160e3, 6, 4.3e-10, 3.798e-10, 0.029,
    ...                          0.028, 250.0, 71.4, collision_efficiency=0.3)
    >>> e.max_relative_deviation < 0.01
    True
    >>> f"{e.k0_at_middle:.3e}"
    '6.551e+02'
    """
    if not (np.isfinite(T_min) and np.isfinite(T_max) and 0 < T_min < T_max):
        raise ScienceInputError("The range needs 0 < T_min < T_max [K].")
    T = 1.0 / np.linspace(1.0 / T_min, 1.0 / T_max, GRID_POINTS)
    middle = float(np.sqrt(T_min * T_max))
    # the grid and the middle of the range in one evaluation
    k_all = np.asarray(
        hinshelwood_low_pressure_limit(
            np.append(T, middle),
            threshold_energy,
            oscillators,
            diameter,
            bath_diameter,
            molar_mass,
            bath_molar_mass,
            well_depth,
            bath_well_depth,
            collision_efficiency=collision_efficiency,
        ),
        dtype=float,
    )
    k0, at_middle = k_all[:-1], k_all[-1]
    design = np.column_stack([np.ones_like(T), np.log(T), -1.0 / (GAS_CONSTANT * T)])
    (ln_A, n, Ea), *_ = np.linalg.lstsq(design, np.log(k0), rcond=None)
    fitted = np.exp(design @ np.array([ln_A, n, Ea]))
    return LowPressureEstimate(
        float(np.exp(ln_A)),
        float(n),
        float(Ea),
        float(np.max(np.abs(fitted / k0 - 1.0))),
        float(at_middle),
        middle,
    )
