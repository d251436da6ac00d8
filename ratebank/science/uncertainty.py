"""Uncertainty of rate expressions: the panels' f(T), fit covariances, pooled sets.

Conventions (SI; T in K, Ea in J mol^-1):

- An uncertainty is one standard deviation of ln k, ``sigma_ln_k`` [-]; its
  uncertainty factor is f = exp(sigma_ln_k), so that k f and k / f bound the
  one-sigma band.
- The evaluation panels' temperature-dependent factor is

      f(T) = f(298) exp|g (1/T - 1/298)|,   ln f(T) = ln f(298) + |g (1/T - 1/298)|,

  with f(298) >= 1 [-] and g >= 0 [K] (the reference is 298 K exactly, as the
  panels print it). The IUPAC form writes the same band in decadic logarithms,
  Delta log10 k(T) = Delta log10 k(298) + log10(e) |Delta(E/R) (1/T - 1/298)|,
  so f(298) = 10^(Delta log10 k(298)) and g = Delta(E/R).
- A fit's covariance C of (ln A [-], n [-], Ea [J mol^-1]) gives
  sigma_ln_k(T)^2 = d(T)' C d(T), d(T) = (1, ln T, -1/(R T)); this module holds
  the one function that computes it (:func:`sigma_ln_k_from_covariance`).
- Fits to points with stated sigmas scale their covariance by
  max(1, reduced chi-square) (:func:`scale_covariance_by_chi_square`).
- Measurement sets that disagree beyond their stated sigmas are pooled with a
  between-set variance tau^2 of ln k (DerSimonian-Laird), see
  :func:`between_set_variance` and :func:`random_effects_sigma_ln_k`.

How ratebank applies the between-set variance: each set s is taken to carry a
random offset of ln k, the same at every temperature (so the common reference
temperature drops out of a pure offset), with variance tau^2. The offsets are
estimated as each set's weighted mean residual from the pooled fit, with
within-set variance v_s = 1 / sum_i(1/sigma_i^2); tau^2 follows from them by
the method of moments. The pooled fit is then repeated with every point's
variance raised to sigma_i^2 (1 + tau^2 / v_s), which gives every set's mean
exactly the random-effects variance v_s + tau^2 while keeping the relative
weights inside each set. Adding tau^2 to each point's variance alone would be
right only for sets of one point: a set of N points would then count as N
independent draws of its offset, and the pooled uncertainty would shrink as
sets grow although their disagreement does not.

References
----------
1. Burkholder, J. B. et al. *Chemical Kinetics and Photochemical Data for Use
   in Atmospheric Studies, Evaluation No. 19*; JPL Publication 19-5; Jet
   Propulsion Laboratory: Pasadena, 2019; section 1, uncertainty estimates
   (from memory).
2. Atkinson, R. et al. Evaluated kinetic and photochemical data for
   atmospheric chemistry: Volume I. *Atmos. Chem. Phys.* 2004, 4, 1461-1738;
   introduction, assignment of uncertainties (from memory).
   doi:10.5194/acp-4-1461-2004
3. Bevington, P. R.; Robinson, D. K. *Data Reduction and Error Analysis for
   the Physical Sciences*, 3rd ed.; McGraw-Hill, 2003; chs. 6-8.
4. DerSimonian, R.; Laird, N. Meta-analysis in clinical trials. *Control.
   Clin. Trials* 1986, 7, 177-188. doi:10.1016/0197-2456(86)90046-2
5. Laidler, K. J. *Pure Appl. Chem.* 1996, 68, 149-192 (local Arrhenius
   parameters). doi:10.1351/pac199668010149
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ratebank.errors import ScienceInputError
from ratebank.science import arrhenius
from ratebank.science.constants import GAS_CONSTANT

__all__ = [
    "PANEL_REFERENCE_TEMPERATURE",
    "BetweenSetVariance",
    "ChiSquareScaling",
    "LinearizedArrhenius",
    "PanelFactor",
    "RandomEffects",
    "between_set_variance",
    "covering_panel_factor",
    "dersimonian_laird",
    "linearize_modified_arrhenius",
    "linearized_panel_factor",
    "log10_form_from_panel_factor",
    "panel_factor_from_covariance",
    "panel_factor_from_log10_form",
    "panel_uncertainty_factor",
    "random_effects_sigma_ln_k",
    "scale_covariance_by_chi_square",
    "sigma_ln_k_from_covariance",
]

#: Reference temperature of the panels' uncertainty factor [K] (298 K exactly, as printed).
PANEL_REFERENCE_TEMPERATURE: float = 298.0

# Pairs of grid points are formed at once when covering a band; this many pair values
# per chunk (2 MB an array) stays in the processor's cache, which is faster than one big
# batch, and keeps the memory of a large batch flat.
_PAIR_CHUNK = 250_000


class PanelFactor(NamedTuple):
    """An uncertainty band in the panels' form f(T) = f(298) exp|g (1/T - 1/298)|."""

    #: Uncertainty factor at 298 K [-], >= 1.
    f298: np.ndarray | float
    #: Temperature coefficient g [K], >= 0.
    g: np.ndarray | float


class ChiSquareScaling(NamedTuple):
    """A covariance scaled by max(1, reduced chi-square), and the scale used."""

    #: The scaled covariance (same shape as given).
    covariance: np.ndarray
    #: The factor the covariance was multiplied by [-], >= 1.
    scale: np.ndarray | float


class RandomEffects(NamedTuple):
    """DerSimonian-Laird random-effects combination of set-level estimates."""

    #: Between-set variance tau^2 [unit of the estimates, squared], >= 0.
    tau_squared: np.ndarray | float
    #: Random-effects pooled estimate sum(w* y) / sum(w*), w* = 1/(v + tau^2).
    mean: np.ndarray | float
    #: Variance of the pooled estimate, 1 / sum(w*).
    variance: np.ndarray | float
    #: Cochran's Q = sum(w (y - y_w)^2) with w = 1/v.
    q_statistic: np.ndarray | float
    #: Number of sets K (Q has K - 1 degrees of freedom).
    n_sets: int


class BetweenSetVariance(NamedTuple):
    """Between-set variance of ln k from a pooled fit, with the per-set offsets."""

    #: Between-set variance tau^2 of ln k [-].
    tau_squared: float
    #: Set labels, sorted.
    sets: np.ndarray
    #: Each set's weighted mean residual from the pooled fit [-].
    offsets: np.ndarray
    #: Within-set variance of each offset, 1 / sum(1/sigma^2) [-].
    offset_variances: np.ndarray
    #: Cochran's Q of the offsets [-].
    q_statistic: float


class LinearizedArrhenius(NamedTuple):
    """Two-parameter Arrhenius form tangent to a modified-Arrhenius row at T_lin."""

    #: Local pre-exponential factor A T_lin^n e^n [k-unit].
    A: np.ndarray | float
    #: Local activation energy Ea + n R T_lin [J mol^-1].
    Ea: np.ndarray | float
    #: Temperature of tangency [K].
    T_lin: np.ndarray | float
    #: Largest |ln(k_lin / k_mod)| over the row's range [-].
    max_ln_deviation: np.ndarray | float


def _temperature(name: str, value) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array) & (array > 0)):
        raise ScienceInputError(f"{name} must be positive and finite [K].")
    return array


def _factor(name: str, value) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array) & (array >= 1.0)):
        raise ScienceInputError(f"{name} must be a finite uncertainty factor of at least 1 [-].")
    return array


def _non_negative(name: str, value, unit: str) -> np.ndarray:
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array) & (array >= 0.0)):
        raise ScienceInputError(f"{name} must be finite and not negative [{unit}].")
    return array


def _scalar_or_array(array: np.ndarray):
    return float(array) if np.ndim(array) == 0 else array


def panel_uncertainty_factor(T, f298, g):
    """Uncertainty factor of the evaluation panels at temperature T.

    f(T) = f(298) exp|g (1/T - 1/298)|

    ln f(T) is one standard deviation of ln k (ratebank's reading of the
    band; JPL 19-5 describes its f(298) as approximately one standard
    deviation, from memory).

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    f298 : array_like
        Uncertainty factor at 298 K [-]; at least 1.
    g : array_like
        Temperature coefficient [K]; not negative.

    Returns
    -------
    numpy.ndarray or float
        f(T) [-], broadcast over the arguments.

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, f298 is below 1, or g is negative or
        not finite.

    References
    ----------
    Burkholder et al., JPL Publication 19-5 (2019), section 1 (from memory).

    Examples
    --------
    JPL 19-5 gives f(298) = 1.1 and g = 100 K for OH + CH4 (from memory):

    >>> f"{panel_uncertainty_factor(200.0, 1.1, 100.0):.4f}"
    '1.2966'
    """
    T = _temperature("T", T)
    f298 = _factor("f298", f298)
    g = _non_negative("g", g, "K")
    return f298 * np.exp(np.abs(g * (1.0 / T - 1.0 / PANEL_REFERENCE_TEMPERATURE)))


def panel_factor_from_log10_form(delta_log10_k298, delta_e_over_r) -> PanelFactor:
    """(f(298), g) from the decadic form Delta log10 k(298), Delta(E/R).

    The IUPAC evaluations write the band as
    Delta log10 k(T) = Delta log10 k(298) + log10(e) |Delta(E/R) (1/T - 1/298)|
    (log10(e) = 1/ln 10 = 0.4343); taking 10^ of both sides gives
    f(T) = 10^(Delta log10 k(298)) exp|Delta(E/R) (1/T - 1/298)|, hence

    f(298) = 10^(Delta log10 k(298)),  g = Delta(E/R).

    Parameters
    ----------
    delta_log10_k298 : array_like
        Delta log10 k at 298 K [-]; not negative.
    delta_e_over_r : array_like
        Delta(E/R) [K]; not negative.

    Returns
    -------
    PanelFactor
        (f298 [-], g [K]).

    Raises
    ------
    ScienceInputError
        If an argument is negative or not finite.

    References
    ----------
    Atkinson et al., *Atmos. Chem. Phys.* 2004, 4, 1461, introduction (from
    memory). doi:10.5194/acp-4-1461-2004

    Examples
    --------
    >>> f298, g = panel_factor_from_log10_form(0.08, 200.0)
    >>> f"{f298:.4f} {g:.0f}"
    '1.2023 200'
    """
    delta_log10 = _non_negative("delta_log10_k298", delta_log10_k298, "-")
    delta_e_over_r = _non_negative("delta_e_over_r", delta_e_over_r, "K")
    return PanelFactor(_scalar_or_array(10.0**delta_log10), _scalar_or_array(delta_e_over_r * 1.0))


def log10_form_from_panel_factor(f298, g) -> tuple:
    """(Delta log10 k(298), Delta(E/R)) from (f(298), g); inverse of the above.

    Delta log10 k(298) = log10 f(298) = ln f(298) / ln 10,  Delta(E/R) = g.

    Parameters
    ----------
    f298 : array_like
        Uncertainty factor at 298 K [-]; at least 1.
    g : array_like
        Temperature coefficient [K]; not negative.

    Returns
    -------
    tuple of (numpy.ndarray or float, numpy.ndarray or float)
        (Delta log10 k(298) [-], Delta(E/R) [K]).

    Raises
    ------
    ScienceInputError
        If f298 is below 1 or g is negative, or either is not finite.

    References
    ----------
    Atkinson et al., *Atmos. Chem. Phys.* 2004, 4, 1461, introduction (from
    memory). doi:10.5194/acp-4-1461-2004

    Examples
    --------
    >>> delta_log10, delta_e_over_r = log10_form_from_panel_factor(1.1, 100.0)
    >>> f"{delta_log10:.5f} {delta_e_over_r:.0f}"
    '0.04139 100'
    """
    f298 = _factor("f298", f298)
    g = _non_negative("g", g, "K")
    return _scalar_or_array(np.log10(f298)), _scalar_or_array(g * 1.0)


def _cover_rows(u: np.ndarray, s: np.ndarray, a_floor: np.ndarray):
    """Least-mean (a, g) with a + g u >= s, a >= a_floor, g >= 0, row by row.

    Minimizing a + g m (m = mean u) is the smallest t with all lines
    l_k(g) = s_k + g (m - u_k) <= t for some g >= 0 (the floor is the point
    u = 0, s = a_floor). By Helly's theorem on the line this t is the largest
    over pairs of lines of the pair's own minimax value, which is closed form.

    Only a falling line (u > m) and a level or rising one (u <= m) make a pair
    worth a look. With the points of each row sorted by u the falling ones are
    a tail, so rows are taken together by the length of that tail and each
    pair is formed once: at most a quarter of all pairs. For a level or rising
    line q the pair value s_q + max(c, 0) (m - u_q) grows with the crossing c
    (it falls with c only for a line within rounding of level), so only the
    largest (or smallest) crossing of q with a falling line is needed; rounded
    arithmetic is monotone, so the result is the same float as the largest pair
    value.
    """
    rows, width = u.shape
    m = u.mean(axis=1)
    U = np.concatenate([u, np.zeros((rows, 1))], axis=1)
    S = np.concatenate([s, a_floor[:, np.newaxis]], axis=1)
    # A line falls with g when u > m; points within rounding of m are level.
    tol = 1e-12 * np.maximum(U.max(axis=1), np.finfo(float).tiny)
    falling = U > (m + tol)[:, np.newaxis]
    single = np.where(falling, -np.inf, S).max(axis=1)
    order = np.argsort(U, axis=1, kind="stable")
    U_sorted = np.take_along_axis(U, order, axis=1)
    S_sorted = np.take_along_axis(S, order, axis=1)
    level = width + 1 - falling.sum(axis=1)  # lines with u <= m: the head of each sorted row
    t = single.copy()
    for k in np.unique(level[(level > 0) & (level <= width)]).tolist():
        group = np.flatnonzero(level == k)
        Uq, Sq = U_sorted[group, :k], S_sorted[group, :k]
        Up, Sp = U_sorted[group, k:], S_sorted[group, k:]
        # the crossings in two buffers, without further temporaries
        crossing = np.subtract(Sp[:, np.newaxis, :], Sq[:, :, np.newaxis])
        run = np.subtract(Up[:, np.newaxis, :], Uq[:, :, np.newaxis])
        with np.errstate(divide="ignore", invalid="ignore"):
            np.divide(crossing, run, out=crossing)
        gap = m[group, np.newaxis] - Uq
        rising = gap >= 0
        chosen = crossing.max(axis=2)
        if not rising.all():  # a line within rounding of level, on the falling side of m
            chosen = np.where(rising, chosen, crossing.min(axis=2))
        value = Sq + np.maximum(chosen, 0.0) * gap
        t[group] = np.maximum(t[group], value.max(axis=1))
    with np.errstate(divide="ignore", invalid="ignore"):
        lower = np.where(falling, (S - t[:, None]) / (U - m[:, None]), -np.inf)
    g = np.maximum(lower.max(axis=1), 0.0)
    # The level that covers every point for this g (equal to t - g m up to rounding).
    a = np.maximum(a_floor, (s - g[:, None] * u).max(axis=1))
    return a, g


def covering_panel_factor(T, sigma_ln_k, *, floor=1.0) -> PanelFactor:
    """The panels' (f(298), g) whose band covers a given sigma_ln_k(T).

    Finds f(298) >= max(1, floor) and g >= 0 with

        ln f(298) + g |1/T_j - 1/298| >= sigma_ln_k(T_j)   at every grid point T_j,

    minimizing the mean of ln f(T_j) over the grid. This is a linear program
    in (ln f(298), g), solved in closed form: with u_j = |1/T_j - 1/298| and
    m their mean, the optimum is the smallest t such that every line
    sigma_j + g (m - u_j) (and ln floor + g m) stays below t for one g >= 0;
    by Helly's theorem on the line, t is the largest of the pairwise optima.
    Among equally good solutions the smallest g is returned.

    The grid sets the weighting of the mean; a grid evenly spaced in 1/T
    weighs the range as an Arrhenius plot does. The band is covered at the
    grid points; between them it is covered too when sigma_ln_k is convex in
    1/T on each side of 298 K and 298 K is a grid point, as for two-parameter
    fits (:func:`panel_factor_from_covariance` builds such a grid).

    Parameters
    ----------
    T : array_like, shape (..., n)
        Temperature grid [K]; positive. The last axis is the grid.
    sigma_ln_k : array_like, shape (..., n)
        Standard deviation of ln k on the grid [-]; not negative. NaN marks
        a band that is not known (a failed fit): its row gives NaN.
    floor : array_like, optional
        Smallest f(298) allowed [-], at least 1; broadcast over the rows.

    Returns
    -------
    PanelFactor
        (f298 [-], g [K]), each of the broadcast shape without the last axis
        (floats for a single band).

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, a sigma is negative or infinite, the
        grid is empty, the floor is below 1, or the shapes do not broadcast.

    References
    ----------
    Burkholder et al., JPL Publication 19-5 (2019), section 1 (the form,
    from memory). Helly's theorem on convex sets (any standard text on discrete
    geometry, chapter 1; from memory).

    Examples
    --------
    A band that is itself of the panels' form is returned unchanged:

    >>> import numpy as np
    >>> T = np.linspace(200.0, 400.0, 21)
    >>> f298, g = covering_panel_factor(T, np.log(1.2) + 150.0 * np.abs(1 / T - 1 / 298))
    >>> f"{f298:.6f} {g:.4f}"
    '1.200000 150.0000'
    """
    T = _temperature("T", T)
    sigma = np.asarray(sigma_ln_k, dtype=float)
    try:
        T, sigma = np.broadcast_arrays(T, sigma)
    except ValueError:
        raise ScienceInputError(
            f"T with shape {np.shape(T)} and sigma_ln_k with shape {np.shape(sigma)} do not "
            "broadcast; the last axis of both is the temperature grid."
        ) from None
    if T.ndim == 0 or T.shape[-1] == 0:
        raise ScienceInputError("covering_panel_factor needs a temperature grid of at least 1 T.")
    if np.any(np.isinf(sigma) | (sigma < 0)):
        raise ScienceInputError(
            "sigma_ln_k must be finite and not negative [-] (NaN marks unknown)."
        )
    batch = T.shape[:-1]
    a_floor = np.log(np.broadcast_to(_factor("floor", floor), batch)).reshape(-1)
    u = np.abs(1.0 / T - 1.0 / PANEL_REFERENCE_TEMPERATURE).reshape(-1, T.shape[-1])
    s = sigma.reshape(u.shape)
    known = ~np.isnan(s).any(axis=1)
    ln_f298 = np.full(u.shape[0], np.nan)
    g = np.full(u.shape[0], np.nan)
    rows = np.flatnonzero(known)
    # at most a quarter of the (n + 1)^2 pairs of a row are formed (see _cover_rows)
    chunk = max(1, 4 * _PAIR_CHUNK // (u.shape[1] + 1) ** 2)
    for start in range(0, rows.size, chunk):
        part = rows[start : start + chunk]
        ln_f298[part], g[part] = _cover_rows(u[part], s[part], a_floor[part])
    return PanelFactor(
        _scalar_or_array(np.exp(ln_f298).reshape(batch)), _scalar_or_array(g.reshape(batch))
    )


def sigma_ln_k_from_covariance(T, covariance):
    """Standard deviation of a fitted ln k at T, from the parameter covariance.

    sigma_ln_k(T)^2 = d(T)' C d(T),  d(T) = (1, ln T, -1/(R T)),

    the gradient of ln k = ln A + n ln T - Ea/(R T) with respect to
    (ln A, n, Ea). f(T) = exp(sigma_ln_k(T)) is the matching uncertainty
    factor. Variances below zero by rounding are set to zero; NaN in a
    covariance (a fit that failed) gives NaN.

    Shapes: ``covariance`` is (..., 3, 3) with batch shape B. T's leading
    axes broadcast against B and any further trailing axes of T are a grid
    for each covariance. So one covariance (3, 3) with T (M,) gives (M,);
    N covariances (N, 3, 3) with T (N,) give one value each, (N,); with
    T (N, M) a grid each, (N, M); with a common grid pass T[np.newaxis, :]
    of shape (1, M) to get (N, M).

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    covariance : array_like, shape (..., 3, 3)
        Covariance of (ln A [-], n [-], Ea [J mol^-1]); fixed parameters have
        zero rows and columns.

    Returns
    -------
    numpy.ndarray or float
        sigma_ln_k [-].

    Raises
    ------
    ScienceInputError
        If T is not positive and finite, the covariance is not (..., 3, 3) or
        holds infinities, or the shapes do not broadcast.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003),
    ch. 3 (propagation of errors).

    Examples
    --------
    >>> import numpy as np
    >>> covariance = np.diag([0.01, 0.0, 0.0])
    >>> sigma_ln_k_from_covariance(np.array([250.0, 300.0]), covariance).tolist()
    [0.1, 0.1]
    """
    T = _temperature("T", T)
    cov = np.asarray(covariance, dtype=float)
    if cov.ndim < 2 or cov.shape[-2:] != (3, 3):
        raise ScienceInputError(
            f"covariance must have shape (..., 3, 3) for (ln A, n, Ea); got {cov.shape}."
        )
    if np.any(np.isinf(cov)):
        raise ScienceInputError("covariance must be finite (NaN marks a failed fit).")
    extra = T.ndim - (cov.ndim - 2)
    if extra > 0:
        cov = cov.reshape(cov.shape[:-2] + (1,) * extra + (3, 3))
    # d' C d as its nine terms d_i C_ij d_j, summed from zero in the order (i, j) row by
    # row, each multiplied left to right: the order of the "...i,...ij,...j" contraction,
    # without the stacked gradient or the contraction's own loop
    gradient = (np.ones_like(T), np.log(T), -1.0 / (GAS_CONSTANT * T))
    try:
        variance = np.zeros(np.broadcast_shapes(T.shape, cov.shape[:-2]))
        for i in range(3):
            for j in range(3):
                variance += gradient[i] * cov[..., i, j] * gradient[j]
    except ValueError:
        raise ScienceInputError(
            f"T with shape {T.shape} does not broadcast against {cov.shape[:-2]} covariances; "
            "give one T per covariance, a grid per covariance, or a common grid of shape (1, M)."
        ) from None
    return _scalar_or_array(np.sqrt(np.maximum(variance, 0.0)))


def uncertainty_factor_from_covariance(T, covariance):
    """Uncertainty factor f(T) = exp(sigma_ln_k(T)) of a fitted expression, from its covariance.

    The one place f(T) is computed from a covariance; shapes as in
    :func:`sigma_ln_k_from_covariance`, whose value it exponentiates.

    Parameters
    ----------
    T : array_like
        Temperature [K]; positive.
    covariance : array_like, shape (..., 3, 3)
        Covariance of (ln A [-], n [-], Ea [J mol^-1]).

    Returns
    -------
    numpy.ndarray or float
        f(T) [-], at least 1 (NaN for a failed fit).

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003), ch. 3.

    Examples
    --------
    >>> import numpy as np
    >>> f"{uncertainty_factor_from_covariance(500.0, np.diag([0.01, 0.0, 0.0])):.6f}"
    '1.105171'
    """
    return _scalar_or_array(np.exp(sigma_ln_k_from_covariance(T, covariance)))


def panel_factor_from_covariance(
    covariance, T_min, T_max, *, floor=1.0, n_grid: int = 41
) -> PanelFactor:
    """The panels' (f(298), g) covering a fit's band over its own range.

    sigma_ln_k(T) comes from :func:`sigma_ln_k_from_covariance` on a grid of
    ``n_grid`` temperatures evenly spaced in 1/T over [T_min, T_max] (with
    the point nearest 298 K moved onto 298 K when the range contains it),
    and (f(298), g) from :func:`covering_panel_factor` on that grid.

    Parameters
    ----------
    covariance : array_like, shape (..., 3, 3)
        Covariance of (ln A [-], n [-], Ea [J mol^-1]); NaN rows give NaN.
    T_min, T_max : array_like
        The fit's temperature range [K]; positive, T_min <= T_max; broadcast
        over the covariances.
    floor : array_like, optional
        Smallest f(298) allowed [-], at least 1.
    n_grid : int, optional
        Number of grid points (default 41, at least 2).

    Returns
    -------
    PanelFactor
        (f298 [-], g [K]), one per covariance.

    Raises
    ------
    ScienceInputError
        As :func:`covering_panel_factor`, or if T_min > T_max or n_grid < 2.

    References
    ----------
    Burkholder et al., JPL Publication 19-5 (2019), section 1 (from memory).

    Examples
    --------
    A level band of 0.1 in ln k over 250-350 K needs f(298) = e^0.1 and no g:

    >>> import numpy as np
    >>> f298, g = panel_factor_from_covariance(np.diag([0.01, 0.0, 0.0]), 250.0, 350.0)
    >>> f"{f298:.6f} {g:.3f}"
    '1.105171 0.000'
    """
    if int(n_grid) != n_grid or n_grid < 2:
        raise ScienceInputError(f"n_grid must be an integer of at least 2; got {n_grid!r}.")
    cov = np.asarray(covariance, dtype=float)
    if cov.ndim < 2 or cov.shape[-2:] != (3, 3):
        raise ScienceInputError(
            f"covariance must have shape (..., 3, 3) for (ln A, n, Ea); got {cov.shape}."
        )
    low, high = np.broadcast_arrays(_temperature("T_min", T_min), _temperature("T_max", T_max))
    if np.any(low > high):
        raise ScienceInputError("T_min must not exceed T_max [K].")
    low, high = (
        np.broadcast_to(x, np.broadcast_shapes(x.shape, cov.shape[:-2])) for x in (low, high)
    )
    step = np.linspace(0.0, 1.0, int(n_grid))
    inverse = 1.0 / high[..., None] + step * (1.0 / low[..., None] - 1.0 / high[..., None])
    nearest = np.argmin(np.abs(inverse - 1.0 / PANEL_REFERENCE_TEMPERATURE), axis=-1)
    inside = (low <= PANEL_REFERENCE_TEMPERATURE) & (PANEL_REFERENCE_TEMPERATURE <= high)
    moved = np.take_along_axis(inverse, nearest[..., None], axis=-1)
    moved[inside] = 1.0 / PANEL_REFERENCE_TEMPERATURE
    np.put_along_axis(inverse, nearest[..., None], moved, axis=-1)
    T = 1.0 / inverse
    return covering_panel_factor(T, sigma_ln_k_from_covariance(T, cov), floor=floor)


def scale_covariance_by_chi_square(covariance, reduced_chi_square) -> ChiSquareScaling:
    """Scale a covariance by max(1, reduced chi-square).

    C_scaled = s C,  s = max(1, chi^2 / dof).

    A fit to points with stated sigmas has the covariance of those sigmas;
    when the points scatter more than the sigmas allow (chi^2/dof > 1) the
    sigmas were too small and the covariance is scaled up by the excess, as
    an unweighted fit would be. It is never scaled down: scatter below the
    stated sigmas does not make the measurements better than stated. A NaN
    reduced chi-square (no degrees of freedom) leaves the covariance as it is.
    For chi^2/dof > 1 the result equals ``scipy.optimize.curve_fit``'s
    covariance with ``absolute_sigma=False``.

    Parameters
    ----------
    covariance : array_like, shape (..., p, p)
        Covariance(s) from the stated sigmas.
    reduced_chi_square : array_like, shape (...)
        chi^2 / dof of each fit [-]; not negative, or NaN.

    Returns
    -------
    ChiSquareScaling
        (scaled covariance, shape (..., p, p); scale [-], shape (...)).

    Raises
    ------
    ScienceInputError
        If the covariance is not square in its last two axes, a reduced
        chi-square is negative or infinite, or the shapes do not broadcast.

    References
    ----------
    Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed. (2003),
    chs. 6-8; the scale factor max(1, sqrt(chi^2/dof)) on standard deviations
    is common practice in data evaluation.

    Examples
    --------
    >>> import numpy as np
    >>> scaled, scale = scale_covariance_by_chi_square(np.eye(2), [2.5, 0.4])
    >>> scale.tolist(), scaled[:, 0, 0].tolist()
    ([2.5, 1.0], [2.5, 1.0])
    """
    cov = np.asarray(covariance, dtype=float)
    if cov.ndim < 2 or cov.shape[-1] != cov.shape[-2]:
        raise ScienceInputError(f"covariance must be square in its last two axes; got {cov.shape}.")
    chi = np.asarray(reduced_chi_square, dtype=float)
    if np.any(np.isinf(chi) | (chi < 0)):
        raise ScienceInputError("reduced_chi_square must be finite and not negative (or NaN).")
    scale = np.where(np.isnan(chi), 1.0, np.maximum(chi, 1.0))
    try:
        scaled = cov * scale[..., None, None]
    except ValueError:
        raise ScienceInputError(
            f"{chi.shape} reduced chi-squares do not match {cov.shape[:-2]} covariances."
        ) from None
    return ChiSquareScaling(scaled, _scalar_or_array(scale))


def dersimonian_laird(effects, variances) -> RandomEffects:
    """DerSimonian-Laird random-effects combination (method of moments).

    With within-set weights w_i = 1/v_i and y_w = sum(w y)/sum(w):

        Q = sum(w_i (y_i - y_w)^2),
        tau^2 = max(0, (Q - (K - 1)) / (sum(w) - sum(w^2)/sum(w))),
        w*_i = 1/(v_i + tau^2),  mean = sum(w* y)/sum(w*),  variance = 1/sum(w*).

    Parameters
    ----------
    effects : array_like, shape (..., K)
        Set-level estimates y_i (any unit); the last axis runs over sets.
    variances : array_like, shape (..., K)
        Their within-set variances v_i (unit squared); positive.

    Returns
    -------
    RandomEffects
        (tau^2, pooled mean, its variance, Q, K); arrays of the leading shape.

    Raises
    ------
    ScienceInputError
        If there are fewer than 2 sets, an estimate is not finite, a variance
        is not positive and finite, or the shapes differ.

    References
    ----------
    DerSimonian & Laird, *Control. Clin. Trials* 1986, 7, 177.
    doi:10.1016/0197-2456(86)90046-2

    Examples
    --------
    >>> result = dersimonian_laird([0.0, 1.0], [0.01, 0.01])
    >>> f"{result.tau_squared:.3f} {result.mean:.3f} {result.variance:.4f}"
    '0.490 0.500 0.2500'
    """
    y = np.asarray(effects, dtype=float)
    v = np.asarray(variances, dtype=float)
    if y.shape != v.shape or y.ndim == 0:
        raise ScienceInputError("effects and variances must have the same shape, sets last.")
    if y.shape[-1] < 2:
        raise ScienceInputError(f"Random effects need at least 2 sets; got {y.shape[-1]}.")
    if not np.all(np.isfinite(y)):
        raise ScienceInputError("Every set-level estimate must be finite.")
    if not np.all(np.isfinite(v) & (v > 0)):
        raise ScienceInputError("Every within-set variance must be positive and finite.")
    w = 1.0 / v
    sum_w = w.sum(axis=-1)
    y_w = (w * y).sum(axis=-1) / sum_w
    q = (w * (y - y_w[..., None]) ** 2).sum(axis=-1)
    n_sets = y.shape[-1]
    tau2 = np.maximum(0.0, (q - (n_sets - 1)) / (sum_w - (w * w).sum(axis=-1) / sum_w))
    w_star = 1.0 / (v + tau2[..., None])
    mean = (w_star * y).sum(axis=-1) / w_star.sum(axis=-1)
    return RandomEffects(
        _scalar_or_array(tau2),
        _scalar_or_array(mean),
        _scalar_or_array(1.0 / w_star.sum(axis=-1)),
        _scalar_or_array(q),
        n_sets,
    )


def between_set_variance(
    T, ln_k, sigma_ln_k, set_index, *, form: str = "arrhenius", fixed_n=None
) -> BetweenSetVariance:
    """Between-set variance of ln k for pooled measurement sets.

    1. Fit the pooled points with :func:`ratebank.science.arrhenius.fit_rate_constants`
       (weights 1/sigma^2, the given form).
    2. For each set s, its offset y_s = sum_i w_i r_i / sum_i w_i (r the
       residuals of ln k) and the offset's within-set variance
       v_s = 1 / sum_i w_i, w_i = 1/sigma_i^2.
    3. tau^2 from :func:`dersimonian_laird` on (y_s, v_s).

    The offsets ignore the few degrees of freedom the pooled fit takes from
    the sets, which is a small effect when every set spans much of the
    pooled range. See the module notes for how tau^2 enters the pooled fit.

    Parameters
    ----------
    T : array_like, shape (N,)
        Temperatures [K].
    ln_k : array_like, shape (N,)
        ln k of each point (k in its SI unit) [-].
    sigma_ln_k : array_like, shape (N,) or scalar
        Stated standard deviation of each ln k [-]; positive.
    set_index : array_like, shape (N,)
        Label of the measurement set of each point.
    form : {"arrhenius", "modified", "fixed-n"}, optional
        The pooled form (default two-parameter).
    fixed_n : float, optional
        n for the ``"fixed-n"`` form.

    Returns
    -------
    BetweenSetVariance

    Raises
    ------
    ScienceInputError
        If the points come from fewer than 2 sets, or the lengths differ.
    FitError
        If the pooled points cannot be fitted (see ``fit_rate_constants``).

    References
    ----------
    DerSimonian & Laird, *Control. Clin. Trials* 1986, 7, 177.
    doi:10.1016/0197-2456(86)90046-2

    Examples
    --------
    Two synthetic sets a factor 2 apart, each stated at 5 %:

    >>> import numpy as np
    >>> T = np.tile(np.linspace(250.0, 350.0, 5), 2)
    >>> ln_k = 20.0 - 1500.0 / T + np.log(2.0) * np.repeat([0, 1], 5)
    >>> result = between_set_variance(T, ln_k, 0.05, np.repeat([0, 1], 5))
    >>> f"{result.tau_squared:.4f} {np.log(2) ** 2 / 2 - 0.05**2 / 5:.4f}"
    '0.2397 0.2397'
    """
    T = np.asarray(T, dtype=float)
    ln_k = np.asarray(ln_k, dtype=float)
    labels = np.asarray(set_index)
    if T.ndim != 1 or ln_k.shape != T.shape or labels.shape != T.shape:
        raise ScienceInputError("T, ln_k and set_index must be one-dimensional, one per point.")
    sigma = np.broadcast_to(np.asarray(sigma_ln_k, dtype=float), T.shape)
    sets, index = np.unique(labels, return_inverse=True)
    if sets.size < 2:
        raise ScienceInputError(f"A between-set variance needs at least 2 sets; got {sets.size}.")
    fit = arrhenius.fit_rate_constants(
        T, np.exp(ln_k), sigma, form=form, fixed_n=fixed_n, n_sets=sets.size
    )
    weight = sigma**-2.0
    sum_w = np.bincount(index.reshape(-1), weights=weight, minlength=sets.size)
    offsets = np.bincount(index.reshape(-1), weights=weight * fit.residuals) / sum_w
    combined = dersimonian_laird(offsets, 1.0 / sum_w)
    return BetweenSetVariance(
        float(combined.tau_squared), sets, offsets, 1.0 / sum_w, float(combined.q_statistic)
    )


def random_effects_sigma_ln_k(sigma_ln_k, set_index, tau_squared):
    """Per-point sigma of ln k that carries a between-set variance into a fit.

    sigma_i' = sigma_i sqrt(1 + tau^2 / v_s),  v_s = 1 / sum_{j in s} 1/sigma_j^2,

    so that each set's weighted mean has variance v_s + tau^2 (the
    random-effects variance of a set offset) and the relative weights inside
    a set are kept. For a set of one point this is sigma_i^2 + tau^2. Exact
    for the level of the pooled fit; conservative for its slope, whose
    within-set information an offset does not touch.

    Parameters
    ----------
    sigma_ln_k : array_like, shape (N,)
        Stated standard deviation of each ln k [-]; positive.
    set_index : array_like, shape (N,)
        Label of the measurement set of each point.
    tau_squared : float or array_like, shape (N,)
        Variance of each set's offset in ln k [-]; not negative. One value for
        every set (a between-set variance), or one per point, the same for
        the points of a set (a set's own systematic variance, say).

    Returns
    -------
    numpy.ndarray, shape (N,)
        sigma_ln_k' [-].

    Raises
    ------
    ScienceInputError
        If a sigma is not positive and finite, tau^2 is negative, or the
        lengths differ.

    References
    ----------
    DerSimonian & Laird, *Control. Clin. Trials* 1986, 7, 177 (random set
    offsets). doi:10.1016/0197-2456(86)90046-2

    Examples
    --------
    Five points of sigma 0.05 in one set and tau^2 = 0.0995: the set mean
    gets variance 0.0005 + 0.0995 = 0.1, so each point gets sigma sqrt(0.5):

    >>> import numpy as np
    >>> sigma = random_effects_sigma_ln_k(np.full(5, 0.05), np.zeros(5), 0.0995)
    >>> f"{sigma[0]:.6f} {np.sqrt(0.5):.6f}"
    '0.707107 0.707107'
    """
    sigma = np.asarray(sigma_ln_k, dtype=float)
    labels = np.asarray(set_index)
    if sigma.ndim != 1 or labels.shape != sigma.shape:
        raise ScienceInputError("sigma_ln_k and set_index must be one-dimensional, one per point.")
    if not np.all(np.isfinite(sigma) & (sigma > 0)):
        raise ScienceInputError("Every sigma_ln_k must be positive and finite [-].")
    tau2 = np.broadcast_to(_non_negative("tau_squared", tau_squared, "-"), sigma.shape)
    _, index = np.unique(labels, return_inverse=True)
    sum_w = np.bincount(index.reshape(-1), weights=sigma**-2.0)
    return sigma * np.sqrt(1.0 + tau2 * sum_w[index.reshape(-1)])


def linearize_modified_arrhenius(A, n, Ea, T_min, T_max, T_lin=None) -> LinearizedArrhenius:
    """Two-parameter Arrhenius form tangent to a modified-Arrhenius row.

    At T_lin the form A_loc exp(-Ea_loc/(R T)) with

        A_loc = A T_lin^n e^n,  Ea_loc = Ea + n R T_lin

    (:func:`~ratebank.science.arrhenius.local_pre_exponential`,
    :func:`~ratebank.science.arrhenius.local_activation_energy`) has the same
    k and the same slope d ln k / d(1/T) as the row. Away from T_lin,

        ln(k_lin / k_mod)(T) = -n h(T_lin / T),  h(x) = x - 1 - ln x >= 0,

    and h is convex with its minimum at x = 1, so the largest deviation over
    [T_min, T_max] is |n| max(h(T_lin/T_min), h(T_lin/T_max)), exactly. The
    tangent lies below the row for n > 0 and above it for n < 0.

    Parameters
    ----------
    A : array_like
        Pre-exponential factor of the row [k-unit K^-n]; positive.
    n : array_like
        Temperature exponent [-].
    Ea : array_like
        Activation energy of the row [J mol^-1].
    T_min, T_max : array_like
        The row's temperature range [K]; positive, T_min <= T_max.
    T_lin : array_like, optional
        Temperature of tangency [K], inside the range; default the geometric
        middle sqrt(T_min T_max).

    Returns
    -------
    LinearizedArrhenius
        (A_loc [k-unit], Ea_loc [J mol^-1], T_lin [K], largest |ln(k_lin/k_mod)| [-]).

    Raises
    ------
    ScienceInputError
        If T_lin lies outside [T_min, T_max], T_min > T_max, or an argument is
        not positive and finite (A, temperatures) or not finite (n, Ea).

    References
    ----------
    Laidler, *Pure Appl. Chem.* 1996, 68, 149 (local Arrhenius parameters).
    doi:10.1351/pac199668010149

    Examples
    --------
    Atkinson's OH + CH4 row (1.85e-20 T^2.82 exp(-987/T), from memory) at 298 K:

    >>> from ratebank.science.constants import GAS_CONSTANT
    >>> row = linearize_modified_arrhenius(1.85e-20, 2.82, 987.0 * GAS_CONSTANT, 195.0, 2025.0,
    ...                                    T_lin=298.0)
    >>> f"{row.A:.4e} {row.Ea / GAS_CONSTANT:.2f} {row.max_ln_deviation:.3f}"
    '2.9456e-12 1827.36 2.999'
    """
    low, high = _temperature("T_min", T_min), _temperature("T_max", T_max)
    if np.any(low > high):
        raise ScienceInputError("T_min must not exceed T_max [K].")
    if not np.all(np.isfinite(A) & (np.asarray(A, dtype=float) > 0)):
        raise ScienceInputError("A must be positive and finite [k-unit K^-n].")
    if T_lin is None:
        T_lin = np.sqrt(low * high)
    else:
        T_lin = _temperature("T_lin", T_lin)
        T_lin, low, high = np.broadcast_arrays(T_lin, low, high)
        outside = (T_lin < low * (1 - 1e-12)) | (T_lin > high * (1 + 1e-12))
        if np.any(outside):
            first = np.flatnonzero(outside)[0]
            raise ScienceInputError(
                "T_lin must lie inside the row's range T_min-T_max, where the row is valid; "
                f"got T_lin = {T_lin.flat[first]:.6g} K for a range of "
                f"{low.flat[first]:.6g}-{high.flat[first]:.6g} K."
            )
    A_loc = arrhenius.local_pre_exponential(T_lin, A, n)
    Ea_loc = arrhenius.local_activation_energy(T_lin, n, Ea)
    x_low, x_high = T_lin / low, T_lin / high
    worst = np.maximum(x_low - 1.0 - np.log(x_low), x_high - 1.0 - np.log(x_high))
    deviation = np.abs(np.asarray(n, dtype=float)) * worst
    return LinearizedArrhenius(
        *(_scalar_or_array(np.asarray(x)) for x in (A_loc, Ea_loc, T_lin, deviation))
    )


def linearized_panel_factor(f298, g, max_ln_deviation) -> PanelFactor:
    """Uncertainty band of a linearized row, including its deviation.

    ln f_lin(298) = ln f(298) + max |ln(k_lin / k_mod)|,  g_lin = g.

    The deviation of the tangent form is systematic and bounded, not random,
    so it is added to ln f linearly (not in quadrature); since
    |ln(k_lin/k_mod)(T)| never exceeds its maximum over the range, the new
    band contains the old band around k_mod at every T of the range.

    Parameters
    ----------
    f298 : array_like
        Uncertainty factor of the modified row at 298 K [-]; at least 1.
    g : array_like
        Its temperature coefficient [K]; not negative.
    max_ln_deviation : array_like
        Largest |ln(k_lin / k_mod)| over the range [-], from
        :func:`linearize_modified_arrhenius`; not negative.

    Returns
    -------
    PanelFactor
        (f298 [-], g [K]) of the linearized row.

    Raises
    ------
    ScienceInputError
        If f298 is below 1, or g or the deviation is negative or not finite.

    References
    ----------
    Common practice (a bounded systematic error added to the band).

    Examples
    --------
    >>> import math
    >>> f298, g = linearized_panel_factor(1.2, 100.0, math.log(1.05))
    >>> f"{f298:.4f} {g:.0f}"
    '1.2600 100'
    """
    f298 = _factor("f298", f298)
    g = _non_negative("g", g, "K")
    deviation = _non_negative("max_ln_deviation", max_ln_deviation, "-")
    f_new, g_new = np.broadcast_arrays(f298 * np.exp(deviation), g * 1.0)
    return PanelFactor(_scalar_or_array(f_new), _scalar_or_array(g_new))
