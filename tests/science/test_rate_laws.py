"""science.rate_laws: every form through one function, checked against the rate laws written
out here (Lindemann 1922; the sum of channels is plain addition) and against the fall-off
functions of science.falloff, which are themselves checked against an independent
implementation in test_falloff.py."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

from ratebank.errors import ScienceInputError
from ratebank.science.falloff import FixedCentreBroadening, falloff_rate_constant
from ratebank.science.rate_laws import pressure_free_rate, rate_law

T = np.array([250.0, 500.0, 1000.0, 2000.0])
M = np.array([1e-3, 1.0, 40.0, 4000.0])  # mol m-3
HIGH = (2.0e6, 0.3, 5000.0)
LOW = (3.0e8, -1.2, 800.0)


def _k(A, n, Ea, T):
    return A * T**n * np.exp(-Ea / (constants.R * T))


def test_sum_adds_the_terms():
    terms = [(1.0e6, 0.0, 0.0), (2.0e7, 1.5, 20000.0), (3.0e5, -1.0, -1000.0)]
    expected = sum(_k(*t, T) for t in terms)
    np.testing.assert_allclose(rate_law(T, "sum", terms).k, expected, rtol=1e-13)


def test_arrhenius_and_sum_of_a_reaction_with_m_are_multiplied_by_m():
    np.testing.assert_allclose(
        rate_law(T, "arrhenius", [HIGH], M=M).k, _k(*HIGH, T) * M, rtol=1e-13
    )
    np.testing.assert_allclose(rate_law(T, "third-body", [LOW], M=M).k, _k(*LOW, T) * M, rtol=1e-13)


def test_lindemann_falloff_is_k_inf_pr_over_one_plus_pr():
    Pr = _k(*LOW, T) * M / _k(*HIGH, T)
    expected = _k(*HIGH, T) * Pr / (1 + Pr)
    found = rate_law(T, "falloff", [HIGH], low=LOW, M=M)
    np.testing.assert_allclose(found.k, expected, rtol=1e-12)
    np.testing.assert_allclose(found.Pr, Pr, rtol=1e-12)


def test_activated_is_k0_over_one_plus_pr():
    Pr = _k(*LOW, T) * M / _k(*HIGH, T)
    found = rate_law(T, "activated", [HIGH], low=LOW, M=M)
    np.testing.assert_allclose(found.k, _k(*LOW, T) / (1 + Pr), rtol=1e-12)


def test_broadening_is_passed_through():
    b = FixedCentreBroadening(0.45)
    np.testing.assert_allclose(
        rate_law(T, "falloff", [HIGH], low=LOW, broadening=b, M=M).k,
        falloff_rate_constant(T, M, LOW, HIGH, b),
        rtol=1e-15,
    )


def test_without_m_each_form_states_its_pressure_free_limit():
    assert pressure_free_rate(300.0, "falloff", [HIGH], low=LOW) == pytest.approx(_k(*HIGH, 300.0))
    assert pressure_free_rate(300.0, "activated", [HIGH], low=LOW) == pytest.approx(_k(*LOW, 300.0))
    assert pressure_free_rate(300.0, "third-body", [LOW]) == pytest.approx(_k(*LOW, 300.0))
    assert rate_law(300.0, "third-body", [LOW]).k == pytest.approx(_k(*LOW, 300.0))


@pytest.mark.parametrize(
    ("args", "kwargs", "match"),
    [
        (("falloff", [HIGH]), {"low": LOW}, "needs the effective third-body concentration"),
        (("falloff", [HIGH]), {"M": 1.0}, "needs one high-pressure term and the low-pressure"),
        (("arrhenius", [HIGH, HIGH]), {}, "has one term"),
        (("third-body", []), {}, "has one term"),
        (("spiral", [HIGH]), {}, "Unknown rate-law form"),
        (("sum", []), {}, "at least one term"),
    ],
)
def test_refusals(args, kwargs, match):
    with pytest.raises(ScienceInputError, match=match):
        rate_law(300.0, *args, **kwargs)
