"""Tests of ratebank.science.formula: parsing, Hill order, molar masses, the weight table."""

from __future__ import annotations

import doctest
import math
import subprocess
import sys

import pytest
from chemicals import elements as chemicals_elements
from hypothesis import given
from hypothesis import strategies as st

from ratebank.errors import FormulaError, RatebankError
from ratebank.science import formula
from ratebank.science.formula import (
    add_counts,
    elements,
    hill_formula,
    hill_order,
    molar_mass,
    multiply_counts,
    parse_formula,
    standard_atomic_weight,
)

# ---------------------------------------------------------------------------
# Parsing
# ---------------------------------------------------------------------------

PARSED = [
    ("CH3OH", {"C": 1, "H": 4, "O": 1}),
    ("C2H5", {"C": 2, "H": 5}),
    ("HO2", {"H": 1, "O": 2}),
    ("N2O5", {"N": 2, "O": 5}),
    ("O3", {"O": 3}),
    ("H", {"H": 1}),
    ("Ar", {"Ar": 1}),
    ("CH2CH2", {"C": 2, "H": 4}),
    ("(CH3)2CO", {"C": 3, "H": 6, "O": 1}),
    ("CH3(CH2)2OH", {"C": 3, "H": 8, "O": 1}),
    ("Ca(OH)2", {"Ca": 1, "O": 2, "H": 2}),
    ("C((CH3)3)4", {"C": 13, "H": 36}),
    ("(CH3)3COOH", {"C": 4, "H": 10, "O": 2}),
    ("Co", {"Co": 1}),
    ("CO", {"C": 1, "O": 1}),
    (" HCl ", {"H": 1, "Cl": 1}),
    ("C12H26", {"C": 12, "H": 26}),
]


@pytest.mark.parametrize(("text", "counts"), PARSED)
def test_parse_formula(text, counts):
    assert parse_formula(text) == counts


def test_parse_returns_hill_ordered_fresh_dict():
    first = parse_formula("OHC")
    assert list(first) == ["C", "H", "O"]
    first["C"] = 99  # a cached result must not be shared with callers
    assert parse_formula("OHC") == {"C": 1, "H": 1, "O": 1}


# (text, column, fragment of the message)
FORMULA_ERRORS = [
    ("CH3Xy", 4, "unknown element symbol 'Xy'"),
    ("Q", 1, "unknown element symbol 'Q'"),
    ("ch4", 1, "start with a capital letter"),
    ("C2h6", 3, "unexpected 'h'"),
    ("CH3)", 4, "unmatched ')'"),
    ("(CH3", 1, "'(' is never closed"),
    ("C((H)", 2, "'(' is never closed"),
    ("C()", 2, "empty parentheses"),
    ("C0", 2, "count '0'"),
    ("(CH3)0", 6, "count '0'"),
    ("C02", 2, "count '02'"),
    ("C12345", 2, "counts are at most 9999"),
    ("CH3 OH", 4, "unexpected character ' '"),
    ("CH3.OH", 4, "unexpected character '.'"),
    ("CH3•", 4, "unexpected character '•'"),
    ("[CH3]", 1, "unexpected character '['"),
    ("OH-", 3, "charge sign '-'"),
    ("H3O+", 4, "charge sign '+'"),
    ("OD", 2, "isotope label 'D'"),
    ("T2", 1, "isotope label 'T'"),
    ("13CO", 1, "number '13'"),
    ("2H2O", 1, "number '2'"),
    ("(2H)", 2, "number '2'"),
    ("CH₄", 3, "unexpected character '₄'"),
    ("Pu", 1, "unknown element symbol 'Pu'"),
]


@pytest.mark.parametrize(("text", "column", "fragment"), FORMULA_ERRORS)
def test_formula_errors_name_the_column(text, column, fragment):
    with pytest.raises(FormulaError) as caught:
        parse_formula(text)
    message = str(caught.value)
    assert f"at column {column} in formula '{text.strip()}'" in message
    assert fragment in message
    assert ": " in message.split(f"'{text.strip()}'", 1)[1]  # says what was expected
    assert "\n" not in message


@pytest.mark.parametrize("text", ["", "   "])
def test_empty_formula(text):
    with pytest.raises(FormulaError, match="empty formula"):
        parse_formula(text)


def test_formula_errors_are_ratebank_and_value_errors():
    with pytest.raises(RatebankError):
        parse_formula("Xx")
    with pytest.raises(ValueError):
        parse_formula("Xx")
    with pytest.raises(FormulaError, match="must be given as text"):
        parse_formula(42)


@given(st.one_of(st.text(), st.text(alphabet="CHONClArSi()0123456789 +-Dx", max_size=25)))
def test_any_text_formula(text):
    try:
        counts = parse_formula(text)
    except FormulaError:
        return
    assert counts
    assert all(isinstance(n, int) and n >= 1 for n in counts.values())
    assert set(counts) <= set(elements())
    assert parse_formula(hill_formula(counts)) == counts


# ---------------------------------------------------------------------------
# Molar masses
# ---------------------------------------------------------------------------

CHEMICALS_FORMULAS = [
    "CH3OH",
    "C2H5",
    "HO2",
    "N2O5",
    "O3",
    "H2O",
    "CO2",
    "CH4",
    "C3H8",
    "NH3",
    "HCl",
    "Ar",
    "N2",
    "OH",
    "H2O2",
    "SO2",
    "CH3CHO",
    "C2H6",
]


@pytest.mark.parametrize("text", CHEMICALS_FORMULAS)
def test_molar_mass_against_chemicals(text):
    # chemicals 1.5.2, elements.molecular_weight(simple_formula_parser(f)) [g/mol].
    # chemicals uses older IUPAC weights (e.g. C 12.0107, H 1.00794, Ar 39.948),
    # hence rel 1e-4 (REFERENCE-CHECKS section 3).
    expected = chemicals_elements.molecular_weight(chemicals_elements.simple_formula_parser(text))
    assert molar_mass(text) * 1000 == pytest.approx(expected, rel=1e-4)


@pytest.mark.parametrize("text", ["(CH3)2CO", "CH3(CH2)2OH", "Ca(OH)2", "C((CH3)3)4"])
def test_parenthesised_formulas_against_chemicals(text):
    # chemicals 1.5.2, elements.nested_formula_parser reads parenthesised groups.
    reference = chemicals_elements.nested_formula_parser(text)
    assert parse_formula(text) == reference
    expected = chemicals_elements.molecular_weight(reference)
    assert molar_mass(text) * 1000 == pytest.approx(expected, rel=1e-4)


# Hand arithmetic with the IUPAC 2021 abridged weights (H 1.008, C 12.011,
# N 14.007, O 15.999, Cl 35.45, Ar 39.95; Prohaska et al. 2022).
HAND_MOLAR_MASSES = [
    ("H2O", 2 * 1.008 + 15.999, "IUPAC 2021 abridged: 2 H + O"),
    ("CO2", 12.011 + 2 * 15.999, "IUPAC 2021 abridged: C + 2 O"),
    ("CH4", 12.011 + 4 * 1.008, "IUPAC 2021 abridged: C + 4 H"),
    ("HCl", 1.008 + 35.45, "IUPAC 2021 abridged: H + Cl"),
    ("N2O5", 2 * 14.007 + 5 * 15.999, "IUPAC 2021 abridged: 2 N + 5 O"),
    ("Ar", 39.95, "IUPAC 2021 abridged (interval element, conventional value)"),
    ("(CH3)2CO", 3 * 12.011 + 6 * 1.008 + 15.999, "IUPAC 2021 abridged: 3 C + 6 H + O"),
]


@pytest.mark.parametrize(("text", "grams", "source"), HAND_MOLAR_MASSES)
def test_molar_mass_by_hand(text, grams, source):
    assert molar_mass(text) == pytest.approx(grams / 1000, rel=1e-12), source


def test_molar_mass_against_reference_checks_table():
    # REFERENCE-CHECKS section 3 (chemicals 1.5.2 MW, g/mol), rel 1e-4 as suggested there.
    table = {"N2": 28.0134, "O2": 31.9988, "CH4": 16.04246, "H2": 2.01588, "CO2": 44.0095}
    for text, grams in table.items():
        assert molar_mass(text) * 1000 == pytest.approx(grams, rel=1e-4), text


def test_molar_mass_of_counts_equals_formula():
    assert molar_mass({"C": 1, "H": 4, "O": 1}) == molar_mass("CH3OH")
    assert molar_mass({"C": 1, "H": 4, "O": 0}) == molar_mass("CH4")


@pytest.mark.parametrize(
    ("counts", "fragment"),
    [
        ({"Xx": 1}, "unknown element symbol 'Xx'"),
        ({"C": -1}, "count of C is -1"),
        ({"C": 1.5}, "count of C is 1.5"),
        ({"C": True}, "count of C is True"),
        ({}, "no atoms given"),
        ({"C": 0}, "no atoms given"),
    ],
)
def test_molar_mass_refuses_bad_counts(counts, fragment):
    with pytest.raises(FormulaError, match=fragment):
        molar_mass(counts)


# ---------------------------------------------------------------------------
# Hill order; adding and multiplying counts
# ---------------------------------------------------------------------------

# Hill (1900), J. Am. Chem. Soc. 22, 478: C, H, then alphabetical; no C: alphabetical.
HILL = [
    ("CH3OH", "CH4O"),
    ("C2H5", "C2H5"),
    ("HO2", "HO2"),
    ("HCl", "ClH"),
    ("H2SO4", "H2O4S"),
    ("N2O5", "N2O5"),
    ("CHCl3", "CHCl3"),
    ("CCl4", "CCl4"),
    ("OCS", "COS"),
    ("NaCl", "ClNa"),
    ("Ar", "Ar"),
]


@pytest.mark.parametrize(("text", "hill"), HILL)
def test_hill_formula(text, hill):
    assert hill_formula(text) == hill
    assert hill_formula(parse_formula(text)) == hill


def test_hill_order():
    assert hill_order(["O", "H", "C", "Br"]) == ["C", "H", "Br", "O"]
    assert hill_order(["O", "H", "Br"]) == ["Br", "H", "O"]


def test_hill_formula_refuses_nothing_at_all():
    with pytest.raises(FormulaError, match="no atoms given"):
        hill_formula({})


@given(
    st.dictionaries(
        st.sampled_from(["C", "H", "O", "N", "Cl", "Br", "S", "Ar", "Na"]),
        st.integers(min_value=1, max_value=50),
        min_size=1,
    )
)
def test_hill_round_trip(counts):
    assert parse_formula(hill_formula(counts)) == counts


def test_add_and_multiply_counts():
    assert add_counts({"O": 1, "H": 1}, {"C": 1, "H": 4}) == {"C": 1, "H": 5, "O": 1}
    assert add_counts() == {}
    assert multiply_counts({"O": 1, "H": 1}, 3) == {"O": 3, "H": 3}
    with pytest.raises(FormulaError, match="multiplier"):
        multiply_counts({"O": 1}, 0)


# ---------------------------------------------------------------------------
# The atomic-weight table (pin: accidental edits must show)
# ---------------------------------------------------------------------------


def test_atomic_weight_table_pin():
    table = elements()
    assert len(table) == 92
    assert [e.atomic_number for e in table.values()] == list(range(1, 93))
    assert math.fsum(e.standard_atomic_weight for e in table.values()) == pytest.approx(
        10309.6278, rel=1e-12
    )


# IUPAC 2021 abridged values (Prohaska et al., Pure Appl. Chem. 94, 573 (2022)),
# from memory; H, C, N, O and Cl are the elements of most species in a mechanism.
SPOT_WEIGHTS = [
    ("H", 1, 1.008),
    ("He", 2, 4.0026),
    ("C", 6, 12.011),
    ("N", 7, 14.007),
    ("O", 8, 15.999),
    ("S", 16, 32.06),
    ("Cl", 17, 35.45),
    ("Ar", 18, 39.95),
    ("Br", 35, 79.904),
    ("Sn", 50, 118.71),
    ("U", 92, 238.03),
]


@pytest.mark.parametrize(("symbol", "atomic_number", "weight"), SPOT_WEIGHTS)
def test_atomic_weight_spot_values(symbol, atomic_number, weight):
    assert elements()[symbol].atomic_number == atomic_number
    assert standard_atomic_weight(symbol) == weight


@pytest.mark.parametrize(
    ("symbol", "mass_number"),
    [("Tc", 97), ("Pm", 145), ("Po", 209), ("At", 210), ("Rn", 222), ("Ra", 226)],
)
def test_elements_without_standard_weight_are_marked(symbol, mass_number):
    element = elements()[symbol]
    assert element.standard_atomic_weight == mass_number
    assert "no stable isotope" in element.note
    assert "longest-lived isotope" in element.note


def test_table_agrees_with_chemicals_periodic_table():
    # chemicals 1.5.2 periodic_table holds older full-precision weights: agreement
    # within 2e-4 relative catches typos; Tc differs by choice (chemicals uses 98).
    for element in elements().values():
        if element.symbol == "Tc":
            continue
        reference = chemicals_elements.periodic_table[element.atomic_number]
        assert reference.symbol == element.symbol
        assert element.standard_atomic_weight == pytest.approx(reference.MW, rel=2e-4), (
            element.symbol
        )


def test_table_names_its_source():
    from importlib import resources

    text = resources.files("ratebank.science.data").joinpath("atomic_weights.csv").read_text()
    header = [line for line in text.splitlines() if line.startswith("#")]
    assert any("doi:10.1515/pac-2019-0603" in line for line in header)
    assert any("from memory" in line for line in header)


def test_unknown_symbol_weight():
    with pytest.raises(FormulaError, match="unknown element symbol 'Xx'"):
        standard_atomic_weight("Xx")


# ---------------------------------------------------------------------------
# Start-up cost and doctests
# ---------------------------------------------------------------------------


def test_formula_work_loads_neither_numpy_nor_scipy():
    code = (
        "import sys\n"
        "from ratebank.science import formula\n"
        "formula.molar_mass('CH3OH'); formula.hill_formula('HCl')\n"
        "print('scipy' in sys.modules, 'numpy' in sys.modules)\n"
    )
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    )
    assert result.stdout.split() == ["False", "False"]


def test_doctests():
    outcome = doctest.testmod(formula)
    assert outcome.failed == 0
    assert outcome.attempted > 0
