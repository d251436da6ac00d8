"""Arrhenius forms, their local parameters, and weighted fits of measured k(T).

Forms (T in K, energies in J mol^-1, k in (m^3 mol^-1)^(order-1) s^-1):

- Arrhenius:           k = A exp(-Ea / (R T))
- modified Arrhenius:  k = A T^n exp(-Ea / (R T)),  A in k-units times K^-n

Fits are weighted linear least squares in ln k,

    ln k = ln A + n ln T - Ea / (R T),

which is linear in (ln A, n, Ea). The regressors are centred on their
weighted means and the 1/T regressor is scaled by a reference temperature
T_ref (default: the weighted geometric mean of T), so that the normal
equations stay well conditioned; the parameters are then transformed back
exactly. The fitted (A, n, Ea) do not depend on T_ref, which is reported with
the fit.

Covariance convention (as ``scipy.optimize.curve_fit``): when ``sigma_ln_k``
is given it is taken as the absolute standard deviation of each ln k
(``absolute_sigma=True``); when it is not given the points have unit weight
and the covariance is scaled by the reduced chi-square
(``absolute_sigma=False``). The covariance is always reported for
(ln A [-], n [-], Ea [J mol^-1]) in that order, with A in the fit's
k-units times K^-n; parameters held fixed (n in the ``"arrhenius"`` and
``"fixed-n"`` forms) have zero variance and covariance.

References
----------
1. Arrhenius, S. *Z. Phys. Chem.* 1889, 4, 226-248.
2. Laidler, K. J. A glossary of terms used in chemical kinetics, including
   reaction dynamics. *Pure Appl. Chem.* 1996, 68, 149-192.
   doi:10.1351/pac199668010149
3. Bevington, P. R.; Robinson, D. K. *Data Reduction and Error Analysis for
   the Physical Sciences*, 3rd ed.; McGraw-Hill, 2003 (weighted linear least
   squares, chs. 6-7; F-test for an additional term, ch. 11).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ratebank.errors import FitError, ScienceInputError
from ratebank.science import uncertainty
from ratebank.science.constants import GAS_CONSTANT
from ratebank.science.distributions import chi_square_cdf, chi_square_tail, f_tail

__all__ = [
    "COLLINEARITY_THRESHOLD",
    "FIT_FORMS",
    "MINIMUM_POINTS",
    "ArrheniusFit",
    "BatchFit",
    "BatchFormChoice",
    "FitWarning",
    "FormComparison",
    "GroupFits",
    "ModifiedArrheniusApproximation",
    "approximate_with_modified_arrhenius",
    "arrhenius",
    "compare_forms",
    "compare_forms_batch",
    "fit_groups",
    "fit_rate_constants",
    "fit_rate_constants_batch",
    "ln_k_uncertainty",
    "local_activation_energy",
    "local_pre_exponential",
    "modified_arrhenius",
]

#: Fit forms: two-parameter Arrhenius (n = 0), three-parameter modified
#: Arrhenius, and modified Arrhenius with n fixed by the user.
FIT_FORMS: tuple[str, ...] = ("arrhenius", "modified", "fixed-n")

#: Fewest points (and distinct temperatures) each form needs: one more than
#: nothing is not enough, so this is the number of free parameters.
MINIMUM_POINTS: dict[str, int] = {"arrhenius": 2, "modified": 3, "fixed-n": 2}

#: |corr(n, Ea)| above which n and Ea are reported as nearly collinear.
#: It equals a variance-inflation factor 1/(1 - r^2) of 100, the level usually
#: called severe (common practice; a VIF of 10 is the usual first warning, but
#: ln T and 1/T are so alike that even 200-2000 K gives a VIF near 10). For
#: evenly spaced points |r| = 0.995 is reached at T_max/T_min of about 2.
COLLINEARITY_THRESHOLD: float = 0.995

# Residual RMS in ln k below which a description counts as exact (rounding level).
_EXACT_RMS = 1e-10


def _temperature(T) -> np.ndarray:
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise ScienceInputError("T must be positive and finite [K].")
    return T


def _finite(name: str, value, unit: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise ScienceInputError(f"{name} must be finite [{unit}].")
    return array


def arrhenius(T, A, Ea):
    """Two-parameter Arrhenius rate constant.

    k = A exp(-Ea / (R T))

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    A : array_like
        Pre-exponential factor [k-unit, e.g. m^3 mol^-1 s^-1].
    Ea : array_like
        Activation energy [J mol^-1].

    Returns
    -------
    numpy.ndarray or float
        k [k-unit].

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, or A or Ea is not finite.

    References
    ----------
    Arrhenius, *Z. Phys. Chem.* 1889, 4, 226.

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> f"{arrhenius(298.0, 8.0e-12, 2060.0 * GAS_CONSTANT):.3e}"
    '7.960e-15'
    """
    T = _temperature(T)
    A = _finite("A", A, "k-unit")
    Ea = _finite("Ea", Ea, "J mol-1")
    return A * np.exp(-Ea / (GAS_CONSTANT * T))


def modified_arrhenius(T, A, n, Ea):
    """Modified (three-parameter) Arrhenius rate constant.

    k = A T^n exp(-Ea / (R T)),  T in K.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    A : array_like
        Pre-exponential factor [k-unit K^-n].
    n : array_like
        Temperature exponent [-].
    Ea : array_like
        Activation energy [J mol^-1].

    Returns
    -------
    numpy.ndarray or float
        k [k-unit].

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, or A, n or Ea is not finite.

    Notes
    -----
    A tabulated expression written as A' (T/T0)^n exp(-Ea/RT) has
    A = A' / T0^n here.

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149. doi:10.1351/pac199668010149

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> f"{modified_arrhenius(298.0, 1.85e-20, 2.82, 987.0 * GAS_CONSTANT):.3e}"
    '6.398e-15'
    """
    T = _temperature(T)
    A = _finite("A", A, "k-unit K^-n")
    n = _finite("n", n, "-")
    Ea = _finite("Ea", Ea, "J mol-1")
    return A * T**n * np.exp(-Ea / (GAS_CONSTANT * T))


def local_activation_energy(T, n, Ea):
    """Local Arrhenius activation energy of the modified form.

    Ea_local(T) = -R d ln k / d(1/T) = Ea + n R T

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    n : array_like
        Temperature exponent [-].
    Ea : array_like
        Activation energy of the modified form [J mol^-1].

    Returns
    -------
    numpy.ndarray or float
        Ea_local [J mol^-1].

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, or n or Ea is not finite.

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149. doi:10.1351/pac199668010149

    Examples
    --------
    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> f"{local_activation_energy(298.0, 2.82, 987.0 * GAS_CONSTANT) / GAS_CONSTANT:.2f}"
    '1827.36'
    """
    T = _temperature(T)
    n = _finite("n", n, "-")
    Ea = _finite("Ea", Ea, "J mol-1")
    return Ea + n * GAS_CONSTANT * T


def local_pre_exponential(T, A, n):
    """Local Arrhenius pre-exponential factor of the modified form.

    A_local(T) = A T^n e^n,

    chosen so that A_local exp(-Ea_local(T)/(R T)) = k(T) exactly, with
    Ea_local from :func:`local_activation_energy`.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    A : array_like
        Pre-exponential factor of the modified form [k-unit K^-n].
    n : array_like
        Temperature exponent [-].

    Returns
    -------
    numpy.ndarray or float
        A_local [k-unit].

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, or A or n is not finite.

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149. doi:10.1351/pac199668010149

    Examples
    --------
    >>> f"{local_pre_exponential(298.0, 1.85e-20, 2.82):.3e}"
    '2.946e-12'
    """
    T = _temperature(T)
    A = _finite("A", A, "k-unit K^-n")
    n = _finite("n", n, "-")
    return A * T**n * np.exp(n)


def ln_k_uncertainty(k, uncertainty, kind: str = "relative"):
    """Standard deviation of ln k from a stated uncertainty of k.

    sigma_ln_k = u                 for a relative uncertainty u = sigma_k / k,
    sigma_ln_k = sigma_k / k       for an absolute uncertainty sigma_k.

    This is first-order propagation, d ln k = dk / k, the common practice for
    fits in ln k, and it is the same linearization the fit's covariance
    relies on. ln(1 + u) is not used: it treats the error as one-sided and
    differs from u only at second order (by about u/2 relative).

    Parameters
    ----------
    k : array_like
        Rate constants [k-unit]; positive.
    uncertainty : array_like
        Relative uncertainty [-] or absolute uncertainty [k-unit],
        one standard deviation; positive.
    kind : {"relative", "absolute"}
        How ``uncertainty`` is expressed.

    Returns
    -------
    numpy.ndarray or float
        sigma of ln k [-].

    Raises
    ------
    ScienceInputError
        If k or the uncertainty is not positive and finite, or ``kind`` is
        unknown.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003), ch. 3.

    Examples
    --------
    >>> float(ln_k_uncertainty(2.0e8, 0.1))
    0.1
    >>> float(ln_k_uncertainty(2.0e8, 4.0e7, kind="absolute"))
    0.2
    """
    k = np.asarray(k, dtype=float)
    u = np.asarray(uncertainty, dtype=float)
    if not np.all(np.isfinite(k) & (k > 0)):
        raise ScienceInputError("k must be positive and finite to take its logarithm.")
    if not np.all(np.isfinite(u) & (u > 0)):
        raise ScienceInputError("The uncertainty of k must be positive and finite.")
    if kind == "relative":
        return np.broadcast_to(u, np.broadcast_shapes(k.shape, u.shape)) * 1.0
    if kind == "absolute":
        return u / k
    raise ScienceInputError(
        f"Unknown uncertainty kind {kind!r}; expected 'relative' or 'absolute'."
    )


@dataclass(frozen=True)
class FitWarning:
    """Something the user should know about a fit.

    Attributes
    ----------
    code : str
        Stable identifier: ``"collinear-n-ea"`` (n and Ea nearly collinear),
        ``"no-degrees-of-freedom"`` (as many points as parameters),
        ``"scatter-above-stated"`` / ``"scatter-below-stated"`` (the reduced
        chi-square of a weighted fit is improbably far above or below 1:
        inconsistent sets or a wrong form, or overstated uncertainties),
        ``"sets-disagree"`` (pooled sets differ beyond their stated
        uncertainties, Cochran's Q test).
    message : str
        One sentence for the user.
    """

    code: str
    message: str


@dataclass(frozen=True, eq=False)
class ArrheniusFit:
    """Result of a weighted fit of ln k to an Arrhenius form.

    Attributes
    ----------
    form : str
        One of :data:`FIT_FORMS`.
    A : float
        Pre-exponential factor [k-unit K^-n].
    ln_A : float
        ln A, in the same units (kept for precision).
    n : float
        Temperature exponent [-] (0 for ``"arrhenius"``, the fixed value for
        ``"fixed-n"``).
    Ea : float
        Activation energy [J mol^-1].
    T_ref : float
        Reference temperature used to scale the regressors [K].
    covariance : numpy.ndarray, shape (3, 3)
        Covariance of (ln A [-], n [-], Ea [J mol^-1]); fixed parameters have
        zero rows and columns. NaN where undetermined (unit weights and no
        degrees of freedom).
    chi_square : float
        Sum of squared weighted residuals [-].
    reduced_chi_square : float
        chi_square / dof (NaN when dof = 0).
    residuals : numpy.ndarray
        ln k_obs - ln k_fit at each point, in input order [-].
    T_min, T_max : float
        Temperature range of the data [K].
    n_points : int
        Number of points.
    n_sets : int
        Number of measurement sets pooled (as given by the caller).
    dof : int
        Degrees of freedom, n_points minus the number of free parameters.
    absolute_sigma : bool
        True when sigma_ln_k was given and the covariance is absolute; False
        for unit weights with the covariance scaled by the reduced chi-square.
    correlation_n_ea : float
        corr(n, Ea) from the covariance (NaN when n is fixed).
    warnings : tuple of FitWarning
        Warnings about the fit.
    """

    form: str
    A: float
    ln_A: float
    n: float
    Ea: float
    T_ref: float
    covariance: np.ndarray
    chi_square: float
    reduced_chi_square: float
    residuals: np.ndarray
    T_min: float
    T_max: float
    n_points: int
    n_sets: int
    dof: int
    absolute_sigma: bool
    correlation_n_ea: float
    warnings: tuple[FitWarning, ...] = ()

    @property
    def collinear(self) -> bool:
        """True if the fit carries the ``"collinear-n-ea"`` warning."""
        return any(w.code == "collinear-n-ea" for w in self.warnings)

    @property
    def parameter_sigmas(self) -> np.ndarray:
        """Standard deviations of (ln A [-], n [-], Ea [J mol^-1])."""
        return np.sqrt(np.diag(self.covariance))

    def ln_k(self, T):
        """ln k(T) of the fitted expression, T [K]."""
        T = _temperature(T)
        return self.ln_A + self.n * np.log(T) - self.Ea / (GAS_CONSTANT * T)

    def k(self, T):
        """k(T) of the fitted expression [k-unit], T [K]."""
        return np.exp(self.ln_k(T))

    def sigma_ln_k(self, T):
        """Standard deviation of the fitted ln k at T [K], from the covariance.

        sigma^2 = g C g^T with g = (1, ln T, -1/(R T)), the gradient of ln k
        with respect to (ln A, n, Ea).
        """
        return uncertainty.sigma_ln_k_from_covariance(T, self.covariance)

    def uncertainty_factor(self, T):
        """Uncertainty factor f(T) = exp(sigma_ln_k(T)) [-], T [K]."""
        return uncertainty.uncertainty_factor_from_covariance(T, self.covariance)

    def local_activation_energy(self, T):
        """Local Arrhenius activation energy Ea + n R T [J mol^-1], T [K]."""
        return local_activation_energy(T, self.n, self.Ea)


def _check_form(form: str, fixed_n) -> float:
    """Validate the form and return the fixed n (0 for Arrhenius, NaN if free)."""
    if form not in FIT_FORMS:
        raise FitError(f"Unknown fit form {form!r}; expected one of {', '.join(FIT_FORMS)}.")
    if form == "fixed-n":
        if fixed_n is None:
            raise FitError("The fixed-n form needs a value for fixed_n.")
        if not np.isfinite(fixed_n):
            raise FitError(f"fixed_n must be a finite number; got {fixed_n!r}.")
        return float(fixed_n)
    if fixed_n is not None:
        raise FitError(f"fixed_n is used only with form='fixed-n', not with form={form!r}.")
    return 0.0 if form == "arrhenius" else float("nan")


def _count_problem(form: str, n_points: int, n_distinct: int) -> str | None:
    need = MINIMUM_POINTS[form]
    if n_points < need:
        return f"The {form} form needs at least {need} points; the data have {n_points}."
    if n_distinct < need:
        return (
            f"The {form} form needs at least {need} distinct temperatures; "
            f"the data have {n_distinct}."
        )
    return None


def _warnings(form: str, correlation: float, dof: int, absolute_sigma: bool, T_min, T_max):
    found = []
    if form == "modified" and abs(correlation) > COLLINEARITY_THRESHOLD:
        found.append(
            FitWarning(
                "collinear-n-ea",
                f"n and Ea are nearly collinear over {T_min:.4g}-{T_max:.4g} K "
                f"(|corr| = {abs(correlation):.4f} > {COLLINEARITY_THRESHOLD}); "
                "fit the two-parameter form instead.",
            )
        )
    if dof == 0:
        found.append(
            FitWarning(
                "no-degrees-of-freedom",
                "There are as many points as parameters, so the fit passes through every point"
                + (
                    " and its uncertainty comes from the stated sigmas alone."
                    if absolute_sigma
                    else " and its uncertainty cannot be estimated."
                ),
            )
        )
    return tuple(found)


def _solve_groups(T, ln_k, weight, index, n_groups, form, n_fixed, absolute_sigma, T_ref, failed):
    """Weighted least squares of ln k for every group at once.

    All arrays are per point except ``T_ref`` and ``failed`` (per group).
    Groups marked failed get NaN results; their normal equations are
    replaced by the identity so that the stacked solve cannot break.
    """

    def per_group(values):
        return np.bincount(index, weights=values, minlength=n_groups)

    free_n = form == "modified"
    with np.errstate(invalid="ignore", divide="ignore"):
        sum_w = per_group(weight)
        ln_T = np.log(T)
        inv_T = 1.0 / T
        mean_ln_T = per_group(weight * ln_T) / sum_w
        mean_inv_T = per_group(weight * inv_T) / sum_w
        if T_ref is None:
            T_ref = np.exp(mean_ln_T)
        # Centred regressors: u for n, x for h = Ea / (R T_ref).
        u = ln_T - mean_ln_T[index]
        x = -T_ref[index] * (inv_T - mean_inv_T[index])
        y = ln_k if free_n else ln_k - n_fixed * u

        normal = np.zeros((n_groups, 3, 3))
        rhs = np.zeros((n_groups, 3))
        normal[:, 0, 0] = sum_w
        normal[:, 0, 2] = normal[:, 2, 0] = per_group(weight * x)
        normal[:, 2, 2] = per_group(weight * x * x)
        rhs[:, 0] = per_group(weight * y)
        rhs[:, 2] = per_group(weight * x * y)
        if free_n:
            normal[:, 0, 1] = normal[:, 1, 0] = per_group(weight * u)
            normal[:, 1, 1] = per_group(weight * u * u)
            normal[:, 1, 2] = normal[:, 2, 1] = per_group(weight * u * x)
            rhs[:, 1] = per_group(weight * u * y)
        else:
            normal[:, 1, 1] = 1.0
        normal[failed] = np.eye(3)
        rhs[failed] = 0.0

    # One stacked solve gives the parameters and the inverse normal matrix together.
    augmented = np.concatenate(
        (rhs[..., np.newaxis], np.broadcast_to(np.eye(3), (n_groups, 3, 3))), axis=2
    )
    solution = np.linalg.solve(normal, augmented)
    theta = solution[..., 0]
    unscaled = solution[..., 1:]
    c, h = theta[:, 0], theta[:, 2]
    n = theta[:, 1] if free_n else np.full(n_groups, n_fixed)

    residuals = ln_k - (c[index] + n[index] * u + h[index] * x)
    chi_square = per_group(weight * residuals**2)
    n_points = np.bincount(index, minlength=n_groups)
    dof = n_points - (3 if free_n else 2)
    with np.errstate(invalid="ignore", divide="ignore"):
        reduced = np.where(dof > 0, chi_square / np.maximum(dof, 1), np.nan)
    if not free_n:
        unscaled[:, 1, :] = 0.0
        unscaled[:, :, 1] = 0.0
    scale = np.ones(n_groups) if absolute_sigma else reduced
    theta_cov = unscaled * scale[:, np.newaxis, np.newaxis]
    if not free_n:
        # 0 * NaN would spread an undetermined scale into the fixed parameter.
        theta_cov[:, 1, :] = 0.0
        theta_cov[:, :, 1] = 0.0

    # ln A = c - n <ln T> + h T_ref <1/T>,  Ea = R T_ref h.
    jacobian = np.zeros((n_groups, 3, 3))
    jacobian[:, 0, 0] = 1.0
    jacobian[:, 0, 1] = -mean_ln_T
    jacobian[:, 0, 2] = T_ref * mean_inv_T
    jacobian[:, 1, 1] = 1.0
    jacobian[:, 2, 2] = GAS_CONSTANT * T_ref
    ln_A = c - n * mean_ln_T + h * T_ref * mean_inv_T
    Ea = GAS_CONSTANT * T_ref * h
    covariance = jacobian @ theta_cov @ jacobian.transpose(0, 2, 1)
    if free_n:
        with np.errstate(invalid="ignore", divide="ignore"):
            correlation = unscaled[:, 1, 2] / np.sqrt(unscaled[:, 1, 1] * unscaled[:, 2, 2])
    else:
        correlation = np.full(n_groups, np.nan)

    for array in (ln_A, n, Ea, chi_square, reduced, correlation):
        array[failed] = np.nan
    covariance[failed] = np.nan
    residuals[failed[index]] = np.nan
    return {
        "ln_A": ln_A,
        "n": n,
        "Ea": Ea,
        "T_ref": np.where(failed, np.nan, T_ref),
        "covariance": covariance,
        "chi_square": chi_square,
        "reduced_chi_square": reduced,
        "dof": dof,
        "n_points": n_points,
        "residuals": residuals,
        "correlation_n_ea": correlation,
    }


def _fit_inputs(T, k, sigma_ln_k):
    T = np.asarray(T, dtype=float)
    k = np.asarray(k, dtype=float)
    if T.ndim != 1 or k.ndim != 1:
        raise FitError("T and k must be one-dimensional arrays of points.")
    if T.shape != k.shape:
        raise FitError(f"T has {T.size} values but k has {k.size}; give one k per temperature.")
    if sigma_ln_k is not None:
        sigma = np.asarray(sigma_ln_k, dtype=float)
        if sigma.ndim == 0:
            sigma = np.full(T.shape, float(sigma))
        if sigma.shape != T.shape:
            raise FitError(
                f"sigma_ln_k has {sigma.size} values but there are {T.size} points; "
                "give one sigma per point."
            )
    else:
        sigma = None
    return T, k, sigma


def fit_rate_constants(
    T,
    k,
    sigma_ln_k=None,
    *,
    form: str = "arrhenius",
    fixed_n: float | None = None,
    T_ref: float | None = None,
    n_sets: int = 1,
) -> ArrheniusFit:
    """Weighted least-squares fit of ln k to an Arrhenius form.

    ln k = a + n ln(T/T_ref) - (Ea/R)(1/T - 1/T_ref),  a = ln k(T_ref),

    minimizing sum(((ln k_i - ln k_fit(T_i)) / sigma_i)^2), with the
    regressors centred on their weighted means for conditioning, and the
    result transformed back to (A, n, Ea) of k = A T^n exp(-Ea/RT).

    Forms: ``"arrhenius"`` fits (A, Ea) with n = 0; ``"modified"`` fits
    (A, n, Ea); ``"fixed-n"`` fits (A, Ea) with n = ``fixed_n``.

    Parameters
    ----------
    T : array_like, shape (N,)
        Temperatures [K]; positive.
    k : array_like, shape (N,)
        Rate constants [k-unit]; positive (A comes out in k-unit K^-n).
    sigma_ln_k : array_like, shape (N,) or scalar, optional
        Standard deviation of each ln k [-] (see :func:`ln_k_uncertainty`);
        taken as absolute. Without it the points have unit weight and the
        covariance is scaled by the reduced chi-square.
    form : {"arrhenius", "modified", "fixed-n"}
        The form to fit.
    fixed_n : float, optional
        The temperature exponent for ``"fixed-n"`` (and only for it).
    T_ref : float, optional
        Reference temperature [K]; default the weighted geometric mean of T.
        The fitted parameters do not depend on it.
    n_sets : int, optional
        Number of measurement sets pooled in the data, recorded in the result.

    Returns
    -------
    ArrheniusFit

    Raises
    ------
    FitError
        If T, k or sigma_ln_k differ in length, a T, k or sigma is not
        positive and finite, the form is unknown, ``fixed_n`` is missing for
        (or given without) ``"fixed-n"``, or there are fewer points or
        distinct temperatures than free parameters (2 for ``"arrhenius"`` and
        ``"fixed-n"``, 3 for ``"modified"``).

    Notes
    -----
    Warnings (not exceptions) are attached to the result: ``"collinear-n-ea"``
    when |corr(n, Ea)| exceeds :data:`COLLINEARITY_THRESHOLD` (the
    three-parameter form is then not determined by the data, and the
    two-parameter form should be fitted), and ``"no-degrees-of-freedom"``.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003), chs. 6-7.

    Examples
    --------
    >>> import numpy as np
    >>> T = np.linspace(200.0, 400.0, 11)
    >>> fit = fit_rate_constants(T, 4.8e6 * np.exp(-2060.0 / T))
    >>> f"{fit.A:.6e} {fit.Ea / 8.314462618:.3f}"
    '4.800000e+06 2060.000'
    """
    T, k, sigma = _fit_inputs(T, k, sigma_ln_k)
    n_fixed = _check_form(form, fixed_n)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise FitError("Every temperature must be positive and finite [K].")
    if not np.all(np.isfinite(k) & (k > 0)):
        raise FitError("Every k must be positive and finite to be fitted in ln k.")
    if sigma is not None and not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise FitError("Every sigma_ln_k must be positive and finite.")
    if T_ref is not None and not (np.isfinite(T_ref) and T_ref > 0):
        raise FitError(f"T_ref must be a positive temperature [K]; got {T_ref!r}.")
    problem = _count_problem(form, T.size, np.unique(T).size)
    if problem is not None:
        raise FitError(problem)

    weight = np.ones_like(T) if sigma is None else sigma**-2.0
    result = _solve_groups(
        T,
        np.log(k),
        weight,
        np.zeros(T.size, dtype=np.intp),
        1,
        form,
        n_fixed,
        sigma is not None,
        None if T_ref is None else np.array([float(T_ref)]),
        np.zeros(1, dtype=bool),
    )
    return _single_fit(result, 0, form, sigma is not None, T.min(), T.max(), n_sets, None)


def _single_fit(result, i, form, absolute_sigma, T_min, T_max, n_sets, point_mask):
    residuals = result["residuals"] if point_mask is None else result["residuals"][point_mask]
    dof = int(result["dof"][i])
    correlation = float(result["correlation_n_ea"][i])
    ln_A = float(result["ln_A"][i])
    return ArrheniusFit(
        form=form,
        A=float(np.exp(ln_A)),
        ln_A=ln_A,
        n=float(result["n"][i]),
        Ea=float(result["Ea"][i]),
        T_ref=float(result["T_ref"][i]),
        covariance=np.array(result["covariance"][i]),
        chi_square=float(result["chi_square"][i]),
        reduced_chi_square=float(result["reduced_chi_square"][i]),
        residuals=np.array(residuals),
        T_min=float(T_min),
        T_max=float(T_max),
        n_points=int(result["n_points"][i]),
        n_sets=int(n_sets),
        dof=dof,
        absolute_sigma=absolute_sigma,
        correlation_n_ea=correlation,
        warnings=_warnings(form, correlation, dof, absolute_sigma, T_min, T_max),
    )


def _plain(label):
    """A numpy scalar label as the Python value it stands for (for messages and dict keys)."""
    return label.item() if isinstance(label, np.generic) else label


@dataclass(frozen=True, eq=False)
class BatchFit:
    """Fits of many groups (measurement sets) made in one vectorized pass.

    One row per group, in the sorted order of the group labels. Groups that
    could not be fitted have ``ok`` False, NaN parameters and their reason in
    ``status``.

    Attributes
    ----------
    groups : numpy.ndarray, shape (m,)
        Group labels.
    form : str
        The fitted form.
    A, ln_A, n, Ea : numpy.ndarray, shape (m,)
        Parameters as in :class:`ArrheniusFit` (A [k-unit K^-n],
        Ea [J mol^-1]).
    T_ref : numpy.ndarray, shape (m,)
        Weighted geometric-mean temperature of each group [K].
    covariance : numpy.ndarray, shape (m, 3, 3)
        Covariance of (ln A, n, Ea) per group, with the convention of
        :func:`fit_rate_constants`.
    chi_square, reduced_chi_square : numpy.ndarray, shape (m,)
    dof, n_points : numpy.ndarray of int, shape (m,)
    T_min, T_max : numpy.ndarray, shape (m,)
        Temperature range of each group's valid points [K].
    correlation_n_ea : numpy.ndarray, shape (m,)
        corr(n, Ea) (NaN unless the form is ``"modified"``).
    collinear : numpy.ndarray of bool, shape (m,)
        |corr(n, Ea)| > :data:`COLLINEARITY_THRESHOLD`.
    ok : numpy.ndarray of bool, shape (m,)
        The group was fitted.
    status : numpy.ndarray of str, shape (m,)
        ``"ok"`` or the one-sentence reason the group was not fitted.
    absolute_sigma : bool
        Whether the covariances are absolute (sigma given) or scaled.
    group_index : numpy.ndarray of int, shape (N,)
        Row of each input point.
    residuals : numpy.ndarray, shape (N,)
        ln k_obs - ln k_fit per input point (NaN in failed groups).
    """

    groups: np.ndarray
    form: str
    A: np.ndarray
    ln_A: np.ndarray
    n: np.ndarray
    Ea: np.ndarray
    T_ref: np.ndarray
    covariance: np.ndarray
    chi_square: np.ndarray
    reduced_chi_square: np.ndarray
    dof: np.ndarray
    n_points: np.ndarray
    T_min: np.ndarray
    T_max: np.ndarray
    correlation_n_ea: np.ndarray
    collinear: np.ndarray
    ok: np.ndarray
    status: np.ndarray
    absolute_sigma: bool
    group_index: np.ndarray
    residuals: np.ndarray

    def __len__(self) -> int:
        return int(self.groups.size)

    @property
    def failures(self) -> dict:
        """Group label -> reason, for the groups that could not be fitted."""
        return {
            _plain(label): str(reason)
            for label, reason, fitted in zip(self.groups, self.status, self.ok, strict=True)
            if not fitted
        }

    def index(self, group) -> int:
        """Row of a group label; raises FitError if the label is unknown."""
        row = int(np.searchsorted(self.groups, group))
        if row >= self.groups.size or self.groups[row] != group:
            raise FitError(f"Group {group!r} is not in this batch.")
        return row

    def fit_warnings(self, i: int) -> tuple[FitWarning, ...]:
        """The warnings :meth:`fit` would attach to the i-th group, without building it (O(1))."""
        return _warnings(
            self.form,
            float(self.correlation_n_ea[i]),
            int(self.dof[i]),
            self.absolute_sigma,
            self.T_min[i],
            self.T_max[i],
        )

    def fit(self, i: int) -> ArrheniusFit:
        """The i-th group's result as an :class:`ArrheniusFit` (O(N) for the residuals).

        Raises FitError with the group's reason if it was not fitted.
        """
        if not self.ok[i]:
            raise FitError(f"Group {_plain(self.groups[i])!r} was not fitted: {self.status[i]}")
        result = {
            "ln_A": self.ln_A,
            "n": self.n,
            "Ea": self.Ea,
            "T_ref": self.T_ref,
            "covariance": self.covariance,
            "chi_square": self.chi_square,
            "reduced_chi_square": self.reduced_chi_square,
            "dof": self.dof,
            "n_points": self.n_points,
            "residuals": self.residuals,
            "correlation_n_ea": self.correlation_n_ea,
        }
        return _single_fit(
            result,
            i,
            self.form,
            self.absolute_sigma,
            self.T_min[i],
            self.T_max[i],
            1,
            self.group_index == i,
        )


def fit_rate_constants_batch(
    T, k, sigma_ln_k, group, *, form: str = "arrhenius", fixed_n: float | None = None
) -> BatchFit:
    """Fit every group of points at once, as :func:`fit_rate_constants` would one by one.

    The weighted normal equations of all groups are accumulated with
    :func:`numpy.bincount` and solved together as one (m, 3, 3) stack; there
    is no Python loop over groups. Each group is centred at its own weighted
    geometric-mean temperature.

    Parameters
    ----------
    T, k : array_like, shape (N,)
        Temperatures [K] and rate constants [k-unit] of all points.
    sigma_ln_k : array_like, shape (N,), or None
        Standard deviation of each ln k [-]; None for unit weights (and
        covariances scaled by each group's reduced chi-square).
    group : array_like, shape (N,)
        Group label of each point (integers or strings).
    form : {"arrhenius", "modified", "fixed-n"}
        The form fitted to every group.
    fixed_n : float, optional
        The exponent for ``"fixed-n"``, shared by all groups.

    Returns
    -------
    BatchFit
        One row per group; a group with too few points or distinct
        temperatures, or with a non-positive or non-finite T, k or sigma, is
        reported in ``status`` instead of raising.

    Raises
    ------
    FitError
        If the arrays differ in length, the form is unknown, or ``fixed_n``
        is missing for (or given without) ``"fixed-n"``.

    Examples
    --------
    >>> import numpy as np
    >>> T = np.array([250.0, 300.0, 350.0, 300.0])
    >>> batch = fit_rate_constants_batch(T, 1e6 * np.exp(-1000.0 / T), None, [1, 1, 1, 2])
    >>> [f"{a:.3e}" for a in batch.A], batch.status.tolist()
    (['1.000e+06', 'nan'], ['ok', 'The arrhenius form needs at least 2 points; the data have 1.'])
    """
    T, k, sigma = _fit_inputs(T, k, sigma_ln_k)
    n_fixed = _check_form(form, fixed_n)
    group = np.asarray(group)
    if group.shape != T.shape:
        raise FitError(
            f"group has {group.size} labels but there are {T.size} points; "
            "give one label per point."
        )
    if T.size == 0:
        raise FitError("There are no points to fit.")
    labels, index = np.unique(group, return_inverse=True)
    index = index.reshape(-1)
    n_groups = labels.size

    valid = np.isfinite(T) & (T > 0) & np.isfinite(k) & (k > 0)
    if sigma is not None:
        valid &= np.isfinite(sigma) & (sigma > 0)
    has_invalid = np.bincount(index, weights=~valid, minlength=n_groups) > 0
    T_clean = np.where(valid, T, 1.0)
    k_clean = np.where(valid, k, 1.0)
    weight = np.where(valid, 1.0 if sigma is None else 1.0 / np.where(valid, sigma, 1.0) ** 2, 0.0)

    # Range and distinct temperatures without sorting: a group has at least two distinct
    # temperatures if T_min < T_max, and at least three if some point lies strictly inside.
    counts = np.bincount(index, minlength=n_groups)
    T_min = np.full(n_groups, np.inf)
    T_max = np.full(n_groups, -np.inf)
    np.minimum.at(T_min, index[valid], T[valid])
    np.maximum.at(T_max, index[valid], T[valid])
    valid_counts = np.bincount(index, weights=valid, minlength=n_groups)
    inside = valid & (T_min[index] < T) & (T_max[index] > T)
    n_distinct = np.where(
        valid_counts == 0,
        0,
        np.where(
            T_min == T_max,
            1,
            np.where(np.bincount(index, weights=inside, minlength=n_groups) > 0, 3, 2),
        ),
    )
    T_min[valid_counts == 0] = np.nan
    T_max[valid_counts == 0] = np.nan

    need = MINIMUM_POINTS[form]
    too_few = (counts < need) | (n_distinct < need)
    failed = has_invalid | too_few
    status = np.full(n_groups, "ok", dtype=object)
    for row in np.flatnonzero(failed):
        if has_invalid[row]:
            status[row] = "A T, k or sigma_ln_k in this group is not positive and finite."
        else:
            status[row] = _count_problem(form, int(counts[row]), int(n_distinct[row]))

    result = _solve_groups(
        T_clean,
        np.log(k_clean),
        weight,
        index,
        n_groups,
        form,
        n_fixed,
        sigma is not None,
        None,
        failed,
    )
    correlation = result["correlation_n_ea"]
    with np.errstate(invalid="ignore"):
        collinear = np.abs(correlation) > COLLINEARITY_THRESHOLD
    return BatchFit(
        groups=labels,
        form=form,
        A=np.exp(result["ln_A"]),
        ln_A=result["ln_A"],
        n=result["n"],
        Ea=result["Ea"],
        T_ref=result["T_ref"],
        covariance=result["covariance"],
        chi_square=result["chi_square"],
        reduced_chi_square=result["reduced_chi_square"],
        dof=result["dof"],
        n_points=counts,
        T_min=T_min,
        T_max=T_max,
        correlation_n_ea=correlation,
        collinear=collinear,
        ok=~failed,
        status=status.astype(str),
        absolute_sigma=sigma is not None,
        group_index=index,
        residuals=result["residuals"],
    )


@dataclass(frozen=True, eq=False)
class FormComparison:
    """Whether the data support the three-parameter form over the two-parameter one.

    Attributes
    ----------
    supported : bool
        True when the modified form is justified.
    preferred_form : str
        ``"modified"`` if supported, else ``"arrhenius"``.
    reason : str
        One sentence saying why.
    f_statistic, p_value : float
        F = (chi2_2 - chi2_3) / (chi2_3 / (N - 3)) and its upper-tail
        probability on (1, N - 3) degrees of freedom (NaN when not tested).
    significance : float
        The level the p-value was compared with.
    arrhenius_fit : ArrheniusFit
        The two-parameter fit.
    modified_fit : ArrheniusFit or None
        The three-parameter fit, when the data allow it.
    """

    supported: bool
    preferred_form: str
    reason: str
    f_statistic: float
    p_value: float
    significance: float
    arrhenius_fit: ArrheniusFit
    modified_fit: ArrheniusFit | None


def compare_forms(T, k, sigma_ln_k=None, *, significance: float = 0.05) -> FormComparison:
    """Decide whether the data support fitting n as well as A and Ea.

    The modified form is supported when all of these hold:

    1. there are at least 4 points at 3 or more distinct temperatures, so
       the three-parameter fit has a degree of freedom left;
    2. n and Ea are not nearly collinear (|corr| <= :data:`COLLINEARITY_THRESHOLD`);
    3. adding n lowers chi-square significantly by the F-test for one
       additional term, F = (chi2_2 - chi2_3) / (chi2_3 / (N - 3)) on
       (1, N - 3) degrees of freedom, with p < ``significance``.

    The F ratio does not depend on the scale of the stated sigmas, so the
    test is the same for absolute and for unit weights.

    Parameters
    ----------
    T, k : array_like, shape (N,)
        Temperatures [K] and rate constants [k-unit].
    sigma_ln_k : array_like, optional
        Standard deviation of each ln k [-].
    significance : float, optional
        Significance level of the F-test (default 0.05).

    Returns
    -------
    FormComparison

    Raises
    ------
    FitError
        If even the two-parameter form cannot be fitted (see
        :func:`fit_rate_constants`), or ``significance`` is not in (0, 1).

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed.
    (2003), ch. 11 (F-test for an additional term).

    Examples
    --------
    >>> import numpy as np
    >>> T = np.linspace(300.0, 2000.0, 15)
    >>> k = 1e-2 * T**2.5 * np.exp(-500.0 / T) * (1 + 0.01 * np.sin(T))
    >>> compare_forms(T, k).preferred_form
    'modified'
    """
    if not 0.0 < significance < 1.0:
        raise FitError(f"significance must lie between 0 and 1; got {significance!r}.")
    two = fit_rate_constants(T, k, sigma_ln_k, form="arrhenius")
    T = np.asarray(T, dtype=float)
    n_points, n_distinct = T.size, np.unique(T).size
    nan = float("nan")

    def result(supported, reason, f=nan, p=nan, three=None):
        return FormComparison(
            supported,
            "modified" if supported else "arrhenius",
            reason,
            f,
            p,
            significance,
            two,
            three,
        )

    if n_points < 4 or n_distinct < 3:
        return result(
            False,
            f"Testing the three-parameter form needs at least 4 points at 3 distinct "
            f"temperatures; the data have {n_points} at {n_distinct}.",
            three=fit_rate_constants(T, k, sigma_ln_k, form="modified")
            if n_distinct >= 3
            else None,
        )
    three = fit_rate_constants(T, k, sigma_ln_k, form="modified")
    if three.collinear:
        return result(
            False,
            f"n and Ea are nearly collinear over {two.T_min:.4g}-{two.T_max:.4g} K "
            f"(|corr| = {abs(three.correlation_n_ea):.4f}); fit two parameters.",
            three=three,
        )
    weights = (
        np.ones(n_points)
        if sigma_ln_k is None
        else np.broadcast_to(np.asarray(sigma_ln_k, dtype=float) ** -2.0, (n_points,))
    )
    if np.sqrt(two.chi_square / weights.sum()) < _EXACT_RMS:
        return result(
            False,
            "The two-parameter form already describes the data to rounding error.",
            three=three,
        )
    dof = n_points - 3
    if three.chi_square == 0.0:
        f_statistic = np.inf
    else:
        f_statistic = max(two.chi_square - three.chi_square, 0.0) / (three.chi_square / dof)
    p_value = float(f_tail(f_statistic, 1, dof))
    if p_value < significance:
        reason = (
            f"Fitting n lowers chi-square significantly (F = {f_statistic:.3g}, "
            f"p = {p_value:.2g} < {significance:g})."
        )
        return result(True, reason, float(f_statistic), p_value, three)
    reason = (
        f"Fitting n does not lower chi-square significantly (F = {f_statistic:.3g}, "
        f"p = {p_value:.2g} >= {significance:g}); the two-parameter form suffices."
    )
    return result(False, reason, float(f_statistic), p_value, three)


class ModifiedArrheniusApproximation(NamedTuple):
    """A modified-Arrhenius expression approximating a model curve."""

    #: Pre-exponential factor [k-unit K^-n].
    A: float
    #: Temperature exponent [-].
    n: float
    #: Activation energy [J mol^-1].
    Ea: float
    #: Largest |k_fit / k - 1| on the grid [-].
    max_relative_deviation: float


def approximate_with_modified_arrhenius(T, k) -> ModifiedArrheniusApproximation:
    """Modified-Arrhenius expression closest to a model k(T) on a grid.

    An unweighted least-squares fit of ln k = ln A + n ln T - Ea/(RT) to the
    curve, with the largest relative deviation max |k_fit/k - 1| over the
    grid. Used to export curves that are not exactly of this form, such as
    the Lennard-Jones-corrected collision-theory estimate.

    Many curves are approximated at once when ``T`` and ``k`` have a leading
    axis (one row per curve, each with its own grid): the regressors of each
    row are centred on their means, and the row's 3 x 3 normal equations are
    solved as one stacked ``numpy.linalg.solve``.

    Parameters
    ----------
    T : array_like, shape (N,) or (m, N)
        Temperature grid [K]; at least 3 distinct positive values per row.
    k : array_like, shape (N,) or (m, N)
        Model rate constants on the grid [k-unit]; positive.

    Returns
    -------
    ModifiedArrheniusApproximation
        (A [k-unit K^-n], n [-], Ea [J mol^-1], largest relative deviation [-]);
        floats for one curve, arrays of shape (m,) for many. It unpacks as a
        4-tuple.

    Raises
    ------
    FitError
        As :func:`fit_rate_constants` with ``form="modified"``.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003),
    ch. 7 (linear least squares).

    Examples
    --------
    >>> import numpy as np
    >>> T = np.linspace(300.0, 2000.0, 50)
    >>> A, n, Ea, worst = approximate_with_modified_arrhenius(T, 3.0 * T**0.5 * np.exp(-800 / T))
    >>> f"{A:.4f} {n:.4f} {worst < 1e-12}"
    '3.0000 0.5000 True'
    >>> grids = np.stack([T, 2 * T])
    >>> many = approximate_with_modified_arrhenius(grids, 5.0 * grids**1.5)
    >>> [f"{a:.4f}" for a in many.A], [f"{x:.4f}" for x in many.n]
    (['5.0000', '5.0000'], ['1.5000', '1.5000'])
    """
    T = np.asarray(T, dtype=float)
    k = np.asarray(k, dtype=float)
    if k.ndim < 2:
        fit = fit_rate_constants(T, k, form="modified")
        deviation = float(np.max(np.abs(fit.k(T) / k - 1.0)))
        return ModifiedArrheniusApproximation(fit.A, fit.n, fit.Ea, deviation)
    T = np.broadcast_to(T, k.shape)
    if not (np.all(np.isfinite(T) & (T > 0)) and np.all(np.isfinite(k) & (k > 0))):
        raise FitError("T and k must be positive and finite to approximate a curve.")
    ln_T, inverse_T, ln_k = np.log(T), 1.0 / T, np.log(k)
    centred = [x - x.mean(axis=-1, keepdims=True) for x in (ln_T, inverse_T, ln_k)]
    scale = np.abs(centred[1]).max(axis=-1, keepdims=True)
    scale = np.where(scale > 0, scale, 1.0)
    x = np.stack([centred[0], centred[1] / scale], axis=-1)  # (m, N, 2)
    normal = np.einsum("mni,mnj->mij", x, x)
    if np.any(np.abs(np.linalg.det(normal)) < 1e-300):
        raise FitError("each curve needs at least 3 distinct temperatures.")
    slope = np.linalg.solve(normal, np.einsum("mni,mn->mi", x, centred[2])[..., None])[..., 0]
    n = slope[:, 0]
    Ea = -slope[:, 1] / scale[:, 0] * GAS_CONSTANT
    ln_A = (ln_k - n[:, None] * ln_T + Ea[:, None] / GAS_CONSTANT * inverse_T).mean(axis=-1)
    k_fit = np.exp(ln_A[:, None] + n[:, None] * ln_T - Ea[:, None] / GAS_CONSTANT * inverse_T)
    deviation = np.max(np.abs(k_fit / k - 1.0), axis=-1)
    return ModifiedArrheniusApproximation(np.exp(ln_A), n, Ea, deviation)


@dataclass(frozen=True, eq=False)
class BatchFormChoice:
    """:func:`compare_forms` applied to many groups at once.

    Attributes
    ----------
    two, three : BatchFit
        The two- and three-parameter batch fits (same group order).
    supported : numpy.ndarray of bool, shape (m,)
        The three-parameter form is justified for the group.
    reason : numpy.ndarray of str, shape (m,)
        One sentence per group, worded as :func:`compare_forms` words it.
    p_value : numpy.ndarray, shape (m,)
        F-test p-value (NaN where not tested).
    """

    two: BatchFit
    three: BatchFit
    supported: np.ndarray
    reason: np.ndarray
    p_value: np.ndarray


def compare_forms_batch(T, k, sigma_ln_k, group, *, significance: float = 0.05) -> BatchFormChoice:
    """Decide, group by group, whether the data support fitting n (vectorized).

    The criteria are exactly those of :func:`compare_forms`: at least 4
    points at 3 distinct temperatures, n and Ea not collinear, the
    two-parameter form not already exact, and the F-test
    F = (chi2_2 - chi2_3) / (chi2_3 / (N - 3)) on (1, N - 3) degrees of
    freedom below ``significance``. Both forms are fitted in one vectorized
    pass each; only the per-group reasons are formatted in Python.

    Parameters
    ----------
    T, k : array_like, shape (N,)
        Temperatures [K] and rate constants [k-unit].
    sigma_ln_k : array_like, shape (N,), or None
        Standard deviation of each ln k [-]; None for unit weights.
    group : array_like, shape (N,)
        Group label of each point.
    significance : float, optional
        Significance level of the F-test (default 0.05).

    Returns
    -------
    BatchFormChoice

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed.
    (2003), ch. 11 (F-test for an additional term).

    Examples
    --------
    >>> import numpy as np
    >>> T = np.concatenate([np.linspace(300.0, 2000.0, 15), np.linspace(300.0, 400.0, 5)])
    >>> wide, narrow = T[:15], T[15:]
    >>> k = np.concatenate([1e-2 * wide**2.5 * np.exp(-500.0 / wide) * (1 + 0.01 * np.sin(wide)),
    ...                     1e6 * np.exp(-1000.0 / narrow)])
    >>> choice = compare_forms_batch(T, k, None, [0] * 15 + [1] * 5)
    >>> choice.supported.tolist()
    [True, False]
    """
    if not 0.0 < significance < 1.0:
        raise FitError(f"significance must lie between 0 and 1; got {significance!r}.")
    two = fit_rate_constants_batch(T, k, sigma_ln_k, group, form="arrhenius")
    three = fit_rate_constants_batch(T, k, sigma_ln_k, group, form="modified")
    T = np.asarray(T, dtype=float)
    index = two.group_index
    m = len(two)
    n_points = two.n_points
    # distinct temperatures per group, exactly (compare_forms counts them with np.unique)
    pairs = np.unique(np.stack([index.astype(float), T]), axis=1)
    n_distinct = np.bincount(pairs[0].astype(np.int64), minlength=m)
    if sigma_ln_k is None:
        weight_sum = n_points.astype(float)
    else:
        weights = np.broadcast_to(np.asarray(sigma_ln_k, dtype=float) ** -2.0, T.shape)
        weight_sum = np.bincount(index, weights=weights, minlength=m)
    dof = np.maximum(n_points - 3, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        f_statistic = np.where(
            three.chi_square == 0.0,
            np.inf,
            np.maximum(two.chi_square - three.chi_square, 0.0) / (three.chi_square / dof),
        )
        exact = np.sqrt(two.chi_square / weight_sum) < _EXACT_RMS
    enough = (n_points >= 4) & (n_distinct >= 3)
    tested = enough & three.ok & ~three.collinear & ~exact
    p_value = np.full(m, np.nan)
    p_value[tested] = f_tail(f_statistic[tested], 1, dof[tested])
    supported = tested & (p_value < significance)
    reason = np.empty(m, dtype=object)
    for i in range(m):
        if not two.ok[i]:
            reason[i] = str(two.status[i])
        elif not enough[i]:
            reason[i] = (
                "Testing the three-parameter form needs at least 4 points at 3 distinct "
                f"temperatures; the data have {int(n_points[i])} at {int(n_distinct[i])}."
            )
        elif three.collinear[i]:
            reason[i] = (
                f"n and Ea are nearly collinear over {two.T_min[i]:.4g}-{two.T_max[i]:.4g} K "
                f"(|corr| = {abs(three.correlation_n_ea[i]):.4f}); fit two parameters."
            )
        elif exact[i]:
            reason[i] = "The two-parameter form already describes the data to rounding error."
        elif supported[i]:
            reason[i] = (
                f"Fitting n lowers chi-square significantly (F = {f_statistic[i]:.3g}, "
                f"p = {p_value[i]:.2g} < {significance:g})."
            )
        else:
            reason[i] = (
                f"Fitting n does not lower chi-square significantly (F = {f_statistic[i]:.3g}, "
                f"p = {p_value[i]:.2g} >= {significance:g}); the two-parameter form suffices."
            )
    return BatchFormChoice(two, three, supported, reason.astype(str), p_value)


@dataclass(frozen=True, eq=False)
class GroupFits:
    """The chosen fit of each group of points (one row per sorted group label).

    Groups whose every point states sigma(ln k) are fitted with those weights
    (absolute covariance); the others with unit weights, the covariance then
    scaled by the reduced chi-square. Rows that could not be fitted have
    ``ok`` False and their reason in ``status``.

    Attributes
    ----------
    groups : numpy.ndarray, shape (m,)
    ok : numpy.ndarray of bool
    status : numpy.ndarray of str
        ``"ok"`` or why the group was not fitted.
    form : numpy.ndarray of str
        The form kept for the group.
    reason : numpy.ndarray of str
        Why that form was kept.
    weighted : numpy.ndarray of bool
    A, n, Ea, T_ref, reduced_chi_square, T_min, T_max, mean_T : numpy.ndarray
        As in :class:`BatchFit`; ``mean_T`` is the geometric-mean temperature
        of the group's points [K].
    n_points : numpy.ndarray of int
    covariance : numpy.ndarray, shape (m, 3, 3)
    warnings : numpy.ndarray of tuple
        The :class:`FitWarning` objects of each group.
    n_sets : numpy.ndarray of int
        Measurement sets pooled in the group (1 when no sets were given).
    between_set_variance : numpy.ndarray
        tau^2 of ln k between the group's sets (DerSimonian-Laird; 0 for one
        set or an unweighted group), added as random set offsets before the fit.
    covariance_scale : numpy.ndarray
        The factor the covariance was scaled by: max(1, reduced chi-square)
        for a weighted group, and the reduced chi-square itself for an
        unweighted one (the usual estimate of the unknown variance).
    """

    groups: np.ndarray
    ok: np.ndarray
    status: np.ndarray
    form: np.ndarray
    reason: np.ndarray
    weighted: np.ndarray
    A: np.ndarray
    n: np.ndarray
    Ea: np.ndarray
    T_ref: np.ndarray
    covariance: np.ndarray
    reduced_chi_square: np.ndarray
    n_points: np.ndarray
    T_min: np.ndarray
    T_max: np.ndarray
    mean_T: np.ndarray
    warnings: np.ndarray
    n_sets: np.ndarray
    between_set_variance: np.ndarray
    covariance_scale: np.ndarray

    def __len__(self) -> int:
        return int(self.groups.size)


_GROUP_COLUMNS = ("A", "n", "Ea", "T_ref", "reduced_chi_square", "T_min", "T_max")


def _chosen_batches(T, k, sigma, group, form, fixed_n, significance):
    """(two, three, keep_three, reasons) for one weighting of the groups."""
    if fixed_n is not None:
        fits = fit_rate_constants_batch(T, k, sigma, group, form="fixed-n", fixed_n=fixed_n)
        reason = f"n fixed at {fixed_n:g} by the user"
        return fits, fits, np.zeros(len(fits), bool), np.full(len(fits), reason, object)
    if form == "auto":
        choice = compare_forms_batch(T, k, sigma, group, significance=significance)
        return choice.two, choice.three, choice.supported, choice.reason
    fits = fit_rate_constants_batch(T, k, sigma, group, form=form)
    reason = f"the {form} form was asked for"
    return fits, fits, np.zeros(len(fits), bool), np.full(len(fits), reason, object)


#: Tail probability beyond which a weighted fit's chi-square is reported as improbable.
SCATTER_SIGNIFICANCE = 1e-3


def _add_scatter_warnings(out: dict, weighted: np.ndarray, tau2: np.ndarray) -> None:
    """Warn where a weighted fit's chi-square says the stated uncertainties are not the scatter.

    Under the stated uncertainties chi^2 = dof * reduced chi-square follows the
    chi-square distribution with dof degrees of freedom; a tail probability
    below :data:`SCATTER_SIGNIFICANCE` on either side is reported (common
    practice; Bevington & Robinson 2003, ch. 11).
    """
    rows = np.flatnonzero(weighted & out["ok"])
    chi = out["reduced_chi_square"][rows]
    dof = out["n_points"][rows] - np.where(out["form"][rows] == "modified", 3, 2)
    usable = np.isfinite(chi) & (dof > 0)
    rows, chi, dof = rows[usable], chi[usable], dof[usable]
    above = chi_square_tail(chi * dof, dof) < SCATTER_SIGNIFICANCE
    # (with set offsets added the scatter is small by construction)
    below = ~above & (tau2[rows] == 0) & (chi_square_cdf(chi * dof, dof) < SCATTER_SIGNIFICANCE)
    for row, value, high in zip(
        rows[above | below].tolist(),
        chi[above | below].tolist(),
        above[above | below].tolist(),
        strict=True,
    ):
        if high:
            warning = FitWarning(
                "scatter-above-stated",
                f"the points scatter more than their stated uncertainties allow (reduced "
                f"chi-square {value:.3g}): inconsistent sets or a wrong form; the covariance is "
                "scaled by it",
            )
        else:
            warning = FitWarning(
                "scatter-below-stated",
                f"the points scatter less than their stated uncertainties suggest (reduced "
                f"chi-square {value:.3g}): the uncertainties may be overstated",
            )
        out["warnings"][row] = (*out["warnings"][row], warning)


def _add_disagreement_warnings(out: dict, p_value: np.ndarray, tau2: np.ndarray) -> None:
    """Warn where pooled sets disagree beyond their stated uncertainties (Cochran's Q test)."""
    for row in np.flatnonzero(out["ok"] & (p_value < SCATTER_SIGNIFICANCE)).tolist():
        warning = FitWarning(
            "sets-disagree",
            f"the pooled sets disagree beyond their stated uncertainties (between-set "
            f"factor {np.exp(np.sqrt(tau2[row])):.3g}); the fit's uncertainty includes it",
        )
        out["warnings"][row] = (*out["warnings"][row], warning)


def _free(form: str | None) -> int:
    """Free parameters of a fitted form."""
    return 3 if form == "modified" else 2


def _set_counts(inverse: np.ndarray, sets: np.ndarray, m: int) -> np.ndarray:
    """How many distinct sets each group's points come from."""
    codes = np.unique(sets, return_inverse=True)[1].ravel().astype(np.int64)
    # one integer per (group, set) pair: a flat unique is much faster than unique rows
    pairs = np.unique(inverse.astype(np.int64) * (int(codes.max()) + 1) + codes)
    return np.bincount(pairs // (int(codes.max()) + 1), minlength=m)


def _with_set_offsets(T, k, sigma, inverse, sets, pooled, form, fixed_n, systematic, weighted):
    """sigma(ln k) widened by each set's own systematic variance and then by each pooled
    group's between-set variance; tau^2 and the heterogeneity p-value (Cochran's Q against
    chi-square with sets - 1 degrees of freedom) per group."""
    tau2 = np.zeros(pooled.size)
    p_value = np.full(pooled.size, np.nan)
    widened = sigma.copy()
    own = weighted[inverse] & np.isfinite(systematic) & (systematic > 0)
    if own.any():
        # a set's scale uncertainty s is a known offset variance s^2 of ln k (first order)
        widened[own] = uncertainty.random_effects_sigma_ln_k(
            sigma[own], sets[own], systematic[own] ** 2
        )
        sigma = widened.copy()
    for row in np.flatnonzero(pooled).tolist():
        mask = inverse == row
        fit_form = (
            "fixed-n" if fixed_n is not None else "modified" if form == "modified" else "arrhenius"
        )
        try:
            result = uncertainty.between_set_variance(
                T[mask], np.log(k[mask]), sigma[mask], sets[mask], form=fit_form, fixed_n=fixed_n
            )
        except (FitError, ScienceInputError):
            continue  # the group's own fit reports why it cannot be fitted
        tau2[row] = result.tau_squared
        p_value[row] = chi_square_tail(result.q_statistic, result.sets.size - 1)
        widened[mask] = uncertainty.random_effects_sigma_ln_k(
            sigma[mask], sets[mask], result.tau_squared
        )
    return widened, tau2, p_value


def _copy_chosen(out: dict, rows: np.ndarray, two, three, keep_three, reasons) -> None:
    """Put each group's kept fit (``three`` where ``keep_three``, else ``two``) in its row."""
    keep = np.asarray(keep_three, dtype=bool)
    for name in _GROUP_COLUMNS:
        out[name][rows] = np.where(keep, getattr(three, name), getattr(two, name))
    out["covariance"][rows] = np.where(keep[:, None, None], three.covariance, two.covariance)
    ok = np.where(keep, three.ok, two.ok)
    out["ok"][rows] = ok
    out["status"][rows] = [str(s) for s in np.where(keep, three.status, two.status).tolist()]
    out["form"][rows] = np.where(keep, three.form, two.form).astype(object)
    out["reason"][rows] = [str(r) for r in reasons]
    warnings = out["warnings"]
    columns = zip(rows.tolist(), keep.tolist(), ok.tolist(), strict=True)
    for i, (row, kept, fitted) in enumerate(columns):
        warnings[row] = (three if kept else two).fit_warnings(i) if fitted else ()


def fit_groups(
    T,
    k,
    sigma_ln_k,
    group,
    *,
    sets=None,
    systematic=None,
    form: str = "auto",
    fixed_n: float | None = None,
    significance: float = 0.05,
) -> GroupFits:
    """Fit every group of points (a reaction's pooled sets) and keep the form each supports.

    ``form`` is ``"arrhenius"`` (n = 0), ``"modified"`` (A, n, Ea) or
    ``"auto"`` (the three-parameter form only where :func:`compare_forms_batch`
    justifies it); ``fixed_n`` fits A and Ea with n held. ``sigma_ln_k`` may
    hold NaN: a group with any such point is fitted unweighted, its
    covariance scaled by the reduced chi-square.

    Uncertainties that admit disagreement (DESIGN section 13):

    - where a weighted group pools several measurement sets (``sets``), the
      between-set variance tau^2 of ln k (DerSimonian & Laird 1986) enters as
      a random offset of each set (:func:`ratebank.science.uncertainty.
      random_effects_sigma_ln_k`), so that f reflects how far the sets
      disagree and does not shrink as points are added;
    - a weighted group's covariance is then scaled by max(1, reduced
      chi-square) (:func:`ratebank.science.uncertainty.scale_covariance_by_chi_square`).

    Parameters
    ----------
    T : array_like, shape (N,)
        Temperatures [K].
    k : array_like, shape (N,)
        Rate constants [k-unit]; positive.
    sigma_ln_k : array_like, shape (N,)
        sigma of ln k per point [-], NaN where not stated.
    group : array_like, shape (N,)
        Group label of each point.
    sets : array_like, shape (N,), optional
        Measurement-set label of each point.
    systematic : array_like, shape (N,), optional
        The systematic (scale) uncertainty of each point's set, as a fraction
        of k [-] (NaN for none): a known offset variance of the set's ln k.

    Returns
    -------
    GroupFits

    Raises
    ------
    FitError
        For an unknown form or a non-finite ``fixed_n``.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003),
    chs. 6-7 and 11; DerSimonian & Laird, *Control. Clin. Trials* 1986, 7, 177,
    doi:10.1016/0197-2456(86)90046-2.

    Examples
    --------
    >>> import numpy as np
    >>> T = np.array([300.0, 400.0, 500.0, 300.0, 600.0])
    >>> k = 2.0e8 * np.exp(-1000.0 / T)
    >>> fits = fit_groups(T, k, np.full(5, np.nan), np.array([1, 1, 1, 2, 2]), form="arrhenius")
    >>> [f"{a:.3e}" for a in fits.A], fits.form.tolist()
    (['2.000e+08', '2.000e+08'], ['arrhenius', 'arrhenius'])
    """
    if form not in ("arrhenius", "modified", "auto"):
        raise FitError(
            f"unknown form {form!r}; expected arrhenius, modified or auto", argument="form"
        )
    if fixed_n is not None and not np.isfinite(fixed_n):
        raise FitError("a fixed n must be a finite number", argument="fixed_n")
    T, k = np.asarray(T, float), np.asarray(k, float)
    sigma, group = np.asarray(sigma_ln_k, float), np.asarray(group)
    labels, inverse = np.unique(group, return_inverse=True)
    inverse = inverse.ravel()
    m = labels.size
    sets = np.zeros(T.size, dtype=np.int64) if sets is None else np.asarray(sets)
    n_sets = _set_counts(inverse, sets, m) if T.size else np.zeros(m, dtype=np.int64)
    weighted_group = np.bincount(inverse, weights=np.isnan(sigma), minlength=m) == 0
    systematic = (
        np.full(T.size, np.nan) if systematic is None else np.asarray(systematic, dtype=float)
    )
    sigma, tau2, heterogeneity = _with_set_offsets(
        T, k, sigma, inverse, sets, weighted_group & (n_sets > 1), form, fixed_n,
        systematic, weighted_group,
    )  # fmt: skip
    out = {name: np.full(m, np.nan) for name in _GROUP_COLUMNS}
    out["covariance"] = np.full((m, 3, 3), np.nan)
    out.update(
        ok=np.zeros(m, bool),
        status=np.full(m, "no points", object),
        form=np.full(m, None, object),
        reason=np.full(m, "", object),
        n_points=np.bincount(inverse, minlength=m),
        warnings=np.empty(m, object),
        mean_T=np.exp(np.bincount(inverse, weights=np.log(T), minlength=m) / np.bincount(inverse)),
    )
    for weighted in (True, False):
        mask = weighted_group[inverse] == weighted
        if not mask.any():
            continue
        two, three, keep_three, reasons = _chosen_batches(
            T[mask], k[mask], sigma[mask] if weighted else None, group[mask],
            form, fixed_n, significance,
        )  # fmt: skip
        _copy_chosen(out, np.searchsorted(labels, two.groups), two, three, keep_three, reasons)
    _add_scatter_warnings(out, weighted_group, tau2)
    _add_disagreement_warnings(out, heterogeneity, tau2)
    scale = np.where(weighted_group, 1.0, out["reduced_chi_square"])
    if weighted_group.any():
        scaled = uncertainty.scale_covariance_by_chi_square(
            out["covariance"][weighted_group], out["reduced_chi_square"][weighted_group]
        )
        out["covariance"][weighted_group] = scaled.covariance
        scale[weighted_group] = scaled.scale
    return GroupFits(
        groups=labels,
        weighted=weighted_group,
        n_sets=n_sets,
        between_set_variance=tau2,
        covariance_scale=scale,
        **out,
    )
