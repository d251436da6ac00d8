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
