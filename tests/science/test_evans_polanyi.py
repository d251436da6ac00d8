"""Tests of ratebank.science.evans_polanyi against numpy.polyfit, statsmodels and by hand."""

from __future__ import annotations

import doctest
import math

import numpy as np
import pytest
import scipy.constants as sc
import statsmodels.api as sm

from ratebank.errors import FitError, ScienceInputError
from ratebank.science import evans_polanyi
from ratebank.science.evans_polanyi import evans_polanyi_activation_energy, fit_evans_polanyi

R = sc.R

# A synthetic class: Ea = 45 kJ/mol + 0.35 dH plus scatter, with per-reaction sigmas.
RNG = np.random.default_rng(11)
DELTA_H = np.array([-95e3, -70e3, -52e3, -31e3, -12e3, 4e3, 18e3, 37e3])
SIGMA = np.array([1.5e3, 3.0e3, 1.0e3, 2.0e3, 4.0e3, 1.2e3, 2.5e3, 1.8e3])
EA = 45e3 + 0.35 * DELTA_H + RNG.normal(0.0, 1.0, DELTA_H.size) * SIGMA


def test_unweighted_fit_equals_polyfit_and_ordinary_least_squares():
    # numpy.polyfit returns (slope, intercept); cov=True scales by chi2 / (N - 2).
    fit = fit_evans_polanyi(DELTA_H, EA)
    (slope, intercept), covariance = np.polyfit(DELTA_H, EA, 1, cov=True)
    assert fit.alpha == pytest.approx(slope, rel=1e-10)
    assert fit.E0 == pytest.approx(intercept, rel=1e-10)
    np.testing.assert_allclose(fit.covariance, covariance[::-1, ::-1], rtol=1e-8)
    # statsmodels OLS: the residual standard error is sqrt(scale).
    ols = sm.OLS(EA, sm.add_constant(DELTA_H)).fit()
    assert fit.residual_sd == pytest.approx(math.sqrt(ols.scale), rel=1e-10)
    np.testing.assert_allclose(fit.residuals, ols.resid, rtol=1e-8, atol=1e-6)
    assert fit.count == DELTA_H.size and not fit.absolute_sigma


def test_weighted_fit_equals_polyfit_with_w_one_over_sigma():
    # polyfit's w multiplies the residuals (w = 1/sigma, not 1/sigma^2); cov="unscaled" is the
    # absolute covariance of curve_fit's absolute_sigma=True.
    fit = fit_evans_polanyi(DELTA_H, EA, SIGMA)
    (slope, intercept), covariance = np.polyfit(DELTA_H, EA, 1, w=1 / SIGMA, cov="unscaled")
    assert fit.alpha == pytest.approx(slope, rel=1e-10)
    assert fit.E0 == pytest.approx(intercept, rel=1e-10)
    np.testing.assert_allclose(fit.covariance, covariance[::-1, ::-1], rtol=1e-8)
    assert fit.absolute_sigma


def test_weighted_spread_equals_statsmodels_wls_with_mean_one_weights():
    # statsmodels WLS scale = sum(w r^2) / (N - 2); with weights normalised to mean 1 it is
    # (sum(w r^2) / sum(w)) N / (N - 2), the documented spread.
    weights = SIGMA**-2.0
    wls = sm.WLS(EA, sm.add_constant(DELTA_H), weights=weights / weights.mean()).fit()
    fit = fit_evans_polanyi(DELTA_H, EA, SIGMA)
    assert fit.residual_sd == pytest.approx(math.sqrt(wls.scale), rel=1e-10)
    assert fit.E0 == pytest.approx(wls.params[0], rel=1e-10)


def test_scalar_sigma_gives_the_unweighted_line():
    weighted, plain = fit_evans_polanyi(DELTA_H, EA, 2e3), fit_evans_polanyi(DELTA_H, EA)
    assert weighted.alpha == pytest.approx(plain.alpha, rel=1e-12)
    assert weighted.residual_sd == pytest.approx(plain.residual_sd, rel=1e-12)
    # absolute covariance = unscaled x sigma^2
    assert weighted.covariance[1, 1] == pytest.approx(
        plain.covariance[1, 1] / plain.residual_sd**2 * 2e3**2, rel=1e-10
    )


def test_two_reactions_give_the_line_through_them():
    fit = fit_evans_polanyi([-40e3, 20e3], [30e3, 51e3])
    assert fit.alpha == pytest.approx(21e3 / 60e3, rel=1e-12)
    assert fit.E0 == pytest.approx(30e3 + 40e3 * 0.35, rel=1e-12)
    assert math.isnan(fit.residual_sd) and np.all(np.isnan(fit.covariance))


def test_rate_factor_by_hand():
    fit = fit_evans_polanyi(DELTA_H, EA)
    T = np.array([300.0, 1000.0])
    np.testing.assert_allclose(fit.rate_factor(T), np.exp(fit.residual_sd / (R * T)), rtol=1e-14)
    with pytest.raises(ScienceInputError, match="T must be positive and finite"):
        fit.rate_factor(-5.0)


# Clamp cases (synthetic class E0 = 40 kJ/mol, alpha = 0.5): dH, expected Ea, clamped.
CLAMP_CASES = [
    (-20e3, 30e3, False, "exothermic, on the line"),
    (-100e3, 0.0, True, "line below zero: clamped to 0"),
    (-80e3, 0.0, False, "line exactly at zero is not clamped"),
    (-80.0e3 + 1.0, 0.5, False, "just above zero"),
    (30e3, 55e3, False, "endothermic, line above dH"),
    (90e3, 90e3, True, "endothermic, line below dH: clamped to dH"),
    (80e3, 80e3, False, "line exactly at dH is not clamped"),
]


@pytest.mark.parametrize(
    ("delta_H", "expected", "clamped", "case"), CLAMP_CASES, ids=[c[3] for c in CLAMP_CASES]
)
def test_estimate_is_clamped(delta_H, expected, clamped, case):
    # Hand computation: Ea = max(40e3 + 0.5 dH, dH, 0).
    estimate = evans_polanyi_activation_energy(delta_H, 40e3, 0.5)
    assert float(estimate.Ea) == pytest.approx(expected, abs=1e-9)
    assert bool(estimate.clamped) is clamped


def test_estimate_broadcasts_and_fit_estimates_through_itself():
    delta_H = np.array([[-100e3, 0.0], [30e3, 90e3]])
    estimate = evans_polanyi_activation_energy(delta_H, 40e3, 0.5)
    assert estimate.Ea.shape == (2, 2)
    assert estimate.clamped.tolist() == [[True, False], [False, True]]
    fit = fit_evans_polanyi(DELTA_H, EA)
    direct = evans_polanyi_activation_energy(delta_H, fit.E0, fit.alpha)
    np.testing.assert_array_equal(fit.activation_energy(delta_H).Ea, direct.Ea)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (([10e3], [40e3]), "needs at least 2 reactions; the class has 1"),
        (([10e3, 10e3, 10e3], [40e3, 42e3, 39e3]), "All 3 reactions have the same delta_H"),
        (([10e3, 20e3], [40e3]), "got 2 enthalpies and 1 activation energies"),
        (([10e3, np.nan], [40e3, 41e3]), "Every delta_H and Ea must be finite"),
        (([10e3, 20e3], [40e3, 41e3], [1e3, 0.0]), "Every sigma_Ea must be positive and finite"),
        (([10e3, 20e3], [40e3, 41e3], [1e3, 1e3, 1e3]), "sigma_Ea has 3 values but there are 2"),
    ],
)
def test_fit_errors(args, message):
    with pytest.raises(FitError, match=message):
        fit_evans_polanyi(*args)


def test_estimate_errors():
    with pytest.raises(ScienceInputError, match="E0 must be finite"):
        evans_polanyi_activation_energy(10e3, np.nan, 0.5)
    with pytest.raises(ScienceInputError, match="delta_H must be finite"):
        evans_polanyi_activation_energy([np.inf], 40e3, 0.5)


def test_doctests():
    result = doctest.testmod(evans_polanyi, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
