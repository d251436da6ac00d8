"""Tail probabilities of the chi-square and F distributions, vectorized, without scipy.

The fit's significance tests need three distribution functions: the two tails
of the chi-square distribution (scatter against the stated uncertainties,
Cochran's Q) and the upper tail of Fisher's F (whether the modified-Arrhenius
exponent n is supported). They are written out here, rather than taken from
:mod:`scipy.special`, because importing that module costs a command about
0.3 s at start-up; ``tests/science/test_distributions.py`` checks them against
scipy.special.

Both distributions reduce to regularized incomplete functions:

* chi-square with nu degrees of freedom: P(X <= x) = P(nu/2, x/2) and
  P(X > x) = Q(nu/2, x/2), the regularized lower and upper incomplete gamma
  functions (Abramowitz & Stegun 1964, 26.4.19 with 6.5.1-6.5.3);
* F with (d1, d2) degrees of freedom: P(F > f) = I_y(d2/2, d1/2) with
  y = d2 / (d2 + d1 f), the regularized incomplete beta function
  (Abramowitz & Stegun 1964, 26.6.2 with 6.6.2 and 26.5.1).

They are evaluated as in Press, Teukolsky, Vetterling & Flannery, *Numerical
Recipes*, 3rd ed. (2007), sections 6.2 and 6.4 (2nd ed. 1992: 6.2 and 6.4):
the gamma series (A&S 6.5.29) for x < a + 1 and Legendre's continued fraction
(A&S 6.5.31) otherwise, each continued fraction by the modified Lentz method
(NR 3rd ed. 5.2); the incomplete beta function by its continued fraction
(A&S 26.5.8) after the symmetry I_x(a, b) = 1 - I_{1-x}(b, a) (A&S 26.5.2)
where x > (a + 1)/(a + b + 2). Each function returns the series or fraction
of its own tail directly, so a small probability keeps its relative accuracy
(to about 1e-13 for up to a few thousand degrees of freedom); only a
probability near 1 is formed as 1 minus the other tail.

Domain, as scipy.special's chdtr/chdtrc/fdtrc: nan in, nan out; a negative
argument or a negative (or, for F, zero) number of degrees of freedom gives
nan; x = 0 and x = inf give the limits.

>>> from ratebank.science.distributions import chi_square_tail, f_tail
>>> round(float(chi_square_tail(3.841458820694124, 1)), 12)
0.05
>>> round(float(f_tail(4.964602743730711, 1, 10)), 12)
0.05
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["chi_square_cdf", "chi_square_tail", "f_tail"]

#: Relative size of the last term (series) or last factor's distance from 1
#: (continued fraction) at which an evaluation stops: the float64 epsilon.
_EPS = float(np.finfo(float).eps)
#: Stand-in for a zero denominator in the modified Lentz method (NR 3rd ed. 5.2).
_TINY = 1e-300
#: Safety cap on terms; the iterations need about 10 sqrt(a) terms near x = a.
_MAX_TERMS = 100_000


def _log_gamma(a: np.ndarray) -> np.ndarray:
    """ln Gamma(a) for positive finite a, by :func:`math.lgamma` once per distinct value."""
    values, inverse = np.unique(a, return_inverse=True)
    return np.array([math.lgamma(v) for v in values.tolist()], dtype=float)[inverse.reshape(-1)]


def _gamma_series(a: np.ndarray, x: np.ndarray) -> np.ndarray:
    """ln of sum_{n>=0} x^n / (a (a+1) ... (a+n)), the series of A&S 6.5.29 (NR 6.2.5)."""
    total = 1.0 / a
    term = total.copy()
    out = np.empty_like(a)
    active = np.arange(a.size)
    ap = a.copy()
    for _ in range(_MAX_TERMS):
        ap += 1.0
        term *= x / ap
        total += term
        done = np.abs(term) < np.abs(total) * _EPS
        if done.any():
            out[active[done]] = total[done]
            keep = ~done
            active, ap, term, total, x = active[keep], ap[keep], term[keep], total[keep], x[keep]
            if active.size == 0:
                break
    out[active] = total
    return np.log(out)


def _gamma_fraction(a: np.ndarray, x: np.ndarray) -> np.ndarray:
    """ln of Legendre's continued fraction for Gamma(a, x) e^x x^-a (A&S 6.5.31, NR 6.2.7),
    evaluated in its even form by the modified Lentz method."""
    b = x + 1.0 - a
    c = np.full_like(a, 1.0 / _TINY)
    d = 1.0 / b
    h = d.copy()
    out = np.empty_like(a)
    active = np.arange(a.size)
    for i in range(1, _MAX_TERMS + 1):
        an = -i * (i - a)
        b += 2.0
        d, c, step = _lentz_step(d, c, an, b)
        h *= step
        done = np.abs(step - 1.0) < _EPS
        if done.any():
            out[active[done]] = h[done]
            keep = ~done
            active, a, b, c, d, h = (v[keep] for v in (active, a, b, c, d, h))
            if active.size == 0:
                break
    out[active] = h
    return np.log(out)


def _regularized_gamma(a, x, upper: bool) -> np.ndarray:
    """Q(a, x) if ``upper`` else P(a, x), elementwise over broadcast a and x."""
    a, x = np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(x, dtype=float))
    shape = a.shape
    a, x = a.ravel(), x.ravel()
    out = np.full(a.size, np.nan)
    ok = (a >= 0.0) & np.isfinite(a) & (x >= 0.0)  # false for nan
    # limits: x = 0 (a > 0), x = inf, and scipy's degenerate a = 0 (all mass at x = 0)
    out[ok & (x == 0.0) & (a > 0.0)] = 1.0 if upper else 0.0
    out[ok & (x > 0.0) & ((x == np.inf) | (a == 0.0))] = 0.0 if upper else 1.0
    inner = ok & (a > 0.0) & (x > 0.0) & np.isfinite(x)
    if inner.any():
        ai, xi = a[inner], x[inner]
        log_front = -xi + ai * np.log(xi) - _log_gamma(ai)
        value = np.empty(ai.size)
        series = xi < ai + 1.0
        if series.any():
            # P by the series; Q = 1 - P is not small here (P is below about 0.7)
            p = np.exp(log_front[series] + _gamma_series(ai[series], xi[series]))
            value[series] = 1.0 - p if upper else p
        fraction = ~series
        if fraction.any():
            # Q by the continued fraction; P = 1 - Q is not small here
            q = np.exp(log_front[fraction] + _gamma_fraction(ai[fraction], xi[fraction]))
            value[fraction] = q if upper else 1.0 - q
        out[inner] = np.clip(value, 0.0, 1.0)
    return out.reshape(shape)[()]


def _lentz_step(
    d: np.ndarray, c: np.ndarray, numerator: np.ndarray, denominator: np.ndarray | float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """One term of the modified Lentz method (NR 3rd ed. 5.2.8-5.2.10) for a continued
    fraction's partial numerator and denominator: (the new D, the new C, the factor C D
    the value is multiplied by)."""
    d = denominator + numerator * d
    d[np.abs(d) < _TINY] = _TINY
    c = denominator + numerator / c
    c[np.abs(c) < _TINY] = _TINY
    d = 1.0 / d
    return d, c, d * c


def _beta_fraction(a: np.ndarray, b: np.ndarray, x: np.ndarray) -> np.ndarray:
    """ln of the continued fraction of A&S 26.5.8 for I_x(a, b) a B(a, b) x^-a (1-x)^-b
    (NR 6.4.5), by the modified Lentz method."""
    qab = a + b
    qap = a + 1.0
    qam = a - 1.0
    c = np.ones_like(a)
    d = 1.0 - qab * x / qap
    d[np.abs(d) < _TINY] = _TINY
    d = 1.0 / d
    h = d.copy()
    out = np.empty_like(a)
    active = np.arange(a.size)
    for m in range(1, _MAX_TERMS + 1):
        m2 = 2.0 * m
        aa = m * (b - m) * x / ((qam + m2) * (a + m2))  # even step
        d, c, step = _lentz_step(d, c, aa, 1.0)
        h *= step
        aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2))  # odd step
        d, c, step = _lentz_step(d, c, aa, 1.0)
        h *= step
        done = np.abs(step - 1.0) < _EPS
        if done.any():
            out[active[done]] = h[done]
            keep = ~done
            active, a, b, x, c, d, h, qab, qap, qam = (
                v[keep] for v in (active, a, b, x, c, d, h, qab, qap, qam)
            )
            if active.size == 0:
                break
    out[active] = h
    return np.log(out)


def _regularized_beta(a, b, x, y, log_x, log_y) -> np.ndarray:
    """I_x(a, b) for 0 < x < 1, given y = 1 - x and both logarithms computed without
    cancellation; the fraction is used where it converges fast (NR 6.4)."""
    log_front = _log_gamma(a + b) - _log_gamma(a) - _log_gamma(b) + a * log_x + b * log_y
    value = np.empty(a.size)
    direct = x < (a + 1.0) / (a + b + 2.0)
    if direct.any():
        s = direct
        value[s] = np.exp(log_front[s] + _beta_fraction(a[s], b[s], x[s])) / a[s]
    swap = ~direct
    if swap.any():
        s = swap
        value[s] = 1.0 - np.exp(log_front[s] + _beta_fraction(b[s], a[s], y[s])) / b[s]
    return np.clip(value, 0.0, 1.0)


def chi_square_tail(x, dof):
    """Upper tail P(X > x) of the chi-square distribution with ``dof`` degrees of freedom.

    P(X > x) = Q(dof/2, x/2) = Gamma(dof/2, x/2) / Gamma(dof/2), the regularized
    upper incomplete gamma function (Abramowitz & Stegun 1964, 26.4.19 and
    6.5.3), evaluated by Legendre's continued fraction (A&S 6.5.31; modified
    Lentz method) for x/2 >= dof/2 + 1 and as 1 - P from the series (A&S 6.5.29)
    below, as in Press et al., *Numerical Recipes*, 3rd ed. (2007), 6.2.
    Accurate in relative terms far into the upper tail (until it underflows).

    Parameters
    ----------
    x : array_like
        The chi-square value(s), >= 0 (negative gives nan, inf gives 0).
    dof : array_like
        Degrees of freedom, > 0 (need not be integer); broadcast against ``x``.
        Same order of arguments as the rest of ratebank, value first
        (scipy.special.chdtrc takes ``dof`` first).

    Returns
    -------
    numpy.ndarray or numpy.float64
        The tail probability, of the broadcast shape; nan where an input is nan.

    Examples
    --------
    >>> import numpy as np
    >>> chi_square_tail(np.array([0.0, 2.0, np.inf]), 2).round(12).tolist()  # exp(-x/2)
    [1.0, 0.367879441171, 0.0]
    >>> f"{float(chi_square_tail(1000.0, 10)):.10e}"  # far in the upper tail
    '1.8702907209e-208'
    """
    return _regularized_gamma(
        np.asarray(dof, dtype=float) / 2.0, np.asarray(x, dtype=float) / 2.0, True
    )


def chi_square_cdf(x, dof):
    """Lower tail P(X <= x) of the chi-square distribution with ``dof`` degrees of freedom.

    P(X <= x) = P(dof/2, x/2) = gamma(dof/2, x/2) / Gamma(dof/2), the regularized
    lower incomplete gamma function (Abramowitz & Stegun 1964, 26.4.19 and
    6.5.1-6.5.2), evaluated by the series A&S 6.5.29 for x/2 < dof/2 + 1 and as
    1 - Q from Legendre's continued fraction (A&S 6.5.31) above, as in Press
    et al., *Numerical Recipes*, 3rd ed. (2007), 6.2. Accurate in relative terms
    far into the lower tail.

    Parameters
    ----------
    x : array_like
        The chi-square value(s), >= 0 (negative gives nan, inf gives 1).
    dof : array_like
        Degrees of freedom, > 0; broadcast against ``x``.

    Returns
    -------
    numpy.ndarray or numpy.float64
        The cumulative probability, of the broadcast shape; nan where an input is nan.

    Examples
    --------
    >>> import numpy as np
    >>> chi_square_cdf(np.array([0.0, 2.0, np.inf]), 2).round(12).tolist()  # 1 - exp(-x/2)
    [0.0, 0.632120558829, 1.0]
    >>> f"{float(chi_square_cdf(1e-6, 10)):.10e}"  # (x/2)^5 / 5! = 2.604e-34 to leading order
    '2.6041655816e-34'
    """
    return _regularized_gamma(
        np.asarray(dof, dtype=float) / 2.0, np.asarray(x, dtype=float) / 2.0, False
    )


def f_tail(f, dof1, dof2):
    """Upper tail P(F > f) of Fisher's F distribution with (``dof1``, ``dof2``) degrees of freedom.

    P(F > f) = I_y(dof2/2, dof1/2) with y = dof2 / (dof2 + dof1 f), the
    regularized incomplete beta function (Abramowitz & Stegun 1964, 26.6.2
    and 26.5.1), evaluated by the continued fraction A&S 26.5.8 (modified Lentz
    method) after the symmetry I_y(a, b) = 1 - I_{1-y}(b, a) (A&S 26.5.2) where
    y > (a + 1)/(a + b + 2), as in Press et al., *Numerical Recipes*, 3rd ed.
    (2007), 6.4 and 6.14. y and 1 - y are formed from dof1 f / dof2 without
    cancellation, so the tail keeps its relative accuracy for large f.

    Parameters
    ----------
    f : array_like
        The F statistic(s), >= 0 (negative gives nan, inf gives 0).
    dof1, dof2 : array_like
        Degrees of freedom of the numerator and of the denominator, > 0 (need
        not be integer); broadcast against ``f``. Same numbers, same order, as
        scipy.special.fdtrc(dof1, dof2, f).

    Returns
    -------
    numpy.ndarray or numpy.float64
        The tail probability, of the broadcast shape; nan where an input is nan.

    Examples
    --------
    >>> import numpy as np
    >>> f_tail(np.array([0.0, 1.0, np.inf]), 2, 2).round(12).tolist()  # 1 / (1 + f)
    [1.0, 0.5, 0.0]
    >>> float(f_tail(1e6, 1, 5)) < 1e-6
    True
    """
    f, d1, d2 = np.broadcast_arrays(
        np.asarray(f, dtype=float), np.asarray(dof1, dtype=float), np.asarray(dof2, dtype=float)
    )
    shape = f.shape
    f, d1, d2 = f.ravel(), d1.ravel(), d2.ravel()
    out = np.full(f.size, np.nan)
    ok = (d1 > 0.0) & (d2 > 0.0) & np.isfinite(d1) & np.isfinite(d2) & (f >= 0.0)
    out[ok & (f == 0.0)] = 1.0
    out[ok & (f == np.inf)] = 0.0
    inner = ok & (f > 0.0) & np.isfinite(f)
    if inner.any():
        with np.errstate(over="ignore", under="ignore", divide="ignore"):
            ratio = d1 * f / d2  # y = 1/(1 + ratio), 1 - y = ratio/(1 + ratio)
        out[inner & (ratio == np.inf)] = 0.0  # beyond the float range: the tail underflows
        out[inner & (ratio == 0.0)] = 1.0  # below it: the tail is 1 to rounding
        inner &= (ratio > 0.0) & (ratio < np.inf)
    if inner.any():
        a, b, ratio = d2[inner] / 2.0, d1[inner] / 2.0, ratio[inner]
        log_y = -np.log1p(ratio)
        log_1my = np.log(ratio) + log_y
        out[inner] = _regularized_beta(a, b, np.exp(log_y), np.exp(log_1my), log_y, log_1my)
    return out.reshape(shape)[()]
