"""Tests of ratebank.science.uncertainty against panel examples, scipy and statsmodels."""

from __future__ import annotations

import csv
import doctest
import math
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
import statsmodels.api as sm
from hypothesis import given
from hypothesis import strategies as st
from scipy.optimize import curve_fit, linprog
from statsmodels.stats.meta_analysis import combine_effects

from ratebank.errors import ScienceInputError
from ratebank.science import uncertainty
from ratebank.science.arrhenius import fit_rate_constants, fit_rate_constants_batch
from ratebank.science.uncertainty import (
    between_set_variance,
    covering_panel_factor,
    dersimonian_laird,
    linearize_modified_arrhenius,
    linearized_panel_factor,
    log10_form_from_panel_factor,
    panel_factor_from_covariance,
    panel_factor_from_log10_form,
    panel_uncertainty_factor,
    random_effects_sigma_ln_k,
    scale_covariance_by_chi_square,
    sigma_ln_k_from_covariance,
)

HERE = Path(__file__).parent
R = sc.R


def read_table(name: str) -> list[dict[str, str]]:
    with open(HERE / name, newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


def ln_modified(T, A, n, E_over_R):
    """ln k of A T^n exp(-E/RT), written out here independently of the package."""
    return np.log(A) + n * np.log(T) - E_over_R / T


# --- the panels' form ----------------------------------------------------------

PANEL_ROWS = read_table("ref_uncertainty_panel_factors.csv")


@pytest.mark.parametrize(
    "row", PANEL_ROWS, ids=[f"{r['reaction']}@{r['T_K']}-{r['form']}" for r in PANEL_ROWS]
)
def test_panel_factor_worked_examples(row):
    # Source column of ref_uncertainty_panel_factors.csv (JPL 19-5 / IUPAC 2004, from memory).
    T = float(row["T_K"])
    if row["form"] == "jpl":
        f298, g = float(row["p298"]), float(row["pT"])
    else:
        f298, g = panel_factor_from_log10_form(float(row["p298"]), float(row["pT"]))
    assert panel_uncertainty_factor(T, f298, g) == pytest.approx(
        float(row["f_T"]), rel=float(row["rel_tol"])
    )


def test_log10_form_uses_log10_e_not_ln10():
    # IUPAC (Atkinson et al. 2004, from memory): Delta log10 k(T) = Delta log10 k(298)
    # + 0.4343 |Delta(E/R)(1/T - 1/298)|; 0.4343 = log10(e) (mathematical identity).
    delta_log10, delta_e_over_r, T = 0.1, 300.0, 220.0
    f298, g = panel_factor_from_log10_form(delta_log10, delta_e_over_r)
    expected_log10 = delta_log10 + math.log10(math.e) * delta_e_over_r * abs(1 / T - 1 / 298)
    assert math.log10(panel_uncertainty_factor(T, f298, g)) == pytest.approx(
        expected_log10, rel=1e-12
    )
    assert f298 == pytest.approx(10**0.1, rel=1e-15)
    assert g == delta_e_over_r


@given(
    st.floats(min_value=0.0, max_value=2.0),
    st.floats(min_value=0.0, max_value=2000.0),
)
def test_log10_form_round_trip(delta_log10, delta_e_over_r):
    # Exact inverse pair f = 10^d, d = log10 f (definition).
    back = log10_form_from_panel_factor(*panel_factor_from_log10_form(delta_log10, delta_e_over_r))
    assert back[0] == pytest.approx(delta_log10, abs=1e-12)
    assert back[1] == delta_e_over_r


def test_panel_factor_is_vectorized_and_symmetric_in_1_over_t():
    # |1/T - 1/298| is symmetric in 1/T about 1/298 (definition of the form).
    inverse = 1 / 298 + np.array([-1e-3, 1e-3])
    f = panel_uncertainty_factor(1 / inverse, np.array([[1.2], [1.5]]), 150.0)
    assert f.shape == (2, 2)
    assert f[:, 0] == pytest.approx(f[:, 1], rel=1e-14)
    assert f[0, 0] == pytest.approx(1.2 * math.exp(0.15), rel=1e-12)


@pytest.mark.parametrize(
    ("T", "f298", "g", "message"),
    [
        (0.0, 1.1, 100.0, "T must be positive"),
        (300.0, 0.9, 100.0, "at least 1"),
        (300.0, 1.1, -5.0, "not negative"),
        (300.0, float("nan"), 100.0, "at least 1"),
    ],
)
def test_panel_factor_refuses_bad_values(T, f298, g, message):
    with pytest.raises(ScienceInputError, match=message):
        panel_uncertainty_factor(T, f298, g)


def test_log10_form_refuses_negative_values():
    with pytest.raises(ScienceInputError, match="delta_log10_k298"):
        panel_factor_from_log10_form(-0.1, 100.0)
    with pytest.raises(ScienceInputError, match="f298"):
        log10_form_from_panel_factor(0.5, 100.0)


# --- covering a band -----------------------------------------------------------


def linprog_cover(T, sigma, floor=1.0):
    """The same LP solved by scipy's HiGHS: variables (ln f298, g)."""
    u = np.abs(1 / T - 1 / 298)
    result = linprog(
        c=[1.0, u.mean()],
        A_ub=np.column_stack([-np.ones_like(u), -u]),
        b_ub=-sigma,
        bounds=[(math.log(floor), None), (0.0, None)],
        method="highs",
    )
    assert result.success
    return result.x, result.fun


@pytest.mark.parametrize(
    ("f298", "g", "T_low", "T_high"),
    [(1.2, 150.0, 200.0, 400.0), (1.05, 0.0, 250.0, 350.0), (2.0, 500.0, 500.0, 2000.0)],
)
def test_band_of_the_panel_form_is_returned_unchanged(f298, g, T_low, T_high):
    # A band already of the form is its own least cover (the LP optimum is unique then).
    T = np.linspace(T_low, T_high, 25)
    sigma = math.log(f298) + g * np.abs(1 / T - 1 / 298)
    result = covering_panel_factor(T, sigma)
    assert result.f298 == pytest.approx(f298, rel=1e-9)
    assert result.g == pytest.approx(g, rel=1e-9, abs=1e-7)


def random_bands(seed, rows, n):
    rng = np.random.default_rng(seed)
    low = rng.uniform(150.0, 900.0, rows)
    high = low * rng.uniform(1.05, 5.0, rows)
    T = low[:, None] + (high - low)[:, None] * np.linspace(0.0, 1.0, n)
    # Bands shaped like fits (a minimum inside the range) plus noise, some rising, some falling.
    centre = 1 / np.sqrt(low * high)
    sigma = np.sqrt(
        rng.uniform(0.01, 0.3, rows)[:, None] ** 2
        + (rng.uniform(0, 400, rows)[:, None] * (1 / T - centre[:, None])) ** 2
    ) + rng.uniform(0, 0.05, (rows, n))
    return T, sigma


def test_cover_matches_scipy_linprog_on_random_bands():
    # Reference: scipy.optimize.linprog (HiGHS) on the same LP, band by band.
    T, sigma = random_bands(seed=1, rows=40, n=15)
    floors = np.where(np.arange(40) % 3 == 0, 1.3, 1.0)
    result = covering_panel_factor(T, sigma, floor=floors)
    for i in range(40):
        _, optimum = linprog_cover(T[i], sigma[i], floors[i])
        ours = math.log(result.f298[i]) + result.g[i] * np.abs(1 / T[i] - 1 / 298).mean()
        assert ours == pytest.approx(optimum, rel=1e-9, abs=1e-12)
        covered = math.log(result.f298[i]) + result.g[i] * np.abs(1 / T[i] - 1 / 298)
        assert np.all(covered >= sigma[i] - 1e-12)
        assert result.f298[i] >= floors[i] and result.g[i] >= 0.0


def test_cover_when_the_band_falls_away_from_298_k_keeps_g_at_zero():
    # The g >= 0 bound binds: the LP optimum (scipy linprog) has g = 0, f = max band.
    T = np.linspace(500.0, 1500.0, 11)
    sigma = 0.5 - 100.0 * np.abs(1 / T - 1 / 298)
    result = covering_panel_factor(T, sigma)
    (_, g_ref), _ = linprog_cover(T, sigma)
    assert g_ref == pytest.approx(0.0, abs=1e-9)
    assert result.g == 0.0
    assert math.log(result.f298) == pytest.approx(sigma.max(), rel=1e-12)


def test_cover_respects_the_floor_and_handles_unknown_bands():
    T = np.linspace(250.0, 350.0, 5)
    sigma = np.vstack([np.full(5, 0.01), np.full(5, np.nan)])
    result = covering_panel_factor(T, sigma, floor=1.5)
    assert result.f298[0] == pytest.approx(1.5, rel=1e-15)
    assert result.g[0] == 0.0
    assert np.isnan(result.f298[1]) and np.isnan(result.g[1])


def test_cover_of_a_batch_equals_cover_row_by_row():
    T, sigma = random_bands(seed=7, rows=30, n=9)
    batch = covering_panel_factor(T.reshape(5, 6, 9), sigma.reshape(5, 6, 9))
    assert batch.f298.shape == (5, 6)
    for i in range(30):
        single = covering_panel_factor(T[i], sigma[i])
        assert batch.f298.reshape(-1)[i] == pytest.approx(single.f298, rel=1e-15)
        assert batch.g.reshape(-1)[i] == pytest.approx(single.g, rel=1e-15, abs=0)


@pytest.mark.parametrize(
    ("T", "sigma", "kwargs", "message"),
    [
        (np.array([250.0, 300.0]), np.array([0.1, -0.1]), {}, "not negative"),
        (np.array([250.0, 300.0]), np.array([0.1, np.inf]), {}, "finite"),
        (np.array([250.0, 300.0]), np.array([0.1, 0.2]), {"floor": 0.5}, "at least 1"),
        (np.array([250.0, 300.0]), np.array([0.1, 0.2, 0.3]), {}, "do not broadcast"),
        (np.array([]), np.array([]), {}, "at least 1 T"),
        (np.array([-250.0, 300.0]), np.array([0.1, 0.2]), {}, "positive"),
    ],
)
def test_cover_errors(T, sigma, kwargs, message):
    with pytest.raises(ScienceInputError, match=message):
        covering_panel_factor(T, sigma, **kwargs)


# --- sigma of ln k from a covariance --------------------------------------------


def test_sigma_from_covariance_matches_statsmodels_prediction_standard_error():
    # Reference: statsmodels OLS get_prediction(...).se_mean for the linear model
    # ln k = ln A + n ln T - Ea/(R T) in the regressors (1, ln T, -1/(R T)).
    rng = np.random.default_rng(3)
    T = np.linspace(300.0, 1500.0, 20)
    ln_k = ln_modified(T, 1e-2, 2.5, 500.0) + rng.normal(0, 0.05, T.size)

    def design(t):
        return np.column_stack([np.ones_like(t), np.log(t), -1 / (R * t)])

    model = sm.OLS(ln_k, design(T)).fit()
    T_new = np.array([250.0, 298.0, 800.0, 2000.0])
    expected = model.get_prediction(design(T_new)).se_mean
    ours = sigma_ln_k_from_covariance(T_new, model.cov_params())
    assert ours == pytest.approx(expected, rel=1e-9)


def test_sigma_from_covariance_shapes():
    # One covariance on a grid, a batch at one T each, a grid each, a common grid.
    rng = np.random.default_rng(4)
    factors = rng.normal(size=(4, 3, 3)) * np.array([0.1, 0.01, 100.0])
    cov = factors @ factors.transpose(0, 2, 1)
    grid = np.array([250.0, 300.0, 400.0])
    one = np.array([sigma_ln_k_from_covariance(grid, c) for c in cov])
    assert one.shape == (4, 3)
    assert sigma_ln_k_from_covariance(grid[1], cov) == pytest.approx(one[:, 1], rel=1e-14)
    assert sigma_ln_k_from_covariance(np.tile(grid, (4, 1)), cov) == pytest.approx(one, rel=1e-14)
    assert sigma_ln_k_from_covariance(grid[None, :], cov) == pytest.approx(one, rel=1e-14)
    per_fit = sigma_ln_k_from_covariance(np.array([250.0, 300.0, 400.0, 300.0]), cov)
    assert per_fit == pytest.approx(one[[0, 1, 2, 3], [0, 1, 2, 1]], rel=1e-14)
    assert isinstance(sigma_ln_k_from_covariance(300.0, cov[0]), float)


def test_sigma_from_covariance_agrees_with_the_fit_result():
    # The fit's own sigma_ln_k uses the same propagation (Bevington & Robinson ch. 3).
    T = np.linspace(300.0, 1500.0, 12)
    k = np.exp(ln_modified(T, 1e-2, 2.5, 500.0) + 0.03 * np.sin(T))
    fit = fit_rate_constants(T, k, form="modified")
    assert sigma_ln_k_from_covariance(T, fit.covariance) == pytest.approx(
        fit.sigma_ln_k(T), rel=1e-12
    )


def test_sigma_from_covariance_errors_and_nan():
    with pytest.raises(ScienceInputError, match=r"\(\.\.\., 3, 3\)"):
        sigma_ln_k_from_covariance(300.0, np.eye(2))
    with pytest.raises(ScienceInputError, match="does not broadcast"):
        sigma_ln_k_from_covariance(np.array([250.0, 300.0]), np.zeros((3, 3, 3)))
    with pytest.raises(ScienceInputError, match="finite"):
        sigma_ln_k_from_covariance(300.0, np.full((3, 3), np.inf))
    assert np.isnan(sigma_ln_k_from_covariance(300.0, np.full((3, 3), np.nan)))


def test_panel_factor_from_covariance_covers_the_band_on_a_fine_grid():
    # Covering (checked against the propagated band on a 2001-point grid, an independent
    # evaluation) and a batch of covariances equal to one at a time.
    T_data = np.linspace(220.0, 420.0, 9)
    fits = []
    for seed in range(3):
        rng = np.random.default_rng(seed)
        k = 2e9 * np.exp(-1500.0 / T_data + rng.normal(0, 0.1, T_data.size))
        fits.append(fit_rate_constants(T_data, k, 0.1))
    cov = np.stack([fit.covariance for fit in fits])
    batch = panel_factor_from_covariance(cov, 220.0, 420.0)
    fine = np.linspace(220.0, 420.0, 2001)
    for i, fit in enumerate(fits):
        single = panel_factor_from_covariance(fit.covariance, 220.0, 420.0)
        assert batch.f298[i] == pytest.approx(single.f298, rel=1e-14)
        band = np.log(single.f298) + single.g * np.abs(1 / fine - 1 / 298)
        assert np.all(band >= fit.sigma_ln_k(fine) * (1 - 1e-12))


def test_panel_factor_from_covariance_errors():
    with pytest.raises(ScienceInputError, match="T_min must not exceed T_max"):
        panel_factor_from_covariance(np.eye(3), 400.0, 300.0)
    with pytest.raises(ScienceInputError, match="n_grid"):
        panel_factor_from_covariance(np.eye(3), 300.0, 400.0, n_grid=1)


# --- chi-square scaling ----------------------------------------------------------


def arrhenius_data_with_excess_scatter():
    # synthetic: stated sigma 0.05, actual scatter 0.15 (reduced chi-square about 9)
    rng = np.random.default_rng(11)
    T = np.linspace(250.0, 450.0, 15)
    sigma = np.full(T.size, 0.05)
    ln_k = np.log(3e9) - 1800.0 / T + rng.normal(0.0, 0.15, T.size)
    return T, ln_k, sigma


def test_chi_square_scaling_equals_curve_fit_relative_sigma():
    # Reference: scipy.optimize.curve_fit(..., sigma=..., absolute_sigma=False) pcov.
    T, ln_k, sigma = arrhenius_data_with_excess_scatter()
    fit = fit_rate_constants(T, np.exp(ln_k), sigma)
    assert fit.reduced_chi_square > 1.0
    scaled, scale = scale_covariance_by_chi_square(fit.covariance, fit.reduced_chi_square)

    def model(t, ln_A, Ea):
        return ln_A - Ea / (R * t)

    _, pcov = curve_fit(model, T, ln_k, p0=[20.0, 15000.0], sigma=sigma, absolute_sigma=False)
    block = scaled[np.ix_([0, 2], [0, 2])]
    assert block == pytest.approx(pcov, rel=1e-6)
    assert scale == pytest.approx(fit.reduced_chi_square, rel=1e-15)


def test_chi_square_below_one_leaves_the_absolute_covariance():
    # Reference: curve_fit(..., absolute_sigma=True) when the scatter is within the sigmas.
    T = np.linspace(250.0, 450.0, 8)
    ln_k = np.log(3e9) - 1800.0 / T + 0.01 * np.cos(T)
    sigma = np.full(T.size, 0.05)
    fit = fit_rate_constants(T, np.exp(ln_k), sigma)
    assert fit.reduced_chi_square < 1.0
    scaled, scale = scale_covariance_by_chi_square(fit.covariance, fit.reduced_chi_square)

    def model(t, ln_A, Ea):
        return ln_A - Ea / (R * t)

    _, pcov = curve_fit(model, T, ln_k, p0=[20.0, 15000.0], sigma=sigma, absolute_sigma=True)
    assert scale == 1.0
    assert scaled[np.ix_([0, 2], [0, 2])] == pytest.approx(pcov, rel=1e-6)


def test_chi_square_scaling_of_a_batch():
    # Batch fits scaled at once equal the one-at-a-time scaling (same rule per group).
    T, ln_k, sigma = arrhenius_data_with_excess_scatter()
    group = np.arange(T.size) % 3
    batch = fit_rate_constants_batch(T, np.exp(ln_k), sigma, group)
    reduced = np.append(batch.reduced_chi_square, np.nan)
    covariance = np.concatenate([batch.covariance, np.eye(3)[None]])
    scaled, scale = scale_covariance_by_chi_square(covariance, reduced)
    expected = np.maximum(batch.reduced_chi_square, 1.0)
    assert scale[:3] == pytest.approx(expected, rel=1e-15)
    assert scale[3] == 1.0  # no degrees of freedom: the stated sigmas stand
    assert scaled[:3] == pytest.approx(batch.covariance * expected[:, None, None], rel=1e-15)


def test_chi_square_scaling_errors():
    with pytest.raises(ScienceInputError, match="square"):
        scale_covariance_by_chi_square(np.ones((2, 3)), 1.0)
    with pytest.raises(ScienceInputError, match="not negative"):
        scale_covariance_by_chi_square(np.eye(3), -1.0)
    with pytest.raises(ScienceInputError, match="do not match"):
        scale_covariance_by_chi_square(np.ones((2, 3, 3)), [1.0, 2.0, 3.0])


# --- random effects ----------------------------------------------------------------


def bcg_effects():
    rows = read_table("ref_uncertainty_meta_bcg.csv")
    a, b, c, d = (
        np.array([float(r[key]) for r in rows]) for key in ("tpos", "tneg", "cpos", "cneg")
    )
    effects = np.log(a / (a + b)) - np.log(c / (c + d))
    variances = 1 / a - 1 / (a + b) + 1 / c - 1 / (c + d)
    return effects, variances


def test_dersimonian_laird_matches_statsmodels_and_published_bcg_results():
    # References: statsmodels combine_effects(method_re="dl"); metafor's DL results for dat.bcg
    # (tau^2 = 0.3088, mean = -0.7141, SE 0.1787, Q = 152.23; from memory).
    effects, variances = bcg_effects()
    ours = dersimonian_laird(effects, variances)
    reference = combine_effects(effects, variances, method_re="dl")
    assert ours.tau_squared == pytest.approx(reference.tau2, rel=1e-12)
    assert ours.mean == pytest.approx(reference.mean_effect_re, rel=1e-12)
    assert math.sqrt(ours.variance) == pytest.approx(reference.sd_eff_w_re, rel=1e-12)
    assert ours.q_statistic == pytest.approx(reference.q, rel=1e-12)
    assert ours.tau_squared == pytest.approx(0.3088, abs=5e-5)
    assert ours.mean == pytest.approx(-0.7141, abs=5e-5)
    assert math.sqrt(ours.variance) == pytest.approx(0.1787, abs=5e-5)
    assert ours.q_statistic == pytest.approx(152.23, abs=5e-3)
    assert ours.n_sets == 13


def test_dersimonian_laird_is_vectorized_over_leading_axes():
    # Each row as statsmodels combine_effects(method_re="dl") gives it. statsmodels 0.15 does
    # not truncate tau^2 at zero; DerSimonian & Laird (1986) do, and the pooled mean is then the
    # fixed-effects mean (statsmodels mean_effect_fe).
    rng = np.random.default_rng(5)
    effects = rng.normal(0.0, 0.5, (6, 6))
    variances = rng.uniform(0.01, 0.5, (6, 6))
    result = dersimonian_laird(effects, variances)
    truncated = 0
    for i in range(6):
        with np.errstate(invalid="ignore"):  # statsmodels takes sqrt of a negative variance
            reference = combine_effects(effects[i], variances[i], method_re="dl")
        assert result.tau_squared[i] == pytest.approx(max(reference.tau2, 0.0), rel=1e-12)
        if reference.tau2 > 0:
            assert result.mean[i] == pytest.approx(reference.mean_effect_re, rel=1e-12)
        else:
            truncated += 1
            assert result.mean[i] == pytest.approx(reference.mean_effect_fe, rel=1e-12)
            assert result.variance[i] == pytest.approx(reference.var_eff_w_fe, rel=1e-12)
    assert 0 < truncated < 6  # both branches are exercised


@pytest.mark.parametrize(
    ("effects", "variances", "message"),
    [
        ([0.1], [0.01], "at least 2 sets"),
        ([0.1, 0.2], [0.01, 0.0], "positive"),
        ([0.1, np.nan], [0.01, 0.01], "finite"),
        ([0.1, 0.2], [0.01], "same shape"),
    ],
)
def test_dersimonian_laird_errors(effects, variances, message):
    with pytest.raises(ScienceInputError, match=message):
        dersimonian_laird(effects, variances)


def two_sets(ratio, n=5, sigma=0.05, wobble=0.0):
    # synthetic: two sets at the same temperatures, the second `ratio` times the first
    T_one = np.linspace(250.0, 350.0, n)
    T = np.tile(T_one, 2)
    set_index = np.repeat([0, 1], n)
    ln_k = np.log(2e9) - 1500.0 / T + np.log(ratio) * set_index
    ln_k = ln_k + wobble * np.where(np.arange(2 * n) % 2 == 0, 1.0, -1.0)
    return T, ln_k, np.full(2 * n, sigma), set_index


def test_between_set_variance_matches_statsmodels_on_offsets_computed_independently():
    # Reference: statsmodels combine_effects(method_re="dl") on set offsets computed here with
    # numpy's weighted least squares (np.linalg.lstsq), not with ratebank's fit.
    rng = np.random.default_rng(8)
    sets = np.repeat([0, 1, 2, 3], [4, 6, 5, 3])
    T = rng.uniform(230.0, 420.0, sets.size)
    sigma = rng.uniform(0.03, 0.1, sets.size)
    ln_k = np.log(2e9) - 1500.0 / T + np.array([0.2, -0.1, 0.05, 0.3])[sets] + rng.normal(0, sigma)
    design = np.column_stack([np.ones_like(T), -1.0 / T]) / sigma[:, None]
    solution = np.linalg.lstsq(design, ln_k / sigma, rcond=None)[0]
    residual = ln_k - (solution[0] - solution[1] / T)
    w = sigma**-2
    offsets = np.array([np.sum((w * residual)[sets == s]) / np.sum(w[sets == s]) for s in range(4)])
    variances = np.array([1 / np.sum(w[sets == s]) for s in range(4)])
    reference = combine_effects(offsets, variances, method_re="dl")
    result = between_set_variance(T, ln_k, sigma, sets)
    assert result.tau_squared == pytest.approx(reference.tau2, rel=1e-8)
    assert result.offsets == pytest.approx(offsets, rel=1e-8, abs=1e-12)
    assert result.offset_variances == pytest.approx(variances, rel=1e-12)
    assert result.q_statistic == pytest.approx(reference.q, rel=1e-8)
    assert result.sets.tolist() == [0, 1, 2, 3]


def test_two_sets_a_factor_two_apart_give_a_pooled_factor_of_about_sqrt_two():
    # Worked by hand (DerSimonian & Laird 1986 with K = 2, equal within-set variances v):
    # offsets -+ ln2/2, Q = (ln 2)^2 / (2 v), tau^2 = (ln 2)^2 / 2 - v; the pooled level then has
    # variance (v + tau^2)/2 = (ln 2)^2 / 4, i.e. f = exp(ln2 / 2) = sqrt 2 = 1.41.
    T, ln_k, sigma, sets = two_sets(2.0)
    v = 0.05**2 / 5
    result = between_set_variance(T, ln_k, sigma, sets)
    assert result.tau_squared == pytest.approx(math.log(2) ** 2 / 2 - v, rel=1e-10)
    assert math.sqrt(result.tau_squared) >= math.log(2) / 2
    pooled_sigma = random_effects_sigma_ln_k(sigma, sets, result.tau_squared)
    fit = fit_rate_constants(T, np.exp(ln_k), pooled_sigma)
    scaled, _ = scale_covariance_by_chi_square(fit.covariance, fit.reduced_chi_square)
    # At the weighted mean of 1/T the two-parameter band is the level's alone.
    T_centre = 1.0 / np.mean(1.0 / T)
    f_centre = math.exp(sigma_ln_k_from_covariance(T_centre, scaled))
    assert f_centre == pytest.approx(math.sqrt(2.0), rel=1e-6)
    assert math.exp(sigma_ln_k_from_covariance(298.0, scaled)) >= 1.4
    # Without the between-set variance the same data claim 1.6 % (the stated 5 % over 10
    # points); chi-square scaling (reduced chi-square 60) raises that only to 13 %, short of
    # the factor sqrt 2 that two sets a factor 2 apart imply.
    naive = fit_rate_constants(T, np.exp(ln_k), sigma)
    naive_cov, _ = scale_covariance_by_chi_square(naive.covariance, naive.reduced_chi_square)
    assert math.exp(sigma_ln_k_from_covariance(T_centre, naive_cov)) < 1.15


def test_consistent_sets_give_no_between_set_variance():
    # Sets that agree within their stated sigmas: Q < K - 1, so tau^2 = 0 (DL truncation).
    T, ln_k, sigma, sets = two_sets(1.0, wobble=0.02)
    result = between_set_variance(T, ln_k, sigma, sets)
    assert result.tau_squared == 0.0
    assert random_effects_sigma_ln_k(sigma, sets, 0.0) == pytest.approx(sigma, rel=1e-15)


def test_random_effects_sigma_gives_each_set_mean_the_random_effects_variance():
    # Definition: 1 / sum(1/sigma'^2) over a set = v_s + tau^2 (DerSimonian & Laird 1986).
    sigma = np.array([0.05, 0.1, 0.07, 0.2, 0.04])
    sets = np.array(["a", "a", "a", "b", "c"])
    tau2 = 0.03
    inflated = random_effects_sigma_ln_k(sigma, sets, tau2)
    for label in ("a", "b", "c"):
        mask = sets == label
        v = 1 / np.sum(sigma[mask] ** -2)
        assert 1 / np.sum(inflated[mask] ** -2) == pytest.approx(v + tau2, rel=1e-14)
    assert inflated[3] ** 2 == pytest.approx(0.2**2 + tau2, rel=1e-14)


def test_between_set_variance_errors():
    T, ln_k, sigma, sets = two_sets(2.0)
    with pytest.raises(ScienceInputError, match="at least 2 sets"):
        between_set_variance(T, ln_k, sigma, np.zeros(T.size))
    with pytest.raises(ScienceInputError, match="one per point"):
        between_set_variance(T, ln_k[:-1], sigma, sets)
    with pytest.raises(ScienceInputError, match="tau_squared"):
        random_effects_sigma_ln_k(sigma, sets, -0.1)
    with pytest.raises(ScienceInputError, match="positive"):
        random_effects_sigma_ln_k(np.zeros(T.size), sets, 0.1)


# --- linearizing a modified-Arrhenius row -----------------------------------------------


def test_linearization_at_298_k_gives_the_local_parameters():
    # REFERENCE-CHECKS s9: Atkinson OH + CH4 (1.85e-20 T^2.82 exp(-987/T), from memory) has
    # A_loc = 2.946e-12 and Ea_loc/R = 1827 K at 298 K (computed).
    row = linearize_modified_arrhenius(1.85e-20, 2.82, 987.0 * R, 195.0, 2025.0, T_lin=298.0)
    assert row.A == pytest.approx(2.946e-12, rel=2e-4)
    assert row.Ea / R == pytest.approx(1827.36, abs=0.01)
    assert row.T_lin == 298.0


def test_linearization_over_200_300_k_is_close_to_the_iupac_two_parameter_expression():
    # IUPAC OH + CH4 (200-300 K): 1.85e-12 exp(-1690/T) (from memory; REFERENCE-CHECKS s9).
    row = linearize_modified_arrhenius(1.85e-20, 2.82, 987.0 * R, 200.0, 300.0)
    assert row.T_lin == pytest.approx(math.sqrt(200.0 * 300.0), rel=1e-15)
    assert row.Ea / R == pytest.approx(1690.0, rel=0.01)
    assert row.A == pytest.approx(1.85e-12, rel=0.1)
    # Worked by hand: 2.82 (sqrt 1.5 - 1 - ln sqrt 1.5) = 2.82 x 0.0220123 = 0.062075.
    assert row.max_ln_deviation == pytest.approx(0.062075, rel=1e-4)


@pytest.mark.parametrize(
    ("A", "n", "E_over_R", "T_min", "T_max", "T_lin"),
    [
        (1.85e-20, 2.82, 987.0, 195.0, 2025.0, None),
        (1.85e-20, 2.82, 987.0, 195.0, 2025.0, 1000.0),
        (2.03e-16 / 300**4.57, 4.57, -693.0, 250.0, 340.0, None),
        (3.0e13, -1.5, 200.0, 300.0, 2500.0, 300.0),
    ],
)
def test_largest_deviation_matches_a_dense_grid(A, n, E_over_R, T_min, T_max, T_lin):
    # Independent evaluation: both forms written out here, on a 20001-point grid (the
    # closed form max is at an end of the range; the grid includes both ends).
    row = linearize_modified_arrhenius(A, n, E_over_R * R, T_min, T_max, T_lin=T_lin)
    T = np.linspace(T_min, T_max, 20001)
    ln_lin = np.log(row.A) - row.Ea / (R * T)
    deviation = np.abs(ln_lin - ln_modified(T, A, n, E_over_R))
    assert row.max_ln_deviation == pytest.approx(deviation.max(), rel=1e-9, abs=1e-12)
    at_tangent = np.log(row.A) - row.Ea / (R * row.T_lin) - ln_modified(row.T_lin, A, n, E_over_R)
    assert at_tangent == pytest.approx(0.0, abs=1e-10)


def test_linearization_is_vectorized():
    rows = linearize_modified_arrhenius(
        np.array([1e-20, 1e-18]), np.array([2.8, 2.0]), np.array([8000.0, 4000.0]), 200.0, 800.0
    )
    assert rows.A.shape == (2,)
    single = linearize_modified_arrhenius(1e-18, 2.0, 4000.0, 200.0, 800.0)
    assert rows.A[1] == pytest.approx(single.A, rel=1e-15)
    assert rows.max_ln_deviation[1] == pytest.approx(single.max_ln_deviation, rel=1e-15)


@pytest.mark.parametrize("T_lin", [150.0, 2100.0])
def test_linearization_refuses_a_tangent_outside_the_range(T_lin):
    with pytest.raises(ScienceInputError, match="T_lin must lie inside the row's range"):
        linearize_modified_arrhenius(1.85e-20, 2.82, 987.0 * R, 195.0, 2025.0, T_lin=T_lin)


def test_linearization_refuses_an_inverted_range():
    with pytest.raises(ScienceInputError, match="T_min must not exceed T_max"):
        linearize_modified_arrhenius(1.85e-20, 2.82, 987.0 * R, 500.0, 300.0)
    with pytest.raises(ScienceInputError, match="A must be positive"):
        linearize_modified_arrhenius(-1.0, 2.82, 987.0 * R, 300.0, 500.0)


def test_linearized_band_contains_the_old_band_around_the_modified_row():
    # Conservative rule (common practice): ln f_lin(T) >= ln f(T) + |ln(k_lin/k_mod)(T)|.
    A, n, E_over_R, T_min, T_max = 1.85e-20, 2.82, 987.0, 200.0, 500.0
    row = linearize_modified_arrhenius(A, n, E_over_R * R, T_min, T_max)
    f298, g = linearized_panel_factor(1.2, 100.0, row.max_ln_deviation)
    assert g == 100.0
    T = np.linspace(T_min, T_max, 1001)
    deviation = np.abs(np.log(row.A) - row.Ea / (R * T) - ln_modified(T, A, n, E_over_R))
    new = np.log(panel_uncertainty_factor(T, f298, g))
    old = np.log(panel_uncertainty_factor(T, 1.2, 100.0))
    assert np.all(new >= old + deviation - 1e-12)
    assert f298 == pytest.approx(1.2 * math.exp(row.max_ln_deviation), rel=1e-15)
    with pytest.raises(ScienceInputError, match="max_ln_deviation"):
        linearized_panel_factor(1.2, 100.0, -0.1)


# --- doctests ------------------------------------------------------------------------


def test_doctests():
    result = doctest.testmod(uncertainty, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0


def test_covering_a_batch_in_chunks_gives_the_same_factors_as_one_batch(monkeypatch):
    """Chunking is an implementation detail: 1000 synthetic covariances give the same
    (f(298), g) whether their grid pairs are formed all at once or 7 rows at a time."""
    module = uncertainty
    rng = np.random.default_rng(7)
    scale = np.array([0.1, 0.02, 300.0])[None, :, None]
    half = rng.normal(size=(1000, 3, 3)) * scale
    covariance = half @ half.transpose(0, 2, 1)
    T_min = rng.uniform(200.0, 400.0, 1000)
    T_max = T_min * rng.uniform(1.5, 5.0, 1000)
    monkeypatch.setattr(module, "_PAIR_CHUNK", 10**9)
    whole = module.panel_factor_from_covariance(covariance, T_min, T_max)
    monkeypatch.setattr(module, "_PAIR_CHUNK", 7 * 42**2)
    chunked = module.panel_factor_from_covariance(covariance, T_min, T_max)
    assert np.array_equal(whole.f298, chunked.f298)
    assert np.array_equal(whole.g, chunked.g)
    assert np.all(whole.f298 >= 1.0) and np.all(whole.g >= 0.0)
