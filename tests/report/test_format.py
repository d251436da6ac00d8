"""Number formatting of the terminal tables."""

from __future__ import annotations

import math

import pytest

from ratebank.report.format import shown, sig, trange


@pytest.mark.parametrize(
    ("value", "digits", "text"),
    [
        (6.02214076e23, 4, "6.022e+23"),
        (298.15, 4, "298.1"),
        (0.0012345, 3, "0.00123"),
        (1.5e-13, 3, "1.50e-13"),
        (0, 4, "0"),
        (None, 4, ""),
        (math.inf, 4, "inf"),
    ],
)
def test_sig_keeps_the_digits_asked_for(value, digits, text):
    assert sig(value, digits) == text


def test_a_range_and_a_long_listing():
    assert trange(250.0, 400.0) == "250-400" and trange(None, None) == ""
    rows, note = shown(list(range(5)), limit=3)
    assert rows == [0, 1, 2] and "2 more row(s)" in note
