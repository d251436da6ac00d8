"""Standard-state thermochemistry: NASA polynomials, their fit, and detailed balance.

Units are SI-molar: T [K], H and G [J mol^-1], S and Cp [J mol^-1 K^-1],
pressure [Pa]. The standard state is the ideal gas at p° = 1 bar = 10^5 Pa
(the NIST-JANAF tables use the same p° = 0.1 MPa).

A species' thermochemistry is a pair of seven-coefficient polynomials
a1..a7, one for T_low <= T <= T_mid and one for T_mid <= T <= T_high:

    Cp°/R   = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
    H°/(RT) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
    S°/R    = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7
    G°/(RT) = H°/(RT) - S°/R

with T in K. H° is the absolute enthalpy of the convention of McBride,
Gordon & Reno: H°(298.15 K) = ΔfH°(298.15 K), so H°(T) = ΔfH°(298.15 K) +
[H°(T) - H°(298.15 K)].

For a reaction with stoichiometric coefficients ν_i (negative for
reactants), ΔrX = Σ ν_i X_i, Kp = exp(-ΔrG°/(RT)) and, in SI concentration
units, Kc = Kp (p°/(RT))^Δn [(mol m^-3)^Δn] with Δn = Σ ν_i over the gas
species. The reverse rate constant of detailed balance is k_r = k_f / Kc.
Third bodies (M) are not species: they take no part in Δn and must not be
passed in the stoichiometry.

References
----------
1. McBride, B. J.; Gordon, S.; Reno, M. A. *Coefficients for Calculating
   Thermodynamic and Transport Properties of Individual Species*; NASA
   TM-4513; NASA Lewis Research Center, 1993.
2. Chase, M. W., Jr. *NIST-JANAF Thermochemical Tables*, 4th ed.;
   J. Phys. Chem. Ref. Data, Monograph 9, 1998.
3. Boyd, S.; Vandenberghe, L. *Introduction to Applied Linear Algebra*;
   Cambridge University Press, 2018; ch. 16 (constrained least squares, the
   KKT equations). doi:10.1017/9781108583664
4. Laidler, K. J. *Chemical Kinetics*, 3rd ed.; Harper & Row, 1987; ch. 1
   (equilibrium constants in pressure and concentration units, detailed
   balance).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ratebank.errors import FitError, ScienceInputError
from ratebank.science.arrhenius import approximate_with_modified_arrhenius, modified_arrhenius
from ratebank.science.constants import BAR, GAS_CONSTANT

__all__ = [
    "DEFAULT_T_MID",
    "MINIMUM_CP_TEMPERATURES",
    "REFERENCE_TEMPERATURE",
    "STANDARD_PRESSURE",
    "MidpointJumps",
    "NasaFit",
    "NasaPolynomials",
    "ReactionThermochemistry",
    "ReducedProperties",
    "ReverseArrhenius",
    "StandardProperties",
    "ThermoFitInputs",
    "equilibrium_constant_kc",
    "fit_inputs_from_table",
    "fit_nasa_polynomials",
    "fit_reverse_modified_arrhenius",
    "midpoint_jumps",
    "reaction_thermochemistry",
    "reduced_properties",
    "reverse_rate_constant",
    "standard_properties",
]

#: Standard-state pressure p° [Pa]: 1 bar, as in the NIST-JANAF tables.
STANDARD_PRESSURE: float = BAR
#: Reference temperature of ΔfH° and S° [K].
REFERENCE_TEMPERATURE: float = 298.15
#: Default common temperature of the two polynomial ranges [K] (common practice).
DEFAULT_T_MID: float = 1000.0
#: Fewest distinct temperatures with Cp° that :func:`fit_nasa_polynomials` accepts.
MINIMUM_CP_TEMPERATURES: int = 4

_N_COEFFICIENTS = 7
# Temperatures closer than this [K] are the same tabulated temperature.
_SAME_TEMPERATURE = 1e-6


def _species_label(index: tuple[int, ...]) -> str:
    return f" of species {index[0] if len(index) == 1 else index}" if index else ""


def _first_bad(bad: np.ndarray) -> tuple[int, ...]:
    return tuple(int(i) for i in np.argwhere(bad)[0])


def _coefficients(name: str, value) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if array.ndim == 0 or array.shape[-1] != _N_COEFFICIENTS:
        got = 1 if array.ndim == 0 else array.shape[-1]
        raise ScienceInputError(
            f"The {name}-range polynomial needs {_N_COEFFICIENTS} coefficients a1..a7 "
            f"per species; got {got}."
        )
    bad = ~np.isfinite(array)
    if np.any(bad):
        *species, column = _first_bad(bad)
        raise ScienceInputError(
            f"Coefficient a{column + 1} of the {name}-range polynomial"
            f"{_species_label(tuple(species))} is not finite ({array[bad].flat[0]!r})."
        )
    return array


def _range_temperature(name: str, value, shape: tuple[int, ...]) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    try:
        array = np.broadcast_to(array, shape).copy()
    except ValueError:
        raise ScienceInputError(
            f"{name} has shape {array.shape}, which does not match the {shape} species "
            "of the coefficients."
        ) from None
    bad = ~(np.isfinite(array) & (array > 0))
    if np.any(bad):
        index = _first_bad(bad) if array.ndim else ()
        raise ScienceInputError(
            f"{name}{_species_label(index)} must be a positive, finite temperature [K]; "
            f"got {array[bad].flat[0] if array.ndim else float(array)!r}."
        )
    return array


@dataclass(frozen=True, eq=False)
class NasaPolynomials:
    """Seven-coefficient polynomials of one or many species, validated.

    Parameters
    ----------
    low, high : array_like, shape (..., 7)
        Coefficients a1..a7 of the ranges T_low..T_mid and T_mid..T_high, for
        the species laid out along the leading axes (shape ``(7,)`` is one
        species). With T in K: a1 [-], a2 [K^-1], a3 [K^-2], a4 [K^-3],
        a5 [K^-4], a6 [K], a7 [-].
    T_low, T_mid, T_high : array_like
        Range limits [K], one per species or one for all.

    Raises
    ------
    ScienceInputError
        If a range does not have 7 coefficients per species, a coefficient is
        not finite, ``low`` and ``high`` differ in shape, a range limit is not
        positive and finite, or T_low < T_mid < T_high does not hold.

    References
    ----------
    McBride, Gordon & Reno, NASA TM-4513 (1993).

    Examples
    --------
    Atomic hydrogen, Cp° = 5R/2, ΔfH°(298.15) = 217.999 kJ/mol and
    S°(298.15) = 114.716 J/(mol K) (NIST-JANAF table H-001):

    >>> import numpy as np
    >>> from ratebank.science.constants import GAS_CONSTANT as R
    >>> a = [2.5, 0, 0, 0, 0, 217999.0 / R - 2.5 * 298.15, 114.716 / R - 2.5 * np.log(298.15)]
    >>> hydrogen = NasaPolynomials(a, a, 200.0, 1000.0, 6000.0)
    >>> hydrogen.species_shape
    ()
    >>> NasaPolynomials(a, a, 200.0, 6000.0, 1000.0)
    Traceback (most recent call last):
    ...
    ratebank.errors.ScienceInputError: T_mid must be below T_high; got T_mid = 6000 K, ...
    """

    low: np.ndarray
    high: np.ndarray
    T_low: np.ndarray
    T_mid: np.ndarray
    T_high: np.ndarray

    def __post_init__(self):
        low = _coefficients("low", self.low)
        high = _coefficients("high", self.high)
        if low.shape != high.shape:
            raise ScienceInputError(
                f"The low- and high-range coefficients differ in shape: {low.shape} and "
                f"{high.shape}."
            )
        shape = low.shape[:-1]
        limits = {
            name: _range_temperature(name, getattr(self, name), shape)
            for name in ("T_low", "T_mid", "T_high")
        }
        for lower, upper in (("T_low", "T_mid"), ("T_mid", "T_high")):
            bad = ~(limits[lower] < limits[upper])
            if np.any(bad):
                index = _first_bad(bad) if bad.ndim else ()
                raise ScienceInputError(
                    f"{lower} must be below {upper}{_species_label(index)}; got "
                    f"{lower} = {limits[lower][index]:g} K, {upper} = {limits[upper][index]:g} K."
                )
        object.__setattr__(self, "low", low)
        object.__setattr__(self, "high", high)
        for name, value in limits.items():
            object.__setattr__(self, name, value)

    @property
    def species_shape(self) -> tuple[int, ...]:
        """Shape of the species axes (``()`` for one species)."""
        return self.low.shape[:-1]

    @classmethod
    def stack(cls, items) -> NasaPolynomials:
        """Stack single-species polynomials into one set of shape (len(items),).

        Examples
        --------
        >>> a = [2.5, 0, 0, 0, 0, -745.375, -1.46]
        >>> NasaPolynomials.stack([NasaPolynomials(a, a, 200.0, 1000.0, 6000.0)] * 3).species_shape
        (3,)
        """
        items = list(items)
        if not items or any(item.species_shape != () for item in items):
            raise ScienceInputError("stack needs a non-empty list of single-species polynomials.")
        return cls(
            *(np.stack([getattr(item, name) for item in items]) for name in _FIELDS),
        )


_FIELDS = ("low", "high", "T_low", "T_mid", "T_high")


class ReducedProperties(NamedTuple):
    """Dimensionless standard-state properties, shape species_shape + T.shape."""

    #: Cp°/R [-].
    cp_R: np.ndarray
    #: H°/(RT) [-].
    h_RT: np.ndarray
    #: S°/R [-].
    s_R: np.ndarray
    #: G°/(RT) [-].
    g_RT: np.ndarray


class StandardProperties(NamedTuple):
    """Standard-state properties in SI, shape species_shape + T.shape."""

    #: Cp° [J mol^-1 K^-1].
    Cp: np.ndarray
    #: H° [J mol^-1] (H°(298.15 K) = ΔfH°(298.15 K)).
    H: np.ndarray
    #: S° [J mol^-1 K^-1].
    S: np.ndarray
    #: G° = H° - T S° [J mol^-1].
    G: np.ndarray


def _temperature(T) -> np.ndarray:
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise ScienceInputError("T must be positive and finite [K].")
    return T


def _polynomial_values(coefficients: np.ndarray, T: np.ndarray) -> ReducedProperties:
    """Evaluate coefficients (..., 7) at T broadcastable to (...)."""
    a1, a2, a3, a4, a5, a6, a7 = np.moveaxis(coefficients, -1, 0)
    cp_R = a1 + T * (a2 + T * (a3 + T * (a4 + T * a5)))
    h_RT = a1 + T * (a2 / 2 + T * (a3 / 3 + T * (a4 / 4 + T * a5 / 5))) + a6 / T
    s_R = a1 * np.log(T) + T * (a2 + T * (a3 / 2 + T * (a4 / 3 + T * a5 / 4))) + a7
    return ReducedProperties(cp_R, h_RT, s_R, h_RT - s_R)


def _check_range(polynomials: NasaPolynomials, T: np.ndarray) -> None:
    low = polynomials.T_low.reshape(-1, 1)
    high = polynomials.T_high.reshape(-1, 1)
    temperatures = T.reshape(1, -1)
    outside = (temperatures < low) | (temperatures > high)
    if np.any(outside):
        species, column = _first_bad(outside)
        index = np.unravel_index(species, polynomials.species_shape) if low.size > 1 else ()
        raise ScienceInputError(
            f"T = {temperatures[0, column]:g} K is outside the range "
            f"{low[species, 0]:g}-{high[species, 0]:g} K of the polynomials"
            f"{_species_label(tuple(int(i) for i in index))} "
            "(pass extrapolate=True to evaluate it anyway)."
        )


def reduced_properties(polynomials: NasaPolynomials, T, *, extrapolate: bool = False):
    """Cp°/R, H°/(RT), S°/R and G°/(RT) of every species at every temperature.

    Cp°/R   = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
    H°/(RT) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
    S°/R    = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7
    G°/(RT) = H°/(RT) - S°/R

    with the low-range coefficients for T <= T_mid and the high-range ones
    above.

    Parameters
    ----------
    polynomials : NasaPolynomials
        Coefficients of the species, species shape ``s``.
    T : array_like
        Temperatures [K]; positive. Every species is evaluated at every T.
    extrapolate : bool, optional
        Evaluate outside [T_low, T_high] instead of raising. A fourth-degree
        polynomial is not a physical law beyond its range: Cp° can turn
        sharply a few hundred kelvin outside it.

    Returns
    -------
    ReducedProperties
        (cp_R, h_RT, s_R, g_RT), each [-] of shape ``s + T.shape``.

    Raises
    ------
    ScienceInputError
        If a T is not positive and finite, or lies outside a species' range
        and ``extrapolate`` is False.

    References
    ----------
    McBride, Gordon & Reno, NASA TM-4513 (1993), eqs. (1)-(3).

    Examples
    --------
    Atomic hydrogen (NIST-JANAF table H-001):

    >>> import numpy as np
    >>> from ratebank.science.constants import GAS_CONSTANT as R
    >>> a = [2.5, 0, 0, 0, 0, 217999.0 / R - 2.5 * 298.15, 114.716 / R - 2.5 * np.log(298.15)]
    >>> hydrogen = NasaPolynomials(a, a, 200.0, 1000.0, 6000.0)
    >>> cp_R, h_RT, s_R, g_RT = reduced_properties(hydrogen, [298.15, 1000.0])
    >>> cp_R.tolist()
    [2.5, 2.5]
    >>> f"{s_R[1] * R:.3f}"
    '139.871'
    """
    T = _temperature(T)
    if not extrapolate:
        _check_range(polynomials, T)
    temperatures = T.reshape(1, -1)
    use_low = temperatures <= polynomials.T_mid.reshape(-1, 1)
    coefficients = np.where(
        use_low[..., np.newaxis],
        polynomials.low.reshape(-1, 1, _N_COEFFICIENTS),
        polynomials.high.reshape(-1, 1, _N_COEFFICIENTS),
    )
    values = _polynomial_values(coefficients, temperatures)
    shape = polynomials.species_shape + T.shape
    return ReducedProperties(*(value.reshape(shape) for value in values))


def standard_properties(polynomials: NasaPolynomials, T, *, extrapolate: bool = False):
    """Cp°, H°, S° and G° of every species at every temperature, in SI.

    Cp° = R (Cp°/R),  H° = R T (H°/(RT)),  S° = R (S°/R),  G° = H° - T S°,

    from :func:`reduced_properties`.

    Parameters
    ----------
    polynomials : NasaPolynomials
        Coefficients of the species, species shape ``s``.
    T : array_like
        Temperatures [K]; positive.
    extrapolate : bool, optional
        As in :func:`reduced_properties`.

    Returns
    -------
    StandardProperties
        (Cp [J mol^-1 K^-1], H [J mol^-1], S [J mol^-1 K^-1], G [J mol^-1]),
        each of shape ``s + T.shape``.

    Raises
    ------
    ScienceInputError
        As :func:`reduced_properties`.

    References
    ----------
    McBride, Gordon & Reno, NASA TM-4513 (1993).

    Examples
    --------
    Atomic hydrogen (NIST-JANAF table H-001 gives H - H(298.15) = 14.589 kJ/mol
    at 1000 K):

    >>> import numpy as np
    >>> from ratebank.science.constants import GAS_CONSTANT as R
    >>> a = [2.5, 0, 0, 0, 0, 217999.0 / R - 2.5 * 298.15, 114.716 / R - 2.5 * np.log(298.15)]
    >>> hydrogen = NasaPolynomials(a, a, 200.0, 1000.0, 6000.0)
    >>> properties = standard_properties(hydrogen, 1000.0)
    >>> f"{properties.Cp:.3f} {(properties.H - 217999.0) / 1000:.3f}"
    '20.786 14.589'
    """
    T = _temperature(T)
    cp_R, h_RT, s_R, g_RT = reduced_properties(polynomials, T, extrapolate=extrapolate)
    RT = GAS_CONSTANT * T
    return StandardProperties(GAS_CONSTANT * cp_R, RT * h_RT, GAS_CONSTANT * s_R, RT * g_RT)


class MidpointJumps(NamedTuple):
    """Value of the high range minus the low range at T_mid, per species."""

    #: Jump of Cp° [J mol^-1 K^-1].
    Cp: np.ndarray
    #: Jump of H° [J mol^-1].
    H: np.ndarray
    #: Jump of S° [J mol^-1 K^-1].
    S: np.ndarray


def midpoint_jumps(polynomials: NasaPolynomials) -> MidpointJumps:
    """How far the two ranges of each species disagree at their common T_mid.

    ΔCp° = R [Cp°/R_high - Cp°/R_low](T_mid),
    ΔH°  = R T_mid [H°/(RT)_high - H°/(RT)_low](T_mid),
    ΔS°  = R [S°/R_high - S°/R_low](T_mid).

    Well-made polynomials are continuous there; a jump shows up as a step in
    Cp° and as a kink or step in equilibrium constants. The coefficients are
    validated when ``polynomials`` is built (finite, 7 per range,
    T_low < T_mid < T_high).

    Parameters
    ----------
    polynomials : NasaPolynomials
        Coefficients of the species, species shape ``s``.

    Returns
    -------
    MidpointJumps
        (Cp [J mol^-1 K^-1], H [J mol^-1], S [J mol^-1 K^-1]), each of shape ``s``.

    References
    ----------
    McBride, Gordon & Reno, NASA TM-4513 (1993) (the two ranges are fitted
    to join at T_mid).

    Examples
    --------
    >>> import numpy as np
    >>> low = np.array([3.5, 0, 0, 0, 0, -1000.0, 3.0])
    >>> high = low + np.array([0.01, 0, 0, 0, 0, 0, 0])
    >>> jumps = midpoint_jumps(NasaPolynomials(low, high, 200.0, 1000.0, 6000.0))
    >>> f"{jumps.Cp:.4f} {jumps.H:.2f}"
    '0.0831 83.14'
    """
    T_mid = polynomials.T_mid
    low = _polynomial_values(polynomials.low, T_mid)
    high = _polynomial_values(polynomials.high, T_mid)
    return MidpointJumps(
        GAS_CONSTANT * (high.cp_R - low.cp_R),
        GAS_CONSTANT * T_mid * (high.h_RT - low.h_RT),
        GAS_CONSTANT * (high.s_R - low.s_R),
    )


# --- fitting -------------------------------------------------------------------


class ThermoFitInputs(NamedTuple):
    """The arguments of :func:`fit_nasa_polynomials`, in its order."""

    #: Temperatures [K].
    T: np.ndarray
    #: Cp° at T [J mol^-1 K^-1].
    Cp: np.ndarray
    #: ΔfH°(298.15 K) [J mol^-1].
    H298: float
    #: S°(298.15 K) [J mol^-1 K^-1].
    S298: float
    #: Absolute H° at T [J mol^-1], for checking the fit.
    H: np.ndarray
    #: S° at T [J mol^-1 K^-1], for checking the fit.
    S: np.ndarray


@dataclass(frozen=True, eq=False)
class NasaFit:
    """Polynomials fitted by :func:`fit_nasa_polynomials`, with their deviations.

    Attributes
    ----------
    polynomials : NasaPolynomials
        One species; T_low = min(298.15 K, lowest T), T_high = highest T.
    max_cp_deviation : float
        Largest |Cp°_fit / Cp° - 1| over the given points [-].
    max_H_deviation : float
        Largest |H°_fit - H°| over the given H° [J mol^-1] (NaN if none given).
    max_S_deviation : float
        Largest |S°_fit - S°| over the given S° [J mol^-1 K^-1] (NaN if none given).
    n_points : int
        Number of Cp° points fitted.
    """

    polynomials: NasaPolynomials
    max_cp_deviation: float
    max_H_deviation: float
    max_S_deviation: float
    n_points: int


def _optional_column(name: str, value, size: int, unit: str) -> np.ndarray | None:
    if value is None:
        return None
    array = np.asarray(value, dtype=float)
    if array.shape != (size,):
        raise FitError(f"{name} has {array.size} values but there are {size} temperatures.")
    if not np.all(np.isfinite(array)):
        raise FitError(f"Every {name} must be finite [{unit}].")
    return array


def _fit_data(T, Cp, H298, S298):
    T = np.asarray(T, dtype=float)
    Cp = np.asarray(Cp, dtype=float)
    if T.ndim != 1 or T.shape != Cp.shape:
        raise FitError(
            f"T and Cp must be one-dimensional and of equal length; got {T.size} temperatures "
            f"and {Cp.size} heat capacities."
        )
    if not np.all(np.isfinite(T) & (T > 0)):
        raise FitError("Every temperature must be positive and finite [K].")
    if not np.all(np.isfinite(Cp) & (Cp > 0)):
        raise FitError("Every Cp must be positive and finite [J mol-1 K-1].")
    distinct = np.unique(T)
    if distinct.size < MINIMUM_CP_TEMPERATURES:
        raise FitError(
            f"Fitting NASA polynomials needs Cp at {MINIMUM_CP_TEMPERATURES} or more distinct "
            f"temperatures; got {distinct.size}."
        )
    if distinct[-1] <= REFERENCE_TEMPERATURE:
        raise FitError(
            f"The Cp temperatures must reach above {REFERENCE_TEMPERATURE} K; the highest is "
            f"{distinct[-1]:g} K."
        )
    if not (np.isfinite(H298) and np.isfinite(S298) and S298 > 0):
        raise FitError(
            "H298 must be finite [J mol-1] and S298 positive and finite [J mol-1 K-1]; "
            f"got H298 = {H298!r}, S298 = {S298!r}."
        )
    return T, Cp, distinct


def _midpoint(T_mid, distinct: np.ndarray, T_low: float, T_high: float) -> float:
    if T_mid is None:
        # Keep at least one distinct temperature strictly on each side.
        return float(np.clip(DEFAULT_T_MID, distinct[1], distinct[-2]))
    if not (np.isfinite(T_mid) and T_low < T_mid < T_high):
        raise FitError(
            f"T_mid must lie strictly between {T_low:g} K and {T_high:g} K; got {T_mid!r}."
        )
    return float(T_mid)


def _cp_basis(tau: np.ndarray) -> np.ndarray:
    """Cp°/R = sum b_k tau^(k-1): rows (1, tau, .., tau^4, 0, 0) of one range."""
    powers = tau[:, np.newaxis] ** np.arange(5)
    return np.hstack([powers, np.zeros((tau.size, 2))])


def _enthalpy_basis(tau: float) -> np.ndarray:
    """H°/(R theta) = sum b_k tau^k / k + b6."""
    k = np.arange(1, 6)
    return np.concatenate([tau**k / k, [1.0, 0.0]])


def _entropy_basis(T: float, tau: float) -> np.ndarray:
    """S°/R = b1 ln T + sum_{k>=2} b_k tau^(k-1) / (k-1) + b7."""
    k = np.arange(2, 6)
    return np.concatenate([[np.log(T)], tau ** (k - 1) / (k - 1), [0.0, 1.0]])


def _curvature_penalty(tau_start: float, tau_end: float) -> np.ndarray:
    """Matrix of the integral of (d^2 (Cp°/R) / d tau^2)^2 over one range (exact)."""
    nodes, weights = np.polynomial.legendre.leggauss(3)
    half = (tau_end - tau_start) / 2
    tau = tau_start + half * (nodes + 1)
    second = np.zeros((3, 7))
    second[:, 2] = 2.0
    second[:, 3] = 6.0 * tau
    second[:, 4] = 12.0 * tau**2
    return half * (second.T * weights) @ second


def _constraints(theta: float, H298: float, S298: float, T_ref_in_low: bool):
    """Rows C and values d of C x = d: continuity at T_mid, H° and S° at 298.15 K."""
    cp_at_mid = _cp_basis(np.array([1.0]))[0]
    slope_at_mid = np.array([0.0, 1.0, 2.0, 3.0, 4.0, 0.0, 0.0])
    rows = [
        np.concatenate([basis, -basis])
        for basis in (cp_at_mid, slope_at_mid, _enthalpy_basis(1.0), _entropy_basis(theta, 1.0))
    ]
    tau_ref = REFERENCE_TEMPERATURE / theta
    zeros = np.zeros(_N_COEFFICIENTS)
    for basis in (_enthalpy_basis(tau_ref), _entropy_basis(REFERENCE_TEMPERATURE, tau_ref)):
        rows.append(np.concatenate([basis, zeros] if T_ref_in_low else [zeros, basis]))
    values = [0.0, 0.0, 0.0, 0.0, H298 / (GAS_CONSTANT * theta), S298 / GAS_CONSTANT]
    return np.array(rows), np.array(values)


def _solve_scaled(T, Cp, H298, S298, T_low, theta, T_high, smoothing):
    """Constrained least squares for the scaled coefficients b (14,) of both ranges.

    Minimises (1/N) sum ((Cp_fit - Cp) / Cp)^2 + smoothing * integral of the
    squared curvature of Cp°/R in tau = T / theta, subject to C b = d, by
    solving the KKT equations [[2M, C^T], [C, 0]] [b; mu] = [2 g; d].
    """
    tau = T / theta
    y = Cp / GAS_CONSTANT
    blocks = []
    for in_range, offset in ((T <= theta, 0), (T >= theta, _N_COEFFICIENTS)):
        rows = np.zeros((int(in_range.sum()), 2 * _N_COEFFICIENTS))
        rows[:, offset : offset + _N_COEFFICIENTS] = _cp_basis(tau[in_range])
        blocks.append((rows / y[in_range, np.newaxis], np.ones(int(in_range.sum()))))
    design = np.vstack([rows for rows, _ in blocks])
    target = np.concatenate([ones for _, ones in blocks])
    penalty = np.zeros((2 * _N_COEFFICIENTS, 2 * _N_COEFFICIENTS))
    penalty[:7, :7] = _curvature_penalty(T_low / theta, 1.0)
    penalty[7:, 7:] = _curvature_penalty(1.0, T_high / theta)
    normal = design.T @ design / target.size + smoothing * penalty
    C, d = _constraints(theta, H298, S298, REFERENCE_TEMPERATURE <= theta)
    n, m = normal.shape[0], C.shape[0]
    kkt = np.zeros((n + m, n + m))
    kkt[:n, :n] = 2.0 * normal
    kkt[:n, n:] = C.T
    kkt[n:, :n] = C
    rhs = np.concatenate([2.0 * design.T @ target / target.size, d])
    try:
        solution = np.linalg.solve(kkt, rhs)
    except np.linalg.LinAlgError:
        raise FitError("The polynomial fit is singular for these temperatures.") from None
    return solution[:n]


def _unscale(b: np.ndarray, theta: float) -> np.ndarray:
    """a_k = b_k / theta^(k-1) (k = 1..5), a6 = theta b6, a7 = b7."""
    scale = np.concatenate([theta ** -np.arange(5.0), [theta, 1.0]])
    return b * scale


def fit_nasa_polynomials(
    T, Cp, H298, S298, H=None, S=None, *, T_mid: float | None = None, smoothing: float = 1e-9
) -> NasaFit:
    """Fit the two seven-coefficient polynomials of a species to Cp°, ΔfH° and S°.

    Least squares in the relative deviation of Cp°, subject to exact
    equality constraints:

        minimise  (1/N) Σ ((Cp°_fit(T_i) - Cp°_i) / Cp°_i)^2
                  + smoothing × ∫ (d²(Cp°/R)/dτ²)² dτ,   τ = T / T_mid,
        subject to  Cp°, dCp°/dT, H° and S° continuous at T_mid,
                    H°(298.15 K) = ΔfH°(298.15 K),  S°(298.15 K) = S°(298.15 K),

    solved exactly through its KKT (Lagrange) equations with coefficients
    scaled by T_mid. The small curvature term picks the smoothest curve when
    the points alone leave the quartics undetermined (a few Cp° values); with
    a full table it changes Cp° by a few parts in 10^5, the NIST-JANAF
    tables' rounding.

    Parameters
    ----------
    T : array_like, shape (N,)
        Temperatures of the Cp° values [K]; at least
        :data:`MINIMUM_CP_TEMPERATURES` distinct, the highest above 298.15 K.
    Cp : array_like, shape (N,)
        Standard heat capacities Cp° [J mol^-1 K^-1]; positive.
    H298 : float
        ΔfH°(298.15 K) [J mol^-1].
    S298 : float
        S°(298.15 K) [J mol^-1 K^-1]; positive.
    H, S : array_like, shape (N,), optional
        Absolute H° [J mol^-1] and S° [J mol^-1 K^-1] at T, not fitted: the
        result reports the largest deviation from them.
    T_mid : float, optional
        Common temperature of the two ranges [K]. Default: 1000 K clipped to
        lie between the second-lowest and second-highest distinct T. If
        given, it must lie strictly inside [T_low, T_high].
    smoothing : float, optional
        Weight of the curvature term [-]; non-negative (default 1e-9).

    Returns
    -------
    NasaFit
        Polynomials valid from T_low = min(298.15 K, min T) to
        T_high = max T, and their largest deviations from the data.

    Raises
    ------
    FitError
        If T and Cp differ in length, a value is not finite (or not positive
        for T, Cp and S298), there are fewer than 4 distinct temperatures, none
        above 298.15 K, T_mid lies outside the range, or ``smoothing`` is
        negative.

    References
    ----------
    McBride, Gordon & Reno, NASA TM-4513 (1993) (the polynomial form and its
    two ranges). Boyd & Vandenberghe, *Introduction to Applied Linear
    Algebra* (2018), ch. 16 (constrained least squares, KKT equations).

    Examples
    --------
    Atomic oxygen from five rows of NIST-JANAF table O-001:

    >>> fit = fit_nasa_polynomials([298.15, 500.0, 1000.0, 2000.0, 3000.0],
    ...                            [21.911, 21.257, 20.915, 20.826, 20.937], 249173.0, 161.058)
    >>> f"{float(fit.polynomials.T_mid):g} {fit.max_cp_deviation < 2e-3}"
    '1000 True'
    >>> fit_nasa_polynomials([300.0], [29.0], 0.0, 200.0)
    Traceback (most recent call last):
    ...
    ratebank.errors.FitError: Fitting NASA polynomials needs Cp at 4 or more distinct ... got 1.
    """
    T, Cp, distinct = _fit_data(T, Cp, H298, S298)
    H = _optional_column("H", H, T.size, "J mol-1")
    S = _optional_column("S", S, T.size, "J mol-1 K-1")
    if not (np.isfinite(smoothing) and smoothing >= 0):
        raise FitError(f"smoothing must be non-negative and finite; got {smoothing!r}.")
    T_low, T_high = min(REFERENCE_TEMPERATURE, float(distinct[0])), float(distinct[-1])
    theta = _midpoint(T_mid, distinct, T_low, T_high)
    b = _solve_scaled(T, Cp, float(H298), float(S298), T_low, theta, T_high, smoothing)
    polynomials = NasaPolynomials(
        _unscale(b[:7], theta), _unscale(b[7:], theta), T_low, theta, T_high
    )
    fitted = standard_properties(polynomials, T)
    nan = float("nan")
    return NasaFit(
        polynomials,
        float(np.max(np.abs(fitted.Cp / Cp - 1.0))),
        nan if H is None else float(np.max(np.abs(fitted.H - H))),
        nan if S is None else float(np.max(np.abs(fitted.S - S))),
        int(T.size),
    )


def fit_inputs_from_table(
    T, Cp, S, H_minus_H298, delta_f_H, *, T_min: float = 0.0, T_max: float = np.inf
) -> ThermoFitInputs:
    """Turn the rows of a thermochemical table into inputs of :func:`fit_nasa_polynomials`.

    Takes ΔfH°(298.15 K) and S°(298.15 K) from the 298.15 K row, forms the
    absolute enthalpy H°(T) = ΔfH°(298.15 K) + [H°(T) - H°(298.15 K)], and
    keeps the rows with T_min <= T <= T_max, T > 0 and finite values. The
    NIST-JANAF tables print H - H(298.15) and ΔfH in kJ/mol: multiply them
    by 1000 first.

    Parameters
    ----------
    T : array_like, shape (N,)
        Tabulated temperatures [K]; one row must be 298.15 K.
    Cp, S : array_like, shape (N,)
        Cp° and S° [J mol^-1 K^-1].
    H_minus_H298 : array_like, shape (N,)
        Enthalpy increment H°(T) - H°(298.15 K) [J mol^-1].
    delta_f_H : array_like, shape (N,)
        Enthalpy of formation ΔfH°(T) [J mol^-1]; only its 298.15 K value is used.
    T_min, T_max : float, optional
        Temperature window of the rows kept [K].

    Returns
    -------
    ThermoFitInputs
        (T, Cp, H298, S298, H, S); ``fit_nasa_polynomials(*inputs)`` fits them.

    Raises
    ------
    FitError
        If the columns differ in length or there is no finite 298.15 K row.

    References
    ----------
    Chase, *NIST-JANAF Thermochemical Tables*, 4th ed. (1998), the column layout.

    Examples
    --------
    >>> inputs = fit_inputs_from_table([0.0, 298.15, 500.0], [0.0, 21.911, 21.257],
    ...                                [0.0, 161.058, 172.197], [-6725.0, 0.0, 4343.0],
    ...                                [246790.0, 249173.0, 250474.0])
    >>> inputs.T.tolist(), inputs.H.tolist()
    ([298.15, 500.0], [249173.0, 253516.0])
    """
    columns = [np.asarray(column, dtype=float) for column in (T, Cp, S, H_minus_H298, delta_f_H)]
    if any(column.ndim != 1 or column.shape != columns[0].shape for column in columns):
        raise FitError("T, Cp, S, H_minus_H298 and delta_f_H must be columns of equal length.")
    T, Cp, S, increment, formation = columns
    finite = np.all(np.isfinite(np.stack(columns[:4])), axis=0)
    reference = np.flatnonzero(
        finite & (np.abs(T - REFERENCE_TEMPERATURE) < _SAME_TEMPERATURE) & np.isfinite(formation)
    )
    if reference.size == 0:
        raise FitError(
            "The table has no finite row at 298.15 K to take the enthalpy of formation and S from."
        )
    H298, S298 = float(formation[reference[0]]), float(S[reference[0]])
    keep = finite & (T > 0) & (T >= T_min) & (T <= T_max)
    return ThermoFitInputs(T[keep], Cp[keep], H298, S298, H298 + increment[keep], S[keep])


# --- reactions -----------------------------------------------------------------


class ReactionThermochemistry(NamedTuple):
    """Standard reaction properties, shape stoichiometry.shape[:-1] + T.shape."""

    #: ΔrH° [J mol^-1].
    delta_H: np.ndarray
    #: ΔrS° [J mol^-1 K^-1].
    delta_S: np.ndarray
    #: ΔrG° [J mol^-1].
    delta_G: np.ndarray
    #: ln Kp [-] (finite where Kp itself overflows).
    ln_Kp: np.ndarray
    #: Kp = exp(-ΔrG°/(RT)) [-].
    Kp: np.ndarray
    #: ln of Kc in (mol m^-3)^Δn.
    ln_Kc: np.ndarray
    #: Kc = Kp (p°/(RT))^Δn [(mol m^-3)^Δn].
    Kc: np.ndarray
    #: Δn = Σ ν [-], shape stoichiometry.shape[:-1].
    delta_n: np.ndarray


def _stoichiometry(stoichiometry, polynomials: NasaPolynomials) -> np.ndarray:
    nu = np.asarray(stoichiometry, dtype=float)
    if len(polynomials.species_shape) != 1:
        raise ScienceInputError(
            "The polynomials must hold a one-dimensional list of species (shape (n,)); got "
            f"species shape {polynomials.species_shape}."
        )
    n_species = polynomials.species_shape[0]
    if nu.ndim == 0 or nu.shape[-1] != n_species:
        raise ScienceInputError(
            f"The stoichiometry needs one coefficient per species ({n_species}); "
            f"got shape {nu.shape}."
        )
    if not np.all(np.isfinite(nu)):
        raise ScienceInputError("Every stoichiometric coefficient must be finite.")
    return nu


def reaction_thermochemistry(
    stoichiometry, polynomials: NasaPolynomials, T, *, extrapolate: bool = False
) -> ReactionThermochemistry:
    """ΔrH°, ΔrS°, ΔrG°, Kp and Kc of reactions from species polynomials.

    ΔrX° = Σ_i ν_i X°_i,   ln Kp = -ΔrG°/(RT) = -Σ_i ν_i G°_i/(RT),
    Kc = Kp (p°/(RT))^Δn,  Δn = Σ_i ν_i,  p° = 10^5 Pa.

    Parameters
    ----------
    stoichiometry : array_like, shape (..., n)
        ν_i of each reaction over the n species [-]; negative for reactants,
        positive for products, zero for species not taking part. Third
        bodies (M) are not species and must not appear.
    polynomials : NasaPolynomials
        The n species, species shape (n,).
    T : array_like
        Temperatures [K]; positive.
    extrapolate : bool, optional
        As in :func:`reduced_properties`.

    Returns
    -------
    ReactionThermochemistry
        Arrays of shape ``stoichiometry.shape[:-1] + T.shape``; Kc in
        (mol m^-3)^Δn. Kp and Kc overflow to inf or underflow to 0 where
        |ln K| exceeds about 709; ln_Kp and ln_Kc stay finite.

    Raises
    ------
    ScienceInputError
        If the stoichiometry does not have one finite coefficient per
        species, the polynomials are not a list of species, or a T lies
        outside a species' range (unless ``extrapolate``).

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 1.

    Examples
    --------
    The dissociation O2 -> 2 O from two single-range monatomic/diatomic
    sketches (synthetic coefficients):

    >>> import numpy as np
    >>> o2 = NasaPolynomials([3.5, 0, 0, 0, 0, -1043.5, 4.0], [3.5, 0, 0, 0, 0, -1043.5, 4.0],
    ...                      200.0, 1000.0, 6000.0)
    >>> o = NasaPolynomials([2.5, 0, 0, 0, 0, 29224.0, 5.2], [2.5, 0, 0, 0, 0, 29224.0, 5.2],
    ...                     200.0, 1000.0, 6000.0)
    >>> result = reaction_thermochemistry([-1, 2], NasaPolynomials.stack([o2, o]), [1000.0, 2000.0])
    >>> float(result.delta_n)
    1.0
    >>> bool(np.allclose(result.Kc, result.Kp * 1e5 / (8.314462618 * np.array([1000.0, 2000.0]))))
    True
    """
    nu = _stoichiometry(stoichiometry, polynomials)
    T = _temperature(T)
    properties = standard_properties(polynomials, T, extrapolate=extrapolate)
    reduced_gibbs = properties.G / (GAS_CONSTANT * T)
    delta_H, delta_S, delta_G, delta_g_RT = (
        np.tensordot(nu, value, axes=([-1], [0]))
        for value in (properties.H, properties.S, properties.G, reduced_gibbs)
    )
    delta_n = nu.sum(axis=-1)
    ln_Kp = -delta_g_RT
    expanded_delta_n = np.reshape(delta_n, delta_n.shape + (1,) * T.ndim)
    ln_Kc = ln_Kp + expanded_delta_n * np.log(STANDARD_PRESSURE / (GAS_CONSTANT * T))
    with np.errstate(over="ignore", under="ignore"):
        Kp, Kc = np.exp(ln_Kp), np.exp(ln_Kc)
    return ReactionThermochemistry(delta_H, delta_S, delta_G, ln_Kp, Kp, ln_Kc, Kc, delta_n)


def equilibrium_constant_kc(Kp, T, delta_n):
    """Concentration equilibrium constant from the pressure one.

    Kc = Kp (p° / (R T))^Δn,  p° = 10^5 Pa,

    so Kc is in (mol m^-3)^Δn. It follows from p_i = c_i R T for ideal gases.

    Parameters
    ----------
    Kp : array_like
        Equilibrium constant in standard-pressure units [-]; positive.
    T : array_like
        Temperature [K]; positive.
    delta_n : array_like
        Change in the number of gas molecules, Σ ν_i [-] (third bodies excluded).

    Returns
    -------
    numpy.ndarray or float
        Kc [(mol m^-3)^Δn].

    Raises
    ------
    ScienceInputError
        If Kp or T is not positive and finite, or Δn is not finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 1.

    Examples
    --------
    An association A + B -> AB (Δn = -1) with Kp = 2 at 1000 K:

    >>> f"{equilibrium_constant_kc(2.0, 1000.0, -1):.6f}"
    '0.166289'
    """
    Kp = np.asarray(Kp, dtype=float)
    if not np.all(np.isfinite(Kp) & (Kp > 0)):
        raise ScienceInputError("Kp must be positive and finite [-].")
    T = _temperature(T)
    delta_n = np.asarray(delta_n, dtype=float)
    if not np.all(np.isfinite(delta_n)):
        raise ScienceInputError("delta_n must be finite [-].")
    return Kp * (STANDARD_PRESSURE / (GAS_CONSTANT * T)) ** delta_n


def reverse_rate_constant(k_forward, Kc):
    """Reverse rate constant by detailed balance.

    k_r = k_f / Kc

    Parameters
    ----------
    k_forward : array_like
        Forward rate constant [(m^3 mol^-1)^(order-1) s^-1]; non-negative.
    Kc : array_like
        Concentration equilibrium constant [(mol m^-3)^Δn]; positive.

    Returns
    -------
    numpy.ndarray or float
        k_r in [(m^3 mol^-1)^(order+Δn-1) s^-1], the reverse reaction's order
        being the forward order plus Δn.

    Raises
    ------
    ScienceInputError
        If k_forward is negative or not finite, or Kc is not positive and
        finite.

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 1.

    Examples
    --------
    >>> float(reverse_rate_constant(3.0e7, 0.5))
    60000000.0
    """
    k_forward = np.asarray(k_forward, dtype=float)
    Kc = np.asarray(Kc, dtype=float)
    if not np.all(np.isfinite(k_forward) & (k_forward >= 0)):
        raise ScienceInputError("k_forward must be finite and non-negative.")
    if not np.all(np.isfinite(Kc) & (Kc > 0)):
        raise ScienceInputError(
            "Kc must be positive and finite; where it overflows, work with ln Kc."
        )
    return k_forward / Kc


class ReverseArrhenius(NamedTuple):
    """Modified-Arrhenius expression of a reverse rate over a temperature range."""

    #: Pre-exponential factor [k-unit K^-n] of the reverse reaction.
    A: float
    #: Temperature exponent [-].
    n: float
    #: Activation energy [J mol^-1].
    Ea: float
    #: Largest |k_fit / k_r - 1| on the check grid [-].
    max_relative_deviation: float
    #: Range of the fit [K].
    T_min: float
    T_max: float


def _reciprocal_grid(T_min: float, T_max: float, size: int) -> np.ndarray:
    """Temperatures evenly spaced in 1/T, both ends included."""
    return 1.0 / np.linspace(1.0 / T_min, 1.0 / T_max, size)


def fit_reverse_modified_arrhenius(
    A,
    n,
    Ea,
    stoichiometry,
    polynomials: NasaPolynomials,
    T_min: float,
    T_max: float,
    *,
    fit_points: int = 50,
    check_points: int = 2001,
    extrapolate: bool = False,
) -> ReverseArrhenius:
    """Modified-Arrhenius expression of the detailed-balance reverse rate.

    k_r(T) = A T^n exp(-Ea/RT) / Kc(T) is fitted by unweighted least squares
    in ln k as k_r ≈ A_r T^n_r exp(-Ea_r/RT) on ``fit_points`` temperatures
    evenly spaced in 1/T, and the largest relative deviation
    max |k_fit/k_r - 1| is taken over ``check_points`` temperatures so
    spaced (and the fit points). Between neighbouring check points the
    deviation is smooth, so the true maximum exceeds the reported one by a
    negligible amount.

    Parameters
    ----------
    A, n, Ea : float
        Forward expression: A [k-unit K^-n], n [-], Ea [J mol^-1].
    stoichiometry : array_like, shape (n_species,)
        ν_i of the forward reaction (no third bodies).
    polynomials : NasaPolynomials
        The species, shape (n_species,).
    T_min, T_max : float
        Temperature range [K], T_min < T_max, inside every species' range
        unless ``extrapolate``.
    fit_points, check_points : int, optional
        Sizes of the fit grid (at least 3) and of the check grid (at least 2).
    extrapolate : bool, optional
        As in :func:`reduced_properties`.

    Returns
    -------
    ReverseArrhenius
        (A [k-unit of the reverse reaction K^-n], n [-], Ea [J mol^-1],
        largest relative deviation [-], T_min [K], T_max [K]).

    Raises
    ------
    ScienceInputError
        If the range or grid sizes are invalid, the stoichiometry is not one
        reaction, or a T lies outside a species' range.
    FitError
        If the fit fails (see :func:`ratebank.science.arrhenius.fit_rate_constants`).

    References
    ----------
    Laidler, *Chemical Kinetics*, 3rd ed. (1987), ch. 1 (detailed balance).

    Examples
    --------
    A reaction whose products have the same thermochemistry as its
    reactants has Kc = 1, so the reverse expression is the forward one:

    >>> a = [3.5, 0, 0, 0, 0, -1043.5, 4.0]
    >>> x = NasaPolynomials(a, a, 200.0, 1000.0, 6000.0)
    >>> fit = fit_reverse_modified_arrhenius(1e6, 1.5, 2e4, [-1, 1], NasaPolynomials.stack([x, x]),
    ...                                      300.0, 2000.0)
    >>> f"{fit.A:.4g} {fit.n:.4f} {fit.Ea:.1f} {fit.max_relative_deviation < 1e-10}"
    '1e+06 1.5000 20000.0 True'
    """
    nu = _stoichiometry(stoichiometry, polynomials)
    if nu.ndim != 1:
        raise ScienceInputError("The stoichiometry must describe one reaction (one dimension).")
    if not (np.isfinite(T_min) and np.isfinite(T_max) and 0 < T_min < T_max):
        raise ScienceInputError(
            f"The range needs 0 < T_min < T_max [K]; got T_min = {T_min!r}, T_max = {T_max!r}."
        )
    if fit_points < 3 or check_points < 2:
        raise ScienceInputError("fit_points must be at least 3 and check_points at least 2.")

    def ln_reverse(T):
        ln_kc = reaction_thermochemistry(nu, polynomials, T, extrapolate=extrapolate).ln_Kc
        return np.log(modified_arrhenius(T, A, n, Ea)) - ln_kc

    T_fit = _reciprocal_grid(T_min, T_max, fit_points)
    A_r, n_r, Ea_r, worst = approximate_with_modified_arrhenius(T_fit, np.exp(ln_reverse(T_fit)))
    T_check = _reciprocal_grid(T_min, T_max, check_points)
    ln_fit = np.log(modified_arrhenius(T_check, A_r, n_r, Ea_r))
    worst = max(worst, float(np.max(np.abs(np.expm1(ln_fit - ln_reverse(T_check))))))
    return ReverseArrhenius(A_r, n_r, Ea_r, worst, float(T_min), float(T_max))
