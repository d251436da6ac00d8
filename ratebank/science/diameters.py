"""Lennard-Jones collision diameters and well depths from corresponding states.

When a species has no measured or tabulated collision diameter, ratebank
estimates one from its critical constants or its molar volume at the normal
boiling point. Each correlation is a function named after its source; the
``estimate_*`` functions choose one, and return the value together with the
method name and citation so that the estimate is stored and flagged as such.

All inputs and outputs are SI: Tc and Tb [K], Pc [Pa], volumes [m^3 mol^-1],
diameters [m], well depths eps/k_B [K]. The published coefficients expect
Pc in atm, volumes in cm^3 mol^-1 and give Angstrom; the conversions happen
inside each function.

The correlations were built for nonpolar, non-quantum molecules. For N2, O2,
CH4, Ar, CO2, C2H6, C3H8 and CO they reproduce the gas-phase Lennard-Jones
diameters within about 6 %. They do not apply to quantum gases (H2, D2, He:
15-40 % too large) nor to strongly polar molecules (H2O: about 30 % too
large); :func:`outside_correlations` names those cases, and the estimators
refuse them.

References
----------
1. Tee, L. S.; Gotoh, S.; Stewart, W. E. Molecular Parameters for Normal
   Fluids. The Lennard-Jones 12-6 Potential. *Ind. Eng. Chem. Fundam.* 1966,
   5, 356-363. doi:10.1021/i160019a011
2. Bird, R. B.; Stewart, W. E.; Lightfoot, E. N. *Transport Phenomena*,
   2nd ed.; Wiley, 2002; ch. 1.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ratebank.errors import DiameterError
from ratebank.science.constants import ANGSTROM, ATMOSPHERE, DEBYE

__all__ = [
    "DEBYE",
    "DIAMETER_METHODS",
    "POLAR_DIPOLE_MOMENT",
    "QUANTUM_GASES",
    "WELL_DEPTH_METHODS",
    "DiameterEstimate",
    "WellDepthEstimate",
    "estimate_diameter",
    "estimate_well_depth",
    "outside_correlations",
    "sigma_bird_stewart_lightfoot_boiling",
    "sigma_bird_stewart_lightfoot_critical",
    "sigma_tee_gotoh_stewart",
    "well_depth_bird_stewart_lightfoot_boiling",
    "well_depth_bird_stewart_lightfoot_critical",
    "well_depth_tee_gotoh_stewart",
]

_TGS_SOURCE = (
    "Tee, L. S.; Gotoh, S.; Stewart, W. E. Ind. Eng. Chem. Fundam. 1966, 5, 356-363. "
    "doi:10.1021/i160019a011"
)
_BSL_SOURCE = (
    "Bird, R. B.; Stewart, W. E.; Lightfoot, E. N. Transport Phenomena, 2nd ed.; Wiley, 2002"
)

#: Diameter correlations understood by :func:`estimate_diameter`.
DIAMETER_METHODS: tuple[str, ...] = (
    "tee-gotoh-stewart-acentric",
    "tee-gotoh-stewart",
    "bird-stewart-lightfoot-critical",
    "bird-stewart-lightfoot-boiling",
)

#: Well-depth correlations understood by :func:`estimate_well_depth`.
WELL_DEPTH_METHODS: tuple[str, ...] = DIAMETER_METHODS

_DIAMETER_INPUTS: dict[str, tuple[str, ...]] = {
    "tee-gotoh-stewart-acentric": ("Tc", "Pc", "omega"),
    "tee-gotoh-stewart": ("Tc", "Pc"),
    "bird-stewart-lightfoot-critical": ("Tc", "Pc"),
    "bird-stewart-lightfoot-boiling": ("boiling_volume",),
}

_WELL_DEPTH_INPUTS: dict[str, tuple[str, ...]] = {
    "tee-gotoh-stewart-acentric": ("Tc", "omega"),
    "tee-gotoh-stewart": ("Tc",),
    "bird-stewart-lightfoot-critical": ("Tc",),
    "bird-stewart-lightfoot-boiling": ("Tb",),
}

_DEFAULT_ORDER: tuple[str, ...] = (
    "tee-gotoh-stewart-acentric",
    "tee-gotoh-stewart",
    "bird-stewart-lightfoot-boiling",
)

_SOURCES: dict[str, str] = {
    "tee-gotoh-stewart-acentric": _TGS_SOURCE,
    "tee-gotoh-stewart": _TGS_SOURCE,
    "bird-stewart-lightfoot-critical": _BSL_SOURCE,
    "bird-stewart-lightfoot-boiling": _BSL_SOURCE,
}

#: Formulas of quantum gases, whose de Broglie wavelength at low temperature
#: is not small against the diameter, so corresponding states fail for them.
QUANTUM_GASES: frozenset[str] = frozenset({"H2", "D2", "HD", "He"})

#: Dipole moment [C m] from which a molecule counts as strongly polar, so that
#: the nonpolar correlations are not used (common practice: a Stockmayer or
#: tabulated diameter is needed; HCl at about 1.1 D is the mildest usual case).
POLAR_DIPOLE_MOMENT: float = 1.0 * DEBYE


@dataclass(frozen=True)
class DiameterEstimate:
    """An estimated collision diameter and how it was obtained.

    Attributes
    ----------
    diameter : float
        Lennard-Jones collision diameter sigma [m].
    method : str
        One of :data:`DIAMETER_METHODS`.
    source : str
        Citation of the correlation.
    inputs : tuple of (str, float)
        The inputs used, by name, in SI units (Tc [K], Pc [Pa], omega [-],
        boiling_volume [m^3 mol^-1]).
    """

    diameter: float
    method: str
    source: str
    inputs: tuple[tuple[str, float], ...] = ()


@dataclass(frozen=True)
class WellDepthEstimate:
    """An estimated Lennard-Jones well depth and how it was obtained.

    Attributes
    ----------
    well_depth : float
        eps/k_B [K].
    method : str
        One of :data:`WELL_DEPTH_METHODS`.
    source : str
        Citation of the correlation.
    inputs : tuple of (str, float)
        The inputs used, by name, in SI units (Tc [K], omega [-], Tb [K]).
    """

    well_depth: float
    method: str
    source: str
    inputs: tuple[tuple[str, float], ...] = ()


def _positive(name: str, value, unit: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array) & (array > 0)):
        raise DiameterError(f"{name} must be positive and finite [{unit}].")
    return array


def _finite(name: str, value) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise DiameterError(f"{name} must be finite.")
    return array


def _critical_ratio_cube_root(Tc, Pc) -> np.ndarray:
    Tc = _positive("Tc", Tc, "K")
    Pc = _positive("Pc", Pc, "Pa")
    return np.cbrt(Tc / (Pc / ATMOSPHERE))


def sigma_tee_gotoh_stewart(Tc, Pc, omega=None):
    """Lennard-Jones diameter from the critical point, Tee, Gotoh & Stewart (1966).

    Without the acentric factor:  sigma = 2.3647 (Tc / Pc)^(1/3)
    With it:                      sigma = (2.3551 - 0.0874 omega) (Tc / Pc)^(1/3)

    with sigma in Angstrom, Tc in K and Pc in atm (converted here).

    Parameters
    ----------
    Tc : array_like
        Critical temperature [K]; positive.
    Pc : array_like
        Critical pressure [Pa]; positive.
    omega : array_like, optional
        Acentric factor [-].

    Returns
    -------
    numpy.ndarray or float
        sigma [m].

    Raises
    ------
    DiameterError
        If Tc or Pc is not positive and finite, or omega is not finite.

    Notes
    -----
    For nonpolar, non-quantum fluids, within about 5 % of the Svehla
    gas-phase table for small molecules. Not for H2, He or strongly polar
    molecules.

    References
    ----------
    Tee, Gotoh & Stewart, *Ind. Eng. Chem. Fundam.* 1966, 5, 356-363.
    doi:10.1021/i160019a011

    Examples
    --------
    Nitrogen, Tc = 126.192 K, Pc = 3.3958 MPa, omega = 0.0372:

    >>> f"{sigma_tee_gotoh_stewart(126.192, 3.3958e6) / 1e-10:.3f}"
    '3.679'
    >>> f"{sigma_tee_gotoh_stewart(126.192, 3.3958e6, 0.0372) / 1e-10:.3f}"
    '3.659'
    """
    ratio = _critical_ratio_cube_root(Tc, Pc)
    if omega is None:
        return 2.3647 * ratio * ANGSTROM
    omega = _finite("omega", omega)
    return (2.3551 - 0.0874 * omega) * ratio * ANGSTROM


def sigma_bird_stewart_lightfoot_critical(Tc, Pc):
    """Lennard-Jones diameter from the critical point, Bird, Stewart & Lightfoot.

    sigma = 2.44 (Tc / Pc)^(1/3)

    with sigma in Angstrom, Tc in K and Pc in atm (converted here).

    Parameters
    ----------
    Tc : array_like
        Critical temperature [K]; positive.
    Pc : array_like
        Critical pressure [Pa]; positive.

    Returns
    -------
    numpy.ndarray or float
        sigma [m].

    Raises
    ------
    DiameterError
        If Tc or Pc is not positive and finite.

    Notes
    -----
    For nonpolar, non-quantum molecules; within about 5 % of the gas-phase
    table for small molecules.

    References
    ----------
    Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed.; Wiley, 2002; ch. 1.

    Examples
    --------
    >>> f"{sigma_bird_stewart_lightfoot_critical(126.192, 3.3958e6) / 1e-10:.3f}"
    '3.796'
    """
    return 2.44 * _critical_ratio_cube_root(Tc, Pc) * ANGSTROM


def sigma_bird_stewart_lightfoot_boiling(boiling_volume):
    """Lennard-Jones diameter from the liquid molar volume at the normal boiling point.

    sigma = 1.166 Vb^(1/3)

    with sigma in Angstrom and Vb in cm^3 mol^-1 (converted here).

    Parameters
    ----------
    boiling_volume : array_like
        Molar volume of the liquid at the normal boiling point Vb
        [m^3 mol^-1]; positive.

    Returns
    -------
    numpy.ndarray or float
        sigma [m].

    Raises
    ------
    DiameterError
        If Vb is not positive and finite.

    Notes
    -----
    For nonpolar, non-quantum molecules. A value of Vb given in cm^3/mol by
    mistake (e.g. 34.5 instead of 3.45e-5) gives a diameter of about 380
    Angstrom, which callers should catch by its size.

    References
    ----------
    Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed.; Wiley, 2002; ch. 1.

    Examples
    --------
    >>> f"{sigma_bird_stewart_lightfoot_boiling(34.50e-6) / 1e-10:.3f}"
    '3.796'
    """
    Vb = _positive("boiling_volume", boiling_volume, "m3 mol-1")
    # The coefficient was fitted with Vb in cm^3/mol.
    return 1.166 * np.cbrt(Vb * 1e6) * ANGSTROM


def well_depth_tee_gotoh_stewart(Tc, omega=None):
    """Lennard-Jones well depth from the critical temperature, Tee, Gotoh & Stewart (1966).

    Without the acentric factor:  eps/k_B = 0.7740 Tc
    With it:                      eps/k_B = (0.7915 + 0.1693 omega) Tc

    Parameters
    ----------
    Tc : array_like
        Critical temperature [K]; positive.
    omega : array_like, optional
        Acentric factor [-].

    Returns
    -------
    numpy.ndarray or float
        eps/k_B [K].

    Raises
    ------
    DiameterError
        If Tc is not positive and finite, or omega is not finite.

    Notes
    -----
    Well depths from corresponding states are crude: for N2 they exceed the
    Svehla value by more than a third. Use them only together with the
    diameter of the same correlation.

    References
    ----------
    Tee, Gotoh & Stewart, *Ind. Eng. Chem. Fundam.* 1966, 5, 356-363.
    doi:10.1021/i160019a011

    Examples
    --------
    >>> f"{well_depth_tee_gotoh_stewart(126.192):.2f}"
    '97.67'
    >>> f"{well_depth_tee_gotoh_stewart(126.192, 0.0372):.2f}"
    '100.68'
    """
    Tc = _positive("Tc", Tc, "K")
    if omega is None:
        return 0.7740 * Tc
    omega = _finite("omega", omega)
    return (0.7915 + 0.1693 * omega) * Tc


def well_depth_bird_stewart_lightfoot_critical(Tc):
    """Lennard-Jones well depth from the critical temperature, Bird, Stewart & Lightfoot.

    eps/k_B = 0.77 Tc

    Parameters
    ----------
    Tc : array_like
        Critical temperature [K]; positive.

    Returns
    -------
    numpy.ndarray or float
        eps/k_B [K].

    Raises
    ------
    DiameterError
        If Tc is not positive and finite.

    References
    ----------
    Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed.; Wiley, 2002; ch. 1.

    Examples
    --------
    >>> f"{well_depth_bird_stewart_lightfoot_critical(126.192):.2f}"
    '97.17'
    """
    return 0.77 * _positive("Tc", Tc, "K")


def well_depth_bird_stewart_lightfoot_boiling(Tb):
    """Lennard-Jones well depth from the normal boiling point, Bird, Stewart & Lightfoot.

    eps/k_B = 1.15 Tb

    Parameters
    ----------
    Tb : array_like
        Normal boiling temperature [K]; positive.

    Returns
    -------
    numpy.ndarray or float
        eps/k_B [K].

    Raises
    ------
    DiameterError
        If Tb is not positive and finite.

    References
    ----------
    Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed.; Wiley, 2002; ch. 1.

    Examples
    --------
    >>> f"{well_depth_bird_stewart_lightfoot_boiling(77.355):.2f}"
    '88.96'
    """
    return 1.15 * _positive("Tb", Tb, "K")


def outside_correlations(formula: str | None, dipole_moment: float | None = None) -> str | None:
    """Why the diameter correlations do not apply to a species, or None if they may.

    Parameters
    ----------
    formula : str or None
        Chemical formula as written (case-sensitive, e.g. ``"HCl"``).
    dipole_moment : float, optional
        Permanent dipole moment [C m]; a strongly polar molecule (at least
        :data:`POLAR_DIPOLE_MOMENT`) is outside the nonpolar correlations.
        Polarity is decided by this value alone, never by a molecule's name.

    Returns
    -------
    str or None
        A reason naming the species as a quantum gas (H2, D2, HD, He) or a
        strongly polar molecule, or None when nothing is known against the
        correlations.

    Examples
    --------
    >>> outside_correlations("He")
    'He is a quantum gas, for which corresponding-states diameter correlations fail'
    >>> outside_correlations("SO2", dipole_moment=1.63 * DEBYE)[:33]
    'SO2 is strongly polar (1.63 D), a'
    >>> outside_correlations("CH4", dipole_moment=0.0) is None
    True
    """
    key = "".join(formula.split()) if formula is not None else None
    if key in QUANTUM_GASES:
        return f"{key} is a quantum gas, for which corresponding-states diameter correlations fail"
    if dipole_moment is not None and dipole_moment >= POLAR_DIPOLE_MOMENT:
        return (
            f"{key or 'the species'} is strongly polar ({dipole_moment / DEBYE:.3g} D), and the "
            "diameter correlations were built for nonpolar molecules"
        )
    return None


def _refuse_out_of_scope(formula: str | None, what: str, dipole_moment: float | None) -> None:
    reason = outside_correlations(formula, dipole_moment)
    if reason is not None:
        raise DiameterError(
            f"The {what} correlations do not apply: {reason}; enter a measured or tabulated "
            f"{what} instead."
        )


def _and(names) -> str:
    names = list(names)
    return names[0] if len(names) == 1 else f"{', '.join(names[:-1])} and {names[-1]}"


def _needs_text(needs: dict[str, tuple[str, ...]]) -> str:
    return "; ".join(f"{method} needs {_and(inputs)}" for method, inputs in needs.items())


def _choose_method(
    method: str | None,
    given: dict[str, float | None],
    needs: dict[str, tuple[str, ...]],
    what: str,
) -> str:
    if method is not None:
        if method not in needs:
            raise DiameterError(
                f"Unknown {what} method {method!r}; expected one of {', '.join(needs)}."
            )
        missing = [name for name in needs[method] if given[name] is None]
        if missing:
            raise DiameterError(
                f"The {what} method {method} needs {_and(needs[method])}; "
                f"{_and(missing)} {'is' if len(missing) == 1 else 'are'} missing."
            )
        return method
    # The acentric factor carries the most information, then the critical point; the
    # boiling-point rule is the fallback.
    for candidate in _DEFAULT_ORDER:
        if all(given[name] is not None for name in needs[candidate]):
            return candidate
    raise DiameterError(f"Not enough data to estimate a {what}: {_needs_text(needs)}.")


def estimate_diameter(
    *,
    Tc: float | None = None,
    Pc: float | None = None,
    omega: float | None = None,
    boiling_volume: float | None = None,
    method: str | None = None,
    formula: str | None = None,
    dipole_moment: float | None = None,
) -> DiameterEstimate:
    """Estimate a Lennard-Jones collision diameter with a named correlation.

    Without ``method`` the first usable of these is chosen:

    1. ``"tee-gotoh-stewart-acentric"`` when Tc, Pc and omega are given;
    2. ``"tee-gotoh-stewart"`` when Tc and Pc are given;
    3. ``"bird-stewart-lightfoot-boiling"`` when boiling_volume is given.

    ``"bird-stewart-lightfoot-critical"`` (2.44 (Tc/Pc)^(1/3)) is used only
    when asked for by name.

    Parameters
    ----------
    Tc : float, optional
        Critical temperature [K].
    Pc : float, optional
        Critical pressure [Pa].
    omega : float, optional
        Acentric factor [-].
    boiling_volume : float, optional
        Liquid molar volume at the normal boiling point [m^3 mol^-1].
    method : str, optional
        One of :data:`DIAMETER_METHODS`.
    formula : str, optional
        The species' formula; quantum gases and strongly polar molecules are
        refused (see :func:`outside_correlations`).

    Returns
    -------
    DiameterEstimate
        The diameter [m], the method name, its citation and the inputs used.

    Raises
    ------
    DiameterError
        For a species outside the correlations, an unknown method, a method
        whose inputs are missing, no usable input at all, or a non-positive
        input.

    References
    ----------
    Tee, Gotoh & Stewart, *Ind. Eng. Chem. Fundam.* 1966, 5, 356,
    doi:10.1021/i160019a011; Bird, Stewart & Lightfoot, *Transport
    Phenomena*, 2nd ed. (2002).

    Examples
    --------
    >>> est = estimate_diameter(Tc=190.564, Pc=4.5992e6, omega=0.01142)
    >>> est.method, f"{est.diameter / 1e-10:.3f}"
    ('tee-gotoh-stewart-acentric', '3.798')
    >>> estimate_diameter(boiling_volume=37.58e-6).method
    'bird-stewart-lightfoot-boiling'
    """
    _refuse_out_of_scope(formula, "diameter", dipole_moment)
    given = {"Tc": Tc, "Pc": Pc, "omega": omega, "boiling_volume": boiling_volume}
    chosen = _choose_method(method, given, _DIAMETER_INPUTS, "diameter")
    if chosen == "tee-gotoh-stewart-acentric":
        value = sigma_tee_gotoh_stewart(Tc, Pc, omega)
    elif chosen == "tee-gotoh-stewart":
        value = sigma_tee_gotoh_stewart(Tc, Pc)
    elif chosen == "bird-stewart-lightfoot-critical":
        value = sigma_bird_stewart_lightfoot_critical(Tc, Pc)
    else:
        value = sigma_bird_stewart_lightfoot_boiling(boiling_volume)
    inputs = tuple((name, float(given[name])) for name in _DIAMETER_INPUTS[chosen])
    return DiameterEstimate(float(value), chosen, _SOURCES[chosen], inputs)


def estimate_well_depth(
    *,
    Tc: float | None = None,
    omega: float | None = None,
    Tb: float | None = None,
    method: str | None = None,
    formula: str | None = None,
    dipole_moment: float | None = None,
) -> WellDepthEstimate:
    """Estimate a Lennard-Jones well depth eps/k_B with a named correlation.

    Without ``method`` the first usable of these is chosen:

    1. ``"tee-gotoh-stewart-acentric"`` (0.7915 + 0.1693 omega) Tc, when Tc and omega are given;
    2. ``"tee-gotoh-stewart"`` 0.7740 Tc, when Tc is given;
    3. ``"bird-stewart-lightfoot-boiling"`` 1.15 Tb, when Tb is given.

    ``"bird-stewart-lightfoot-critical"`` (0.77 Tc) is used only when asked
    for by name. Pair a well depth with the diameter of the same method.

    Parameters
    ----------
    Tc : float, optional
        Critical temperature [K].
    omega : float, optional
        Acentric factor [-].
    Tb : float, optional
        Normal boiling temperature [K].
    method : str, optional
        One of :data:`WELL_DEPTH_METHODS`.
    formula : str, optional
        The species' formula; quantum gases are refused.
    dipole_moment : float, optional
        Dipole moment [C m]; strongly polar molecules are refused.

    Returns
    -------
    WellDepthEstimate
        eps/k_B [K], the method name, its citation and the inputs used.

    Raises
    ------
    DiameterError
        As :func:`estimate_diameter`.

    References
    ----------
    Tee, Gotoh & Stewart, *Ind. Eng. Chem. Fundam.* 1966, 5, 356,
    doi:10.1021/i160019a011; Bird, Stewart & Lightfoot, *Transport
    Phenomena*, 2nd ed. (2002).

    Examples
    --------
    >>> est = estimate_well_depth(Tb=77.355)
    >>> est.method, f"{est.well_depth:.2f}"
    ('bird-stewart-lightfoot-boiling', '88.96')
    """
    _refuse_out_of_scope(formula, "well depth", dipole_moment)
    given = {"Tc": Tc, "omega": omega, "Tb": Tb}
    chosen = _choose_method(method, given, _WELL_DEPTH_INPUTS, "well depth")
    if chosen == "tee-gotoh-stewart-acentric":
        value = well_depth_tee_gotoh_stewart(Tc, omega)
    elif chosen == "tee-gotoh-stewart":
        value = well_depth_tee_gotoh_stewart(Tc)
    elif chosen == "bird-stewart-lightfoot-critical":
        value = well_depth_bird_stewart_lightfoot_critical(Tc)
    else:
        value = well_depth_bird_stewart_lightfoot_boiling(Tb)
    inputs = tuple((name, float(given[name])) for name in _WELL_DEPTH_INPUTS[chosen])
    return WellDepthEstimate(float(value), chosen, _SOURCES[chosen], inputs)
