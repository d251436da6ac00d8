"""Simple collision theory for bimolecular gas-phase reactions.

Everything is SI-molar and vectorized: temperatures [K], diameters [m], molar
masses [kg mol^-1], energies [J mol^-1], bimolecular rate constants
[m^3 mol^-1 s^-1] (or [m^3 molecule^-1 s^-1] where ``per_molecule=True``).
Every function broadcasts its array arguments with the usual numpy rules.

The collision-rate constant of A + B is

    z(T) = sigma_AB c(T) N_A,   sigma_AB = pi ((d_A + d_B)/2)^2,
    c(T) = sqrt(8 k_B T / (pi mu)),   mu = m_A m_B / (m_A + m_B).

ratebank defines a rate constant through the rate of reaction,
r = k prod([X_i]^nu_i). For a self-reaction A + A that means r = k[A]^2 and
d[A]/dt = -2 r, so the collision-rate constant of A + A carries a factor 1/2
(each collision is counted once, and removes two A).

The estimate k(T) = P z(T) exp(-E0/RT) has the local Arrhenius activation
energy Ea = E0 + E_z(T), where E_z = -R d ln z / d(1/T) is the activation
energy of the collision rate itself: RT/2 for hard spheres, less for the
Lennard-Jones-corrected rate because Omega(2,2)* falls with temperature.

References
----------
1. Laidler, K. J. *Chemical Kinetics*, 3rd ed.; Harper & Row, 1987; ch. 3.
2. Hirschfelder, J. O.; Curtiss, C. F.; Bird, R. B. *Molecular Theory of
   Gases and Liquids*; Wiley, 1954.
3. Neufeld, P. D.; Janzen, A. R.; Aziz, R. A. Empirical Equations to
   Calculate 16 of the Transport Collision Integrals Omega(l,s)* for the
   Lennard-Jones (12-6) Potential. *J. Chem. Phys.* 1972, 57, 1100-1102.
   doi:10.1063/1.1678363
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science.arrhenius import (
    approximate_with_modified_arrhenius,
    local_activation_energy,
    modified_arrhenius,
)
from ratebank.science.constants import AVOGADRO, BOLTZMANN, GAS_CONSTANT

__all__ = [
    "COLLISION_MODELS",
    "NEUFELD_T_STAR_RANGE",
    "STERIC_DEFINITIONS",
    "CollisionEstimate",
    "activation_energy_from_threshold_energy",
    "arrhenius_to_half_order",
    "check_identical_partners",
    "collision_limit_ratio",
    "collision_rate",
    "collision_rate_activation_energy",
    "collision_rate_constant",
    "collision_theory_estimate",
    "collision_theory_rate_constant",
    "combined_well_depth",
    "derived_steric_factor",
    "half_order_to_arrhenius",
    "hard_sphere_cross_section",
    "lennard_jones_collision_rate_constant",
    "local_steric_factor",
    "mean_relative_speed",
    "mean_speed",
    "omega22_neufeld",
    "omega22_neufeld_log_slope",
    "reduced_mass",
    "self_reaction_factor",
    "steric_factor_of_expression",
    "threshold_energy_from_activation_energy",
]

#: Collision models understood by :func:`collision_rate_activation_energy`.
COLLISION_MODELS: tuple[str, ...] = ("hard-sphere", "lennard-jones")

#: Reduced-temperature range (inclusive) over which the Neufeld, Janzen & Aziz
#: (1972) fit of Omega(2,2)* was made.
NEUFELD_T_STAR_RANGE: tuple[float, float] = (0.3, 100.0)

# Neufeld, Janzen & Aziz (1972), Table I, (l, s) = (2, 2):
# Omega = A/T*^B + C exp(-D T*) + E exp(-F T*) + R T*^B sin(S T*^W - P).
_NJA22_A = 1.16145
_NJA22_B = 0.14874
_NJA22_C = 0.52487
_NJA22_D = 0.77320
_NJA22_E = 2.16178
_NJA22_F = 2.43787
_NJA22_R = -6.435e-4
_NJA22_S = 18.0323
_NJA22_W = -0.76830
_NJA22_P = 7.27371


def _positive(name: str, value, unit: str) -> np.ndarray:
    """Return ``value`` as a float array, refusing non-positive or non-finite entries."""
    array = np.asarray(value, dtype=float)
    bad = ~(np.isfinite(array) & (array > 0))
    if np.any(bad):
        example = float(array[bad].flat[0]) if array.ndim else float(array)
        raise ScienceInputError(f"{name} must be positive and finite [{unit}]; got {example!r}.")
    return array


def _finite(name: str, value, unit: str) -> np.ndarray:
    """Return ``value`` as a float array, refusing non-finite entries."""
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ScienceInputError(f"{name} must be finite [{unit}]; got a NaN or infinite value.")
    return array


def reduced_mass(molar_mass_a, molar_mass_b):
    """Reduced mass of a colliding pair, per molecule.

    mu = M_A M_B / ((M_A + M_B) N_A)

    Parameters
    ----------
    molar_mass_a, molar_mass_b : array_like
        Molar masses of the two partners [kg mol^-1]; positive.

    Returns
    -------
    numpy.ndarray or float
        Reduced mass mu [kg].

    Raises
    ------
    ScienceInputError
        If a molar mass is not positive and finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    Two nitrogen molecules (28.0134 g/mol) have mu = m/2:

    >>> mu = reduced_mass(28.0134e-3, 28.0134e-3)
    >>> f"{mu:.5e}"
    '2.32587e-26'
    """
    ma = _positive("molar_mass_a", molar_mass_a, "kg mol-1")
    mb = _positive("molar_mass_b", molar_mass_b, "kg mol-1")
    return ma * mb / ((ma + mb) * AVOGADRO)


def mean_speed(T, molar_mass):
    """Mean molecular speed of a Maxwell-Boltzmann gas.

    c = sqrt(8 R T / (pi M))

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    molar_mass : array_like
        Molar mass M [kg mol^-1]; positive.

    Returns
    -------
    numpy.ndarray or float
        Mean speed [m s^-1].

    Raises
    ------
    ScienceInputError
        If T or M is not positive and finite.

    References
    ----------
    Hirschfelder, Curtiss & Bird, *Molecular Theory of Gases and Liquids* (1954).

    Examples
    --------
    >>> f"{mean_speed(298.15, 28.0134e-3):.2f}"
    '474.70'
    """
    T = _positive("T", T, "K")
    M = _positive("molar_mass", molar_mass, "kg mol-1")
    return np.sqrt(8.0 * GAS_CONSTANT * T / (np.pi * M))


def mean_relative_speed(T, molar_mass_a, molar_mass_b):
    """Mean relative speed of two molecules in a Maxwell-Boltzmann gas.

    c_rel = sqrt(8 k_B T / (pi mu)),  mu = m_A m_B / (m_A + m_B)

    For like molecules c_rel = sqrt(2) times the mean speed.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1]; positive.

    Returns
    -------
    numpy.ndarray or float
        Mean relative speed [m s^-1].

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    >>> f"{mean_relative_speed(298.15, 28.0134e-3, 28.0134e-3):.2f}"
    '671.33'
    """
    T = _positive("T", T, "K")
    mu = reduced_mass(molar_mass_a, molar_mass_b)
    return np.sqrt(8.0 * BOLTZMANN * T / (np.pi * mu))


def hard_sphere_cross_section(diameter_a, diameter_b):
    """Hard-sphere collision cross-section of a pair.

    sigma_AB = pi d_AB^2,  d_AB = (d_A + d_B)/2

    Parameters
    ----------
    diameter_a, diameter_b : array_like
        Collision diameters [m]; positive.

    Returns
    -------
    numpy.ndarray or float
        Cross-section [m^2].

    Raises
    ------
    ScienceInputError
        If a diameter is not positive and finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    N2 + O2 with the gas-phase Lennard-Jones diameters 3.798 and 3.467 Angstrom:

    >>> f"{hard_sphere_cross_section(3.798e-10, 3.467e-10):.4e}"
    '4.1453e-19'
    """
    da = _positive("diameter_a", diameter_a, "m")
    db = _positive("diameter_b", diameter_b, "m")
    return np.pi * (0.5 * (da + db)) ** 2


def check_identical_partners(
    identical, pairs: list[tuple[str, np.ndarray, np.ndarray]]
) -> np.ndarray:
    """``identical`` as a boolean array; refuses a self-reaction whose partners differ."""
    flags = np.asarray(identical, dtype=bool)
    if not flags.any():
        return flags
    for name, a, b in pairs:
        a, b, where = np.broadcast_arrays(a, b, flags)
        if not np.allclose(a[where], b[where], rtol=1e-9, atol=0.0):
            raise ScienceInputError(
                f"identical=True describes a self-reaction A + A, so {name}_b must equal "
                f"{name}_a; they differ."
            )
    return flags


def self_reaction_factor(identical):
    """The factor s of ratebank's rate law: 1/2 for a self-reaction A + A, else 1.

    ratebank defines k through the rate of reaction, r = k[A]^2 with
    d[A]/dt = -2 r for A + A, so each A-A collision is counted once. This is
    the only place the factor lives; every collision rate applies it.

    Parameters
    ----------
    identical : bool or array_like of bool
        True for a self-reaction, per reaction.

    Returns
    -------
    numpy.ndarray or float
        s [-].

    References
    ----------
    IUPAC, *Quantities, Units and Symbols in Physical Chemistry* (Green Book),
    3rd ed. (2007), section 2.12 (rate of reaction).

    Examples
    --------
    >>> self_reaction_factor(True), self_reaction_factor([False, True]).tolist()
    (0.5, [1.0, 0.5])
    """
    factor = np.where(np.asarray(identical, dtype=bool), 0.5, 1.0)
    return float(factor) if factor.ndim == 0 else factor


def collision_rate_constant(
    T,
    diameter_a,
    diameter_b,
    molar_mass_a,
    molar_mass_b,
    *,
    identical=False,
    per_molecule: bool = False,
):
    """Hard-sphere collision-rate constant z(T) of A + B.

    z(T) = s sigma_AB c_rel(T) N_A,  sigma_AB = pi ((d_A + d_B)/2)^2,
    c_rel = sqrt(8 k_B T / (pi mu)),

    with s = 1 for distinguishable partners. For the self-reaction A + A
    (``identical=True``) mu = m_A/2 and s = 1/2: ratebank's rate law is
    r = k[A]^2 with d[A]/dt = -2 r, so each A-A collision is counted once.
    A table that defines k through -d[A]/dt = k[A]^2 uses twice this value.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    diameter_a, diameter_b : array_like
        Hard-sphere collision diameters [m]; positive.
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1]; positive.
    identical : bool or array_like of bool, optional
        True for the self-reaction A + A, per reaction (broadcast with the
        other arguments). The B arguments of those reactions must equal the A
        arguments.
    per_molecule : bool, optional
        Return [m^3 molecule^-1 s^-1] instead of [m^3 mol^-1 s^-1].

    Returns
    -------
    numpy.ndarray or float
        z(T) [m^3 mol^-1 s^-1], or [m^3 molecule^-1 s^-1] if ``per_molecule``.

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite, or ``identical`` is set for
        partners that differ.

    Notes
    -----
    Valid for neutral partners without long-range attraction; the rigid-sphere
    picture typically overestimates the reactive cross-section, which the
    steric factor absorbs. z grows as T^(1/2).

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    N2 + O2 at 298.15 K, in cm^3 molecule^-1 s^-1:

    >>> z = collision_rate_constant(298.15, 3.798e-10, 3.467e-10, 28.0134e-3, 31.9988e-3,
    ...                             per_molecule=True)
    >>> f"{z * 1e6:.4e}"
    '2.6949e-10'

    The self-reaction carries the factor 1/2:

    >>> zaa = collision_rate_constant(298.15, 3.798e-10, 3.798e-10, 28.0134e-3, 28.0134e-3,
    ...                               identical=True, per_molecule=True)
    >>> f"{zaa * 1e6:.4e}"
    '1.5211e-10'
    """
    T = _positive("T", T, "K")
    da = _positive("diameter_a", diameter_a, "m")
    db = _positive("diameter_b", diameter_b, "m")
    ma = _positive("molar_mass_a", molar_mass_a, "kg mol-1")
    mb = _positive("molar_mass_b", molar_mass_b, "kg mol-1")
    flags = check_identical_partners(identical, [("diameter", da, db), ("molar_mass", ma, mb)])
    z = hard_sphere_cross_section(da, db) * mean_relative_speed(T, ma, mb)
    z = z * self_reaction_factor(flags)
    if not per_molecule:
        z = z * AVOGADRO
    return z


def combined_well_depth(well_depth_a, well_depth_b):
    """Lennard-Jones well depth of a pair by the Berthelot rule.

    eps_AB / k_B = sqrt(eps_A eps_B) / k_B

    Parameters
    ----------
    well_depth_a, well_depth_b : array_like
        Well depths eps/k_B [K]; positive.

    Returns
    -------
    numpy.ndarray or float
        Pair well depth eps_AB/k_B [K].

    Raises
    ------
    ScienceInputError
        If a well depth is not positive and finite.

    References
    ----------
    Hirschfelder, Curtiss & Bird, *Molecular Theory of Gases and Liquids* (1954).

    Examples
    --------
    >>> f"{combined_well_depth(71.4, 106.7):.3f}"
    '87.283'
    """
    ea = _positive("well_depth_a", well_depth_a, "K")
    eb = _positive("well_depth_b", well_depth_b, "K")
    return np.sqrt(ea * eb)


def _neufeld_range_check(T_star: np.ndarray, extrapolate: bool) -> None:
    if extrapolate:
        return
    low, high = NEUFELD_T_STAR_RANGE
    outside = (T_star < low) | (T_star > high)
    if np.any(outside):
        example = float(T_star[outside].flat[0]) if T_star.ndim else float(T_star)
        raise ScienceInputError(
            f"The Neufeld-Janzen-Aziz fit of Omega(2,2)* is valid for {low} <= T* <= {high}; "
            f"got T* = {example:.4g} (pass extrapolate=True to evaluate it anyway)."
        )


def omega22_neufeld(T_star, *, extrapolate: bool = False):
    """Reduced collision integral Omega(2,2)* of the Lennard-Jones (12-6) potential.

    Omega(2,2)* = A/T*^B + C exp(-D T*) + E exp(-F T*) + R T*^B sin(S T*^W - P)

    with A = 1.16145, B = 0.14874, C = 0.52487, D = 0.77320, E = 2.16178,
    F = 2.43787, R = -6.435e-4, S = 18.0323, W = -0.76830, P = 7.27371
    (Neufeld, Janzen & Aziz 1972, including their sine term).

    Parameters
    ----------
    T_star : array_like
        Reduced temperature T* = k_B T / eps [-]; positive.
    extrapolate : bool, optional
        Evaluate outside the fitted range instead of raising. The fit is not
        a physical law there: below T* = 0.3 it misses the tabulated integral
        by more than its stated accuracy, and above T* = 100 the sine term
        is no longer a correction to it.

    Returns
    -------
    numpy.ndarray or float
        Omega(2,2)* [-].

    Raises
    ------
    ScienceInputError
        If T* is not positive and finite, or lies outside
        0.3 <= T* <= 100 and ``extrapolate`` is False.

    Notes
    -----
    Valid for 0.3 <= T* <= 100, where it agrees with the later fit of Kim &
    Monroe (2014) to within 0.2 %. Omega(2,2)* is the viscosity integral, not
    the diffusion integral Omega(1,1)*.

    References
    ----------
    Neufeld, P. D.; Janzen, A. R.; Aziz, R. A. *J. Chem. Phys.* 1972, 57,
    1100-1102. doi:10.1063/1.1678363

    Examples
    --------
    >>> f"{omega22_neufeld(1.0):.5f}"
    '1.59315'
    """
    T_star = _positive("T_star", T_star, "-")
    _neufeld_range_check(T_star, extrapolate)
    t = T_star
    return (
        _NJA22_A / t**_NJA22_B
        + _NJA22_C * np.exp(-_NJA22_D * t)
        + _NJA22_E * np.exp(-_NJA22_F * t)
        + _NJA22_R * t**_NJA22_B * np.sin(_NJA22_S * t**_NJA22_W - _NJA22_P)
    )


def omega22_neufeld_log_slope(T_star, *, extrapolate: bool = False):
    """Logarithmic slope d ln Omega(2,2)* / d ln T* of the Neufeld fit.

    With Omega = A t^-B + C e^(-D t) + E e^(-F t) + R t^B sin(S t^W - P), t = T*,

    t dOmega/dt = -A B t^-B - C D t e^(-D t) - E F t e^(-F t)
                  + R t^B [B sin(S t^W - P) + S W t^W cos(S t^W - P)],

    and the slope is (t dOmega/dt) / Omega, the analytic derivative of the
    fit in :func:`omega22_neufeld`.

    Parameters
    ----------
    T_star : array_like
        Reduced temperature T* [-]; positive.
    extrapolate : bool, optional
        Evaluate outside 0.3 <= T* <= 100 instead of raising.

    Returns
    -------
    numpy.ndarray or float
        d ln Omega(2,2)* / d ln T* [-]; negative over the valid range.

    Raises
    ------
    ScienceInputError
        As :func:`omega22_neufeld`.

    References
    ----------
    Neufeld, Janzen & Aziz, *J. Chem. Phys.* 1972, 57, 1100.
    doi:10.1063/1.1678363

    Examples
    --------
    >>> f"{omega22_neufeld_log_slope(3.0):.4f}"
    '-0.2627'
    """
    T_star = _positive("T_star", T_star, "-")
    _neufeld_range_check(T_star, extrapolate)
    t = T_star
    phase = _NJA22_S * t**_NJA22_W - _NJA22_P
    t_derivative = (
        -_NJA22_A * _NJA22_B * t**-_NJA22_B
        - _NJA22_C * _NJA22_D * t * np.exp(-_NJA22_D * t)
        - _NJA22_E * _NJA22_F * t * np.exp(-_NJA22_F * t)
        + _NJA22_R
        * t**_NJA22_B
        * (_NJA22_B * np.sin(phase) + _NJA22_S * _NJA22_W * t**_NJA22_W * np.cos(phase))
    )
    return t_derivative / omega22_neufeld(t, extrapolate=True)


def _lennard_jones_reduced_temperature(T, well_depth_a, well_depth_b) -> np.ndarray:
    T = _positive("T", T, "K")
    return T / combined_well_depth(well_depth_a, well_depth_b)


def lennard_jones_collision_rate_constant(
    T,
    diameter_a,
    diameter_b,
    molar_mass_a,
    molar_mass_b,
    well_depth_a,
    well_depth_b,
    *,
    identical=False,
    per_molecule: bool = False,
):
    """Collision-rate constant corrected for the Lennard-Jones attraction.

    z_LJ(T) = z(T) Omega(2,2)*(T*),  T* = T / eps_AB,

    with z(T) from :func:`collision_rate_constant` evaluated at the
    Lorentz-Berthelot pair diameter d_AB = (d_A + d_B)/2 and pair well depth
    eps_AB = sqrt(eps_A eps_B), and Omega(2,2)* from :func:`omega22_neufeld`.
    The self-reaction convention (factor 1/2 for A + A) is that of
    :func:`collision_rate_constant`.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    diameter_a, diameter_b : array_like
        Lennard-Jones diameters sigma [m]; positive.
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1]; positive.
    well_depth_a, well_depth_b : array_like
        Lennard-Jones well depths eps/k_B [K]; positive.
    identical : bool or array_like of bool, optional
        True for the self-reaction A + A, per reaction (B arguments must equal
        A's there).
    per_molecule : bool, optional
        Return [m^3 molecule^-1 s^-1] instead of [m^3 mol^-1 s^-1].

    Returns
    -------
    numpy.ndarray or float
        z_LJ(T) [m^3 mol^-1 s^-1], or per molecule.

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite, or T/eps_AB lies outside
        the Neufeld range 0.3 <= T* <= 100.

    References
    ----------
    Hirschfelder, Curtiss & Bird, *Molecular Theory of Gases and Liquids*
    (1954); Neufeld, Janzen & Aziz, *J. Chem. Phys.* 1972, 57, 1100,
    doi:10.1063/1.1678363.

    Examples
    --------
    >>> z = lennard_jones_collision_rate_constant(
    ...     298.15, 3.798e-10, 3.467e-10, 28.0134e-3, 31.9988e-3, 71.4, 106.7,
    ...     per_molecule=True)
    >>> f"{z * 1e6:.4e}"
    '2.7100e-10'
    """
    T = _positive("T", T, "K")
    ea = _positive("well_depth_a", well_depth_a, "K")
    eb = _positive("well_depth_b", well_depth_b, "K")
    check_identical_partners(identical, [("well_depth", ea, eb)])
    T_star = _lennard_jones_reduced_temperature(T, ea, eb)
    z = collision_rate_constant(
        T,
        diameter_a,
        diameter_b,
        molar_mass_a,
        molar_mass_b,
        identical=identical,
        per_molecule=per_molecule,
    )
    return z * omega22_neufeld(T_star)


def collision_rate_activation_energy(
    T,
    *,
    model: str = "hard-sphere",
    well_depth_a=None,
    well_depth_b=None,
):
    """Local activation energy of the collision rate itself.

    E_z(T) = -R d ln z / d(1/T) = R T^2 d ln z / dT

    - ``"hard-sphere"``: z is proportional to T^(1/2), so E_z = R T / 2.
    - ``"lennard-jones"``: z_LJ = z Omega(2,2)*(T/eps_AB), so
      E_z = R T / 2 + R T d ln Omega / d ln T*, using the analytic slope of
      the Neufeld fit (:func:`omega22_neufeld_log_slope`). Omega falls with
      T, so E_z is smaller than RT/2.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    model : {"hard-sphere", "lennard-jones"}
        The collision model.
    well_depth_a, well_depth_b : array_like, optional
        Lennard-Jones well depths eps/k_B [K]; needed for ``"lennard-jones"``
        and ignored for ``"hard-sphere"``.

    Returns
    -------
    numpy.ndarray or float
        E_z [J mol^-1].

    Raises
    ------
    ScienceInputError
        For an unknown model, missing well depths, a non-positive input, or
        T/eps_AB outside 0.3 <= T* <= 100.

    References
    ----------
    Laidler, K. J. A glossary of terms used in chemical kinetics.
    *Pure Appl. Chem.* 1996, 68, 149-192 (activation energy as
    -R d ln k / d(1/T)). doi:10.1351/pac199668010149

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> f"{collision_rate_activation_energy(1000.0) / GAS_CONSTANT:.1f}"
    '500.0'
    >>> e = collision_rate_activation_energy(298.15, model="lennard-jones",
    ...                                      well_depth_a=71.4, well_depth_b=106.7)
    >>> f"{e / GAS_CONSTANT:.1f}"
    '77.0'
    """
    T = _positive("T", T, "K")
    if model == "hard-sphere":
        return 0.5 * GAS_CONSTANT * T
    if model == "lennard-jones":
        if well_depth_a is None or well_depth_b is None:
            raise ScienceInputError(
                "The lennard-jones collision model needs well_depth_a and well_depth_b [K]."
            )
        T_star = _lennard_jones_reduced_temperature(T, well_depth_a, well_depth_b)
        return GAS_CONSTANT * T * (0.5 + omega22_neufeld_log_slope(T_star))
    raise ScienceInputError(
        f"Unknown collision model {model!r}; expected one of {', '.join(COLLISION_MODELS)}."
    )


def collision_theory_rate_constant(T, steric_factor, collision_rate, threshold_energy):
    """Collision-theory rate constant with a steric factor.

    k(T) = P z(T) exp(-E0 / (R T))

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    steric_factor : array_like
        Steric factor P [-]; positive (P > 1 is allowed).
    collision_rate : array_like
        Collision-rate constant z evaluated at ``T``
        [m^3 mol^-1 s^-1] (the result carries the same unit).
    threshold_energy : array_like
        Threshold energy E0 [J mol^-1]; finite (may be negative).

    Returns
    -------
    numpy.ndarray or float
        k(T), in the unit of ``collision_rate``.

    Raises
    ------
    ScienceInputError
        If T, P or z is not positive and finite, or E0 is not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    >>> f"{collision_theory_rate_constant(300.0, 0.01, 1.6e8, 0.0):.3e}"
    '1.600e+06'
    """
    T = _positive("T", T, "K")
    P = _positive("steric_factor", steric_factor, "-")
    z = _positive("collision_rate", collision_rate, "m3 mol-1 s-1")
    E0 = _finite("threshold_energy", threshold_energy, "J mol-1")
    return P * z * np.exp(-E0 / (GAS_CONSTANT * T))


def _collision_activation_energy_or_hard_sphere(T: np.ndarray, collision_activation_energy):
    if collision_activation_energy is None:
        return 0.5 * GAS_CONSTANT * T
    return _finite("collision_activation_energy", collision_activation_energy, "J mol-1")


def threshold_energy_from_activation_energy(activation_energy, T, collision_activation_energy=None):
    """Threshold energy E0 of a collision-theory estimate from a local Ea.

    E0 = Ea(T) - E_z(T)

    where E_z is the collision rate's own activation energy
    (:func:`collision_rate_activation_energy`); it defaults to RT/2, the
    hard-sphere value.

    Parameters
    ----------
    activation_energy : array_like
        Local Arrhenius activation energy Ea at T [J mol^-1].
    T : array_like
        Temperature at which Ea holds [K]; positive.
    collision_activation_energy : array_like, optional
        E_z at T [J mol^-1]; default R T / 2.

    Returns
    -------
    numpy.ndarray or float
        E0 [J mol^-1].

    Raises
    ------
    ScienceInputError
        If T is not positive or an energy is not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> E0 = threshold_energy_from_activation_energy(10_000.0, 300.0)
    >>> f"{10_000.0 - E0:.4f} {0.5 * GAS_CONSTANT * 300.0:.4f}"
    '1247.1694 1247.1694'
    """
    T = _positive("T", T, "K")
    Ea = _finite("activation_energy", activation_energy, "J mol-1")
    return Ea - _collision_activation_energy_or_hard_sphere(T, collision_activation_energy)


def activation_energy_from_threshold_energy(threshold_energy, T, collision_activation_energy=None):
    """Local Arrhenius activation energy of a collision-theory estimate.

    Ea(T) = E0 + E_z(T),  E_z defaulting to the hard-sphere R T / 2.

    The inverse of :func:`threshold_energy_from_activation_energy`.

    Parameters
    ----------
    threshold_energy : array_like
        Threshold energy E0 [J mol^-1].
    T : array_like
        Temperature [K]; positive.
    collision_activation_energy : array_like, optional
        E_z at T [J mol^-1]; default R T / 2.

    Returns
    -------
    numpy.ndarray or float
        Ea(T) [J mol^-1].

    Raises
    ------
    ScienceInputError
        If T is not positive or an energy is not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    >>> f"{activation_energy_from_threshold_energy(0.0, 1000.0):.3f}"
    '4157.231'
    """
    T = _positive("T", T, "K")
    E0 = _finite("threshold_energy", threshold_energy, "J mol-1")
    return E0 + _collision_activation_energy_or_hard_sphere(T, collision_activation_energy)


def half_order_to_arrhenius(A_half, threshold_energy, T_ref):
    """Two-parameter Arrhenius form of k = A_half T^(1/2) exp(-E0/RT) at T_ref.

    A = A_half sqrt(T_ref) e^(1/2),  Ea = E0 + R T_ref / 2.

    The two forms give the same k(T_ref) and the same local activation energy
    at T_ref; they part away from it (the half-order form curves upward).

    Parameters
    ----------
    A_half : array_like
        Pre-exponential factor of the T^(1/2) form [k-unit K^-1/2]; positive.
    threshold_energy : array_like
        E0 [J mol^-1].
    T_ref : array_like
        Temperature at which the forms are matched [K]; positive.

    Returns
    -------
    tuple of (numpy.ndarray or float, numpy.ndarray or float)
        (A [k-unit], Ea [J mol^-1]).

    Raises
    ------
    ScienceInputError
        If A_half or T_ref is not positive and finite, or E0 is not finite.

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149 (local Arrhenius parameters).
    doi:10.1351/pac199668010149

    Examples
    --------
    >>> A, Ea = half_order_to_arrhenius(1.0, 0.0, 400.0)
    >>> f"{A:.6f}"
    '32.974425'
    """
    A_half = _positive("A_half", A_half, "k-unit K^-1/2")
    T_ref = _positive("T_ref", T_ref, "K")
    E0 = _finite("threshold_energy", threshold_energy, "J mol-1")
    return A_half * np.sqrt(T_ref) * np.exp(0.5), E0 + 0.5 * GAS_CONSTANT * T_ref


def arrhenius_to_half_order(A, activation_energy, T_ref):
    """T^(1/2) form of k = A exp(-Ea/RT) matched at T_ref.

    A_half = A / (sqrt(T_ref) e^(1/2)),  E0 = Ea - R T_ref / 2.

    The inverse of :func:`half_order_to_arrhenius`.

    Parameters
    ----------
    A : array_like
        Arrhenius pre-exponential factor [k-unit]; positive.
    activation_energy : array_like
        Ea [J mol^-1].
    T_ref : array_like
        Temperature at which the forms are matched [K]; positive.

    Returns
    -------
    tuple of (numpy.ndarray or float, numpy.ndarray or float)
        (A_half [k-unit K^-1/2], E0 [J mol^-1]).

    Raises
    ------
    ScienceInputError
        If A or T_ref is not positive and finite, or Ea is not finite.

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149. doi:10.1351/pac199668010149

    Examples
    --------
    >>> A_half, E0 = arrhenius_to_half_order(*half_order_to_arrhenius(2.0e6, 5000.0, 400.0),
    ...                                      400.0)
    >>> f"{A_half:.6e} {E0:.3f}"
    '2.000000e+06 5000.000'
    """
    A = _positive("A", A, "k-unit")
    T_ref = _positive("T_ref", T_ref, "K")
    Ea = _finite("activation_energy", activation_energy, "J mol-1")
    return A / (np.sqrt(T_ref) * np.exp(0.5)), Ea - 0.5 * GAS_CONSTANT * T_ref


def derived_steric_factor(
    rate_constant, activation_energy, T, collision_rate, collision_activation_energy=None
):
    """Steric factor implied by a measured rate constant.

    P = k(T_m) / (z(T_m) exp(-E0 / (R T_m))),  E0 = Ea_local(T_m) - E_z(T_m),

    which for hard spheres equals A_local / (e^(1/2) z(T_m)). P > 1 is
    returned as it is, never clipped: it happens (long-range attraction,
    chain or complex-forming channels) and should be flagged by the caller.

    Parameters
    ----------
    rate_constant : array_like
        k at T_m [m^3 mol^-1 s^-1]; positive.
    activation_energy : array_like
        Local Arrhenius activation energy at T_m [J mol^-1].
    T : array_like
        T_m, usually the geometric-mean temperature of the data [K].
    collision_rate : array_like
        z at T_m, in the unit of ``rate_constant``; positive.
    collision_activation_energy : array_like, optional
        E_z at T_m [J mol^-1]; default the hard-sphere R T / 2.

    Returns
    -------
    numpy.ndarray or float
        P [-].

    Raises
    ------
    ScienceInputError
        If k, T or z is not positive and finite or an energy is not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    An estimate with P = 0.02 gives its P back:

    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> T, z, E0 = 300.0, 1.6e8, 15_000.0
    >>> k = collision_theory_rate_constant(T, 0.02, z, E0)
    >>> Ea = E0 + 0.5 * GAS_CONSTANT * T
    >>> f"{derived_steric_factor(k, Ea, T, z):.6f}"
    '0.020000'
    """
    k = _positive("rate_constant", rate_constant, "m3 mol-1 s-1")
    T = _positive("T", T, "K")
    z = _positive("collision_rate", collision_rate, "m3 mol-1 s-1")
    E0 = threshold_energy_from_activation_energy(activation_energy, T, collision_activation_energy)
    return k / (z * np.exp(-E0 / (GAS_CONSTANT * T)))


def collision_limit_ratio(T, rate_constant, collision_rate):
    """Largest ratio k(T)/z(T) over a temperature grid, and where it occurs.

    ratio_max = max_T k(T) / z(T)

    A bimolecular rate constant above the collision rate (ratio > 1) needs a
    reason (long-range forces, a wrong unit or a wrong order).

    Parameters
    ----------
    T : array_like, shape (..., n_T)
        Temperature grid [K]; positive. The last axis is the grid.
    rate_constant : array_like, shape (..., n_T)
        k on the grid [m^3 mol^-1 s^-1]; finite and non-negative.
    collision_rate : array_like, shape (..., n_T)
        z on the grid, same unit; positive.

    The three arrays broadcast against each other, so a (n_T,) grid with
    (n_reactions, n_T) rate arrays checks many reactions at once.

    Returns
    -------
    tuple of (numpy.ndarray, numpy.ndarray)
        (largest k/z [-], the temperature where it occurs [K]), each of the
        broadcast shape without its last axis (floats for a single curve).

    Raises
    ------
    ScienceInputError
        If the grid is empty, T or z is not positive and finite, or k is
        negative or not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3 (the collision rate
    as the upper limit of a bimolecular rate constant).

    Examples
    --------
    >>> import numpy as np
    >>> T = np.array([300.0, 1000.0, 2000.0])
    >>> k = np.array([[1e7, 2e8, 5e8], [1e5, 1e5, 1e5]])
    >>> z = np.array([1.0e8, 1.8e8, 2.6e8])
    >>> ratio, where = collision_limit_ratio(T, k, z)
    >>> [f"{r:.3f}" for r in ratio], where.tolist()
    (['1.923', '0.001'], [2000.0, 300.0])
    """
    T = _positive("T", T, "K")
    z = _positive("collision_rate", collision_rate, "m3 mol-1 s-1")
    k = np.asarray(rate_constant, dtype=float)
    if not np.all(np.isfinite(k) & (k >= 0)):
        raise ScienceInputError("rate_constant must be finite and non-negative on the whole grid.")
    T, k, z = np.broadcast_arrays(T, k, z)
    if T.ndim == 0 or T.shape[-1] == 0:
        raise ScienceInputError("collision_limit_ratio needs a temperature grid of at least 1 T.")
    ratio = k / z
    where = np.argmax(ratio, axis=-1)[..., np.newaxis]
    largest = np.take_along_axis(ratio, where, axis=-1)[..., 0]
    at_T = np.take_along_axis(T, where, axis=-1)[..., 0]
    if largest.ndim == 0:
        return float(largest), float(at_T)
    return largest, at_T


def collision_rate(
    T,
    diameter_a,
    diameter_b,
    molar_mass_a,
    molar_mass_b,
    *,
    model: str = "hard-sphere",
    well_depth_a=None,
    well_depth_b=None,
    identical=False,
):
    """Collision-rate constant z(T) [m^3 mol^-1 s^-1] under the chosen collision model.

    ``"hard-sphere"`` is :func:`collision_rate_constant`; ``"lennard-jones"`` is
    :func:`lennard_jones_collision_rate_constant` (it needs the well depths
    eps/k_B [K]). Arguments broadcast; ``identical`` is per reaction.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3; Neufeld, Janzen &
    Aziz, *J. Chem. Phys.* 1972, 57, 1100, doi:10.1063/1.1678363.

    Examples
    --------
    >>> z = collision_rate(298.15, 3.798e-10, 3.467e-10, 28.0134e-3, 31.9988e-3,
    ...                    model="lennard-jones", well_depth_a=71.4, well_depth_b=106.7)
    >>> f"{z / 6.02214076e17:.4e}"
    '2.7100e-10'
    """
    if model == "hard-sphere":
        return collision_rate_constant(
            T, diameter_a, diameter_b, molar_mass_a, molar_mass_b, identical=identical
        )
    if model == "lennard-jones":
        if well_depth_a is None or well_depth_b is None:
            raise ScienceInputError(
                "The lennard-jones collision model needs well_depth_a and well_depth_b [K]."
            )
        return lennard_jones_collision_rate_constant(
            T,
            diameter_a,
            diameter_b,
            molar_mass_a,
            molar_mass_b,
            well_depth_a,
            well_depth_b,
            identical=identical,
        )
    raise ScienceInputError(
        f"Unknown collision model {model!r}; expected one of {', '.join(COLLISION_MODELS)}."
    )


@dataclass(frozen=True)
class CollisionEstimate:
    """Collision-theory estimates as modified-Arrhenius expressions (arrays, SI units)."""

    #: Pre-exponential factor [m^3 mol^-1 s^-1 K^-n].
    A: np.ndarray
    #: Temperature exponent [-] (exactly 1/2 for hard spheres).
    n: np.ndarray
    #: Activation energy of the stored form [J mol^-1] (E0 for hard spheres).
    Ea: np.ndarray
    #: Threshold energy E0 = Ea(T_ref) - E_z(T_ref) [J mol^-1].
    threshold_energy: np.ndarray
    #: Collision rate z(T_ref) [m^3 mol^-1 s^-1].
    collision_rate_at_T_ref: np.ndarray
    #: E_z(T_ref) of the collision model [J mol^-1].
    collision_activation_energy: np.ndarray
    #: Largest |k_expr/k_model - 1| over the range (0 for hard spheres) [-].
    max_relative_deviation: np.ndarray
    #: How far the given Ea was below E_z(T_ref), where E0 was held at 0 [J mol^-1].
    threshold_shortfall: np.ndarray

    @property
    def threshold_clamped(self) -> np.ndarray:
        """True where the given Ea was below the collision rate's own, so E0 = 0."""
        return self.threshold_shortfall > 0


#: Points of the grid a Lennard-Jones estimate is fitted on.
_ESTIMATE_GRID_POINTS = 60


def collision_theory_estimate(
    activation_energy,
    T_ref,
    steric_factor,
    diameter_a,
    diameter_b,
    molar_mass_a,
    molar_mass_b,
    *,
    model: str = "hard-sphere",
    well_depth_a=None,
    well_depth_b=None,
    identical=False,
    T_min=None,
    T_max=None,
) -> CollisionEstimate:
    """Collision-theory estimates k(T) = P z(T) exp(-E0/RT) from activation energies.

    E0 = max(0, Ea - E_z(T_ref)), with E_z the collision model's own activation
    energy (:func:`collision_rate_activation_energy`), so that the estimate has
    the given Ea at T_ref. The threshold energy never goes below zero: a
    barrierless or negative-Ea reaction (common in atmospheric chemistry) would
    otherwise be estimated above P z(T). Where E0 is held at zero, the
    shortfall E_z(T_ref) - Ea is returned so that it can be reported.

    - ``"hard-sphere"``: z is proportional to T^(1/2), so the estimate is
      exactly A T^n exp(-Ea'/RT) with n = 1/2, A = P z(T_ref)/T_ref^(1/2),
      Ea' = E0.
    - ``"lennard-jones"``: z_LJ = z Omega(2,2)*(T/eps_AB) is not of that form;
      the estimate is approximated by a modified-Arrhenius fit over
      [T_min, T_max] (each widened to include T_ref), and its largest relative
      deviation is returned.

    Every argument broadcasts to one shape (m,): one estimate per reaction.

    Parameters
    ----------
    activation_energy : array_like
        Ea at T_ref [J mol^-1].
    T_ref : array_like
        Temperature at which Ea holds [K]; positive.
    steric_factor : array_like
        P [-]; positive.
    diameter_a, diameter_b : array_like
        Collision diameters [m].
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1].
    model : {"hard-sphere", "lennard-jones"}
    well_depth_a, well_depth_b : array_like, optional
        eps/k_B [K], for ``"lennard-jones"``.
    identical : bool or array_like of bool
        Self-reactions A + A (factor 1/2, :func:`self_reaction_factor`).
    T_min, T_max : array_like, optional
        Range of the Lennard-Jones fit [K]; required for that model.

    Returns
    -------
    CollisionEstimate

    Raises
    ------
    ScienceInputError
        For inputs out of their domain, or a Lennard-Jones estimate without a
        range.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3; Neufeld, Janzen &
    Aziz, *J. Chem. Phys.* 1972, 57, 1100, doi:10.1063/1.1678363.

    Examples
    --------
    N2 + O2 with Ea = 10 kJ/mol at 500 K and P = 0.1: the hard-sphere estimate
    reproduces k(T_ref) = P z(T_ref) exp(-E0/RT_ref):

    >>> e = collision_theory_estimate(1.0e4, 500.0, 0.1, 3.798e-10, 3.467e-10,
    ...                               28.0134e-3, 31.9988e-3)
    >>> float(e.n[0]), f"{e.A[0] * 500.0**0.5 / (0.1 * e.collision_rate_at_T_ref[0]):.6f}"
    (0.5, '1.000000')

    An activation energy below the collision rate's own holds E0 at zero:

    >>> low = collision_theory_estimate(-4000.0, 300.0, 1.0, 3.798e-10, 3.467e-10,
    ...                                 28.0134e-3, 31.9988e-3)
    >>> float(low.threshold_energy[0]), bool(low.threshold_clamped[0])
    (0.0, True)
    """
    shape = np.broadcast_shapes(
        np.shape(activation_energy),
        np.shape(T_ref),
        np.shape(steric_factor),
        np.shape(diameter_a),
        np.shape(identical),
    )
    shape = shape if shape else (1,)
    Ea = np.broadcast_to(_finite("activation_energy", activation_energy, "J mol-1"), shape)
    T_ref = np.broadcast_to(_positive("T_ref", T_ref, "K"), shape)
    P = np.broadcast_to(_positive("steric_factor", steric_factor, "-"), shape)
    pair = (diameter_a, diameter_b, molar_mass_a, molar_mass_b)
    wells = {"well_depth_a": well_depth_a, "well_depth_b": well_depth_b}
    z_ref = np.broadcast_to(
        collision_rate(T_ref, *pair, model=model, identical=identical, **wells), shape
    )
    e_z = np.broadcast_to(collision_rate_activation_energy(T_ref, model=model, **wells), shape)
    shortfall = np.maximum(e_z - Ea, 0.0)
    E0 = np.maximum(Ea - e_z, 0.0)
    if model == "hard-sphere":
        A = P * z_ref / np.sqrt(T_ref)
        return CollisionEstimate(
            A, np.full(shape, 0.5), E0, E0, z_ref, e_z, np.zeros(shape), shortfall
        )
    if T_min is None or T_max is None:
        raise ScienceInputError("A lennard-jones estimate needs T_min and T_max [K] to fit over.")
    low = np.minimum(np.broadcast_to(_positive("T_min", T_min, "K"), shape), T_ref)
    high = np.maximum(np.broadcast_to(_positive("T_max", T_max, "K"), shape), T_ref)
    high = np.where(high > low, high, low * 1.5)
    fraction = np.linspace(0.0, 1.0, _ESTIMATE_GRID_POINTS)
    grid = np.exp(np.log(low)[:, None] + np.log(high / low)[:, None] * fraction)
    columns = [np.asarray(x, dtype=float) for x in pair]
    z_grid = collision_rate(
        grid,
        *(np.broadcast_to(c, shape)[:, None] for c in columns),
        model=model,
        identical=np.broadcast_to(np.asarray(identical, dtype=bool), shape)[:, None],
        **{
            k: np.broadcast_to(np.asarray(v, dtype=float), shape)[:, None] for k, v in wells.items()
        },
    )
    k_grid = P[:, None] * z_grid * np.exp(-E0[:, None] / (GAS_CONSTANT * grid))
    fit = approximate_with_modified_arrhenius(grid, k_grid)
    return CollisionEstimate(
        fit.A, fit.n, fit.Ea, E0, z_ref, e_z, fit.max_relative_deviation, shortfall
    )


def steric_factor_of_expression(T, A, n, Ea, collision_rate, collision_activation_energy=None):
    """Steric factor implied by a modified-Arrhenius expression at temperature T.

    P = k(T) / (z(T) exp(-E0/RT)),  k = A T^n exp(-Ea/RT),
    E0 = Ea_local(T) - E_z(T),  Ea_local = Ea + n R T,

    i.e. :func:`derived_steric_factor` of the expression's own local
    activation energy. Arguments broadcast.

    Parameters
    ----------
    T : array_like
        Temperature, usually the geometric mean of the fitted data [K].
    A, n, Ea : array_like
        The expression [m^3 mol^-1 s^-1 K^-n], [-], [J mol^-1].
    collision_rate : array_like
        z(T) [m^3 mol^-1 s^-1].
    collision_activation_energy : array_like, optional
        E_z(T) [J mol^-1]; default the hard-sphere R T / 2.

    Returns
    -------
    numpy.ndarray or float
        P [-].

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3.

    Examples
    --------
    >>> e = collision_theory_estimate(1.0e4, 500.0, 0.02, 3.798e-10, 3.467e-10,
    ...                               28.0134e-3, 31.9988e-3)
    >>> z = collision_rate_constant(500.0, 3.798e-10, 3.467e-10, 28.0134e-3, 31.9988e-3)
    >>> f"{steric_factor_of_expression(500.0, e.A[0], e.n[0], e.Ea[0], z):.6f}"
    '0.020000'
    """
    k = modified_arrhenius(T, A, n, Ea)
    Ea_local = local_activation_energy(T, n, Ea)
    return derived_steric_factor(k, Ea_local, T, collision_rate, collision_activation_energy)


#: The two definitions of a steric factor a curator may quote.
STERIC_DEFINITIONS: tuple[str, ...] = ("local", "textbook")


def local_steric_factor(steric_factor, definition: str = "local"):
    """The local steric factor P from one quoted under either definition.

    ratebank's P is the local one, P = k(T) / (z(T) exp(-E0/RT)), so that an
    estimate k = P z exp(-E0/RT) reproduces it. Its local Arrhenius
    pre-exponential factor is A_loc = P z e^(1/2) (hard spheres, Ea = E0 + RT/2),
    so the textbook ratio P_tb = A / z is e^(1/2) times larger:

        P_local = P_tb e^(-1/2).

    Parameters
    ----------
    steric_factor : array_like
        P [-]; positive.
    definition : {"local", "textbook"}
        How ``steric_factor`` is defined.

    Returns
    -------
    numpy.ndarray or float
        The local P [-].

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 3 (P as the ratio of
    observed to collision-theory pre-exponential factors).

    Examples
    --------
    >>> f"{local_steric_factor(0.1, 'textbook'):.6f}"
    '0.060653'
    """
    P = _positive("steric_factor", steric_factor, "-")
    if definition == "local":
        return P
    if definition == "textbook":
        return P * np.exp(-0.5)
    raise ScienceInputError(
        f"Unknown steric-factor definition {definition!r}; expected one of "
        f"{', '.join(STERIC_DEFINITIONS)}."
    )
