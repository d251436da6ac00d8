"""Tests of ratebank.science.units: rate-constant and energy unit conversions.

Expected factors are computed here from scipy.constants (CODATA, exact in the
2019 SI) and, where REFERENCE-CHECKS.md section 2 prints a number, checked
against that printed number as well.
"""

from __future__ import annotations

import doctest
import itertools
import math
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import constants as sc

from ratebank.errors import RatebankError, UnitError
from ratebank.science import units
from ratebank.science.units import (
    ENERGY_UNIT_SPELLINGS,
    ENERGY_UNITS,
    RATE_UNIT_EXAMPLES,
    EnergyUnit,
    RateUnit,
    canonical_energy_unit,
    energy_from_si,
    energy_to_si,
    parse_energy_unit,
    parse_rate_unit,
    parse_unit,
    rate_from_si,
    rate_to_si,
    rate_unit_label,
    si_rate_unit,
)

N_A = sc.N_A
R = sc.R
CAL = sc.calorie_th

# ---------------------------------------------------------------------------
# Rate-constant conversions
# ---------------------------------------------------------------------------

# (value, from unit, to unit, expected from scipy.constants, printed value or None, rtol, source)
RATE_CONVERSIONS = [
    (1.0, "cm3/molecule/s", "cm3/mol/s", N_A, 6.02214076e23, 1e-12, "REFERENCE-CHECKS 2: x N_A"),
    (1.0, "cm3/molecule/s", "dm3/mol/s", N_A * 1e-3, 6.02214076e20, 1e-12, "RC 2: x N_A 1e-3"),
    (1.0, "cm3/molecule/s", "m3/mol/s", N_A * 1e-6, 6.02214076e17, 1e-12, "RC 2: x N_A 1e-6"),
    (1.0, "m3/mol/s", "cm3/molecule/s", 1e6 / N_A, 1.660539067e-18, 1e-9, "RC 2: 1e6/N_A"),
    (1.0, "dm3/mol/s", "cm3/molecule/s", 1e3 / N_A, 1.660539067e-21, 1e-9, "RC 2: 1e3/N_A"),
    (1e-10, "cm3/molecule/s", "dm3/mol/s", 1e-13 * N_A, 6.02214076e10, 1e-12, "RC 2: rule"),
    (1e-10, "cm3/molecule/s", "cm3/mol/s", 1e-10 * N_A, 6.02214076e13, 1e-12, "RC 2: rule"),
    (1e-10, "cm3/molecule/s", "m3/mol/s", 1e-16 * N_A, 6.02214076e7, 1e-12, "RC 2: rule"),
    (1.0, "L/mol/s", "cm3/mol/s", 1e3, None, 1e-15, "1 L = 1 dm3 = 1e3 cm3 (SI)"),
    (1.0, "M-1 s-1", "m3/mol/s", 1e-3, None, 1e-15, "1 M = 1 mol dm-3 (IUPAC Green Book)"),
    (1.0, "cm6/molecule2/s", "m6/mol2/s", 1e-12 * N_A**2, None, 1e-12, "(N_A 1e-6)^2"),
    (1.0, "cm6/molecule2/s", "cm6/mol2/s", N_A**2, None, 1e-12, "N_A^2"),
    (1.0, "L2 mol-2 s-1", "cm6/mol2/s", 1e6, None, 1e-15, "(1e3 cm3)^2"),
    (1.0, "min-1", "s-1", 1 / 60, None, 1e-15, "1 min = 60 s (SI accepted unit)"),
    (1.0, "h-1", "s-1", 1 / 3600, None, 1e-15, "1 h = 3600 s (SI accepted unit)"),
    (1.0, "ms-1", "s-1", 1e3, None, 1e-15, "per millisecond (SI prefix rule)"),
]


@pytest.mark.parametrize(
    ("value", "source_unit", "target_unit", "computed", "printed", "rtol", "source"),
    RATE_CONVERSIONS,
)
def test_rate_conversion_matches_constants(
    value, source_unit, target_unit, computed, printed, rtol, source
):
    converted = rate_from_si(rate_to_si(value, source_unit), target_unit)
    assert converted == pytest.approx(computed, rel=rtol), source
    if printed is not None:
        assert converted == pytest.approx(printed, rel=rtol), source


# Every spelling README, Units and the rate-law convention and RATE_UNIT_EXAMPLES name, with the order and
# SI factor it must give (factors computed from N_A).
SPELLINGS = [
    ("cm3/molecule/s", 2, 1e-6 * N_A),
    ("cm3 molecule-1 s-1", 2, 1e-6 * N_A),
    ("cm3/molec/s", 2, 1e-6 * N_A),
    ("cm3 molec-1 s-1", 2, 1e-6 * N_A),
    ("cm3 molecules-1 s-1", 2, 1e-6 * N_A),
    ("cm^3/(mol*s)", 2, 1e-6),
    ("cm**3/mol/s", 2, 1e-6),
    ("cm3/mol/s", 2, 1e-6),
    ("cm3 mol-1 s-1", 2, 1e-6),
    ("cm3·mol-1·s-1", 2, 1e-6),
    ("cm³ molecule⁻¹ s⁻¹", 2, 1e-6 * N_A),
    ("cm3 / mol / s", 2, 1e-6),
    ("dm3/mol/s", 2, 1e-3),
    ("L/mol/s", 2, 1e-3),
    ("l mol-1 s-1", 2, 1e-3),
    ("M-1 s-1", 2, 1e-3),
    ("m3/mol/s", 2, 1.0),
    ("s-1", 1, 1.0),
    ("s^-1", 1, 1.0),
    ("s^(-1)", 1, 1.0),
    ("1/s", 1, 1.0),
    ("/s", 1, 1.0),
    ("cm6/molecule2/s", 3, 1e-12 * N_A**2),
    ("cm^6 molecule^-2 s^-1", 3, 1e-12 * N_A**2),
    ("(cm3/molecule)2/s", 3, 1e-12 * N_A**2),
    ("cm6/mol2/s", 3, 1e-12),
    ("m6/mol2/s", 3, 1.0),
    ("M-2 s-1", 3, 1e-6),
    ("cm9/molecule3/s", 4, 1e-18 * N_A**3),
]


@pytest.mark.parametrize(("text", "order", "to_si"), SPELLINGS)
def test_each_spelling_gives_its_order_and_factor(text, order, to_si):
    unit = parse_rate_unit(text)
    assert unit == RateUnit(text, order, pytest.approx(to_si, rel=1e-14))
    assert parse_rate_unit(text, order=order).order == order


@pytest.mark.parametrize(
    ("order", "text"), [(n, t) for n, texts in RATE_UNIT_EXAMPLES.items() for t in texts]
)
def test_documented_examples_parse_to_their_order(order, text):
    assert parse_rate_unit(text).order == order


def test_millisecond_is_not_metre_second():
    # SI Brochure, 9th ed., section 5: a prefix symbol is attached to its unit,
    # so 'ms' is the millisecond; metre times second needs a separator.
    assert parse_unit("ms").dimension == (0, 0, 1)
    assert parse_unit("ms").to_si == pytest.approx(1e-3, rel=1e-15)
    assert parse_unit("m s").dimension == (1, 0, 1)


def test_exact_decimal_scale():
    # cm3 must be exactly 1e-6, not (1e-2)**3 rounded twice.
    assert parse_rate_unit("cm3/mol/s").to_si == 1e-6
    assert parse_rate_unit("cm6/mol2/s").to_si == 1e-12


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5])
def test_si_rate_unit_is_the_identity(order):
    text = si_rate_unit(order)
    assert parse_rate_unit(text) == RateUnit(text, order, 1.0)


def test_si_rate_unit_text():
    assert [si_rate_unit(n) for n in (1, 2, 3, 4)] == ["s-1", "m3/mol/s", "m6/mol2/s", "m9/mol3/s"]


@pytest.mark.parametrize(
    ("unit", "unicode", "label"),
    [
        ("cm3/molecule/s", True, "cm³ molecule⁻¹ s⁻¹"),
        ("cm^3/(molec*s)", False, "cm3 molecule-1 s-1"),
        ("l mol-1 s-1", False, "L mol-1 s-1"),
        (RateUnit("cm6/mol2/s", 3, 1e-12), True, "cm⁶ mol⁻² s⁻¹"),
        (1, False, "s-1"),
        (2, True, "m³ mol⁻¹ s⁻¹"),
    ],
)
def test_rate_unit_label(unit, unicode, label):
    assert rate_unit_label(unit, unicode=unicode) == label


# ---------------------------------------------------------------------------
# Refusals
# ---------------------------------------------------------------------------


def test_wrong_order_message_names_order_and_dimension():
    with pytest.raises(UnitError) as caught:
        parse_rate_unit("cm3/molecule/s", order=1)
    assert str(caught.value) == (
        "unit 'cm3/molecule/s' is for a rate constant of order 2, but this reaction is of "
        "order 1: expected time-1 (e.g. s-1)"
    )


@pytest.mark.parametrize(
    ("text", "order", "unit_order", "expected_dimension"),
    [
        ("s-1", 2, 1, "volume amount-1 time-1"),
        ("cm6/molecule2/s", 2, 3, "volume amount-1 time-1"),
        ("cm3/mol/s", 3, 2, "volume2 amount-2 time-1"),
        ("M-1 s-1", 1, 2, "time-1"),
    ],
)
def test_wrong_order_refused(text, order, unit_order, expected_dimension):
    with pytest.raises(UnitError) as caught:
        parse_rate_unit(text, order=order)
    message = str(caught.value)
    assert f"order {unit_order}," in message
    assert f"this reaction is of order {order}" in message
    assert f"expected {expected_dimension}" in message
    with pytest.raises(UnitError, match=f"this reaction is of order {order}"):
        rate_to_si(1.0, text, order=order)
    with pytest.raises(UnitError, match=f"this reaction is of order {order}"):
        rate_from_si(1.0, parse_rate_unit(text), order=order)


def test_not_a_rate_unit():
    with pytest.raises(UnitError) as caught:
        parse_rate_unit("cm3/mol")
    assert str(caught.value) == (
        "'cm3/mol' is not a rate-constant unit (its dimension is length3 amount-1): "
        "expected (volume/amount)^(n-1) per time, e.g. cm3/molecule/s"
    )


@pytest.mark.parametrize("text", ["cm3/mol s", "m s-1", "ms", "cm3 mol-1 s-2", "1", "s/s"])
def test_other_dimensions_refused(text):
    with pytest.raises(UnitError, match="is not a rate-constant unit"):
        parse_rate_unit(text)


def test_not_a_rate_unit_with_order_names_expected_dimension():
    with pytest.raises(UnitError, match=r"order 2 needs volume amount-1 time-1"):
        parse_rate_unit("cm3/mol", order=2)


def test_zeroth_order_refused():
    with pytest.raises(UnitError, match=r"order 0 .*order 1 or above"):
        parse_rate_unit("mol/m3/s")


@pytest.mark.parametrize("order", [0, -1, 1.5, True])
def test_bad_order_argument(order):
    with pytest.raises(UnitError, match="reaction order must be a whole number"):
        parse_rate_unit("s-1", order=order)


# (text, column, fragment of the message)
UNREADABLE = [
    ("cm3/mole/s", 5, "unknown symbol 'mole'"),
    ("CM3/mol/s", 1, "unknown symbol 'CM'"),
    ("cm3s-1", 4, "written against the previous factor"),
    ("cm3//mol/s", 5, "expected a unit after '/'"),
    ("cm3/mol/", 9, "expected a unit after '/'"),
    ("*s", 1, "must stand between two units"),
    ("(cm3/mol/s", 1, "'(' is never closed"),
    ("cm3/mol)/s", 8, "unmatched ')'"),
    ("()/s", 1, "empty parentheses"),
    ("2/s", 1, "number '2'"),
    ("s0", 2, "exponent 0"),
    ("s-", 3, "expected digits after '-'"),
    ("cm^/s", 4, "expected digits after '^'"),
    ("s^-1.5", 5, "fractional exponent"),
    ("s^(-1", 6, "exponent '(' is never closed"),
    ("cm3/mol/s!", 10, "unexpected character '!'"),
    ("µs-1", 1, "unexpected character 'µ'"),
    ("s-100", 2, "exponent -100"),
    ("((((((((((s))))))))))", 9, "nested too deeply"),
]


@pytest.mark.parametrize(("text", "column", "fragment"), UNREADABLE)
def test_unreadable_units_name_the_column(text, column, fragment):
    with pytest.raises(UnitError) as caught:
        parse_rate_unit(text)
    message = str(caught.value)
    assert message.startswith(f"cannot read unit '{text}': ")
    assert f"at column {column}" in message
    assert fragment in message
    assert "\n" not in message


@pytest.mark.parametrize("text", ["", "   "])
def test_empty_unit(text):
    with pytest.raises(UnitError, match="no unit given"):
        parse_rate_unit(text)


def test_unit_must_be_text():
    with pytest.raises(UnitError, match="must be given as text"):
        parse_rate_unit(None)


def test_errors_are_ratebank_and_value_errors():
    with pytest.raises(RatebankError):
        parse_rate_unit("parsec")
    with pytest.raises(ValueError):
        parse_energy_unit("parsec")


# ---------------------------------------------------------------------------
# Values: floats and arrays
# ---------------------------------------------------------------------------


def test_float_in_float_out():
    result = rate_to_si(2.0, "cm3/mol/s")
    assert type(result) is float
    assert result == pytest.approx(2e-6, rel=1e-15)
    assert type(energy_from_si(4184, "kcal/mol")) is float


def test_array_in_array_out():
    values = np.array([[1e-12, 2e-12], [3e-12, 4e-12]])
    result = rate_to_si(values, "cm3 molecule-1 s-1")
    assert isinstance(result, np.ndarray)
    assert result.shape == (2, 2)
    np.testing.assert_allclose(result, values * 1e-6 * N_A, rtol=1e-14)
    back = rate_from_si(result, "cm3 molecule-1 s-1")
    np.testing.assert_allclose(back, values, rtol=1e-14)
    energies = energy_to_si(np.array([1.0, 2.0]), "kJ/mol")
    np.testing.assert_array_equal(energies, [1000.0, 2000.0])


def test_list_gives_array():
    result = energy_from_si([1000.0, 2000.0], "K")
    assert isinstance(result, np.ndarray)
    np.testing.assert_allclose(result, [1000.0 / R, 2000.0 / R], rtol=1e-15)


def test_input_array_is_not_modified():
    values = np.array([1.0, 2.0])
    rate_to_si(values, "dm3/mol/s")
    np.testing.assert_array_equal(values, [1.0, 2.0])


RATE_UNITS_FOR_ROUND_TRIPS = [
    "cm3/molecule/s",
    "cm3/mol/s",
    "dm3/mol/s",
    "m3/mol/s",
    "M-1 s-1",
]


@given(
    value=st.floats(min_value=1e-30, max_value=1e30),
    unit=st.sampled_from(RATE_UNITS_FOR_ROUND_TRIPS),
)
def test_rate_round_trip(value, unit):
    assert rate_from_si(rate_to_si(value, unit), unit) == pytest.approx(value, rel=1e-14)


@given(value=st.floats(min_value=1e-30, max_value=1e-5))
def test_rate_round_trip_through_four_units(value):
    # REFERENCE-CHECKS 2: any k through the four units and back is unchanged.
    k = value
    chain = [*RATE_UNITS_FOR_ROUND_TRIPS[:4], RATE_UNITS_FOR_ROUND_TRIPS[0]]
    for source, target in itertools.pairwise(chain):
        k = rate_from_si(rate_to_si(k, source), target)
    assert k == pytest.approx(value, rel=1e-14)


@given(
    value=st.floats(min_value=-1e9, max_value=1e9, allow_nan=False),
    unit=st.sampled_from(sorted(ENERGY_UNITS)),
)
def test_energy_round_trip(value, unit):
    assert energy_from_si(energy_to_si(value, unit), unit) == pytest.approx(
        value, rel=1e-14, abs=1e-300
    )


# ---------------------------------------------------------------------------
# Energies
# ---------------------------------------------------------------------------

# (value, from unit, to unit, expected from scipy.constants, printed value or None, rtol, source)
ENERGY_CONVERSIONS = [
    (1.0, "kcal/mol", "J/mol", 1000 * CAL, 4184.0, 0.0, "RC 2: thermochemical calorie"),
    (1.0, "cal/mol", "J/mol", CAL, 4.184, 0.0, "NIST SP 811: calorie_th = 4.184 J"),
    (1.0, "kJ/mol", "K", 1000 / R, 120.272355, 1e-9, "RC 2: 1000/R"),
    (1.0, "kcal/mol", "K", 1000 * CAL / R, 503.2195335, 1e-9, "RC 2: 4184/R"),
    (1.0, "eV", "J/mol", sc.e * N_A, 96485.33212, 1e-10, "RC 2: e N_A"),
    (1.0, "eV", "kcal/mol", sc.e * N_A / (1000 * CAL), 23.06054783, 1e-9, "RC 2"),
    (1.0, "eV", "K", sc.e / sc.k, 11604.51812, 1e-9, "RC 2: e/k_B"),
    (1000.0, "K", "kJ/mol", R, 8.314462618, 1e-9, "RC 2: R"),
    (1000.0, "K", "kcal/mol", R / CAL, 1.987204259, 1e-9, "RC 2: R"),
    (1775.0, "K", "kJ/mol", 1.775 * R, 14.75817115, 1e-9, "RC 2: JPL OH + CH4 E/R"),
    (1775.0, "K", "kcal/mol", 1.775 * R / CAL, 3.527287559, 1e-9, "RC 2"),
    (1775.0, "K", "eV", 1775 * sc.k / sc.e, 0.1529576654, 1e-9, "RC 2: k_B/e"),
    (1.0, "J/molecule", "J/mol", N_A, 6.02214076e23, 1e-15, "N_A (exact)"),
    (1.0, "cm-1", "J/mol", sc.h * sc.c * 100 * N_A, None, 1e-14, "h c 100 N_A"),
    # Independent check: hc/k is CODATA's second radiation constant c2.
    (
        1.0,
        "cm-1",
        "K",
        100 * sc.physical_constants["second radiation constant"][0],
        None,
        1e-12,
        "CODATA c2 = h c / k_B via scipy.constants.physical_constants",
    ),
]


@pytest.mark.parametrize(
    ("value", "source_unit", "target_unit", "computed", "printed", "rtol", "source"),
    ENERGY_CONVERSIONS,
)
def test_energy_conversion_matches_constants(
    value, source_unit, target_unit, computed, printed, rtol, source
):
    converted = energy_from_si(energy_to_si(value, source_unit), target_unit)
    assert converted == pytest.approx(computed, rel=rtol, abs=0), source
    if printed is not None:
        assert converted == pytest.approx(printed, rel=max(rtol, 1e-15), abs=0), source


ENERGY_SPELLINGS = [
    ("J/mol", "J/mol"),
    ("J mol-1", "J/mol"),
    ("kJ/mol", "kJ/mol"),
    ("kJ mol-1", "kJ/mol"),
    ("kJ mol^-1", "kJ/mol"),
    ("kJ·mol⁻¹", "kJ/mol"),
    ("cal/mol", "cal/mol"),
    ("kcal/mol", "kcal/mol"),
    ("kcal mol-1", "kcal/mol"),
    ("J/molecule", "J/molecule"),
    ("J/molec", "J/molecule"),
    ("K", "K"),
    ("eV", "eV"),
    ("eV/molecule", "eV"),
    ("cm-1", "cm-1"),
    ("cm^-1", "cm-1"),
    ("1/cm", "cm-1"),
]


@pytest.mark.parametrize(("text", "canonical"), ENERGY_SPELLINGS)
def test_energy_spellings(text, canonical):
    assert canonical_energy_unit(text) == canonical
    assert parse_energy_unit(text) == EnergyUnit(text, parse_energy_unit(canonical).to_si)


@pytest.mark.parametrize("text", ENERGY_UNIT_SPELLINGS)
def test_documented_energy_spellings_parse(text):
    assert canonical_energy_unit(parse_energy_unit(text)) in ENERGY_UNITS


@pytest.mark.parametrize("canonical", sorted(ENERGY_UNITS))
def test_energy_units_are_canonical(canonical):
    assert canonical_energy_unit(canonical) == canonical


@pytest.mark.parametrize("text", ["kcal", "J", "kJ/mol2", "K/mol", "cm", "eV/mol/mol"])
def test_unknown_energy_unit_lists_accepted(text):
    with pytest.raises(UnitError) as caught:
        parse_energy_unit(text)
    message = str(caught.value)
    assert message.startswith(f"unknown energy unit '{text}': accepted energy units are ")
    for canonical in ENERGY_UNITS:
        assert canonical in message
    assert "\n" not in message


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("kJ/mole", "unknown symbol 'mole' at column 4"),
        ("kj/mol", "unknown symbol 'kj' at column 1"),
        ("kJ//mol", "expected a unit after '/'"),
        ("", "no energy unit given"),
    ],
)
def test_unreadable_energy_unit_lists_accepted(text, fragment):
    with pytest.raises(UnitError) as caught:
        parse_energy_unit(text)
    assert fragment in str(caught.value)
    assert "accepted energy units are J/mol, kJ/mol" in str(caught.value)


def test_energy_unit_object_accepted():
    unit = parse_energy_unit("kcal/mol")
    assert energy_to_si(2.0, unit) == 8368.0
    assert canonical_energy_unit(unit) == "kcal/mol"


# ---------------------------------------------------------------------------
# Any text: a result or a UnitError, never another exception
# ---------------------------------------------------------------------------

UNIT_ALPHABET = "cmdlLolecusinhMKJkVaeg0123456789-^*/() ·⁻³²¹+.µ"


@given(st.one_of(st.text(), st.text(alphabet=UNIT_ALPHABET, max_size=30)))
def test_any_text_rate_unit(text):
    try:
        unit = parse_rate_unit(text)
    except UnitError:
        return
    assert unit.order >= 1
    assert 0.0 < unit.to_si < math.inf


@given(st.one_of(st.text(), st.text(alphabet=UNIT_ALPHABET, max_size=30)))
def test_any_text_energy_unit(text):
    try:
        unit = parse_energy_unit(text)
    except UnitError:
        return
    assert canonical_energy_unit(unit) in ENERGY_UNITS
    assert 0.0 < unit.to_si < math.inf


# ---------------------------------------------------------------------------
# Start-up cost and doctests
# ---------------------------------------------------------------------------


def test_import_and_plain_parse_load_neither_numpy_nor_scipy():
    # Fast listing commands import this module; scipy.constants costs ~0.1 s.
    code = (
        "import sys\n"
        "from ratebank.science import units\n"
        "units.parse_rate_unit('cm3/mol/s'); units.rate_to_si(1.0, 's-1')\n"
        "units.parse_energy_unit('kJ/mol')\n"
        "print('scipy' in sys.modules, 'numpy' in sys.modules)\n"
    )
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    )
    assert result.stdout.split() == ["False", "False"]


def test_doctests():
    outcome = doctest.testmod(units)
    assert outcome.failed == 0
    assert outcome.attempted > 0
