"""The one number syntax and the one name rule of every importer and command."""

from __future__ import annotations

import sys

import numpy as np
import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from ratebank.services import input_rules
from ratebank.services.measurement_validation import _column_numbers
from ratebank.services.validate import Problems

# (text, value or None when refused); the accepted forms are the usual decimal syntax
# of data files (common practice), with surrounding spaces.
NUMBERS = [
    ("300", 300.0),
    (" 300 ", 300.0),
    ("-4.9", -4.9),
    ("+0.5", 0.5),
    (".5", 0.5),
    ("5.", 5.0),
    ("1.5e-12", 1.5e-12),
    ("1E3", 1000.0),
    ("2.2250738585072014e-308", sys.float_info.min),  # the smallest normal double
    ("0", 0.0),
    ("1_000", None),
    ("1e1_0", None),
    ("\u0663\u0660\u0660", None),  # Arabic-Indic digits
    ("\uff13\uff10\uff10", None),  # full-width digits
    ("1e-320", None),  # subnormal
    ("-4.9e-324", None),
    ("inf", None),
    ("nan", None),
    ("Infinity", None),
    ("1e999", None),
    ("0x10", None),
    ("1,5", None),
    ("", None),
    ("3\u00a0", None),  # a no-break space is not padding
]


@pytest.mark.parametrize(("text", "value"), NUMBERS)
def test_number_syntax(text, value):
    problem = input_rules.number_text_problem(text)
    if value is None:
        assert problem is not None
        with pytest.raises(ValueError, match="expected a temperature"):
            input_rules.parse_number(text, "a temperature")
    else:
        assert problem is None
        assert input_rules.parse_number(text) == value


def test_reasons_are_specific():
    assert input_rules.number_text_problem("abc") == "'abc' is not a number"
    assert input_rules.number_text_problem("nan") == "'nan' is not a finite number"
    assert "digits 0-9" in input_rules.number_text_problem("1_000")
    assert "too close to zero" in input_rules.number_text_problem("1e-320")
    assert "too large" in input_rules.number_text_problem("1e999")


def _column_verdicts(texts):
    problems = Problems(limit=1000)
    _column_numbers(
        texts,
        list(range(2, len(texts) + 2)),
        "x",
        problems,
        required=False,
        positive=False,
        what="x",
    )
    return {p.line - 2 for p in problems.shown}


CELLS = st.one_of(
    st.sampled_from([text for text, _ in NUMBERS if text]),
    st.from_regex(r"[+-]?[0-9]{0,4}\.?[0-9]{0,4}([eE][+-]?[0-9]{1,3})?", fullmatch=True),
    st.text(alphabet="0123456789.eE+-_ \t\u0663\uff13ainf", min_size=1, max_size=8),
    st.text(min_size=1, max_size=6),
)


@given(st.lists(CELLS, min_size=1, max_size=12))
@example(["1", "2", "1e-320"])
@example(["1", "1_000"])
@example(["1e5", " 2 ", "inf"])
def test_a_column_and_a_cell_get_the_same_verdict(texts):
    # numpy reads a column in one pass; only suspect cells are looked at one by one
    column_refused = _column_verdicts(texts)
    one_by_one = {
        i for i, text in enumerate(texts) if text != "" and input_rules.number_text_problem(text)
    }
    assert column_refused == one_by_one


def test_the_column_reads_the_values():
    problems = Problems()
    values = _column_numbers(
        ["300", "", "1.5e3"], [2, 3, 4], "T_K", problems, required=False, positive=True, what="T"
    )
    assert not problems
    assert np.array_equal(values, [300.0, np.nan, 1500.0], equal_nan=True)


@pytest.mark.parametrize(
    ("value", "accepted"),
    [(10.0, True), (10000.0, True), (9.99, False), (1e-300, False), (10001.0, False)],
)
def test_temperature_range(value, accepted):
    # 10 to 10000 K: the range ratebank accepts for measurements and validity ranges
    assert (input_rules.temperature_problem(value) is None) == accepted


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("oh\u200bch4", "U+200B (ZERO WIDTH SPACE)"),
        ("set\u202eA", "U+202E (RIGHT-TO-LEFT OVERRIDE)"),
        ("a\u2066b", "U+2066 (LEFT-TO-RIGHT ISOLATE)"),
        ("\ufeffkey", "U+FEFF (ZERO WIDTH NO-BREAK SPACE)"),
        ("bell\x07", "U+0007 (unnamed character)"),
        ("soft\u00adhyphen", "U+00AD (SOFT HYPHEN)"),
    ],
)
def test_invisible_and_control_characters_are_named(text, fragment):
    problem = input_rules.name_problem(text, "set name")
    assert problem is not None
    assert problem.startswith("set name ")
    assert fragment in problem


@pytest.mark.parametrize("text", ["oh-ch4", "h-abstraction", "Müller's set 3", "κ-set", "x'; --"])
def test_printable_names_pass(text):
    assert input_rules.name_problem(text, "set name") is None


def test_species_names_follow_the_equation_parser():
    assert input_rules.species_name_problem("CH2(S)") is None
    assert "U+200B" in input_rules.species_name_problem("OH\u200b")
    assert "CYRILLIC" in input_rules.species_name_problem("\u041e\u041d")
    assert "an equation can hold" in input_rules.species_name_problem("=1+1 x")
