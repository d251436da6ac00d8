"""Capture rate constants of two neutrals attracted by dispersion (-C6/r^6).

Everything is vectorized and SI: temperatures [K], polarizability volumes
[m^3], ionization energies [J mol^-1], molar masses [kg mol^-1], collision
energies [J mol^-1], dispersion coefficients C6 [J m^6] (per pair of
molecules), bimolecular rate constants [m^3 mol^-1 s^-1] (or
[m^3 molecule^-1 s^-1] where ``per_molecule=True``).

The London estimate of the dispersion coefficient is

    C6 = (3/2) alpha'_A alpha'_B I_A I_B / (I_A + I_B),

with polarizability volumes alpha' = alpha / (4 pi eps0) [m^3] (as tabulated,
in Angstrom^3 = 1e-30 m^3) and ionization energies per molecule, so that no
eps0 appears. Classical capture on V(r) = -C6/r^6 with the centrifugal
barrier gives the cross-section

    sigma(E) = 3 pi (C6 / (4 E))^(1/3)

and, averaged over a Maxwell-Boltzmann distribution of relative speeds,

    k(T) = 2^(11/6) pi^(1/2) Gamma(2/3) mu^(-1/2) C6^(1/3) (k_B T)^(1/6)
         = 8.5530 mu^(-1/2) C6^(1/3) (k_B T)^(1/6),

per molecule. It is the rate at which pairs cross the centrifugal barrier,
an upper bound for reactions without a barrier of their own (radical-radical
and some radical-molecule reactions); measured rate constants are usually
lower by orientation and electronic-degeneracy factors. Other long-range
terms (dipoles, quadrupoles) are left out.

ratebank defines k through the rate of reaction, r = k prod([X_i]^nu_i)
(DESIGN section 3); for the self-reaction A + A (``identical=True``) the
capture rate therefore carries a factor 1/2, as in
:func:`ratebank.science.collision.collision_rate_constant`.

References
----------
1. London, F. The general theory of molecular forces. *Trans. Faraday Soc.*
   1937, 33, 8-26 (from memory).
2. Levine, R. D. *Molecular Reaction Dynamics*; Cambridge University Press,
   2005; ch. 3, capture cross-section for -C_s/r^s (from memory).
3. Georgievskii, Y.; Klippenstein, S. J. Long-range transition state theory.
   *J. Chem. Phys.* 2005, 122, 194103 (the isotropic -C6/R^6 capture rate,
   from memory).
"""

from __future__ import annotations

import math

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science.collision import check_identical_partners, reduced_mass, self_reaction_factor
from ratebank.science.constants import AVOGADRO, BOLTZMANN

__all__ = [
    "DISPERSION_CAPTURE_PREFACTOR",
    "dispersion_capture_cross_section",
    "dispersion_capture_rate_constant",
    "london_capture_rate_constant",
    "london_dispersion_coefficient",
]

#: 2^(11/6) pi^(1/2) Gamma(2/3) = 8.5530...: k = this mu^-1/2 C6^1/3 (k_B T)^1/6 [-].
DISPERSION_CAPTURE_PREFACTOR: float = 2.0 ** (11.0 / 6.0) * math.sqrt(math.pi) * math.gamma(2 / 3)


def _positive(name: str, value, unit: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    bad = ~(np.isfinite(array) & (array > 0))
    if np.any(bad):
        example = float(array[bad].flat[0]) if array.ndim else float(array)
        raise ScienceInputError(f"{name} must be positive and finite [{unit}]; got {example!r}.")
    return array


def london_dispersion_coefficient(
    polarizability_a, polarizability_b, ionization_energy_a, ionization_energy_b
):
    """London estimate of the dispersion coefficient C6 of a pair.

    C6 = (3/2) alpha'_A alpha'_B (I_A I_B / (I_A + I_B)) / N_A,

    with I in J mol^-1 (so I/N_A per molecule) and polarizability volumes
    alpha' = alpha / (4 pi eps0), for V(r) = -C6 / r^6.

    Parameters
    ----------
    polarizability_a, polarizability_b : array_like
        Static polarizability volumes [m^3] (1 Angstrom^3 = 1e-30 m^3); positive.
    ionization_energy_a, ionization_energy_b : array_like
        First ionization energies [J mol^-1] (1 eV = 96485.33212 J mol^-1);
        positive.

    Returns
    -------
    numpy.ndarray or float
        C6 [J m^6], per pair of molecules.

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite.

    Notes
    -----
    London's formula replaces every excitation by one at the ionization
    energy. For the rare gases it gives C6 10-35 % below accurate values
    (from memory), enough for a capture rate, which goes as C6^(1/3).

    References
    ----------
    London, *Trans. Faraday Soc.* 1937, 33, 8 (from memory).

    Examples
    --------
    Argon (alpha' = 1.6411 Angstrom^3, I = 15.7596 eV), in atomic units of
    C6 (E_h a_0^6 = 9.5734e-80 J m^6):

    >>> I = 15.7596 * 96485.33212
    >>> f"{london_dispersion_coefficient(1.6411e-30, 1.6411e-30, I, I) / 9.5734e-80:.1f}"
    '53.3'
    """
    alpha_a = _positive("polarizability_a", polarizability_a, "m3")
    alpha_b = _positive("polarizability_b", polarizability_b, "m3")
    I_a = _positive("ionization_energy_a", ionization_energy_a, "J mol-1")
    I_b = _positive("ionization_energy_b", ionization_energy_b, "J mol-1")
    return 1.5 * alpha_a * alpha_b * (I_a * I_b / (I_a + I_b)) / AVOGADRO


def dispersion_capture_cross_section(collision_energy, c6):
    """Classical capture cross-section on V(r) = -C6/r^6.

    sigma(E) = 3 pi (C6 / (4 E))^(1/3),  E per molecule = collision_energy / N_A.

    A pair with relative translational energy E and impact parameter b
    crosses the centrifugal barrier of E b^2/r^2 - C6/r^6 when
    b^2 <= 3 (C6/(4E))^(1/3); the formula is the s = 6 case of
    pi s/(s-2) ((s-2) C_s/(2E))^(2/s).

    Parameters
    ----------
    collision_energy : array_like
        Relative translational energy [J mol^-1]; positive.
    c6 : array_like
        Dispersion coefficient [J m^6] per pair; positive.

    Returns
    -------
    numpy.ndarray or float
        sigma [m^2].

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite.

    References
    ----------
    Levine, *Molecular Reaction Dynamics* (2005), ch. 3 (from memory).

    Examples
    --------
    >>> f"{dispersion_capture_cross_section(2494.3, 6.0e-78):.4e}"
    '6.7179e-19'
    """
    energy = _positive("collision_energy", collision_energy, "J mol-1") / AVOGADRO
    c6 = _positive("c6", c6, "J m6")
    return 3.0 * np.pi * np.cbrt(c6 / (4.0 * energy))


def dispersion_capture_rate_constant(
    T, c6, molar_mass_a, molar_mass_b, *, identical=False, per_molecule: bool = False
):
    """Thermal capture rate constant of two neutrals on V(r) = -C6/r^6.

    k(T) = s 2^(11/6) pi^(1/2) Gamma(2/3) mu^(-1/2) C6^(1/3) (k_B T)^(1/6) N_A,

    the Maxwell-Boltzmann average of v sigma(E) with sigma from
    :func:`dispersion_capture_cross_section`; s = 1 for distinguishable
    partners and s = 1/2 for the self-reaction A + A (``identical=True``,
    mu = m_A/2), with the meaning of
    :func:`ratebank.science.collision.collision_rate_constant`: ratebank's
    rate law is r = k[A]^2 with d[A]/dt = -2 r, so each A-A encounter is
    counted once.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    c6 : array_like
        Dispersion coefficient [J m^6] per pair; positive.
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1]; positive.
    identical : bool, optional
        True for the self-reaction A + A; the molar masses must then be equal.
    per_molecule : bool, optional
        Return [m^3 molecule^-1 s^-1] instead of [m^3 mol^-1 s^-1].

    Returns
    -------
    numpy.ndarray or float
        k(T) [m^3 mol^-1 s^-1], or [m^3 molecule^-1 s^-1] if ``per_molecule``.

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite, or ``identical`` is set for
        partners of different mass.

    Notes
    -----
    Classical: valid when many partial waves contribute (above a few K for
    molecules); k grows as T^(1/6). An upper bound for the rate constant of a
    reaction without its own barrier.

    References
    ----------
    Georgievskii & Klippenstein, *J. Chem. Phys.* 2005, 122, 194103 (from
    memory); Levine, *Molecular Reaction Dynamics* (2005), ch. 3.

    Examples
    --------
    Two argon atoms (C6 = 64.3 E_h a_0^6, from memory) at 300 K, in
    cm^3 molecule^-1 s^-1:

    >>> k = dispersion_capture_rate_constant(300.0, 64.3 * 9.5734e-80, 39.948e-3, 39.948e-3,
    ...                                      per_molecule=True)
    >>> f"{k * 1e6:.3e}"
    '3.449e-10'
    """
    T = _positive("T", T, "K")
    c6 = _positive("c6", c6, "J m6")
    ma = _positive("molar_mass_a", molar_mass_a, "kg mol-1")
    mb = _positive("molar_mass_b", molar_mass_b, "kg mol-1")
    flags = check_identical_partners(identical, [("molar_mass", ma, mb)])
    mu = reduced_mass(ma, mb)
    k = DISPERSION_CAPTURE_PREFACTOR * np.cbrt(c6) * (BOLTZMANN * T) ** (1.0 / 6.0) / np.sqrt(mu)
    k = k * self_reaction_factor(flags)
    if not per_molecule:
        k = k * AVOGADRO
    return k


def london_capture_rate_constant(
    T,
    polarizability_a,
    polarizability_b,
    ionization_energy_a,
    ionization_energy_b,
    molar_mass_a,
    molar_mass_b,
    *,
    identical=False,
    per_molecule: bool = False,
):
    """Dispersion capture rate constant with C6 from London's formula.

    k(T) = :func:`dispersion_capture_rate_constant` (T, C6, M_A, M_B) with
    C6 = :func:`london_dispersion_coefficient` (alpha'_A, alpha'_B, I_A, I_B).

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    polarizability_a, polarizability_b : array_like
        Polarizability volumes [m^3]; positive.
    ionization_energy_a, ionization_energy_b : array_like
        Ionization energies [J mol^-1]; positive.
    molar_mass_a, molar_mass_b : array_like
        Molar masses [kg mol^-1]; positive.
    identical : bool, optional
        True for the self-reaction A + A (factor 1/2); every B argument must
        then equal its A argument.
    per_molecule : bool, optional
        Return [m^3 molecule^-1 s^-1] instead of [m^3 mol^-1 s^-1].

    Returns
    -------
    numpy.ndarray or float
        k(T) [m^3 mol^-1 s^-1], or [m^3 molecule^-1 s^-1] if ``per_molecule``.

    Raises
    ------
    ScienceInputError
        If an input is not positive and finite, or ``identical`` is set for
        partners that differ.

    References
    ----------
    London, *Trans. Faraday Soc.* 1937, 33, 8; Georgievskii & Klippenstein,
    *J. Chem. Phys.* 2005, 122, 194103 (both from memory).

    Examples
    --------
    >>> I = 15.7596 * 96485.33212
    >>> k = london_capture_rate_constant(300.0, 1.6411e-30, 1.6411e-30, I, I,
    ...                                  39.948e-3, 39.948e-3, per_molecule=True)
    >>> f"{k * 1e6:.3e}"
    '3.240e-10'
    """
    alpha_a = _positive("polarizability_a", polarizability_a, "m3")
    alpha_b = _positive("polarizability_b", polarizability_b, "m3")
    I_a = _positive("ionization_energy_a", ionization_energy_a, "J mol-1")
    I_b = _positive("ionization_energy_b", ionization_energy_b, "J mol-1")
    check_identical_partners(
        identical, [("polarizability", alpha_a, alpha_b), ("ionization_energy", I_a, I_b)]
    )
    c6 = london_dispersion_coefficient(alpha_a, alpha_b, I_a, I_b)
    return dispersion_capture_rate_constant(
        T, c6, molar_mass_a, molar_mass_b, identical=identical, per_molecule=per_molecule
    )
