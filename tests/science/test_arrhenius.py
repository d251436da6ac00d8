"""Tests of ratebank.science.arrhenius: forms, fits, batch fits and their uncertainties."""

from __future__ import annotations

import doctest
import math
import re
import time

import numpy as np
import pytest
import scipy.constants as sc
from scipy.optimize import curve_fit
from scipy.stats import f as f_distribution

from ratebank.errors import FitError, ScienceInputError
from ratebank.science import arrhenius
from ratebank.science.arrhenius import (
    COLLINEARITY_THRESHOLD,
    approximate_with_modified_arrhenius,
    compare_forms,
    fit_rate_constants,
    fit_rate_constants_batch,
    ln_k_uncertainty,
    local_activation_energy,
    local_pre_exponential,
    modified_arrhenius,
)

R = sc.R
# cm3 molecule-1 s-1 -> m3 mol-1 s-1: x 1e-6 m3/cm3 x N_A (exact, CODATA 2018).
CM3_MOLECULE_TO_SI = 1e-6 * sc.N_A


def ln_model(T, ln_A, n, Ea):
    return ln_A + n * np.log(T) - Ea / (R * T)


def ln_model_jacobian(T, ln_A, n, Ea):
    return np.stack([np.ones_like(T), np.log(T), -1.0 / (R * T)], axis=1)


def noisy_data(T, A, n, E_over_R, sigma, seed):
    rng = np.random.default_rng(seed)
    noise = rng.normal(0.0, 1.0, np.shape(T)) * sigma
    ln_k = np.log(A) + n * np.log(T) - E_over_R / T + noise
    return np.exp(ln_k)


# --- forms -------------------------------------------------------------------


@pytest.mark.parametrize(
    ("A", "n", "T0", "E_over_R", "k298", "rel", "source"),
    [
        (2.03e-16, 4.57, 300.0, -693.0, 2.015e-15, 5e-4, "IUPAC HO2 + O3 (from memory), s9"),
        (6.2e-14, 2.6, 298.0, -945.0, 1.478e-12, 5e-4, "IUPAC OH + OH (from memory), s9"),
        (1.5e-13, 0.6, 300.0, 0.0, 1.494e-13, 5e-4, "JPL 19-5 OH + CO k0 (from memory), s9"),
        (2.45e-12, 0.0, 1.0, 1775.0, 6.3e-15, 0.05, "JPL 19-5 OH + CH4 tabulated k(298)"),
        (8.0e-12, 0.0, 1.0, 2060.0, 8.0e-15, 0.05, "JPL 19-5 O + O3 tabulated k(298)"),
        (1.85e-20, 2.82, 1.0, 987.0, 6.4e-15, 0.05, "Atkinson 2003 OH + CH4 (uncertain)"),
    ],
)
def test_modified_arrhenius_with_a_reference_temperature(A, n, T0, E_over_R, k298, rel, source):
    # A (T/T0)^n exp(-E/RT) is A/T0^n T^n exp(-E/RT) (REFERENCE-CHECKS s9).
    k = modified_arrhenius(298.0, A / T0**n, n, E_over_R * R)
    assert k == pytest.approx(k298, rel=rel)


@pytest.mark.parametrize(
    ("T", "expected", "source"),
    [(250.0, 1692.0, "REFERENCE-CHECKS s10, E/R + nT"), (300.0, 1833.0, "REFERENCE-CHECKS s10")],
)
def test_local_activation_energy_of_atkinson_oh_ch4(T, expected, source):
    assert local_activation_energy(T, 2.82, 987.0 * R) / R == pytest.approx(expected, rel=1e-12)


def test_local_parameters_reproduce_k_and_its_slope():
    # Ea_loc = -R dlnk/d(1/T) (Laidler 1996, IUPAC glossary), checked by a central difference;
    # A_loc exp(-Ea_loc/RT) = k(T) exactly by construction.
    A, n, Ea = 1.85e-20 * CM3_MOLECULE_TO_SI, 2.82, 987.0 * R
    T = np.array([220.0, 298.0, 900.0, 1800.0])
    k = modified_arrhenius(T, A, n, Ea)
    A_loc = local_pre_exponential(T, A, n)
    Ea_loc = local_activation_energy(T, n, Ea)
    np.testing.assert_allclose(A_loc * np.exp(-Ea_loc / (R * T)), k, rtol=1e-12)
    h = 1e-4 * T
    slope = np.log(modified_arrhenius(T + h, A, n, Ea)) - np.log(
        modified_arrhenius(T - h, A, n, Ea)
    )
    numerical = -R * slope / (1 / (T + h) - 1 / (T - h))
    np.testing.assert_allclose(Ea_loc, numerical, rtol=1e-7)
    # Atkinson OH + CH4 at 298 K: A_loc = 2.946e-12 cm3 molecule-1 s-1 (REFERENCE-CHECKS s9).
    assert local_pre_exponential(298.0, 1.85e-20, 2.82) == pytest.approx(2.946e-12, rel=2e-4)


def test_ln_k_uncertainty_first_order():
    # First-order propagation d ln k = dk / k (Bevington & Robinson, ch. 3).
    k = np.array([1e6, 2e6])
    np.testing.assert_allclose(ln_k_uncertainty(k, 0.1), [0.1, 0.1])
    np.testing.assert_allclose(ln_k_uncertainty(k, [1e5, 1e5], kind="absolute"), [0.1, 0.05])
    with pytest.raises(ScienceInputError, match="Unknown uncertainty kind 'percent'"):
        ln_k_uncertainty(k, 10.0, kind="percent")
    with pytest.raises(ScienceInputError, match="uncertainty of k must be positive and finite"):
        ln_k_uncertainty(k, 0.0)
    with pytest.raises(ScienceInputError, match="k must be positive and finite"):
        ln_k_uncertainty([-1.0], 0.1)


# --- exact recovery ------------------------------------------------------------


def test_two_parameter_fit_recovers_exact_expression():
    # JPL 19-5 O + O3 (from memory): 8.0e-12 exp(-2060/T), 11 points at 200-400 K; rel 1e-9.
    T = np.linspace(200.0, 400.0, 11)
    A = 8.0e-12 * CM3_MOLECULE_TO_SI
    fit = fit_rate_constants(T, A * np.exp(-2060.0 / T))
    assert pytest.approx(A, rel=1e-9) == fit.A
    assert fit.Ea / R == pytest.approx(2060.0, rel=1e-9)
    assert fit.n == 0.0
    assert (fit.n_points, fit.dof, fit.T_min, fit.T_max) == (11, 9, 200.0, 400.0)
    assert fit.T_ref == pytest.approx(math.exp(np.mean(np.log(T))), rel=1e-12)
    assert np.max(np.abs(fit.residuals)) < 1e-12


def test_three_parameter_fit_recovers_exact_expression():
    # Atkinson 2003 OH + CH4 (from memory): 1.85e-20 T^2.82 exp(-987/T), 19 points 200-2000 K.
    T = np.linspace(200.0, 2000.0, 19)
    A = 1.85e-20 * CM3_MOLECULE_TO_SI
    fit = fit_rate_constants(T, A * T**2.82 * np.exp(-987.0 / T), form="modified")
    assert pytest.approx(A, rel=1e-9) == fit.A
    assert fit.n == pytest.approx(2.82, rel=1e-9)
    assert fit.Ea / R == pytest.approx(987.0, rel=1e-9)
    assert not fit.collinear


def test_fixed_n_fit_recovers_exact_expression_and_fixes_n():
    T = np.linspace(200.0, 2000.0, 19)
    A = 1.85e-20 * CM3_MOLECULE_TO_SI
    fit = fit_rate_constants(T, A * T**2.82 * np.exp(-987.0 / T), form="fixed-n", fixed_n=2.82)
    assert pytest.approx(A, rel=1e-9) == fit.A
    assert fit.n == 2.82
    assert fit.Ea / R == pytest.approx(987.0, rel=1e-9)
    # Fixed parameters have zero variance and covariance (module convention).
    assert np.all(fit.covariance[1, :] == 0.0)
    assert np.all(fit.covariance[:, 1] == 0.0)


@pytest.mark.parametrize(
    ("T_low", "T_high", "A", "E_over_R", "source"),
    [
        (200.0, 300.0, 1.7142e-12, 1675.3, "REFERENCE-CHECKS s10 (computed)"),
        (250.0, 350.0, 2.9076e-12, 1819.2, "REFERENCE-CHECKS s10 (computed)"),
        (200.0, 400.0, 2.6286e-12, 1776.4, "REFERENCE-CHECKS s10 (computed)"),
    ],
)
def test_two_parameter_fit_to_atkinson_oh_ch4(T_low, T_high, A, E_over_R, source):
    # 21 points of 1.85e-20 T^2.82 exp(-987/T) fitted in ln k, tolerance rel 1e-3.
    T = np.linspace(T_low, T_high, 21)
    fit = fit_rate_constants(T, 1.85e-20 * T**2.82 * np.exp(-987.0 / T))
    assert pytest.approx(A, rel=1e-3) == fit.A
    assert fit.Ea / R == pytest.approx(E_over_R, rel=1e-3)


def test_two_parameter_fit_is_close_to_iupac_oh_ch4():
    # IUPAC 1.85e-12 exp(-1690/T) for 200-300 K (from memory): A within 8 %, E/R within 1 %.
    T = np.linspace(200.0, 300.0, 21)
    fit = fit_rate_constants(T, 1.85e-20 * T**2.82 * np.exp(-987.0 / T))
    assert pytest.approx(1.85e-12, rel=0.08) == fit.A
    assert fit.Ea / R == pytest.approx(1690.0, rel=0.01)


# --- agreement with numpy and scipy --------------------------------------------


def test_weighted_two_parameter_fit_matches_numpy_polyfit():
    # numpy.polyfit(1/T, ln k, 1, w=1/sigma, cov="unscaled"): same estimator, rel 1e-6.
    T = np.linspace(220.0, 480.0, 14)
    sigma = np.linspace(0.05, 0.2, T.size)
    k = noisy_data(T, 3e9, 0.0, 1500.0, sigma, seed=7)
    fit = fit_rate_constants(T, k, sigma)
    (slope, intercept), cov = np.polyfit(1 / T, np.log(k), 1, w=1 / sigma, cov="unscaled")
    assert fit.ln_A == pytest.approx(intercept, rel=1e-6)
    assert fit.Ea == pytest.approx(-slope * R, rel=1e-6)
    expected = np.array(
        [[cov[1, 1], 0.0, -R * cov[0, 1]], [0.0, 0.0, 0.0], [-R * cov[0, 1], 0.0, R**2 * cov[0, 0]]]
    )
    np.testing.assert_allclose(fit.covariance, expected, rtol=1e-6, atol=0.0)
    assert fit.absolute_sigma


def test_unweighted_two_parameter_fit_matches_scaled_polyfit():
    # numpy.polyfit(..., cov=True) scales by chi2 / (N - 2), as ratebank does without sigma.
    T = np.linspace(220.0, 480.0, 9)
    k = noisy_data(T, 3e9, 0.0, 1500.0, 0.1, seed=11)
    fit = fit_rate_constants(T, k)
    (slope, _intercept), cov = np.polyfit(1 / T, np.log(k), 1, cov=True)
    assert fit.Ea == pytest.approx(-slope * R, rel=1e-6)
    assert fit.covariance[0, 0] == pytest.approx(cov[1, 1], rel=1e-6)
    assert fit.covariance[2, 2] == pytest.approx(R**2 * cov[0, 0], rel=1e-6)
    assert fit.covariance[0, 2] == pytest.approx(-R * cov[0, 1], rel=1e-6)
    assert not fit.absolute_sigma


@pytest.mark.parametrize("absolute_sigma", [True, False])
def test_three_parameter_fit_matches_scipy_curve_fit(absolute_sigma):
    # scipy.optimize.curve_fit of ln k = ln A + n ln T - Ea/RT (analytic Jacobian), rel 1e-6
    # for the parameters and the whole covariance.
    T = np.geomspace(250.0, 2500.0, 16)
    sigma = np.full(T.size, 0.08)
    sigma[::3] = 0.15
    k = noisy_data(T, 2e2, 2.1, 600.0, sigma, seed=3)
    fit = fit_rate_constants(T, k, sigma if absolute_sigma else None, form="modified")
    popt, pcov = curve_fit(
        ln_model,
        T,
        np.log(k),
        p0=[fit.ln_A + 0.5, fit.n - 0.2, fit.Ea * 1.1],
        sigma=sigma if absolute_sigma else None,
        absolute_sigma=absolute_sigma,
        jac=ln_model_jacobian,
        xtol=1e-15,
        ftol=1e-15,
        gtol=1e-15,
    )
    np.testing.assert_allclose([fit.ln_A, fit.n, fit.Ea], popt, rtol=1e-6)
    np.testing.assert_allclose(fit.covariance, pcov, rtol=1e-6)


def test_sigma_ln_k_propagates_the_covariance():
    # var(ln k(T)) = g C g^T with g = (1, ln T, -1/RT): cross-checked against polyfit's
    # covariance of (slope, intercept) in 1/T.
    T = np.linspace(250.0, 400.0, 10)
    sigma = np.full(T.size, 0.1)
    k = noisy_data(T, 1e10, 0.0, 2000.0, sigma, seed=5)
    fit = fit_rate_constants(T, k, sigma)
    _, cov = np.polyfit(1 / T, np.log(k), 1, w=1 / sigma, cov="unscaled")
    grid = np.array([200.0, 300.0, 600.0])
    x = 1 / grid
    expected = np.sqrt(cov[0, 0] * x**2 + 2 * cov[0, 1] * x + cov[1, 1])
    np.testing.assert_allclose(fit.sigma_ln_k(grid), expected, rtol=1e-6)
    np.testing.assert_allclose(fit.uncertainty_factor(grid), np.exp(expected), rtol=1e-6)
    # The fit is best determined near the middle of its data (weighted least squares).
    assert fit.sigma_ln_k(300.0) < fit.sigma_ln_k(200.0)
    assert fit.k(300.0) == pytest.approx(math.exp(fit.ln_k(300.0)), rel=1e-15)


def test_t_ref_does_not_change_the_parameters():
    # ln k = a + n ln(T/T_ref) - (Ea/R)(1/T - 1/T_ref) spans the same model for every T_ref.
    T = np.geomspace(300.0, 1500.0, 12)
    k = noisy_data(T, 1e4, 1.5, 900.0, 0.05, seed=2)
    default = fit_rate_constants(T, k, 0.05, form="modified")
    shifted = fit_rate_constants(T, k, 0.05, form="modified", T_ref=1000.0)
    assert shifted.T_ref == 1000.0
    np.testing.assert_allclose(
        [shifted.ln_A, shifted.n, shifted.Ea], [default.ln_A, default.n, default.Ea], rtol=1e-10
    )
    np.testing.assert_allclose(shifted.covariance, default.covariance, rtol=1e-8)


# --- warnings and form selection -----------------------------------------------


def test_collinearity_warning_on_a_narrow_range_only():
    # |corr(n, Ea)| > 0.995 (VIF 100): 280-320 K gives 0.9998, 200-2000 K gives 0.946.
    narrow_T = np.linspace(280.0, 320.0, 10)
    narrow = fit_rate_constants(
        narrow_T, noisy_data(narrow_T, 1e4, 1.5, 900.0, 0.02, seed=1), 0.02, form="modified"
    )
    assert narrow.collinear
    (warning,) = [w for w in narrow.warnings if w.code == "collinear-n-ea"]
    assert "fit the two-parameter form instead" in warning.message
    assert abs(narrow.correlation_n_ea) > COLLINEARITY_THRESHOLD
    wide_T = np.linspace(200.0, 2000.0, 19)
    wide = fit_rate_constants(
        wide_T, noisy_data(wide_T, 1e4, 1.5, 900.0, 0.02, seed=1), 0.02, form="modified"
    )
    assert not wide.collinear
    assert wide.warnings == ()
    # The criterion is the correlation of the covariance itself.
    c = wide.covariance
    assert wide.correlation_n_ea == pytest.approx(c[1, 2] / math.sqrt(c[1, 1] * c[2, 2]), rel=1e-9)


def test_exactly_determined_unweighted_fit_has_undetermined_covariance():
    # curve_fit(absolute_sigma=False) cannot scale a covariance with zero degrees of freedom.
    fit = fit_rate_constants([300.0, 400.0], [1e6, 3e6])
    assert fit.dof == 0
    assert math.isnan(fit.reduced_chi_square)
    assert np.isnan(fit.covariance[0, 0])
    assert [w.code for w in fit.warnings] == ["no-degrees-of-freedom"]
    weighted = fit_rate_constants([300.0, 400.0], [1e6, 3e6], [0.1, 0.1])
    assert np.isfinite(weighted.covariance[0, 0])


def test_compare_forms_supports_curvature_over_a_wide_range():
    T = np.geomspace(250.0, 2500.0, 20)
    sigma = 0.03
    comparison = compare_forms(T, noisy_data(T, 1e2, 2.5, 500.0, sigma, seed=4), sigma)
    assert comparison.supported
    assert comparison.preferred_form == "modified"
    assert comparison.p_value < 0.05
    assert comparison.reason.startswith("Fitting n lowers chi-square significantly")
    # F-test for one added term (Bevington & Robinson ch. 11), p from scipy.stats.f.
    two, three = comparison.arrhenius_fit, comparison.modified_fit
    F = (two.chi_square - three.chi_square) / (three.chi_square / (T.size - 3))
    assert comparison.f_statistic == pytest.approx(F, rel=1e-12)
    assert comparison.p_value == pytest.approx(f_distribution.sf(F, 1, T.size - 3), rel=1e-9)


def test_compare_forms_keeps_two_parameters_for_arrhenius_data():
    T = np.geomspace(250.0, 2500.0, 20)
    comparison = compare_forms(T, noisy_data(T, 1e9, 0.0, 1500.0, 0.05, seed=8), 0.05)
    assert not comparison.supported
    assert comparison.preferred_form == "arrhenius"
    assert comparison.p_value >= 0.05
    assert "the two-parameter form suffices" in comparison.reason
    assert comparison.p_value == pytest.approx(
        f_distribution.sf(comparison.f_statistic, 1, T.size - 3), rel=1e-9
    )


def test_compare_forms_refuses_a_narrow_range_and_too_few_points():
    narrow_T = np.linspace(280.0, 320.0, 10)
    narrow = compare_forms(narrow_T, noisy_data(narrow_T, 1e4, 1.5, 900.0, 0.02, seed=1))
    assert not narrow.supported
    assert "nearly collinear over 280-320 K" in narrow.reason
    few = compare_forms([300.0, 400.0, 500.0], [1e5, 2e5, 3e5])
    assert not few.supported
    assert few.reason == (
        "Testing the three-parameter form needs at least 4 points at 3 distinct "
        "temperatures; the data have 3 at 3."
    )
    exact_T = np.linspace(300.0, 1000.0, 8)
    exact = compare_forms(exact_T, 5e9 * np.exp(-1200.0 / exact_T))
    assert not exact.supported
    assert "rounding error" in exact.reason


# --- errors ---------------------------------------------------------------------


@pytest.mark.parametrize(
    ("T", "k", "kwargs", "message"),
    [
        ([300.0], [1e6], {}, "The arrhenius form needs at least 2 points; the data have 1."),
        (
            [300.0, 400.0],
            [1e6, 2e6],
            {"form": "modified"},
            "The modified form needs at least 3 points; the data have 2.",
        ),
        (
            [300.0, 300.0, 400.0],
            [1e6, 1.1e6, 2e6],
            {"form": "modified"},
            "The modified form needs at least 3 distinct temperatures; the data have 2.",
        ),
        (
            [300.0],
            [1e6],
            {"form": "fixed-n", "fixed_n": 1.0},
            "The fixed-n form needs at least 2 points; the data have 1.",
        ),
        ([300.0, 400.0], [1e6, 0.0], {}, "Every k must be positive and finite"),
        ([300.0, np.inf], [1e6, 2e6], {}, r"Every temperature must be positive and finite \[K\]"),
        ([300.0, 400.0], [1e6, 2e6, 3e6], {}, "T has 2 values but k has 3"),
        ([300.0, 400.0], [1e6, 2e6], {"form": "kooij"}, "Unknown fit form 'kooij'; expected one"),
        ([300.0, 400.0], [1e6, 2e6], {"form": "fixed-n"}, "The fixed-n form needs a value"),
        (
            [300.0, 400.0],
            [1e6, 2e6],
            {"fixed_n": 2.0},
            "fixed_n is used only with form='fixed-n', not with form='arrhenius'",
        ),
        ([300.0, 400.0], [1e6, 2e6], {"T_ref": -1.0}, "T_ref must be a positive temperature"),
    ],
)
def test_fit_errors(T, k, kwargs, message):
    with pytest.raises(FitError, match=message):
        fit_rate_constants(T, k, **kwargs)


def test_fit_refuses_bad_sigmas():
    with pytest.raises(FitError, match=re.escape("Every sigma_ln_k must be positive and finite.")):
        fit_rate_constants([300.0, 400.0], [1e6, 2e6], [0.1, 0.0])
    with pytest.raises(FitError, match="sigma_ln_k has 1 values but there are 2 points"):
        fit_rate_constants([300.0, 400.0], [1e6, 2e6], [0.1])


# --- batch ---------------------------------------------------------------------


def make_batch(seed=0):
    """Sets of different sizes and ranges; set 'd' has one point, set 'e' a bad k."""
    rng = np.random.default_rng(seed)
    sizes = {"a": 12, "b": 5, "c": 3, "d": 1, "e": 6, "f": 9, "g": 2}
    T, k, sigma, group = [], [], [], []
    for label, size in sizes.items():
        low = rng.uniform(200.0, 600.0)
        t = np.sort(rng.uniform(low, low * rng.uniform(1.5, 6.0), size))
        s = rng.uniform(0.03, 0.2, size)
        kk = noisy_data(
            t, 10 ** rng.uniform(3, 9), rng.uniform(0, 3), rng.uniform(0, 3000), s, seed
        )
        if label == "e":
            kk[2] = -kk[2]
        T.append(t)
        k.append(kk)
        sigma.append(s)
        group += [label] * size
    order = rng.permutation(len(group))  # the points need not be grouped
    return (
        np.concatenate(T)[order],
        np.concatenate(k)[order],
        np.concatenate(sigma)[order],
        np.array(group)[order],
    )


@pytest.mark.parametrize(
    ("form", "fixed_n"), [("arrhenius", None), ("modified", None), ("fixed-n", 1.5)]
)
@pytest.mark.parametrize("weighted", [True, False])
def test_batch_agrees_with_one_at_a_time(form, fixed_n, weighted):
    # The batch is the same estimator as fit_rate_constants applied per group.
    T, k, sigma, group = make_batch()
    batch = fit_rate_constants_batch(
        T, k, sigma if weighted else None, group, form=form, fixed_n=fixed_n
    )
    assert list(batch.groups) == ["a", "b", "c", "d", "e", "f", "g"]
    for i, label in enumerate(batch.groups):
        mask = group == label
        try:
            single = fit_rate_constants(
                T[mask], k[mask], sigma[mask] if weighted else None, form=form, fixed_n=fixed_n
            )
        except FitError as error:
            assert not batch.ok[i]
            if label != "e":
                assert batch.status[i] == str(error)
            assert math.isnan(batch.A[i])
            with pytest.raises(FitError, match=f"Group '{label}' was not fitted"):
                batch.fit(i)
            continue
        assert batch.ok[i] and batch.status[i] == "ok"
        np.testing.assert_allclose(
            [batch.ln_A[i], batch.n[i], batch.Ea[i]], [single.ln_A, single.n, single.Ea],
            rtol=1e-9, atol=1e-9,
        )  # fmt: skip
        np.testing.assert_allclose(batch.covariance[i], single.covariance, rtol=1e-7, atol=0.0)
        assert batch.T_ref[i] == pytest.approx(single.T_ref, rel=1e-12)
        assert (batch.T_min[i], batch.T_max[i]) == (single.T_min, single.T_max)
        assert batch.n_points[i] == single.n_points
        np.testing.assert_allclose(batch.reduced_chi_square[i], single.reduced_chi_square,
                                   rtol=1e-7)  # fmt: skip
        assert bool(batch.collinear[i]) == single.collinear
        rebuilt = batch.fit(i)
        np.testing.assert_allclose(rebuilt.residuals, single.residuals, rtol=1e-6, atol=1e-9)
        assert [w.code for w in rebuilt.warnings] == [w.code for w in single.warnings]


def test_batch_reports_groups_it_cannot_fit():
    T, k, sigma, group = make_batch()
    batch = fit_rate_constants_batch(T, k, sigma, group, form="modified")
    failures = batch.failures
    assert failures["d"] == "The modified form needs at least 3 points; the data have 1."
    assert failures["g"] == "The modified form needs at least 3 points; the data have 2."
    assert failures["e"] == "A T, k or sigma_ln_k in this group is not positive and finite."
    assert set(failures) == {"d", "e", "g"}
    assert batch.index("f") == 5
    with pytest.raises(FitError, match=re.escape("Group 'z' is not in this batch.")):
        batch.index("z")


def test_batch_counts_distinct_temperatures():
    # Three points at two temperatures cannot determine three parameters.
    T = np.array([300.0, 300.0, 400.0, 300.0, 350.0, 400.0])
    k = 1e6 * np.exp(-1000.0 / T) * T
    batch = fit_rate_constants_batch(T, k, None, [0, 0, 0, 1, 1, 1], form="modified")
    assert batch.status[0] == (
        "The modified form needs at least 3 distinct temperatures; the data have 2."
    )
    assert batch.ok[1]
    assert batch.n[1] == pytest.approx(1.0, rel=1e-9)


def test_batch_errors():
    with pytest.raises(FitError, match="group has 1 labels but there are 2 points"):
        fit_rate_constants_batch([300.0, 400.0], [1.0, 2.0], None, [1])
    with pytest.raises(FitError, match="Unknown fit form 'cubic'"):
        fit_rate_constants_batch([300.0, 400.0], [1.0, 2.0], None, [1, 1], form="cubic")


def test_batch_handles_many_groups_in_one_pass():
    # 10,000 groups of 10 points: every group fitted and equal to its single fit. The time
    # bound is loose (the vectorized pass takes a few tens of ms; a Python loop over a
    # solver takes about a second), so it fails only for a per-group loop.
    rng = np.random.default_rng(42)
    m, size = 10_000, 10
    T = rng.uniform(250.0, 1500.0, (m, size))
    k = 1e8 * T**1.5 * np.exp(-3000.0 / T) * np.exp(rng.normal(0.0, 0.05, (m, size)))
    group = np.repeat(np.arange(m), size)
    sigma = np.full(m * size, 0.05)
    elapsed = []
    for _ in range(3):
        start = time.perf_counter()
        batch = fit_rate_constants_batch(T.ravel(), k.ravel(), sigma, group, form="modified")
        elapsed.append(time.perf_counter() - start)
    assert min(elapsed) < 0.5
    assert batch.ok.all()
    assert len(batch) == m
    for i in (0, 777, m - 1):
        single = fit_rate_constants(T[i], k[i], np.full(size, 0.05), form="modified")
        assert batch.Ea[i] == pytest.approx(single.Ea, rel=1e-9)


# --- approximation of model curves ------------------------------------------------


def test_modified_arrhenius_approximation_of_a_lennard_jones_estimate():
    # The LJ-corrected collision rate is not of modified-Arrhenius form; the fit's stated
    # deviation must be the true largest deviation on the grid (README, Estimates and steric factors).
    from ratebank.science.collision import lennard_jones_collision_rate_constant

    T = np.geomspace(300.0, 2500.0, 40)
    z = lennard_jones_collision_rate_constant(T, 3.798e-10, 3.467e-10, 28.0134e-3, 31.9988e-3,
                                              71.4, 106.7)  # fmt: skip
    k = 0.05 * z * np.exp(-5000.0 / T)
    A, n, Ea, worst = approximate_with_modified_arrhenius(T, k)
    actual = np.max(np.abs(modified_arrhenius(T, A, n, Ea) / k - 1.0))
    assert worst == pytest.approx(actual, rel=1e-9)
    assert 0.0 < worst < 0.01
    assert 0.0 < n < 0.5  # Omega falls with T, so the exponent is below the hard-sphere 1/2


# --- doctests ------------------------------------------------------------------


def test_doctests():
    result = doctest.testmod(arrhenius)
    assert result.attempted > 0
    assert result.failed == 0


# --------------------------------------------------------------------------- batch form choice


def test_compare_forms_batch_agrees_with_compare_forms_group_by_group():
    """The vectorized auto-form decision equals compare_forms for every group."""
    from ratebank.science.arrhenius import compare_forms, compare_forms_batch

    rng = np.random.default_rng(20261201)
    T_all, k_all, s_all, g_all = [], [], [], []
    cases = [
        # (T grid, true n, noise) -> wide range with curvature, narrow range, few points
        (np.linspace(300.0, 2000.0, 15), 2.5, 0.01),
        (np.linspace(280.0, 320.0, 8), 2.0, 0.02),
        (np.linspace(300.0, 1500.0, 3), 1.0, 0.05),
        (np.linspace(250.0, 400.0, 10), 0.0, 0.05),
        (np.linspace(500.0, 2500.0, 12), 3.0, 0.2),
    ]
    for label, (T, n, noise) in enumerate(cases):
        k = 1e-3 * T**n * np.exp(-800.0 / T) * np.exp(noise * rng.standard_normal(T.size))
        T_all.append(T)
        k_all.append(k)
        s_all.append(np.full(T.size, max(noise, 0.01)))
        g_all.append(np.full(T.size, label))
    T, k, s, g = map(np.concatenate, (T_all, k_all, s_all, g_all))
    choice = compare_forms_batch(T, k, s, g)
    for label in range(len(cases)):
        mask = g == label
        single = compare_forms(T[mask], k[mask], s[mask])
        assert bool(choice.supported[label]) == single.supported
        assert choice.reason[label] == single.reason
    assert choice.supported[0] and not choice.supported[1] and not choice.supported[2]


# --------------------------------------------------------------------------- fit_groups


def _two_sets_a_factor_two_apart():
    """Synthetic: two sets of 6 points at 250-400 K, the second 2x the first, each at 5 %."""
    T = np.tile(np.linspace(250.0, 400.0, 6), 2)
    k = 1.0e9 * np.exp(-1200.0 / T) * np.repeat([1.0, 2.0], 6)
    return T, k, np.full(12, 0.05), np.zeros(12, dtype=int), np.repeat([1, 2], 6)


def test_fit_groups_pools_disagreeing_sets_with_their_between_set_variance():
    from ratebank.science.uncertainty import uncertainty_factor_from_covariance

    T, k, sigma, group, sets = _two_sets_a_factor_two_apart()
    fits = arrhenius.fit_groups(T, k, sigma, group, sets=sets, form="arrhenius")
    # DerSimonian-Laird on the two set offsets (+-ln2/2, variance 0.05^2/6 each):
    # tau^2 = (ln 2)^2/2 - 0.05^2/6 (hand calculation, DerSimonian & Laird 1986)
    assert fits.between_set_variance[0] == pytest.approx(np.log(2) ** 2 / 2 - 0.05**2 / 6, rel=1e-6)
    f298 = uncertainty_factor_from_covariance(298.0, fits.covariance[0])
    assert f298 >= 1.4  # the target: two sets 2x apart at +-5 % give f(298) >= 1.4
    assert fits.n_sets.tolist() == [2]


def test_fit_groups_without_sets_admits_the_scatter():
    """One set whose points scatter 30 % with 5 % stated: the covariance is scaled by the
    reduced chi-square, and equals scipy.optimize.curve_fit(..., absolute_sigma=False)."""
    from scipy.optimize import curve_fit

    rng = np.random.default_rng(7)  # synthetic data
    T = np.linspace(300.0, 800.0, 20)
    ln_k = np.log(3.0e8) - 1500.0 / T + rng.normal(0.0, 0.3, T.size)
    sigma = np.full(T.size, 0.05)
    fits = arrhenius.fit_groups(T, np.exp(ln_k), sigma, np.zeros(T.size), form="arrhenius")
    assert fits.covariance_scale[0] == pytest.approx(fits.reduced_chi_square[0])
    assert "scatter-above-stated" in {w.code for w in fits.warnings[0]}

    def model(T, ln_A, Ea):
        return ln_A - Ea / (R * T)

    popt, pcov = curve_fit(model, T, ln_k, p0=[20.0, 1e4], sigma=sigma, absolute_sigma=False)
    assert fits.Ea[0] == pytest.approx(popt[1], rel=1e-8)
    cov = fits.covariance[0][np.ix_([0, 2], [0, 2])]
    assert cov == pytest.approx(pcov, rel=1e-6)


def test_fit_groups_leaves_consistent_data_alone():
    """Exact data stated at 5 %: no between-set variance, no scaling; the scatter is far
    below the stated uncertainty, which is said."""
    T = np.tile(np.linspace(300.0, 600.0, 5), 2)
    k = 2.0e8 * np.exp(-900.0 / T)
    fits = arrhenius.fit_groups(
        T, k, np.full(10, 0.05), np.zeros(10), sets=np.repeat([0, 1], 5), form="arrhenius"
    )
    assert fits.between_set_variance[0] == 0.0 and fits.covariance_scale[0] == 1.0
    assert [w.code for w in fits.warnings[0]] == ["scatter-below-stated"]
    assert fits.A[0] == pytest.approx(2.0e8, rel=1e-10)


def test_a_sets_systematic_uncertainty_cannot_be_averaged_away():
    """One synthetic set of 20 exact points at 1 % each with a 10 % scale uncertainty: the
    fitted level is uncertain by the 10 % (its offset variance s^2 is added to the set mean,
    DerSimonian & Laird's random-offset form), not by 1 %/sqrt(20)."""
    from ratebank.science.uncertainty import uncertainty_factor_from_covariance

    T = np.linspace(300.0, 600.0, 20)
    k = 4.0e8 * np.exp(-1500.0 / T)
    plain = arrhenius.fit_groups(T, k, np.full(20, 0.01), np.zeros(20), form="arrhenius")
    scaled = arrhenius.fit_groups(
        T, k, np.full(20, 0.01), np.zeros(20), systematic=np.full(20, 0.1), form="arrhenius"
    )
    T_mid = np.exp(np.mean(np.log(T)))
    f_plain = uncertainty_factor_from_covariance(T_mid, plain.covariance[0])
    f_scaled = uncertainty_factor_from_covariance(T_mid, scaled.covariance[0])
    assert f_plain < 1.01
    assert np.log(f_scaled) == pytest.approx(np.hypot(0.1, 0.01 / np.sqrt(20)), rel=0.02)
    assert scaled.A[0] == pytest.approx(4.0e8, rel=1e-9)
