"""Column-wise validation of measured points, without a store.

Unit factors against ``scipy.constants``: 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1,
1 bar = 1e5 Pa (exact).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

from ratebank.services.measurement_validation import MeasurementValidator
from ratebank.services.validate import Problems, ReactionRef, ReactionResolver

OH_CH4 = ReactionRef(1, "oh-ch4", 2)
DEC = ReactionRef(2, "h2o2-dec", 1)
COLUMNS = ("set", "reaction", "T_K", "k", "k_units", "k_uncertainty", "uncertainty_kind",
           "reference", "method", "pressure_bar", "bath_gas")  # fmt: skip


def _validator(problems: Problems, *, stored_sets=(), default_k_units=None) -> MeasurementValidator:
    resolver = ReactionResolver(
        {"oh-ch4": OH_CH4, "h2o2-dec": DEC},
        {"CH4 + OH -> CH3 + H2O": OH_CH4, "H2O2 -> OH + OH": DEC},
    )
    stored = set(stored_sets)
    return MeasurementValidator(
        resolver, stored.intersection, problems, default_k_units=default_k_units
    )


def _columns(rows: list[str]) -> dict[str, list[str]]:
    cells = [row.split(",") for row in rows]
    return {name: [c[i] for c in cells] for i, name in enumerate(COLUMNS)}


ROWS = [
    "s1,oh-ch4,300,6.4e-15,cm3/molecule/s,0.1,relative,lab A,flash photolysis,0.1,He",
    "s1,oh-ch4,350,1.4e-14,cm3/molecule/s,0.1,relative,lab A,flash photolysis,0.1,He",
    "s2,CH4 + OH -> H2O + CH3,800,1.1e12,cm3/mol/s,1e11,absolute,lab B,shock tube,1.5,Ar",
    "s2,oh-ch4,1000,2.2e12,cm3/mol/s,2e11,absolute,lab B,shock tube,,Ar",
    "s3,h2o2-dec,900, 5 ,s-1,,,,,,",
]


def test_a_chunk_comes_out_in_si_with_its_sets():
    problems = Problems()
    chunk = _validator(problems).validate_chunk(_columns(ROWS), [2, 3, 4, 5, 6])
    assert not problems
    assert [(s.name, s.reaction.key, s.k_units, s.first_line) for s in chunk.new_sets] == [
        ("s1", "oh-ch4", "cm3/molecule/s", 2),
        ("s2", "oh-ch4", "cm3/mol/s", 4),
        ("s3", "h2o2-dec", "s-1", 6),
    ]
    assert chunk.set_index.tolist() == [0, 0, 1, 1, 2]
    assert chunk.temperature.tolist() == [300.0, 350.0, 800.0, 1000.0, 900.0]
    expected_k = [6.4e-15 * constants.N_A * 1e-6, 1.4e-14 * constants.N_A * 1e-6, 1.1e6, 2.2e6, 5]
    np.testing.assert_allclose(chunk.rate_constant, expected_k, rtol=1e-12)
    # an absolute uncertainty becomes relative to k
    np.testing.assert_allclose(
        chunk.relative_uncertainty, [0.1, 0.1, 1e11 / 1.1e12, 2e11 / 2.2e12, np.nan], rtol=1e-12
    )
    np.testing.assert_allclose(
        chunk.pressure, [0.1 * constants.bar, 0.1 * constants.bar, 1.5e5, np.nan, np.nan]
    )


def test_the_verdict_does_not_depend_on_the_chunk_size():
    whole = Problems()
    one = _validator(whole).validate_chunk(_columns(ROWS), [2, 3, 4, 5, 6])
    split = Problems()
    validator = _validator(split)
    first = validator.validate_chunk(_columns(ROWS[:3]), [2, 3, 4])
    second = validator.validate_chunk(_columns(ROWS[3:]), [5, 6])
    assert not whole and not split
    assert [s.name for s in first.new_sets + second.new_sets] == [s.name for s in one.new_sets]
    np.testing.assert_array_equal(
        np.concatenate([first.set_index, second.set_index]), one.set_index
    )
    np.testing.assert_array_equal(
        np.concatenate([first.rate_constant, second.rate_constant]), one.rate_constant
    )


@pytest.mark.parametrize(
    ("rows", "expected"),
    [
        (["s9,oh-ch4,0,1e-14,cm3/molecule/s,,,,,,"], "2: T_K: 0 must be greater than zero"),
        (["s9,oh-ch4,300,abc,cm3/molecule/s,,,,,,"], "2: k: 'abc' is not a number"),
        (["s9,oh-ch4,300,nan,cm3/molecule/s,,,,,,"], "2: k: 'nan' is not a finite number"),
        (["s9,oh-ch4,,1,cm3/molecule/s,,,,,,"], "2: T_K: is empty; expected a temperature"),
        (["s9,oh-xx,300,1e-14,cm3/molecule/s,,,,,,"], "2: reaction: no reaction with key"),
        (["s9,oh-ch4,300,1e-14,s-1,,,,,,"], "2: k_units: unit 's-1' is for a rate constant"),
        (["s9,oh-ch4,300,1e-14,,,,,,,"], "2: k_units: is empty and no default k_units was given"),
        (["s1,oh-ch4,300,1e-14,s-1,,,,,,"], "2: set: measurement set 's1' is already in the store"),
        ([",oh-ch4,300,1e-14,cm3/mol/s,,,,,,"], "2: set: is empty"),
        (["s9,oh-ch4,300,1,cm3/mol/s,0.1,sometimes,,,,"], "2: uncertainty_kind: 'sometimes'"),
        (
            ["s9,oh-ch4,300,1,cm3/mol/s,,,,,,", "s9,h2o2-dec,310,1,cm3/mol/s,,,,,,"],
            "3: reaction: set 's9' was given for reaction 'oh-ch4' on line 2; one set belongs",
        ),
        (
            ["s9,oh-ch4,300,1,cm3/mol/s,,,,,,", "s9,oh-ch4,310,1,cm3/molecule/s,,,,,,"],
            "3: k_units: 'cm3/molecule/s' differs from 'cm3/mol/s' used for set 's9' on line 2",
        ),
        (
            ["s9,oh-ch4,300,1,cm3/mol/s,,,lab A,,,", "s9,oh-ch4,310,1,cm3/mol/s,,,lab B,,,"],
            "3: reference: 'lab B' differs from 'lab A' given for set 's9' on line 2",
        ),
    ],
)
def test_problems_name_their_line_and_column(rows, expected):
    problems = Problems()
    _validator(problems, stored_sets={"s1"}).validate_chunk(
        _columns(rows), list(range(2, 2 + len(rows)))
    )
    rendered = [p.render("m.csv") for p in problems.sorted()]
    assert any(line.startswith(f"m.csv:{expected}") for line in rendered), rendered


def test_an_equation_spelling_of_the_same_reaction_agrees_with_the_key():
    problems = Problems()
    rows = ["s9,oh-ch4,300,1,cm3/mol/s,,,,,,", "s9,OH + CH4 -> H2O + CH3,310,1,cm3/mol/s,,,,,,"]
    _validator(problems).validate_chunk(_columns(rows), [2, 3])
    assert not problems


def test_the_default_unit_fills_empty_cells_only():
    problems = Problems()
    rows = ["s9,oh-ch4,300,1e-14,,,,,,,", "s8,h2o2-dec,300,2,s-1,,,,,,"]
    chunk = _validator(problems, default_k_units="cm3/molecule/s").validate_chunk(
        _columns(rows), [2, 3]
    )
    assert not problems
    assert [s.k_units for s in chunk.new_sets] == ["cm3/molecule/s", "s-1"]
    assert chunk.rate_constant[0] == pytest.approx(1e-14 * constants.N_A * 1e-6, rel=1e-12)


# --------------------------------------------------------------------------- columnar sets
#
# The sets of a file are kept as columns; a chunk whose new sets are all well formed is
# checked with whole-column operations, one with a problem among them set by set. Each
# kind of bad row must give the same one line whichever way its chunk goes: the expected
# lines below are those the set-by-set validator gave before the sets became columns, for
# a bad set between two clean ones, in chunks of 1, 2, 3 and 100 rows.

WIDE = (*COLUMNS, "systematic_uncertainty")
CLEAN_BEFORE = [
    "c1,oh-ch4,300,1e-14,cm3/molecule/s,0.1,,lab A,,,,",
    "c1,oh-ch4,310,1e-14,cm3/molecule/s,0.1,,lab A,,,,",
]
CLEAN_AFTER = ["c2,h2o2-dec,900,5,s-1,0.2,,,,,,0.1", "c2,h2o2-dec,950,6,s-1,0.2,,,,,,0.1"]
PLAIN = "s9,oh-ch4,300,1e-14,cm3/molecule/s,0.1,,,,,,"


def _bad(**changes: str) -> str:
    cells = PLAIN.split(",")
    for name, value in changes.items():
        cells[WIDE.index(name)] = value
    return ",".join(cells)


EXPECTING = "; expected a temperature in K greater than zero"
SYSTEMATIC = "expected a systematic uncertainty as a fraction of k (0.1 for 10 %)"
BAD_ROWS = {
    "temperature zero": ([_bad(T_K="0")], f"4: T_K: 0 must be greater than zero{EXPECTING}"),
    "temperature text": ([_bad(T_K="abc")], f"4: T_K: 'abc' is not a number{EXPECTING}"),
    "temperature empty": ([_bad(T_K="")], f"4: T_K: is empty{EXPECTING}"),
    "temperature too high": (
        [_bad(T_K="1e9")],
        f"4: T_K: 1e+09 K is outside 10 to 10000 K, the temperatures ratebank accepts{EXPECTING}",
    ),
    "k not finite": (
        [_bad(k="nan")],
        "4: k: 'nan' is not a finite number; expected a rate constant greater than zero",
    ),
    "k beyond its order": (
        [_bad(k="1e10")],
        "4: k: 1e+10 cm3/molecule/s is outside what a rate constant of order 2 can be "
        "(1e-30 to 1e-06 cm3/molecule/s); check the value and its unit",
    ),
    "uncertainty of 200 %": (
        [_bad(k_uncertainty="2")],
        "4: k_uncertainty: 2 as a relative uncertainty is 200 % of k; give it as a fraction "
        "(0.2 for 20 %), or say uncertainty_kind percent",
    ),
    "unknown uncertainty kind": (
        [_bad(uncertainty_kind="sometimes")],
        "4: uncertainty_kind: 'sometimes' is not one of relative, absolute, percent",
    ),
    "unknown reaction": (
        [_bad(reaction="oh-xx")],
        "4: reaction: no reaction with key 'oh-xx' in the store",
    ),
    "empty reaction": (
        [_bad(reaction="")],
        "4: reaction: is empty; expected a reaction key or equation",
    ),
    "unit of another order": (
        [_bad(k_units="s-1")],
        "4: k_units: unit 's-1' is for a rate constant of order 1, but this reaction is of "
        "order 2: expected volume amount-1 time-1 (e.g. cm3/molecule/s or cm3/mol/s)",
    ),
    "empty unit": (
        [_bad(k_units="")],
        "4: k_units: is empty and no default k_units was given; expected a unit",
    ),
    "stored set": (
        [_bad(set="s1")],
        "4: set: measurement set 's1' is already in the store; an import that updates "
        "compares it with the stored one",
    ),
    "empty set name": (
        [_bad(set="")],
        "4: set: is empty; expected the name of the measurement set",
    ),
    "invisible character in a set name": (
        [_bad(set="s\u200b9")],
        "4: set: set name 's\\u200b9' contains U+200B (ZERO WIDTH SPACE), an invisible or "
        "control character; use printable characters only",
    ),
    "set name too long": (
        [_bad(set="x" * 201)],
        "4: set: is 201 characters long; the store keeps at most 200",
    ),
    "bath gas too long": (
        [_bad(bath_gas="y" * 201)],
        "4: bath_gas: is 201 characters long; the store keeps at most 200",
    ),
    "systematic not a number": (
        [_bad(systematic_uncertainty="abc")],
        f"4: systematic_uncertainty: 'abc' is not a number; {SYSTEMATIC}",
    ),
    "systematic of 150 %": (
        [_bad(systematic_uncertainty="1.5")],
        f"4: systematic_uncertainty: 1.5 is 150 % of k; {SYSTEMATIC}",
    ),
    "second row of another reaction": (
        [PLAIN, _bad(T_K="310", reaction="h2o2-dec")],
        "5: reaction: set 's9' was given for reaction 'oh-ch4' on line 4; one set belongs "
        "to one reaction",
    ),
    "second row in another unit": (
        [PLAIN, _bad(T_K="310", k_units="cm3/mol/s")],
        "5: k_units: 'cm3/mol/s' differs from 'cm3/molecule/s' used for set 's9' on line 4; "
        "one set uses one unit",
    ),
    "second row of another reference": (
        [_bad(reference="lab A"), _bad(T_K="310", reference="lab B")],
        "5: reference: 'lab B' differs from 'lab A' given for set 's9' on line 4",
    ),
    "second row with another systematic": (
        [_bad(systematic_uncertainty="0.1"), _bad(T_K="310", systematic_uncertainty="0.2")],
        "5: systematic_uncertainty: '0.2' differs from '0.1' given for set 's9' on line 4",
    ),
    "uncertainty for some points only": (
        [PLAIN, _bad(T_K="310", k_uncertainty="")],
        "5: k_uncertainty: set 's9' states an uncertainty for some points but not for this "
        "one; give every point of a set an uncertainty, or none, or fill the missing ones "
        "with the set's median",
    ),
}


def _validate_in_chunks(rows: list[str], chunk_rows: int) -> tuple[list[str], MeasurementValidator]:
    problems = Problems()
    validator = _validator(problems, stored_sets={"s1"})
    lines = list(range(2, 2 + len(rows)))
    for start in range(0, len(rows), chunk_rows):
        cells = [row.split(",") for row in rows[start : start + chunk_rows]]
        validator.validate_chunk(
            {name: [c[i] for c in cells] for i, name in enumerate(WIDE)},
            lines[start : start + chunk_rows],
        )
    return [p.render("m.csv") for p in problems.sorted()], validator


@pytest.mark.parametrize("chunk_rows", [1, 2, 3, 100])
@pytest.mark.parametrize(("rows", "expected"), BAD_ROWS.values(), ids=BAD_ROWS.keys())
def test_each_kind_of_bad_row_gives_its_one_line_however_the_file_is_chunked(
    rows, expected, chunk_rows
):
    rendered, _ = _validate_in_chunks([*CLEAN_BEFORE, *rows, *CLEAN_AFTER], chunk_rows)
    assert rendered == [f"m.csv:{expected}"]


@pytest.mark.parametrize("chunk_rows", [1, 3, 100])
def test_the_sets_kept_as_columns_read_back_as_their_first_rows_define_them(chunk_rows):
    rendered, validator = _validate_in_chunks([*CLEAN_BEFORE, *CLEAN_AFTER], chunk_rows)
    assert rendered == []
    first, second = list(validator.sets)
    assert (first.name, first.reaction, first.k_units, first.reference, first.first_line) == (
        "c1",
        OH_CH4,
        "cm3/molecule/s",
        "lab A",
        2,
    )
    assert first.factor == pytest.approx(constants.N_A * 1e-6, rel=1e-15)
    assert first.systematic_uncertainty is None and first.id is None
    assert (second.name, second.reaction, second.k_units, second.reference) == (
        "c2",
        DEC,
        "s-1",
        None,
    )
    assert second.systematic_uncertainty == 0.1 and second.systematic_text == "0.1"
    assert (second.with_uncertainty, second.without_uncertainty, second.mixed) == (2, 0, False)
    assert validator.by_name == {"c1": 0, "c2": 1}


@pytest.mark.parametrize(
    "text",
    ["", "300", "1.5e-14", "-2E+3 ", "1\t2", "1,5", "1_000", "\u22121", "1\u00a0", "nan", "0x1p3"],
)
def test_the_plain_number_check_of_a_column_agrees_with_the_syntax_rule(text):
    # reference: the regular expression of input_rules, which defines the plain syntax
    from ratebank.services import input_rules
    from ratebank.services.measurement_validation import _plain_text

    expected = input_rules.PLAIN_CHARACTERS.fullmatch(text) is not None
    assert _plain_text(text) is expected
