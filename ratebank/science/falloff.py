"""Pressure-dependent rate laws: third-body, fall-off and chemically activated forms.

Everything is SI-molar and vectorized: T [K], the effective third-body
concentration M = [M]_eff [mol m^-3] (see :mod:`ratebank.science.pressure`),
energies [J mol^-1], rate constants [(m^3 mol^-1)^(order-1) s^-1]. Each limit
is a modified Arrhenius expression given as a triple (A, n, Ea),

    k0(T) = A0 T^n0 exp(-Ea0 / (R T)),   k_inf(T) = A_inf T^n_inf exp(-Ea_inf / (R T)),

and the forms are (ratebank's names, DESIGN section 11)

- ``"third-body"``:  k = k0 [M]_eff,
- ``"falloff"``:     k = k_inf Pr / (1 + Pr) F,   Pr = k0 [M]_eff / k_inf,
- ``"activated"``:   k = k0 / (1 + Pr) F          (chemically activated channel).

For ``"falloff"`` k0 has one order more than the equation (a unimolecular
decomposition has k0 in m^3 mol^-1 s^-1, k_inf in s^-1); for ``"activated"``
k0 has the equation's order and k_inf one fewer, the evaluation panels'
convention.

The broadening factor F is one of

- Lindemann: F = 1 (``broadening=None``);
- Troe's form, as published by Gilbert, Luther & Troe (1983)
  (:class:`TroeBroadening`):
  Fcent = (1 - alpha) exp(-T/T***) + alpha exp(-T/T*) + exp(-T**/T),
  c = -0.4 - 0.67 log10 Fcent, n = 0.75 - 1.27 log10 Fcent, d = 0.14,
  log10 F = log10 Fcent / (1 + ((log10 Pr + c) / (n - d (log10 Pr + c)))^2);
- a fixed centre Fc with width N, the atmospheric evaluation panels' form
  (:class:`FixedCentreBroadening`):
  log10 F = log10 Fc / (1 + (log10 Pr / N)^2), N = 0.75 - 1.27 log10 Fc unless
  given (the NASA/JPL evaluation uses N = 1).

The limits Pr -> 0 and Pr -> inf are evaluated without NaN: with Lindemann or
the fixed-centre form, F -> 1 there, so the fall-off form tends to k0 [M] and
to k_inf. Troe's published form does not tend to exactly 1: as
|log10 Pr| -> inf the ratio tends to -1/d, so F -> Fcent^(d^2 / (1 + d^2)) =
Fcent^0.0192 (0.956 for Fcent = 0.1), and ratebank returns that limit.

Rate laws are evaluated in ln k, which keeps exp(-Ea/RT) and the limits from
underflowing into 0/0.

References
----------
1. Lindemann, F. A. Discussion on "The radiation theory of chemical action".
   *Trans. Faraday Soc.* 1922, 17, 598-606. doi:10.1039/TF9221700598
2. Hinshelwood, C. N. On the theory of unimolecular reactions.
   *Proc. R. Soc. London A* 1927, 113, 230-233.
3. Gilbert, R. G.; Luther, K.; Troe, J. Theory of thermal unimolecular
   reactions in the fall-off range. II. Weak collision rate constants.
   *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169-177. doi:10.1002/bbpc.19830870218
4. Gilbert, R. G.; Smith, S. C. *Theory of Unimolecular and Recombination
   Reactions*; Blackwell, 1990.
5. Burkholder, J. B. et al. *Chemical Kinetics and Photochemical Data for Use
   in Atmospheric Studies, Evaluation No. 19*; JPL Publication 19-5, Jet
   Propulsion Laboratory, 2019 (termolecular and chemical-activation forms).
6. Atkinson, R. et al. Evaluated kinetic and photochemical data for
   atmospheric chemistry: Volume I. *Atmos. Chem. Phys.* 2004, 4, 1461-1738.
   doi:10.5194/acp-4-1461-2004 (the fixed-Fc form with N = 0.75 - 1.27 log10 Fc).
7. Bevington, P. R.; Robinson, D. K. *Data Reduction and Error Analysis for
   the Physical Sciences*, 3rd ed.; McGraw-Hill, 2003 (nonlinear least squares,
   ch. 8).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import ClassVar, NamedTuple

import numpy as np

from ratebank.errors import FitError, ScienceInputError
from ratebank.science.arrhenius import FitWarning
from ratebank.science.collision import lennard_jones_collision_rate_constant
from ratebank.science.constants import GAS_CONSTANT

__all__ = [
    "BROADENING_FORMS",
    "FALLOFF_FORMS",
    "TROE_D",
    "FalloffFit",
    "FalloffRate",
    "FixedCentreBroadening",
    "TroeBroadening",
    "activated_rate_constant",
    "falloff_rate_constant",
    "fit_falloff",
    "fixed_centre_broadening",
    "hinshelwood_activated_fraction",
    "hinshelwood_low_pressure_limit",
    "panel_width",
    "pressure_dependent_rate",
    "third_body_rate_constant",
    "troe_broadening",
    "troe_centre",
]

#: Pressure-dependent forms, in ratebank's names.
FALLOFF_FORMS: tuple[str, ...] = ("third-body", "falloff", "activated")

#: Broadening forms understood by :func:`fit_falloff`.
BROADENING_FORMS: tuple[str, ...] = ("lindemann", "troe", "fixed-centre")

#: The constant d of Gilbert, Luther & Troe (1983).
TROE_D: float = 0.14

_LN10 = math.log(10.0)


# --- validation helpers -------------------------------------------------------


def _temperature(T) -> np.ndarray:
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise ScienceInputError("T must be positive and finite [K].")
    return T


def _concentration(M) -> np.ndarray:
    M = np.asarray(M, dtype=float)
    if not np.all(np.isfinite(M) & (M >= 0)):
        raise ScienceInputError(
            "The third-body concentration M must be finite and not negative [mol m-3]."
        )
    return M


def _positive_number(name: str, value, unit: str) -> float:
    if not isinstance(value, (int, float, np.number)) or not (math.isfinite(value) and value > 0):
        raise ScienceInputError(f"{name} must be a positive finite number [{unit}]; got {value!r}.")
    return float(value)


def _arrhenius_triple(name: str, triple) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(ln A, n, Ea) of a limit given as (A, n, Ea), validated."""
    try:
        A, n, Ea = triple
    except (TypeError, ValueError):
        raise ScienceInputError(
            f"{name} must be three values (A, n, Ea); got {triple!r}."
        ) from None
    A = np.asarray(A, dtype=float)
    n = np.asarray(n, dtype=float)
    Ea = np.asarray(Ea, dtype=float)
    if not np.all(np.isfinite(A) & (A > 0)):
        raise ScienceInputError(f"The pre-exponential factor A of {name} must be positive.")
    if not (np.all(np.isfinite(n)) and np.all(np.isfinite(Ea))):
        raise ScienceInputError(f"The exponent n and energy Ea [J mol-1] of {name} must be finite.")
    return np.log(A), n, Ea


def _ln_modified_arrhenius(T, ln_A, n, Ea):
    return ln_A + n * np.log(T) - Ea / (GAS_CONSTANT * T)


# --- broadening ---------------------------------------------------------------


def _troe_log10_factor(log10_Pr, log10_Fcent):
    """Gilbert, Luther & Troe (1983) log10 F, finite at log10 Pr = +-inf."""
    c = -0.4 - 0.67 * log10_Fcent
    n = 0.75 - 1.27 * log10_Fcent
    x = log10_Pr + c
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # x / (n - d x) tends to -1/d as |x| grows; inf/inf would give NaN.
        ratio = np.where(np.isinf(x), -1.0 / TROE_D, x / (n - TROE_D * x))
        return log10_Fcent / (1.0 + ratio * ratio)


def _panel_log10_factor(log10_Pr, log10_Fc, N):
    with np.errstate(over="ignore", invalid="ignore"):
        return log10_Fc / (1.0 + (log10_Pr / N) ** 2)


def _reduced_pressure_log10(Pr) -> np.ndarray:
    Pr = np.asarray(Pr, dtype=float)
    if np.any(np.isnan(Pr)) or np.any(Pr < 0):
        raise ScienceInputError("The reduced pressure Pr must not be negative or NaN [-].")
    with np.errstate(divide="ignore"):
        return np.log10(Pr)


def troe_centre(T, alpha, T3, T1, T2=None):
    """Centre broadening factor Fcent(T) of Troe's form.

    Fcent = (1 - alpha) exp(-T/T***) + alpha exp(-T/T*) + exp(-T**/T),

    the last term only when T** is given.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    alpha : float
        Weight alpha [-]; finite (usually between 0 and 1).
    T3, T1 : float
        T*** and T* [K]; positive and finite. Very large or very small values
        switch a term on or off, as published parameter sets do.
    T2 : float, optional
        T** [K]; positive and finite. Omitted: no third term.

    Returns
    -------
    numpy.ndarray or float
        Fcent [-].

    Raises
    ------
    ScienceInputError
        If a parameter is out of its range, or Fcent is not positive at some T
        (log10 Fcent would be undefined).

    Notes
    -----
    With T** given, Fcent can exceed 1 at high T; that is the published form
    and is not refused.

    References
    ----------
    Gilbert, Luther & Troe, *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169.
    doi:10.1002/bbpc.19830870218

    Examples
    --------
    >>> f"{troe_centre(300.0, 0.6, 100.0, 2000.0):.6f}"
    '0.536340'
    >>> f"{troe_centre(300.0, 0.6, 100.0, 2000.0, 500.0):.6f}"
    '0.725215'
    """
    T = _temperature(T)
    if not isinstance(alpha, (int, float, np.number)) or not math.isfinite(alpha):
        raise ScienceInputError(f"Troe's alpha must be a finite number [-]; got {alpha!r}.")
    T3 = _positive_number("Troe's T*** (T3)", T3, "K")
    T1 = _positive_number("Troe's T* (T1)", T1, "K")
    Fcent = (1.0 - alpha) * np.exp(-T / T3) + alpha * np.exp(-T / T1)
    if T2 is not None:
        T2 = _positive_number("Troe's T** (T2)", T2, "K")
        Fcent = Fcent + np.exp(-T2 / T)
    bad = ~(Fcent > 0)
    if np.any(bad):
        at = float(np.broadcast_to(T, np.shape(Fcent))[bad].flat[0])
        raise ScienceInputError(
            f"Troe's centre Fcent is not positive at T = {at:g} K with alpha = {alpha:g}, "
            f"T*** = {T3:g} K, T* = {T1:g} K; its logarithm is undefined."
        )
    return Fcent


def troe_broadening(Pr, Fcent):
    """Broadening factor F of Troe's form (Gilbert, Luther & Troe 1983).

    c = -0.4 - 0.67 log10 Fcent,  n = 0.75 - 1.27 log10 Fcent,  d = 0.14,
    log10 F = log10 Fcent / (1 + ((log10 Pr + c) / (n - d (log10 Pr + c)))^2).

    Parameters
    ----------
    Pr : array_like
        Reduced pressure Pr = k0 [M] / k_inf [-]; not negative (0 and inf
        allowed).
    Fcent : array_like
        Centre broadening factor [-]; positive and finite (see
        :func:`troe_centre`). Broadcasts against ``Pr``.

    Returns
    -------
    numpy.ndarray or float
        F [-]. F = Fcent at log10 Pr = -c; as Pr -> 0 or inf,
        F -> Fcent^(d^2/(1 + d^2)).

    Raises
    ------
    ScienceInputError
        If Pr is negative or NaN, or Fcent is not positive and finite.

    References
    ----------
    Gilbert, Luther & Troe, *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169.
    doi:10.1002/bbpc.19830870218

    Examples
    --------
    >>> f"{troe_broadening(1.0, 0.6):.6f}"
    '0.616335'
    >>> f"{troe_broadening(0.0, 0.6):.6f}"
    '0.990228'
    """
    log10_Pr = _reduced_pressure_log10(Pr)
    Fcent = np.asarray(Fcent, dtype=float)
    if not np.all(np.isfinite(Fcent) & (Fcent > 0)):
        raise ScienceInputError("Fcent must be positive and finite [-].")
    return 10.0 ** _troe_log10_factor(log10_Pr, np.log10(Fcent))


def panel_width(Fc):
    """Default width N of the evaluation panels' fall-off form.

    N = 0.75 - 1.27 log10 Fc

    Parameters
    ----------
    Fc : array_like
        Centre broadening factor [-]; 0 < Fc <= 1.

    Returns
    -------
    numpy.ndarray or float
        N [-] (0.75 at Fc = 1).

    Raises
    ------
    ScienceInputError
        If Fc is not in (0, 1].

    References
    ----------
    Atkinson et al., *Atmos. Chem. Phys.* 2004, 4, 1461, introduction.
    doi:10.5194/acp-4-1461-2004

    Examples
    --------
    >>> f"{panel_width(0.6):.6f}"
    '1.031748'
    """
    Fc = np.asarray(Fc, dtype=float)
    if not np.all(np.isfinite(Fc) & (Fc > 0) & (Fc <= 1)):
        raise ScienceInputError(f"Fc must lie in (0, 1] [-]; got {Fc.tolist()!r}.")
    return 0.75 - 1.27 * np.log10(Fc)


def fixed_centre_broadening(Pr, Fc, N=None):
    """Broadening factor F of the evaluation panels' fixed-centre form.

    log10 F = log10 Fc / (1 + (log10 Pr / N)^2),  N = 0.75 - 1.27 log10 Fc
    unless given.

    Parameters
    ----------
    Pr : array_like
        Reduced pressure [-]; not negative (0 and inf allowed, where F = 1).
    Fc : array_like
        Centre broadening factor [-]; 0 < Fc <= 1. F = Fc at Pr = 1.
    N : array_like, optional
        Width [-]; positive and finite. The NASA/JPL evaluation uses N = 1.

    Returns
    -------
    numpy.ndarray or float
        F [-].

    Raises
    ------
    ScienceInputError
        If Pr is negative or NaN, Fc is outside (0, 1], or N is not positive.

    References
    ----------
    Atkinson et al., *Atmos. Chem. Phys.* 2004, 4, 1461.
    doi:10.5194/acp-4-1461-2004; Burkholder et al., JPL Publication 19-5 (2019).

    Examples
    --------
    >>> f"{fixed_centre_broadening(1.0, 0.6):.6f}"
    '0.600000'
    >>> f"{fixed_centre_broadening(10.0, 0.6, N=1.0):.6f}"
    '0.774597'
    """
    log10_Pr = _reduced_pressure_log10(Pr)
    width = panel_width(Fc) if N is None else np.asarray(N, dtype=float)
    if not np.all(np.isfinite(width) & (width > 0)):
        raise ScienceInputError("The width N must be positive and finite [-].")
    log10_Fc = np.log10(np.asarray(Fc, dtype=float))
    return 10.0 ** _panel_log10_factor(log10_Pr, log10_Fc, width)


@dataclass(frozen=True)
class TroeBroadening:
    """Troe's broadening (Gilbert, Luther & Troe 1983) for a rate law.

    Attributes
    ----------
    alpha : float
        Weight alpha [-].
    T3, T1 : float
        T*** and T* [K]; positive.
    T2 : float or None
        T** [K]; None for the three-parameter form.
    """

    alpha: float
    T3: float
    T1: float
    T2: float | None = None
    name: ClassVar[str] = "troe"

    def __post_init__(self):
        troe_centre(1.0, self.alpha, self.T3, self.T1, self.T2)  # validates the parameters

    def centre(self, T):
        """Fcent(T) [-] at T [K] (:func:`troe_centre`)."""
        return troe_centre(T, self.alpha, self.T3, self.T1, self.T2)

    def log10_factor(self, T, log10_Pr):
        """log10 F at T [K] and log10 Pr [-]."""
        return _troe_log10_factor(log10_Pr, np.log10(self.centre(T)))


@dataclass(frozen=True)
class FixedCentreBroadening:
    """The evaluation panels' broadening: fixed centre Fc, width N.

    Attributes
    ----------
    Fc : float
        Centre broadening factor [-]; 0 < Fc <= 1.
    N : float or None
        Width [-]; None for N = 0.75 - 1.27 log10 Fc.
    """

    Fc: float
    N: float | None = None
    name: ClassVar[str] = "fixed-centre"

    def __post_init__(self):
        if not isinstance(self.Fc, (int, float, np.number)) or not 0 < self.Fc <= 1:
            raise ScienceInputError(f"Fc must lie in (0, 1] [-]; got {self.Fc!r}.")
        if self.N is not None:
            _positive_number("The width N", self.N, "-")

    @property
    def width(self) -> float:
        """N [-], the given one or 0.75 - 1.27 log10 Fc."""
        return float(panel_width(self.Fc)) if self.N is None else float(self.N)

    def log10_factor(self, T, log10_Pr):
        """log10 F [-] at log10 Pr [-] (independent of T)."""
        return _panel_log10_factor(log10_Pr, math.log10(self.Fc), self.width)


def _broadening_function(broadening) -> Callable:
    if broadening is None:
        return lambda T, log10_Pr: np.zeros(np.shape(log10_Pr))
    if isinstance(broadening, (TroeBroadening, FixedCentreBroadening)):
        return broadening.log10_factor
    raise ScienceInputError(
        "broadening must be None (Lindemann), a TroeBroadening or a FixedCentreBroadening; "
        f"got {broadening!r}."
    )


# --- rate laws ----------------------------------------------------------------


class FalloffRate(NamedTuple):
    """A pressure-dependent rate constant and its parts (all broadcast to one shape)."""

    #: The rate constant k [(m^3 mol^-1)^(order-1) s^-1].
    k: np.ndarray
    #: Low-pressure limit k0(T).
    k0: np.ndarray
    #: High-pressure limit k_inf(T); NaN for the third-body form.
    k_inf: np.ndarray
    #: Reduced pressure Pr = k0 [M]_eff / k_inf [-]; NaN for the third-body form.
    Pr: np.ndarray
    #: Broadening factor F [-]; 1 for the third-body form and Lindemann.
    F: np.ndarray


def _ln_parts(T, ln_M, form, low, high, log10_factor):
    """(ln k0, ln k_inf, ln Pr, log10 F, ln k) from ln-space limits; no validation."""
    ln_k0 = _ln_modified_arrhenius(T, *low)
    if form == "third-body":
        ln_k = ln_k0 + ln_M
        nan = np.full(np.shape(ln_k), np.nan)
        return ln_k0, nan, nan, np.zeros(np.shape(ln_k)), ln_k
    ln_k_inf = _ln_modified_arrhenius(T, *high)
    ln_Pr = ln_k0 + ln_M - ln_k_inf
    log10_F = log10_factor(T, ln_Pr / _LN10)
    if form == "falloff":
        # Pr/(1 + Pr) = 1/(1 + 1/Pr), finite at Pr = 0 and Pr = inf.
        ln_k = ln_k_inf - np.logaddexp(0.0, -ln_Pr) + log10_F * _LN10
    else:
        ln_k = ln_k0 - np.logaddexp(0.0, ln_Pr) + log10_F * _LN10
    return ln_k0, ln_k_inf, ln_Pr, log10_F, ln_k


def _check_form(form: str, high, broadening) -> None:
    if form not in FALLOFF_FORMS:
        raise ScienceInputError(
            f"Unknown pressure-dependent form {form!r}; expected one of {', '.join(FALLOFF_FORMS)}."
        )
    if form == "third-body" and (high is not None or broadening is not None):
        raise ScienceInputError(
            "The third-body form k = k0 [M]_eff has no high-pressure limit and no broadening; "
            "give only the low-pressure limit."
        )
    if form != "third-body" and high is None:
        raise ScienceInputError(f"The {form} form needs the high-pressure limit (A, n, Ea).")


def pressure_dependent_rate(T, M, form, low, high=None, broadening=None) -> FalloffRate:
    """Rate constant of a pressure-dependent form, with its parts.

    third-body:  k = k0 [M]_eff
    falloff:     k = k_inf Pr / (1 + Pr) F,  Pr = k0 [M]_eff / k_inf
    activated:   k = k0 / (1 + Pr) F

    with k0(T) = A0 T^n0 exp(-Ea0/RT), k_inf(T) likewise, and F from the
    broadening (module docstring).

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    M : array_like
        Effective third-body concentration [M]_eff [mol m^-3]; finite, not
        negative. Broadcasts against ``T`` (e.g. T of shape (n, 1) and M of
        shape (1, m) give an n x m grid).
    form : {"third-body", "falloff", "activated"}
        The rate law.
    low : tuple of (A, n, Ea)
        Low-pressure limit: A [k0-unit K^-n], n [-], Ea [J mol^-1].
    high : tuple of (A, n, Ea), optional
        High-pressure limit; required for ``"falloff"`` and ``"activated"``,
        refused for ``"third-body"``.
    broadening : TroeBroadening or FixedCentreBroadening, optional
        None for Lindemann (F = 1).

    Returns
    -------
    FalloffRate
        (k, k0, k_inf, Pr, F), each of the broadcast shape.

    Raises
    ------
    ScienceInputError
        For an unknown form, a missing or superfluous limit, a parameter out
        of range, or T or M out of range.

    References
    ----------
    Lindemann, *Trans. Faraday Soc.* 1922, 17, 598; Gilbert, Luther & Troe,
    *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169; Burkholder et al., JPL
    Publication 19-5 (2019).

    Examples
    --------
    At Pr = 1 the Lindemann fall-off rate is half the high-pressure limit:

    >>> rate = pressure_dependent_rate(300.0, 10.0, "falloff", (1.0e5, 0.0, 0.0),
    ...                                (1.0e6, 0.0, 0.0))
    >>> f"{rate.Pr:.3f} {rate.k:.4e}"
    '1.000 5.0000e+05'
    """
    _check_form(form, high, broadening)
    T = _temperature(T)
    M = _concentration(M)
    low_ln = _arrhenius_triple("the low-pressure limit", low)
    high_ln = None if high is None else _arrhenius_triple("the high-pressure limit", high)
    log10_factor = _broadening_function(broadening)
    with np.errstate(divide="ignore"):
        ln_M = np.log(M)
    ln_k0, ln_k_inf, ln_Pr, log10_F, ln_k = _ln_parts(T, ln_M, form, low_ln, high_ln, log10_factor)
    shape = np.broadcast_shapes(np.shape(ln_k), np.shape(ln_k0))
    parts = [np.exp(ln_k), np.exp(ln_k0), np.exp(ln_k_inf), np.exp(ln_Pr), 10.0**log10_F]
    parts = [np.broadcast_to(part, shape)[()] * 1.0 for part in parts]
    return FalloffRate(*parts)


def third_body_rate_constant(T, M, low):
    """Third-body rate constant k = k0(T) [M]_eff.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    M : array_like
        Effective third-body concentration [mol m^-3]; not negative.
    low : tuple of (A, n, Ea)
        k0 = A T^n exp(-Ea/RT): A [(m^3 mol^-1)^order s^-1 K^-n], n [-],
        Ea [J mol^-1].

    Returns
    -------
    numpy.ndarray or float
        k [(m^3 mol^-1)^(order-1) s^-1].

    Raises
    ------
    ScienceInputError
        If T, M or a parameter is out of range.

    References
    ----------
    Burkholder et al., JPL Publication 19-5 (2019), termolecular reactions.

    Examples
    --------
    >>> f"{third_body_rate_constant(300.0, 40.0, (2.0e5, 0.0, 0.0)):.1e}"
    '8.0e+06'
    """
    return pressure_dependent_rate(T, M, "third-body", low).k


def falloff_rate_constant(T, M, low, high, broadening=None):
    """Fall-off rate constant k = k_inf Pr / (1 + Pr) F, Pr = k0 [M]_eff / k_inf.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    M : array_like
        Effective third-body concentration [mol m^-3]; not negative.
    low, high : tuple of (A, n, Ea)
        k0 (one order above the equation) and k_inf (the equation's order);
        A in k-unit K^-n, n [-], Ea [J mol^-1].
    broadening : TroeBroadening or FixedCentreBroadening, optional
        None for Lindemann.

    Returns
    -------
    numpy.ndarray or float
        k [(m^3 mol^-1)^(order-1) s^-1]; k -> k0 [M] as M -> 0 and k -> k_inf
        as M -> inf (exactly for Lindemann and the fixed-centre form).

    Raises
    ------
    ScienceInputError
        If T, M or a parameter is out of range.

    References
    ----------
    Gilbert, Luther & Troe, *Ber. Bunsenges. Phys. Chem.* 1983, 87, 169.
    doi:10.1002/bbpc.19830870218

    Examples
    --------
    At Pr = 1 the fixed-centre form gives k = k_inf Fc / 2:

    >>> k = falloff_rate_constant(300.0, [0.0, 10.0], (1.0e5, 0.0, 0.0), (1.0e6, 0.0, 0.0),
    ...                           FixedCentreBroadening(0.6))
    >>> [f"{x:.6e}" for x in k]
    ['0.000000e+00', '3.000000e+05']
    """
    return pressure_dependent_rate(T, M, "falloff", low, high, broadening).k


def activated_rate_constant(T, M, low, high, broadening=None):
    """Chemically activated channel k = k0 / (1 + Pr) F, Pr = k0 [M]_eff / k_inf.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    M : array_like
        Effective third-body concentration [mol m^-3]; not negative.
    low, high : tuple of (A, n, Ea)
        k0 (the equation's order) and k_inf (one order fewer); A in k-unit
        K^-n, n [-], Ea [J mol^-1].
    broadening : TroeBroadening or FixedCentreBroadening, optional
        None for Lindemann.

    Returns
    -------
    numpy.ndarray or float
        k [(m^3 mol^-1)^(order-1) s^-1]; k -> k0 as M -> 0 and
        k -> k_inf / [M] at high M.

    Raises
    ------
    ScienceInputError
        If T, M or a parameter is out of range.

    References
    ----------
    Burkholder et al., JPL Publication 19-5 (2019), chemical-activation
    reactions.

    Examples
    --------
    >>> k = activated_rate_constant(300.0, [0.0, 1e9], (1.0e5, 0.0, 0.0), (1.0e6, 0.0, 0.0))
    >>> [f"{x:.6e}" for x in k]
    ['1.000000e+05', '1.000000e-03']
    """
    return pressure_dependent_rate(T, M, "activated", low, high, broadening).k


# --- Hinshelwood's strong-collision low-pressure limit ------------------------


def hinshelwood_activated_fraction(T, threshold_energy, oscillators):
    """Hinshelwood's fraction of molecules activated above E0.

    f = (E0 / RT)^(s-1) / (s-1)! exp(-E0 / RT)

    the leading term of the classical fraction of s oscillators holding at
    least E0, exp(-x) sum_{j<s} x^j / j! (x = E0/RT); the leading term is
    close to the full sum when x >> s. (s-1)! is computed as Gamma(s), so a
    non-integer effective s is accepted.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    threshold_energy : array_like
        Threshold energy E0 [J mol^-1]; positive.
    oscillators : array_like
        Effective number of oscillators s [-]; at least 1 (s = 1 gives
        Lindemann's exp(-E0/RT)).

    Returns
    -------
    numpy.ndarray or float
        f [-].

    Raises
    ------
    ScienceInputError
        If an input is out of range.

    References
    ----------
    Hinshelwood, *Proc. R. Soc. London A* 1927, 113, 230; Laidler, *Chemical
    Kinetics*, 3rd ed. (1987), ch. 5; Gilbert & Smith (1990), ch. 2.

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> f"{hinshelwood_activated_fraction(500.0, 40.0 * GAS_CONSTANT * 500.0, 3):.6e}"
    '3.398683e-15'
    """
    T = _temperature(T)
    E0 = np.asarray(threshold_energy, dtype=float)
    s = np.asarray(oscillators, dtype=float)
    if not np.all(np.isfinite(E0) & (E0 > 0)):
        raise ScienceInputError("threshold_energy must be positive and finite [J mol-1].")
    if not np.all(np.isfinite(s) & (s >= 1)):
        raise ScienceInputError("The number of oscillators s must be finite and at least 1 [-].")
    x = E0 / (GAS_CONSTANT * T)
    ln_gamma = np.vectorize(math.lgamma, otypes=[float])(s)
    return np.exp((s - 1.0) * np.log(x) - ln_gamma - x)


def hinshelwood_low_pressure_limit(
    T,
    threshold_energy,
    oscillators,
    diameter,
    bath_diameter,
    molar_mass,
    bath_molar_mass,
    well_depth,
    bath_well_depth,
    *,
    collision_efficiency=1.0,
    per_molecule: bool = False,
):
    """Hinshelwood's strong-collision low-pressure limit of a decomposition.

    k0 = beta_c Z_LJ(T) (E0/RT)^(s-1) / (s-1)! exp(-E0/RT)

    with Z_LJ the Lennard-Jones collision-rate constant of the reactant with
    the bath gas (:func:`~ratebank.science.collision.lennard_jones_collision_rate_constant`,
    counted without the 1/2 of a self-reaction: each collision can activate
    the reactant), and beta_c the collision efficiency (weak collisions).

    This is order-of-magnitude guidance, not a prediction: the classical
    oscillator picture, the strong-collision assumption and the choice of s
    (as common practice, fitted to data and well below the number of
    vibrational modes) leave it uncertain by an order of magnitude.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    threshold_energy : array_like
        Threshold energy E0 [J mol^-1]; positive.
    oscillators : array_like
        Effective number of oscillators s [-]; at least 1.
    diameter, bath_diameter : array_like
        Lennard-Jones diameters of the reactant and the bath gas [m].
    molar_mass, bath_molar_mass : array_like
        Molar masses [kg mol^-1].
    well_depth, bath_well_depth : array_like
        Lennard-Jones well depths eps/k_B [K].
    collision_efficiency : array_like, optional
        beta_c [-]; 0 < beta_c <= 1 (default 1, strong collisions).
    per_molecule : bool, optional
        Return [m^3 molecule^-1 s^-1] instead of [m^3 mol^-1 s^-1].

    Returns
    -------
    numpy.ndarray or float
        k0 [m^3 mol^-1 s^-1] (k = k0 [M] at low pressure).

    Raises
    ------
    ScienceInputError
        If an input is out of range (including T outside the Lennard-Jones
        collision-integral fit).

    References
    ----------
    Hinshelwood, *Proc. R. Soc. London A* 1927, 113, 230; Laidler, *Chemical
    Kinetics*, 3rd ed. (1987), ch. 5; Gilbert & Smith, *Theory of
    Unimolecular and Recombination Reactions* (1990); Troe, *J. Chem. Phys.*
    1977, 66, 4745 (the collision efficiency beta_c).

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> k0 = hinshelwood_low_pressure_limit(
    ...     700.0, 40.0 * GAS_CONSTANT * 700.0, 10, 5.0e-10, 3.798e-10, 0.1, 28.0134e-3,
    ...     400.0, 71.4, collision_efficiency=0.3, per_molecule=True)
    >>> f"{k0 * 1e6:.3e}"
    '4.433e-19'
    """
    beta = np.asarray(collision_efficiency, dtype=float)
    if not np.all(np.isfinite(beta) & (beta > 0) & (beta <= 1)):
        raise ScienceInputError("collision_efficiency must lie in (0, 1] [-].")
    fraction = hinshelwood_activated_fraction(T, threshold_energy, oscillators)
    z = lennard_jones_collision_rate_constant(
        T,
        diameter,
        bath_diameter,
        molar_mass,
        bath_molar_mass,
        well_depth,
        bath_well_depth,
        per_molecule=per_molecule,
    )
    return beta * z * fraction


# --- weighted nonlinear fit ---------------------------------------------------

_LOW = ("A0", "n0", "Ea0")
_HIGH = ("A_inf", "n_inf", "Ea_inf")
_BROADENING_REQUIRED = {"lindemann": (), "fixed-centre": ("Fc",), "troe": ("alpha", "T3", "T1")}
_BROADENING_OPTIONAL = {"lindemann": (), "fixed-centre": ("N",), "troe": ("T2",)}
_TROE_PARAMETERS = ("alpha", "T3", "T1", "T2")
# Fitted as logarithms: positive by nature and spanning decades.
_LOG_PARAMETERS = ("A0", "A_inf", "N", "T3", "T1", "T2")
_FC_LOWER = 1.0e-6
# Residual used where a trial parameter set makes ln k non-finite, steering the search away.
_NON_FINITE_RESIDUAL = 1.0e10


def _fit_name(name: str) -> str:
    return f"ln_{name}" if name in _LOG_PARAMETERS else name


def _natural_value(fit_name: str, value: float) -> tuple[str, float]:
    if fit_name.startswith("ln_"):
        return fit_name[3:], math.exp(value)
    return fit_name, value


def _model_parts(form: str, broadening: str, w: Mapping[str, float], T, ln_M, *, lenient: bool):
    """_ln_parts for fit-space values w (ln of the log parameters)."""
    low = (w["ln_A0"], w["n0"], w["Ea0"])
    high = None if form == "third-body" else (w["ln_A_inf"], w["n_inf"], w["Ea_inf"])
    if broadening == "fixed-centre":
        log10_Fc = math.log10(max(w["Fc"], 1e-300))
        N = math.exp(w["ln_N"]) if "ln_N" in w else 0.75 - 1.27 * log10_Fc

        def log10_factor(T, log10_Pr):
            return _panel_log10_factor(log10_Pr, log10_Fc, N)
    elif broadening == "troe":
        alpha, T3, T1 = w["alpha"], math.exp(w["ln_T3"]), math.exp(w["ln_T1"])
        T2 = math.exp(w["ln_T2"]) if "ln_T2" in w else None

        def log10_factor(T, log10_Pr):
            if not lenient:
                return TroeBroadening(alpha, T3, T1, T2).log10_factor(T, log10_Pr)
            Fcent = (1.0 - alpha) * np.exp(-T / T3) + alpha * np.exp(-T / T1)
            if T2 is not None:
                Fcent = Fcent + np.exp(-T2 / T)
            return _troe_log10_factor(log10_Pr, np.log10(np.maximum(Fcent, 1e-300)))
    else:
        log10_factor = _broadening_function(None)
    return _ln_parts(T, ln_M, form, low, high, log10_factor)


@dataclass(frozen=True)
class _Plan:
    """Which parameters are fitted, their fixed values, and the optimizer coordinates.

    The optimizer works in v: ln k0(T_ref) instead of ln A0, Ea/(R T_ref) instead
    of Ea (likewise for k_inf), the other parameters as in the fit space w
    (logarithms of A, N, T***, T*, T**). v keeps the problem well conditioned.
    """

    form: str
    broadening: str
    free: tuple[str, ...]
    fixed: dict[str, float]
    T_ref: float

    def limits(self):
        return (_LOW,) if self.form == "third-body" else (_LOW, _HIGH)

    def decode(self, v) -> dict[str, float]:
        w = {_fit_name(name): _to_fit_space(name, value) for name, value in self.fixed.items()}
        raw = dict(zip(self.free, (float(x) for x in v), strict=True))
        for name, value in raw.items():
            w[_fit_name(name)] = value
        for A, n, Ea in self.limits():
            if Ea in raw:
                w[Ea] = raw[Ea] * GAS_CONSTANT * self.T_ref
            if A in raw:
                w[_fit_name(A)] = (
                    raw[A] - w[n] * math.log(self.T_ref) + w[Ea] / (GAS_CONSTANT * self.T_ref)
                )
        return w

    def encode(self, w: Mapping[str, float]) -> np.ndarray:
        v = {name: w[_fit_name(name)] for name in self.free}
        for A, n, Ea in self.limits():
            if Ea in v:
                v[Ea] = w[Ea] / (GAS_CONSTANT * self.T_ref)
            if A in v:
                v[A] = (
                    w[_fit_name(A)]
                    + w[n] * math.log(self.T_ref)
                    - w[Ea] / (GAS_CONSTANT * self.T_ref)
                )
        return np.array([v[name] for name in self.free])

    def jacobian_w_v(self) -> np.ndarray:
        """d w / d v over the free parameters (the map is affine)."""
        index = {name: i for i, name in enumerate(self.free)}
        L = np.eye(len(self.free))
        for A, n, Ea in self.limits():
            if Ea in index:
                L[index[Ea], index[Ea]] = GAS_CONSTANT * self.T_ref
            if A in index and n in index:
                L[index[A], index[n]] = -math.log(self.T_ref)
            if A in index and Ea in index:
                L[index[A], index[Ea]] = 1.0
        return L


def _to_fit_space(name: str, value: float) -> float:
    return math.log(value) if name in _LOG_PARAMETERS else float(value)


def _check_parameter_value(name: str, value, role: str) -> float:
    if not isinstance(value, (int, float, np.number)) or not math.isfinite(value):
        raise FitError(f"The {role} value of {name} must be a finite number; got {value!r}.")
    if name in _LOG_PARAMETERS and value <= 0:
        raise FitError(f"The {role} value of {name} must be positive; got {value!r}.")
    if name == "Fc" and not 0 < value <= 1:
        raise FitError(f"The {role} value of Fc must lie in (0, 1]; got {value!r}.")
    return float(value)


def _parameter_names(form: str, broadening: str) -> tuple[tuple[str, ...], tuple[str, ...]]:
    if form not in FALLOFF_FORMS:
        raise FitError(f"Unknown form {form!r}; expected one of {', '.join(FALLOFF_FORMS)}.")
    if broadening not in BROADENING_FORMS:
        raise FitError(
            f"Unknown broadening {broadening!r}; expected one of {', '.join(BROADENING_FORMS)}."
        )
    if form == "third-body":
        if broadening != "lindemann":
            raise FitError("The third-body form has no broadening; use broadening='lindemann'.")
        return _LOW, ()
    return _LOW + _HIGH + _BROADENING_REQUIRED[broadening], _BROADENING_OPTIONAL[broadening]


def _make_plan(form, broadening, free, fixed, T_ref) -> _Plan:
    required, optional = _parameter_names(form, broadening)
    known = required + optional
    fixed = dict(fixed or {})
    free_given = () if free is None else tuple(free)
    for name in (*fixed, *free_given):
        if name not in known:
            raise FitError(
                f"{name!r} is not a parameter of the {form} form with {broadening} broadening; "
                f"its parameters are {', '.join(known)}."
            )
    both = sorted(set(fixed) & set(free_given))
    if both:
        raise FitError(f"{', '.join(both)} cannot be both free and fixed.")
    if free is None:
        free_given = tuple(name for name in required if name not in fixed)
    missing = [name for name in required if name not in free_given and name not in fixed]
    if missing:
        raise FitError(f"{', '.join(missing)} must be either free or fixed (given a value).")
    if not free_given:
        raise FitError("Nothing to fit: every parameter is fixed.")
    fixed = {name: _check_parameter_value(name, value, "fixed") for name, value in fixed.items()}
    ordered = tuple(name for name in known if name in free_given)
    return _Plan(form, broadening, ordered, fixed, T_ref)


def _fit_points(T, M, k, sigma_ln_k):
    try:
        T, M, k = (
            np.ravel(a) for a in np.broadcast_arrays(*(np.asarray(x, float) for x in (T, M, k)))
        )
    except ValueError:
        raise FitError(
            "T, M and k cannot be matched point by point; give arrays of one shape."
        ) from None
    if not np.all(np.isfinite(T) & (T > 0)):
        raise FitError("Every temperature must be positive and finite [K].")
    if not np.all(np.isfinite(M) & (M > 0)):
        raise FitError("Every third-body concentration M must be positive and finite [mol m-3].")
    if not np.all(np.isfinite(k) & (k > 0)):
        raise FitError("Every rate constant k must be positive and finite to be fitted in ln k.")
    if sigma_ln_k is None:
        return T, M, k, np.ones_like(k), False
    try:
        sigma = np.ravel(np.broadcast_to(np.asarray(sigma_ln_k, dtype=float), k.shape))
    except ValueError:
        raise FitError(
            f"sigma_ln_k must be one value or one per point ({k.size} points)."
        ) from None
    if not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise FitError("Every sigma_ln_k must be positive and finite.")
    return T, M, k, sigma, True


def _names(names: Sequence[str]) -> str:
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _check_determinable(plan: _Plan, T: np.ndarray, ln_M: np.ndarray) -> None:
    """Refuse data that cannot determine the free parameters, naming what is missing."""
    free = plan.free
    temperatures = np.unique(T)
    n_T = temperatures.size
    for label, (_, n, Ea) in zip(("k0", "k_inf"), plan.limits(), strict=False):
        in_T = [name for name in (n, Ea) if name in free]
        if in_T and n_T < 1 + len(in_T):
            raise FitError(
                f"{_names(in_T)} {'describe' if len(in_T) > 1 else 'describes'} how {label} "
                f"changes with temperature; fitting {'them' if len(in_T) > 1 else 'it'} needs at "
                f"least {1 + len(in_T)} distinct temperatures, and the data have {n_T}. Hold "
                f"{_names(in_T)} fixed or add temperatures."
            )
    troe = [name for name in _TROE_PARAMETERS if name in free]
    if troe and n_T < len(troe):
        raise FitError(
            f"Troe's {_names(troe)} set how Fcent changes with temperature; fitting them needs "
            f"at least {len(troe)} distinct temperatures, and the data have {n_T}."
        )
    shape = [name for name in ("A0", "A_inf") if name in free]
    if any(name in free for name in ("Fc", *_TROE_PARAMETERS)):
        shape.append("the broadening centre")
    if "N" in free:
        shape.append("the width N")
    concentrations = max(np.unique(np.round(ln_M[T == t], 9)).size for t in temperatures)
    if len(shape) > 1 and concentrations < len(shape):
        raise FitError(
            f"Fitting {_names(shape)} together needs rate constants at {len(shape)} or more "
            f"bath-gas concentrations (pressures) at one temperature; the data have at most "
            f"{concentrations} at any temperature. A single pressure cannot separate the low- "
            "and high-pressure limits: add pressures or hold parameters fixed."
        )
    if T.size < len(free):
        raise FitError(
            f"{len(free)} free parameters ({', '.join(free)}) need at least {len(free)} points; "
            f"the data have {T.size}."
        )


def _default_start(plan: _Plan, ln_M, ln_k) -> dict[str, float]:
    start = {"n0": 0.0, "Ea0": 0.0, "n_inf": 0.0, "Ea_inf": 0.0, "Fc": 0.6, "alpha": 0.5}
    start.update(T3=plan.T_ref, T1=10.0 * plan.T_ref, T2=10.0 * plan.T_ref)
    start["N"] = float(panel_width(plan.fixed.get("Fc", 0.6)))
    # k <= k0 [M] and k <= k_inf in the fall-off form; k <= k0 and k [M] <= k_inf when
    # activated. Doubling allows for F < 1.
    if plan.form == "third-body":
        start["A0"] = math.exp(float(np.median(ln_k - ln_M)))
    elif plan.form == "falloff":
        start["A0"] = 2.0 * math.exp(float(np.max(ln_k - ln_M)))
        start["A_inf"] = 2.0 * math.exp(float(np.max(ln_k)))
    else:
        start["A0"] = 2.0 * math.exp(float(np.max(ln_k)))
        start["A_inf"] = 2.0 * math.exp(float(np.max(ln_k + ln_M)))
    return start


def _start_vector(plan: _Plan, ln_M, ln_k, start) -> np.ndarray:
    values = _default_start(plan, ln_M, ln_k)
    for name, value in dict(start or {}).items():
        if name in plan.fixed:
            raise FitError(f"{name} is fixed; give its value in fixed, not in start.")
        if name not in plan.free:
            raise FitError(f"start names {name!r}, which is not a free parameter of this fit.")
        values[name] = _check_parameter_value(name, value, "starting")
    values.update(plan.fixed)
    # The estimates above are levels of k0 and k_inf at T_ref; n and Ea away from 0 move A.
    for A, n, Ea in plan.limits():
        if A in plan.free and A not in (start or {}):
            values[A] *= plan.T_ref ** -values[n] * math.exp(
                values[Ea] / (GAS_CONSTANT * plan.T_ref)
            )
    values["Fc"] = min(max(values["Fc"], 2.0 * _FC_LOWER), 1.0)
    w = {_fit_name(name): _to_fit_space(name, value) for name, value in values.items()}
    return plan.encode(w)


@dataclass(frozen=True, eq=False)
class FalloffFit:
    """Result of :func:`fit_falloff`.

    Attributes
    ----------
    form : str
        One of :data:`FALLOFF_FORMS`.
    broadening : str
        One of :data:`BROADENING_FORMS`.
    parameters : dict of str to float
        Every parameter of the fitted law, free and fixed, in natural units:
        A0, n0, Ea0 [J mol^-1], A_inf, n_inf, Ea_inf, and Fc (and N), or
        alpha, T3, T1 (and T2) [K].
    free : tuple of str
        The fitted parameters, natural names.
    fit_names : tuple of str
        Names of the fit-space parameters, in covariance order: the free ones,
        with ``ln_`` before A0, A_inf, N, T3, T1, T2 (fitted as logarithms).
    fit_values : numpy.ndarray
        Their values.
    covariance : numpy.ndarray, shape (p, p)
        Covariance of ``fit_values``: absolute when sigma_ln_k was given, else
        scaled by the reduced chi-square (the ``scipy.optimize.curve_fit``
        convention); NaN when it cannot be estimated.
    chi_square, reduced_chi_square : float
        Sum of squared weighted residuals and chi_square / dof (NaN at dof 0).
    dof, n_points : int
        Degrees of freedom and number of points.
    absolute_sigma : bool
        True when sigma_ln_k was given.
    residuals : numpy.ndarray
        ln k_obs - ln k_fit at each point (flattened input order) [-].
    T_ref : float
        Reference temperature of the centred coordinates [K].
    warnings : tuple of FitWarning
        ``"no-degrees-of-freedom"``, ``"at-bound"`` (Fc reached 1 or its lower
        bound), ``"k0-extrapolated"`` (every point has Pr > 10),
        ``"k-inf-extrapolated"`` (every point has Pr < 1/10).
    """

    form: str
    broadening: str
    parameters: dict[str, float]
    free: tuple[str, ...]
    fit_names: tuple[str, ...]
    fit_values: np.ndarray
    covariance: np.ndarray
    chi_square: float
    reduced_chi_square: float
    dof: int
    n_points: int
    absolute_sigma: bool
    residuals: np.ndarray
    T_ref: float
    warnings: tuple[FitWarning, ...] = ()

    @property
    def parameter_sigmas(self) -> np.ndarray:
        """Standard deviations of ``fit_values``."""
        return np.sqrt(np.diag(self.covariance))

    @property
    def low(self) -> tuple[float, float, float]:
        """(A0, n0, Ea0) of the low-pressure limit."""
        return tuple(self.parameters[name] for name in _LOW)

    @property
    def high(self) -> tuple[float, float, float] | None:
        """(A_inf, n_inf, Ea_inf), or None for the third-body form."""
        if self.form == "third-body":
            return None
        return tuple(self.parameters[name] for name in _HIGH)

    @property
    def broadening_law(self) -> TroeBroadening | FixedCentreBroadening | None:
        """The fitted broadening as used by :func:`pressure_dependent_rate`."""
        p = self.parameters
        if self.broadening == "fixed-centre":
            return FixedCentreBroadening(p["Fc"], p.get("N"))
        if self.broadening == "troe":
            return TroeBroadening(p["alpha"], p["T3"], p["T1"], p.get("T2"))
        return None

    def rate(self, T, M) -> FalloffRate:
        """The fitted law and its parts at T [K] and [M]_eff [mol m^-3]."""
        return pressure_dependent_rate(T, M, self.form, self.low, self.high, self.broadening_law)

    def k(self, T, M):
        """k of the fitted law at T [K] and [M]_eff [mol m^-3]."""
        return self.rate(T, M).k

    def sigma_ln_k(self, T, M):
        """Standard deviation of the fitted ln k at T [K] and [M]_eff > 0 [mol m^-3].

        sigma^2 = g C g^T, g = d ln k / d(fit_values), by central differences.
        """
        T = _temperature(T)
        ln_M = np.log(_concentration(M))
        w0 = {_fit_name(name): _to_fit_space(name, v) for name, v in self.parameters.items()}
        gradient = []
        for name, value in zip(self.fit_names, self.fit_values, strict=True):
            step = 1e-6 * max(1.0, abs(value))
            ends = []
            for sign in (1.0, -1.0):
                w = dict(w0, **{name: value + sign * step})
                ends.append(_model_parts(self.form, self.broadening, w, T, ln_M, lenient=True)[4])
            gradient.append((ends[0] - ends[1]) / (2.0 * step))
        g = np.stack(np.broadcast_arrays(*gradient), axis=-1)
        variance = np.einsum("...i,ij,...j->...", g, self.covariance, g)
        return np.sqrt(np.maximum(variance, 0.0))

    def uncertainty_factor(self, T, M):
        """f = exp(sigma_ln_k) [-] at T [K] and [M]_eff [mol m^-3]."""
        return np.exp(self.sigma_ln_k(T, M))


def _covariance(plan: _Plan, residual_function, v: np.ndarray) -> np.ndarray:
    """Unscaled covariance of the fit-space parameters from a central-difference Jacobian."""
    columns = []
    for j in range(v.size):
        step = 6e-6 * max(1.0, abs(v[j]))
        up, down = v.copy(), v.copy()
        up[j] += step
        down[j] -= step
        columns.append((residual_function(up) - residual_function(down)) / (2.0 * step))
    jacobian = np.stack(columns, axis=1)
    _, singular, vt = np.linalg.svd(jacobian, full_matrices=False)
    if singular[-1] <= 1e-10 * singular[0]:
        weights = np.abs(vt[-1])
        involved = [plan.free[i] for i in np.argsort(weights)[::-1] if weights[i] > 0.2]
        if len(involved) == 1:
            raise FitError(
                f"The data do not determine {involved[0]}: changing it leaves k unchanged at "
                "every point. Hold it fixed or add data that depend on it."
            )
        raise FitError(
            f"The data do not determine {_names(involved)}: changing them together leaves k "
            "unchanged at every point. Hold one of them fixed or add data that separate them."
        )
    covariance_v = (vt.T / singular**2) @ vt
    L = plan.jacobian_w_v()
    return L @ covariance_v @ L.T


def _fit_warnings(plan: _Plan, w, dof: int, ln_Pr) -> tuple[FitWarning, ...]:
    found = []
    if dof == 0:
        found.append(
            FitWarning(
                "no-degrees-of-freedom",
                "There are as many points as free parameters, so the fit passes through every "
                "point and the reduced chi-square is undefined.",
            )
        )
    if "Fc" in plan.free and not 10.0 * _FC_LOWER < w["Fc"] < 1.0 - 1e-4:
        found.append(
            FitWarning("at-bound", f"Fc reached its bound ({w['Fc']:.3g}); its sigma is not valid.")
        )
    if plan.form != "third-body" and "A_inf" in plan.free and np.max(ln_Pr) < math.log(0.1):
        found.append(
            FitWarning(
                "k-inf-extrapolated",
                "Every point has Pr below 1/10: k_inf is an extrapolation of the data.",
            )
        )
    if plan.form != "third-body" and "A0" in plan.free and np.min(ln_Pr) > math.log(10.0):
        found.append(
            FitWarning(
                "k0-extrapolated",
                "Every point has Pr above 10: k0 is an extrapolation of the data.",
            )
        )
    return tuple(found)


def fit_falloff(
    T,
    M,
    k,
    sigma_ln_k=None,
    *,
    form: str = "falloff",
    broadening: str = "lindemann",
    free: Sequence[str] | None = None,
    fixed: Mapping[str, float] | None = None,
    start: Mapping[str, float] | None = None,
    T_ref: float | None = None,
) -> FalloffFit:
    """Weighted nonlinear least-squares fit of a pressure-dependent rate law.

    Minimizes sum(((ln k_i - ln k_law(T_i, M_i)) / sigma_i)^2) over the free
    parameters with :func:`scipy.optimize.least_squares` (trust-region
    reflective; 0 < Fc <= 1 as a bound). A, N, T***, T* and T** are fitted as
    logarithms, and k0 and k_inf as ln k(T_ref), n and Ea/(R T_ref) so the
    problem stays well conditioned; results are reported as described in
    :class:`FalloffFit`. The covariance is (J^T J)^-1 from a central-difference
    Jacobian at the solution, absolute when sigmas are given (else scaled by
    the reduced chi-square, which is reported in both cases).

    Parameters
    ----------
    T : array_like
        Temperatures [K]; positive.
    M : array_like
        Effective third-body concentrations [M]_eff [mol m^-3]; positive
        (from pressures with :func:`ratebank.science.pressure.bath_gas_concentration`).
    k : array_like
        Rate constants [(m^3 mol^-1)^(order-1) s^-1]; positive. T, M and k
        broadcast to one shape (a T column against an M row, for a grid) and
        are flattened into points.
    sigma_ln_k : array_like, optional
        Standard deviation of each ln k [-]; one value or one per point.
    form : {"falloff", "activated", "third-body"}
        The law (module docstring).
    broadening : {"lindemann", "fixed-centre", "troe"}
        F; ``"lindemann"`` for the third-body form.
    free : sequence of str, optional
        Parameters to fit, among A0, n0, Ea0, A_inf, n_inf, Ea_inf, Fc, N,
        alpha, T3, T1, T2 as the law has them. Default: every required
        parameter not in ``fixed`` (N and T2 only when named).
    fixed : mapping of str to float, optional
        Values of parameters held fixed, in natural units (Ea in J mol^-1).
    start : mapping of str to float, optional
        Starting values of free parameters; the defaults are n = Ea = 0,
        A from bounds the data put on k0 and k_inf, Fc = 0.6, alpha = 0.5,
        T*** = T_ref, T* = T** = 10 T_ref.
    T_ref : float, optional
        Reference temperature [K]; default the geometric mean of T.

    Returns
    -------
    FalloffFit

    Raises
    ------
    FitError
        For unknown names, a parameter both free and fixed or neither, values
        out of range, data that are not positive and finite, and data that
        cannot determine what was asked: fewer points than free parameters,
        too few temperatures for free temperature exponents, activation
        energies or Troe parameters, a single concentration (pressure) per
        temperature while both limits are free, a degenerate Jacobian, or a
        search that does not converge.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed.
    (2003), ch. 8; Gilbert, Luther & Troe (1983); Burkholder et al., JPL
    Publication 19-5 (2019).

    Examples
    --------
    Exact synthetic Lindemann data at three concentrations and three temperatures:

    >>> import numpy as np
    >>> T, M = np.array([[250.0], [300.0], [350.0]]), np.array([[1.0, 10.0, 100.0]])
    >>> k = falloff_rate_constant(T, M, (2.0e8, -2.0, 0.0), (3.0e6, 0.0, 0.0))
    >>> fit = fit_falloff(T, M, k, fixed={"Ea0": 0.0, "n_inf": 0.0, "Ea_inf": 0.0})
    >>> f"{fit.parameters['A0']:.4e} {fit.parameters['n0']:.4f} {fit.parameters['A_inf']:.4e}"
    '2.0000e+08 -2.0000 3.0000e+06'
    """
    T, M, k, sigma, absolute_sigma = _fit_points(T, M, k, sigma_ln_k)
    ln_M, ln_k = np.log(M), np.log(k)
    if T_ref is None:
        T_ref = float(np.exp(np.mean(np.log(T))))
    elif not (isinstance(T_ref, (int, float)) and math.isfinite(T_ref) and T_ref > 0):
        raise FitError(f"T_ref must be a positive temperature [K]; got {T_ref!r}.")
    plan = _make_plan(form, broadening, free, fixed, float(T_ref))
    _check_determinable(plan, T, ln_M)
    v0 = _start_vector(plan, ln_M, ln_k, start)

    def residuals(v):
        w = plan.decode(v)
        model = _model_parts(plan.form, plan.broadening, w, T, ln_M, lenient=True)[4]
        r = (ln_k - model) / sigma
        return np.nan_to_num(
            r, nan=_NON_FINITE_RESIDUAL, posinf=_NON_FINITE_RESIDUAL, neginf=-_NON_FINITE_RESIDUAL
        )

    result = _least_squares(plan, residuals, v0)
    w = plan.decode(result.x)
    r = residuals(result.x)
    chi_square = float(r @ r)
    dof = T.size - len(plan.free)
    reduced = chi_square / dof if dof > 0 else float("nan")
    covariance = _covariance(plan, residuals, result.x)
    if not absolute_sigma:
        covariance = covariance * reduced
    parts = _model_parts(plan.form, plan.broadening, w, T, ln_M, lenient=True)
    fit_names = tuple(_fit_name(name) for name in plan.free)
    return FalloffFit(
        form=plan.form,
        broadening=plan.broadening,
        parameters=_ordered_parameters(plan, w),
        free=plan.free,
        fit_names=fit_names,
        fit_values=np.array([w[name] for name in fit_names]),
        covariance=covariance,
        chi_square=chi_square,
        reduced_chi_square=reduced,
        dof=dof,
        n_points=T.size,
        absolute_sigma=absolute_sigma,
        residuals=r * sigma,
        T_ref=plan.T_ref,
        warnings=_fit_warnings(plan, w, dof, parts[2]),
    )


def _ordered_parameters(plan: _Plan, w: Mapping[str, float]) -> dict[str, float]:
    required, optional = _parameter_names(plan.form, plan.broadening)
    natural = dict(_natural_value(name, value) for name, value in w.items())
    return {name: natural[name] for name in required + optional if name in natural}


def _least_squares(plan: _Plan, residuals, v0: np.ndarray):
    # scipy.optimize is imported here, not at the top: it costs every command about
    # 0.3 s at start-up, and only fitting needs it.
    from scipy.optimize import least_squares

    lower = np.full(v0.size, -np.inf)
    upper = np.full(v0.size, np.inf)
    if "Fc" in plan.free:
        lower[plan.free.index("Fc")] = _FC_LOWER
        upper[plan.free.index("Fc")] = 1.0
    result = least_squares(
        residuals,
        v0,
        bounds=(lower, upper),
        method="trf",
        jac="3-point",
        x_scale="jac",
        xtol=1e-12,
        ftol=1e-12,
        gtol=1e-12,
        max_nfev=500 * (v0.size + 1),
    )
    if result.status <= 0:
        raise FitError(
            f"The fit did not converge ({result.message}); give starting values (start) or "
            "fix parameters the data hardly constrain."
        )
    return result
