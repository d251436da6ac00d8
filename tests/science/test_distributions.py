"""Chi-square and F tail probabilities against references.

References:
- scipy.special.chdtrc / chdtr / fdtrc (a general-purpose special-function
  library) over a grid of degrees of freedom 1..2000 and both tails;
- closed forms from Abramowitz & Stegun, Handbook of Mathematical Functions
  (1964), sections 26.4 and 26.6 (equation numbers below from memory): the
  chi-square tail for even dof (a finite Poisson sum, 26.4.21), the F tail for
  even dof1 (a finite binomial sum, 26.6.4), both summed exactly in rational
  arithmetic, and the F tail for (1, 1) (the Cauchy law, 1 - (2/pi) atan(sqrt f));
- critical values printed in the NIST/SEMATECH e-Handbook of Statistical
  Methods, sections 1.3.6.7.4 (chi-square) and 1.3.6.7.3 (F), three decimals
  (values written from memory, checked to the table's printed digits).
"""

from __future__ import annotations

import math
import subprocess
import sys
from fractions import Fraction

import numpy as np
import pytest
from scipy import special

from ratebank.science.distributions import chi_square_cdf, chi_square_tail, f_tail

RTOL = 1e-10
DOFS = [1, 2, 3, 4, 5, 7, 10, 20, 30, 50, 100, 200, 500, 1000, 2000]


def _relative_error(mine, reference, floor):
    mask = reference > floor
    assert mask.any()
    return np.max(np.abs(mine[mask] - reference[mask]) / reference[mask])


def _chi_square_grid(dof):
    """x from deep in the lower tail to deep in the upper tail, dense around the mean."""
    x = np.concatenate(
        [
            np.geomspace(1e-300, 1e5, 600),
            dof + np.linspace(-8.0, 8.0, 161) * math.sqrt(2.0 * dof),
            [dof + 1.99, dof + 2.0, dof + 2.01],  # the series / fraction switch at x/2 = a + 1
        ]
    )
    return x[x > 0]


@pytest.mark.parametrize("dof", DOFS)
def test_chi_square_tail_matches_scipy(dof):
    x = _chi_square_grid(dof)
    reference = special.chdtrc(dof, x)
    assert (reference < 1e-200).any() and (reference > 0.999).any()  # both tails covered
    assert _relative_error(chi_square_tail(x, dof), reference, 1e-300) < RTOL


@pytest.mark.parametrize("dof", DOFS)
def test_chi_square_cdf_matches_scipy(dof):
    x = _chi_square_grid(dof)
    reference = special.chdtr(dof, x)
    assert (reference < 1e-100).any() and (reference > 0.999).any()
    assert _relative_error(chi_square_cdf(x, dof), reference, 1e-300) < RTOL


@pytest.mark.parametrize("dof1", [1, 2, 3, 5, 10, 30, 100, 1000, 2000])
@pytest.mark.parametrize("dof2", [1, 2, 3, 4, 10, 30, 100, 300, 1000, 2000])
def test_f_tail_matches_scipy(dof1, dof2):
    f = np.concatenate([np.geomspace(1e-8, 1e14, 600), np.linspace(0.01, 10.0, 200)])
    reference = special.fdtrc(dof1, dof2, f)
    # below about 1e-280 scipy's own fdtrc drifts (see test_f_tail_even_dof1_exact_sum)
    assert _relative_error(f_tail(f, dof1, dof2), reference, 1e-280) < RTOL


@pytest.mark.parametrize("dof", [2, 10, 60, 400])
@pytest.mark.parametrize("x", [0.5, 9.0, 80.0, 700.0, 1300.0])
def test_chi_square_tail_even_dof_exact_sum(dof, x):
    # A&S 26.4.21: Q = exp(-x/2) sum_{j < dof/2} (x/2)^j / j!, exact for x/2 an integer/2
    half = Fraction(x) / 2
    total = sum(half**j / math.factorial(j) for j in range(dof // 2))
    exact = math.exp(math.log(total) - float(half)) if total else 0.0
    assert float(chi_square_tail(x, dof)) == pytest.approx(exact, rel=1e-11)


@pytest.mark.parametrize(
    ("dof1", "dof2", "f"),
    [(30, 1000, 112.9), (30, 2000, 71.55), (2, 7, 3.0), (10, 3, 1e6), (30, 1000, 50.0)],
)
def test_f_tail_even_dof1_exact_sum(dof1, dof2, f):
    # A&S 26.6.4 (dof1 even): Q = y^(d2/2) sum_{j < d1/2} C(d2/2 + j - 1, j) (1 - y)^j,
    # y = d2 / (d2 + d1 f); exact in rationals (d2 even or not: the sum is a
    # product of a power and a polynomial; the power is taken in logs)
    y = Fraction(dof2) / (dof2 + dof1 * Fraction(f))
    a = Fraction(dof2, 2)
    coefficient, total = Fraction(1), Fraction(0)
    for j in range(dof1 // 2):
        total += coefficient * (1 - y) ** j
        coefficient = coefficient * (a + j) / (j + 1)
    exact = math.exp(float(a) * math.log(y) + math.log(total))
    assert float(f_tail(f, dof1, dof2)) == pytest.approx(exact, rel=1e-11)


@pytest.mark.parametrize("f", [1e-14, 1e-8, 0.3, 1.0, 40.0, 1e12])
def test_f_tail_one_one_is_cauchy(f):
    exact = 1.0 - 2.0 / math.pi * math.atan(math.sqrt(f))
    if f > 1.0:
        exact = 2.0 / math.pi * math.atan(1.0 / math.sqrt(f))  # without cancellation
    assert float(f_tail(f, 1, 1)) == pytest.approx(exact, rel=1e-12)


# (dof, upper-tail probability, critical value printed to 3 decimals) --
# NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.4 (from memory)
CHI_SQUARE_TABLE = [
    (1, 0.05, 3.841),
    (1, 0.001, 10.828),
    (10, 0.05, 18.307),
    (10, 0.001, 29.588),
    (30, 0.05, 43.773),
    (30, 0.001, 59.703),
]
# ((dof1, dof2), upper-tail probability, critical value) -- same handbook, 1.3.6.7.3 (from memory)
F_TABLE = [((1, 10), 0.05, 4.965), ((1, 30), 0.05, 4.171)]


@pytest.mark.parametrize(("dof", "p", "critical"), CHI_SQUARE_TABLE)
def test_chi_square_table_values(dof, p, critical):
    # the printed value is the true one rounded to 3 decimals: the tail crosses p within it
    assert chi_square_tail(critical - 0.0005, dof) > p > chi_square_tail(critical + 0.0005, dof)
    assert chi_square_cdf(critical - 0.0005, dof) < 1 - p < chi_square_cdf(critical + 0.0005, dof)


@pytest.mark.parametrize(("dofs", "p", "critical"), F_TABLE)
def test_f_table_values(dofs, p, critical):
    assert f_tail(critical - 0.0005, *dofs) > p > f_tail(critical + 0.0005, *dofs)


def test_tails_add_to_one():
    x = np.geomspace(1e-3, 1e3, 50)[:, None]
    dof = np.array([1, 5, 50, 500])
    np.testing.assert_allclose(chi_square_tail(x, dof) + chi_square_cdf(x, dof), 1.0, rtol=1e-14)


def test_limits_at_zero_and_infinity():
    x = np.array([0.0, np.inf])
    assert chi_square_tail(x, 3).tolist() == [1.0, 0.0]
    assert chi_square_cdf(x, 3).tolist() == [0.0, 1.0]
    assert f_tail(x, 1, 7).tolist() == [1.0, 0.0]
    # a finite f so large that dof1 f / dof2 overflows
    assert float(f_tail(1e308, 10, 1)) == 0.0


@pytest.mark.parametrize(
    ("x", "dof"),
    [(np.nan, 3), (2.0, np.nan), (-1.0, 3), (2.0, -1.0), (np.nan, np.nan)],
)
def test_nan_and_domain_give_nan_like_scipy(x, dof):
    assert np.isnan(chi_square_tail(x, dof)) and np.isnan(special.chdtrc(dof, x))
    assert np.isnan(chi_square_cdf(x, dof)) and np.isnan(special.chdtr(dof, x))
    assert np.isnan(f_tail(x, 1, dof)) and np.isnan(special.fdtrc(1, dof, x))


def test_zero_dof_as_scipy():
    x = np.array([0.0, 1.0, np.inf])
    np.testing.assert_array_equal(chi_square_tail(x, 0), special.chdtrc(0, x))
    np.testing.assert_array_equal(chi_square_cdf(x, 0), special.chdtr(0, x))
    assert np.isnan(f_tail(1.0, 0, 3)) and np.isnan(f_tail(1.0, 3, 0))


def test_nan_propagates_elementwise():
    out = chi_square_tail(np.array([1.0, np.nan, 4.0]), 2)
    assert np.isnan(out[1]) and np.isfinite(out[[0, 2]]).all()
    out = f_tail(np.array([1.0, 2.0, np.nan]), 1, np.array([3, np.nan, 3]))
    assert np.isfinite(out[0]) and np.isnan(out[1:]).all()


def test_broadcasting_and_scalars():
    x = np.linspace(0.5, 20.0, 6).reshape(2, 3, 1)
    dof = np.array([1, 4, 9, 16])
    assert chi_square_tail(x, dof).shape == (2, 3, 4)
    assert chi_square_cdf(x, dof).shape == (2, 3, 4)
    np.testing.assert_allclose(chi_square_tail(x, dof), special.chdtrc(dof, x), rtol=RTOL)
    out = f_tail(x, dof, dof[::-1])
    assert out.shape == (2, 3, 4)
    np.testing.assert_allclose(out, special.fdtrc(dof, dof[::-1], x), rtol=RTOL)
    scalar = chi_square_tail(3.0, 2)
    assert np.ndim(scalar) == 0 and isinstance(float(scalar), float)
    assert np.ndim(f_tail(3.0, 1, 2)) == 0
    assert chi_square_tail([], 2).shape == (0,)


def test_integer_and_list_inputs():
    np.testing.assert_allclose(
        chi_square_tail([1, 2, 3], [1, 2, 3]), special.chdtrc([1, 2, 3], [1, 2, 3]), rtol=RTOL
    )


def test_importing_does_not_import_scipy():
    code = (
        "import sys; import ratebank.science.distributions, ratebank.science.arrhenius; "
        "print(any(m == 'scipy' or m.startswith('scipy.') for m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
