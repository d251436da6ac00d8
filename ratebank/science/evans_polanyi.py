"""The Evans-Polanyi relation: activation energies of a reaction class from ΔrH°.

Within a class of similar reactions (the same bond broken and formed, say
H abstraction by OH from different C-H bonds) the activation energy is
taken as linear in the standard reaction enthalpy at 298.15 K:

    Ea = E0 + α ΔrH°(298.15 K),

with E0 [J mol^-1] the intrinsic barrier of a thermoneutral member and α
[-] (usually between 0 and 1) the fraction of the enthalpy change felt at
the transition state. E0 and α come from a weighted straight-line fit to
the class's measured reactions, or are set by a curator; the relation then
fills Ea for members that were never measured.

An estimate is clamped from below: Ea is never below 0, and never below
ΔrH° of an endothermic reaction (the reverse reaction's activation energy,
Ea - ΔrH°, cannot be negative).

References
----------
1. Evans, M. G.; Polanyi, M. Inertia and driving force of chemical
   reactions. *Trans. Faraday Soc.* 1938, 34, 11-24. doi:10.1039/TF9383400011
2. Bevington, P. R.; Robinson, D. K. *Data Reduction and Error Analysis for
   the Physical Sciences*, 3rd ed.; McGraw-Hill, 2003; ch. 6 (weighted
   straight-line fit and its covariance).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ratebank.errors import FitError, ScienceInputError
from ratebank.science.constants import GAS_CONSTANT

__all__ = [
    "EvansPolanyiEstimate",
    "EvansPolanyiFit",
    "evans_polanyi_activation_energy",
    "fit_evans_polanyi",
]


class EvansPolanyiEstimate(NamedTuple):
    """Activation energies from the Evans-Polanyi relation, clamped from below."""

    #: Activation energy max(E0 + α ΔrH°, ΔrH°, 0) [J mol^-1].
    Ea: np.ndarray
    #: True where the clamp raised E0 + α ΔrH° [-].
    clamped: np.ndarray


def _finite(name: str, value, unit: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ScienceInputError(f"{name} must be finite [{unit}]; got a NaN or infinite value.")
    return array


def evans_polanyi_activation_energy(delta_H, E0, alpha) -> EvansPolanyiEstimate:
    """Activation energy from the Evans-Polanyi relation, clamped to be physical.

    Ea = max(E0 + α ΔrH°, ΔrH°, 0)

    The floor ΔrH° applies to endothermic reactions (the reverse barrier
    Ea - ΔrH° cannot be negative), the floor 0 to all.

    Parameters
    ----------
    delta_H : array_like
        Standard reaction enthalpy ΔrH°(298.15 K) [J mol^-1].
    E0 : array_like
        Intrinsic barrier of the class [J mol^-1].
    alpha : array_like
        Slope of the class [-]; usually between 0 and 1 (not enforced).

    Returns
    -------
    EvansPolanyiEstimate
        (Ea [J mol^-1], clamped [bool]), broadcast over the arguments.

    Raises
    ------
    ScienceInputError
        If an argument is not finite.

    References
    ----------
    Evans & Polanyi, *Trans. Faraday Soc.* 1938, 34, 11. doi:10.1039/TF9383400011

    Examples
    --------
    A class with E0 = 40 kJ/mol and α = 0.5 (synthetic) for an exothermic, a
    strongly exothermic and an endothermic reaction:

    >>> estimate = evans_polanyi_activation_energy([-20e3, -100e3, 90e3], 40e3, 0.5)
    >>> estimate.Ea.tolist(), estimate.clamped.tolist()
    ([30000.0, 0.0, 90000.0], [False, True, True])
    """
    delta_H = _finite("delta_H", delta_H, "J mol-1")
    E0 = _finite("E0", E0, "J mol-1")
    alpha = _finite("alpha", alpha, "-")
    raw = E0 + alpha * delta_H
    floor = np.maximum(delta_H, 0.0)
    return EvansPolanyiEstimate(np.maximum(raw, floor), raw < floor)


@dataclass(frozen=True, eq=False)
class EvansPolanyiFit:
    """Weighted straight-line fit Ea = E0 + α ΔrH° over a reaction class.

    Attributes
    ----------
    E0 : float
        Intercept [J mol^-1].
    alpha : float
        Slope [-].
    covariance : numpy.ndarray, shape (2, 2)
        Covariance of (E0 [J mol^-1], α [-]): absolute when sigmas were
        given, else scaled by the reduced chi-square (NaN with 2 reactions).
    residual_sd : float
        Spread of the class about the line, one standard deviation [J mol^-1]:
        s² = (Σ w r² / Σ w) × N / (N - 2), r = Ea - E0 - α ΔrH°, w = 1/σ²
        (w = 1 without sigmas, when s is the usual residual standard
        error). NaN with 2 reactions.
    residuals : numpy.ndarray
        Ea - (E0 + α ΔrH°) of each reaction, in input order [J mol^-1].
    count : int
        Number of reactions N.
    absolute_sigma : bool
        True when sigma_Ea was given.
    """

    E0: float
    alpha: float
    covariance: np.ndarray
    residual_sd: float
    residuals: np.ndarray
    count: int
    absolute_sigma: bool

    def rate_factor(self, T):
        """Spread of the class as a factor on k at T [K]: exp(residual_sd / (R T)) [-].

        It is the one-standard-deviation factor on k that an Ea off the line
        by ``residual_sd`` causes at T, the pre-exponential factor held fixed.

        Examples
        --------
        >>> fit = fit_evans_polanyi([-60e3, -20e3, 10e3, 30e3], [17e3, 31e3, 45e3, 51e3])
        >>> f"{fit.residual_sd:.0f} {fit.rate_factor(1000.0):.3f}"
        '1268 1.165'
        """
        T = np.asarray(T, dtype=float)
        if not np.all(np.isfinite(T) & (T > 0)):
            raise ScienceInputError("T must be positive and finite [K].")
        return np.exp(self.residual_sd / (GAS_CONSTANT * T))

    def activation_energy(self, delta_H) -> EvansPolanyiEstimate:
        """:func:`evans_polanyi_activation_energy` with this fit's E0 and α.

        Examples
        --------
        >>> fit = fit_evans_polanyi([-60e3, -20e3, 10e3], [16e3, 32e3, 44e3])
        >>> f"{fit.activation_energy(-40e3).Ea:.0f}"
        '24000'
        """
        return evans_polanyi_activation_energy(delta_H, self.E0, self.alpha)


def _fit_inputs(delta_H, Ea, sigma_Ea):
    x = np.asarray(delta_H, dtype=float)
    y = np.asarray(Ea, dtype=float)
    if x.ndim != 1 or x.shape != y.shape:
        raise FitError(
            f"delta_H and Ea must be one-dimensional and of equal length; got {x.size} "
            f"enthalpies and {y.size} activation energies."
        )
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(y))):
        raise FitError("Every delta_H and Ea must be finite [J mol-1].")
    if x.size < 2:
        raise FitError(f"An Evans-Polanyi fit needs at least 2 reactions; the class has {x.size}.")
    if np.ptp(x) <= 1e-9 * max(float(np.max(np.abs(x))), 1.0):
        raise FitError(
            f"All {x.size} reactions have the same delta_H ({x[0]:.6g} J/mol), so the slope "
            "alpha is undetermined; add a reaction with a different delta_H or set alpha."
        )
    if sigma_Ea is None:
        return x, y, np.ones_like(x)
    sigma = np.asarray(sigma_Ea, dtype=float)
    if sigma.ndim == 0:
        sigma = np.full(x.shape, float(sigma))
    if sigma.shape != x.shape:
        raise FitError(f"sigma_Ea has {sigma.size} values but there are {x.size} reactions.")
    if not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise FitError("Every sigma_Ea must be positive and finite [J mol-1].")
    return x, y, sigma**-2.0


def fit_evans_polanyi(delta_H, Ea, sigma_Ea=None) -> EvansPolanyiFit:
    """Weighted least-squares fit of the Evans-Polanyi relation to a reaction class.

    Minimises Σ w_i (Ea_i - E0 - α ΔrH°_i)², w_i = 1/σ_i² (or 1):

        α  = Σ w (x - x̄)(y - ȳ) / Σ w (x - x̄)²,   E0 = ȳ - α x̄,

    with x = ΔrH°, y = Ea and x̄, ȳ their weighted means. The unscaled
    covariance is var α = 1/Sxx, var E0 = 1/Σw + x̄²/Sxx,
    cov(E0, α) = -x̄/Sxx, Sxx = Σ w (x - x̄)²; as in
    :mod:`ratebank.science.arrhenius`, it is taken as absolute when sigmas
    are given and scaled by the reduced chi-square otherwise.

    Parameters
    ----------
    delta_H : array_like, shape (N,)
        ΔrH°(298.15 K) of the class's reactions [J mol^-1].
    Ea : array_like, shape (N,)
        Their activation energies [J mol^-1].
    sigma_Ea : array_like, shape (N,) or scalar, optional
        Standard deviation of each Ea [J mol^-1]; positive.

    Returns
    -------
    EvansPolanyiFit

    Raises
    ------
    FitError
        If the arrays differ in length or hold non-finite values, there are
        fewer than 2 reactions, all ΔrH° are equal, or a sigma is not
        positive and finite.

    References
    ----------
    Evans & Polanyi, *Trans. Faraday Soc.* 1938, 34, 11.
    doi:10.1039/TF9383400011. Bevington & Robinson, *Data Reduction and
    Error Analysis*, 3rd ed. (2003), ch. 6.

    Examples
    --------
    Three synthetic members lying on Ea = 40 kJ/mol + 0.4 ΔrH°:

    >>> fit = fit_evans_polanyi([-60e3, -20e3, 10e3], [16e3, 32e3, 44e3])
    >>> f"{fit.E0:.1f} {fit.alpha:.4f} {fit.count}"
    '40000.0 0.4000 3'
    """
    x, y, w = _fit_inputs(delta_H, Ea, sigma_Ea)
    sum_w = w.sum()
    x_mean, y_mean = (w @ x) / sum_w, (w @ y) / sum_w
    sxx = w @ (x - x_mean) ** 2
    alpha = (w @ ((x - x_mean) * (y - y_mean))) / sxx
    E0 = y_mean - alpha * x_mean
    residuals = y - E0 - alpha * x
    chi_square = float(w @ residuals**2)
    dof = x.size - 2
    unscaled = np.array(
        [[1.0 / sum_w + x_mean**2 / sxx, -x_mean / sxx], [-x_mean / sxx, 1.0 / sxx]]
    )
    absolute = sigma_Ea is not None
    nan = float("nan")
    scale = 1.0 if absolute else (chi_square / dof if dof > 0 else nan)
    spread = float(np.sqrt(chi_square / sum_w * x.size / dof)) if dof > 0 else nan
    return EvansPolanyiFit(
        float(E0), float(alpha), unscaled * scale, spread, residuals, int(x.size), absolute
    )
