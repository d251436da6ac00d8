"""Validation of species, reactions and expressions, without a store.

Unit factors are checked against ``scipy.constants`` (CODATA 2018 values, exact in the 2019
SI for N_A and R); atomic weights are the IUPAC abridged values, from memory.
"""

from __future__ import annotations

import math

import pytest
from scipy import constants

from ratebank.errors import ImportValidationError
from ratebank.services.validate import (
    Problems,
    ReactionRef,
    ReactionResolver,
    check_expression_values,
    parse_number,
    validate_expressions,
    validate_reactions,
    validate_species,
)

CALORIE = 4.184  # J, the thermochemical calorie (exact by definition)
FORMULAS = {
    "OH": {"O": 1, "H": 1},
    "CH4": {"C": 1, "H": 4},
    "CH3": {"C": 1, "H": 3},
    "H2O": {"H": 2, "O": 1},
    "HO2": {"H": 1, "O": 2},
    "H": {"H": 1},
    "O2": {"O": 2},
}


def _resolver() -> ReactionResolver:
    oh_ch4 = ReactionRef(1, "oh-ch4", 2)
    dec = ReactionRef(2, "h2o2-dec", 1)
    return ReactionResolver(
        {"oh-ch4": oh_ch4, "h2o2-dec": dec},
        {"CH4 + OH -> CH3 + H2O": oh_ch4, "H2O2 -> OH + OH": dec},
    )


# --------------------------------------------------------------------------- problems


def test_problems_keep_the_first_ones_count_all_and_raise_one_error():
    problems = Problems(limit=2)
    assert not problems
    problems.add(3, "k", "third")
    problems.add(1, "T_K", "first")
    problems.add(2, "", "dropped from the list, still counted")
    assert problems.total == 3
    assert [p.line for p in problems.sorted()] == [1, 3]
    with pytest.raises(ImportValidationError) as raised:
        problems.raise_if_any("in.csv")
    assert raised.value.problems == ["in.csv:1: T_K: first", "in.csv:3: k: third"]
    assert str(raised.value).endswith("... and 1 more problems")
    Problems().raise_if_any("clean.csv")  # nothing to raise


@pytest.mark.parametrize(
    ("text", "kwargs", "message"),
    [
        ("abc", {}, "'abc' is not a number; expected a number"),
        ("nan", {"what": "a diameter"}, "'nan' is not a finite number; expected a diameter"),
        ("-1", {"positive": True}, "-1 must be greater than zero; expected a number"),
        ("0.5", {"minimum": 1.0}, "0.5 is below 1; expected a number"),
    ],
)
def test_parse_number_names_what_was_expected(text, kwargs, message):
    with pytest.raises(ValueError) as raised:
        parse_number(text, **kwargs)
    assert str(raised.value) == message


# --------------------------------------------------------------------------- species


def test_species_come_out_in_si_with_the_formula_mass():
    rows = [
        (
            2,
            {
                "name": "CH4",
                "formula": "CH4",
                "diameter_angstrom": "3.758",
                "well_depth_K": "148.6",
            },
        ),
        (3, {"name": "H2O", "formula": "H2O", "molar_mass_g_per_mol": "18.015"}),
        (
            4,
            {
                "name": "O3",
                "formula": "O3",
                "critical_pressure_bar": "55.73",
                "boiling_volume_cm3_per_mol": "35.0",
                "diameter_angstrom": "4.0",
            },
        ),
    ]
    problems = Problems()
    ch4, h2o, o3 = validate_species(rows, set(), problems)
    assert not problems
    # IUPAC abridged atomic weights C 12.011, H 1.008 (from memory)
    assert ch4.molar_mass == pytest.approx((12.011 + 4 * 1.008) * 1e-3, rel=1e-9)
    assert ch4.molar_mass_source == "formula"
    assert ch4.diameter == pytest.approx(3.758e-10, rel=1e-12)
    assert ch4.diameter_kind == "lennard-jones"  # a well depth makes it one
    assert (h2o.molar_mass, h2o.molar_mass_source) == (pytest.approx(18.015e-3), "given")
    assert o3.diameter_kind == "hard-sphere"
    assert o3.critical_pressure == pytest.approx(55.73 * constants.bar, rel=1e-12)
    assert o3.boiling_volume == pytest.approx(35.0e-6, rel=1e-12)


def test_species_problems_are_collected_not_raised():
    rows = [
        (2, {"name": "CH4", "formula": "CH4"}),
        (3, {"name": "CH4", "formula": "CH4"}),
        (4, {"name": "OH", "formula": "HO"}),
        (5, {"name": "X", "formula": "CH4", "molar_mass_g_per_mol": "20"}),
        (6, {"name": "Y", "formula": "CH4", "diameter_kind": "round", "diameter_angstrom": "3"}),
        (7, {"name": "", "formula": "Qq"}),
    ]
    problems = Problems()
    validate_species(rows, {"OH"}, problems)
    rendered = [p.render("s.csv") for p in problems.sorted()]
    assert (
        rendered[0] == "s.csv:3: name: species 'CH4' appears twice in the input (first on line 2)"
    )
    assert rendered[1] == "s.csv:4: name: species 'OH' is already in the store"
    assert rendered[2].startswith("s.csv:5: molar_mass_g_per_mol: 20 g/mol does not match")
    assert rendered[3].startswith("s.csv:6: diameter_kind: 'round' is not one of")
    assert rendered[4].startswith("s.csv:7: formula: ")
    assert rendered[5] == "s.csv:7: name: is empty; expected the species name"


# --------------------------------------------------------------------------- reactions


def test_reactions_are_canonical_balanced_and_counted():
    rows = [
        (2, {"key": "oh-ch4", "equation": "OH + CH4 -> CH3 + H2O", "class": "h-abstraction"}),
        (3, {"key": "ho2-ho2", "equation": "2 HO2 -> H2O2 + O2"}),
        (4, {"key": "h-o2-m", "equation": "H + O2 + M -> HO2 + M"}),
    ]
    formulas = {**FORMULAS, "H2O2": {"H": 2, "O": 2}}
    problems = Problems()
    oh_ch4, ho2, recombination = validate_reactions(rows, formulas, set(), {}, problems)
    assert not problems
    assert oh_ch4.equation == "CH4 + OH -> CH3 + H2O"
    assert (oh_ch4.order, oh_ch4.third_body, oh_ch4.reaction_class) == (2, False, "h-abstraction")
    assert ho2.reactant_counts == {"HO2": 2}
    assert (recombination.order, recombination.third_body) == (3, True)
    assert oh_ch4.reverse is None  # the reverse column defaults to none


def test_a_reversible_reaction_is_declared_in_its_reverse_column():
    rows = [
        (2, {"key": "a", "equation": "OH + CH4 -> CH3 + H2O", "reverse": "detailed-balance"}),
        (3, {"key": "b", "equation": "H + O2 + M -> HO2 + M", "reverse": "none"}),
    ]
    problems = Problems()
    declared, plain = validate_reactions(rows, FORMULAS, set(), {}, problems)
    assert not problems
    assert (declared.reverse, plain.reverse) == ("detailed-balance", None)


@pytest.mark.parametrize(
    ("rows", "expected"),
    [
        ([{"key": "a", "equation": "OH + XY -> CH4"}], "equation: unknown species 'XY'; add it"),
        ([{"key": "a", "equation": "OH + CH4 -> CH3 + O2"}], "equation: "),
        ([{"key": "a b", "equation": "OH + CH4 -> CH3 + H2O"}], "key: 'a b' contains spaces"),
        ([{"key": "old", "equation": "OH + CH4 -> CH3 + H2O"}], "key: reaction key 'old' is"),
        (
            [{"key": "a", "equation": "CH4 + OH -> H2O + CH3"}],
            "equation: 'CH4 + OH -> CH3 + H2O' is already in the store as 'stored'",
        ),
        ([{"key": "a", "equation": "H + H + H + H -> H2O"}], "equation: "),
        (
            [{"key": "a", "equation": "OH + CH4 -> CH3 + H2O", "reverse": "both"}],
            "reverse: 'both' is not one of none, detailed-balance",
        ),
    ],
)
def test_reaction_problems(rows, expected):
    problems = Problems()
    validate_reactions(
        list(enumerate(rows, start=2)),
        FORMULAS,
        {"old"},
        {"CH4 + OH -> CH3 + H2O": "stored"} if "already" in expected else {},
        problems,
    )
    assert any(expected in p.render("r.csv") for p in problems.sorted()), problems.sorted()


# --------------------------------------------------------------------------- lookups


def test_a_resolver_finds_a_key_or_any_spelling_and_says_why_not():
    resolver = _resolver()
    assert resolver.resolve("oh-ch4").id == 1
    assert resolver.resolve("OH + CH4 -> H2O + CH3").key == "oh-ch4"
    assert resolver.resolve("CH3 + H2O -> CH4 + OH") == (
        "no reaction 'CH3 + H2O -> CH4 + OH' in the store"
    )
    assert resolver.resolve("nope") == "no reaction with key 'nope' in the store"
    assert isinstance(resolver.resolve("OH + -> CH4"), str)


# --------------------------------------------------------------------------- expressions

N_A = constants.N_A
R = constants.R


@pytest.mark.parametrize(
    ("order", "arguments", "values"),
    [
        # 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1; 1 K of Ea/R is R J/mol
        (
            2,
            {"A": 1.85e-20, "k_units": "cm3/molecule/s", "n": 2.82, "Ea": 987, "Ea_units": "K"},
            {"A": 1.85e-20 * N_A * 1e-6, "n": 2.82, "Ea": 987 * R},
        ),
        (
            1,
            {"A": 2e13, "k_units": "s-1", "Ea": 48, "Ea_units": "kcal/mol", "T_min": 800},
            {"A": 2e13, "Ea": 48 * 1000 * CALORIE, "T_min": 800.0},
        ),
        # an activation energy whose A is still to be estimated
        (2, {"Ea": -4.9, "Ea_units": "kJ/mol"}, {"Ea": -4900.0}),
        # a unit without its number is checked but harmless in a whole expression
        (2, {"Ea": 0, "Ea_units": "J/mol", "k_units": "cm3/mol/s"}, {"Ea": 0.0}),
        (
            2,
            {"Ea": 1, "Ea_units": "eV", "uncertainty_factor": 1},
            {
                "Ea": constants.e * N_A,
                "uncertainty_factor": 1.0,
            },
        ),
    ],
)
def test_expression_values_in_si(order, arguments, values):
    checked = check_expression_values(order, **arguments)
    assert checked.problems == []
    assert checked.values.keys() == values.keys()
    for name, value in values.items():
        assert checked.values[name] == pytest.approx(value, rel=1e-12), name


@pytest.mark.parametrize(
    ("arguments", "problems"),
    [
        ({"A": 1e13, "Ea": 1, "Ea_units": "K"}, [("k_units", "is empty; A needs its unit")]),
        ({"A": -1.0, "k_units": "s-1"}, [("A", "-1 must be greater than zero")]),
        ({"A": math.nan, "k_units": "s-1"}, [("A", "nan is not a finite number")]),
        ({"A": 1.0, "k_units": "cm3/molecule/s"}, [("k_units", "unit 'cm3/molecule/s' is for a")]),
        ({"Ea": 12.0}, [("Ea_units", "is empty; Ea needs its unit")]),
        ({"Ea": math.inf, "Ea_units": "K"}, [("Ea", "inf is not a finite number")]),
        ({"Ea": 1.0, "Ea_units": "kJ"}, [("Ea_units", "")]),
        ({"T_min": 0.0}, [("T_min", "0 must be greater than zero; expected a temperature")]),
        ({"T_min": 500.0, "T_max": 300.0}, [("T_max", "300 K is below T_min 500 K")]),
        ({"uncertainty_factor": 0.5}, [("uncertainty_factor", "0.5 is below 1")]),
        ({"n": 1.5}, [("n", "is given without A")]),
    ],
)
def test_expression_problems_name_the_argument(arguments, problems):
    checked = check_expression_values(1, **arguments)
    assert [name for name, _ in checked.problems] == [name for name, _ in problems]
    for (_, message), (_, expected) in zip(checked.problems, problems, strict=True):
        assert message.startswith(expected), message


def test_a_change_is_checked_against_the_stored_expression():
    stored = {"A": None, "n": 0.0, "T_min": 800.0, "T_max": 1500.0}
    names = {"T_min": "t_min", "T_max": "t_max"}
    # the stored lower end stands in for the one not given
    checked = check_expression_values(1, T_max=500.0, stored=stored, names=names)
    assert checked.problems == [("t_max", "500 K is below t_min 800 K")]
    # a unit on its own is refused in a change: it would change nothing
    checked = check_expression_values(1, k_units="s-1", stored=stored)
    assert checked.problems == [("k_units", "is given without A; give the A it is the unit of")]
    checked = check_expression_values(1, Ea_units="K", stored=stored)
    assert checked.problems == [("Ea_units", "is given without Ea; give the Ea it is the unit of")]
    # n needs an A, stored or given
    assert check_expression_values(1, n=1.0, stored=stored).problems[0][0] == "n"
    assert check_expression_values(1, n=1.0, stored={**stored, "A": 1e13}).problems == []
    given_A = check_expression_values(1, n=1.0, A=2e13, k_units="s-1", stored=stored)
    assert given_A.problems == [] and given_A.values == {"n": 1.0, "A": 2e13}


def test_an_unknown_reaction_leaves_the_unit_of_a_unchecked():
    checked = check_expression_values(None, A=1.0, k_units="furlongs", Ea=1, Ea_units="K")
    assert checked.problems == []
    assert "A" not in checked.values  # nothing to convert it with


def test_expression_rows_share_the_check_and_keep_their_units():
    rows = [
        (
            2,
            {
                "reaction": "CH4 + OH -> H2O + CH3",
                "A": "1.85e-20",
                "n": "2.82",
                "Ea": "987",
                "Ea_units": "K",
                "k_units": "cm3/molecule/s",
                "T_min_K": "200",
                "T_max_K": "2000",
                "uncertainty_factor": "1.2",
                "reference": "test review",
            },
        ),
        (3, {"reaction": "h2o2-dec", "Ea": "200", "Ea_units": "kJ/mol", "origin": "manual"}),
    ]
    problems = Problems()
    first, second = validate_expressions(rows, _resolver(), problems)
    assert not problems
    assert (first.reaction.key, first.origin, first.line) == ("oh-ch4", "literature", 2)
    assert first.A == pytest.approx(1.85e-20 * N_A * 1e-6, rel=1e-12)
    assert (first.T_min, first.T_max, first.uncertainty_factor) == (200.0, 2000.0, 1.2)
    assert first.given_units == {"Ea_units": "K", "k_units": "cm3/molecule/s"}
    assert (second.A, second.n, second.origin) == (None, 0.0, "manual")


@pytest.mark.parametrize(
    ("row", "expected"),
    [
        (
            {
                "reaction": "oh-ch4",
                "A": "-1e-12",
                "Ea": "1",
                "Ea_units": "K",
                "k_units": "cm3/mol/s",
            },
            [
                "e.csv:2: A: -1e-12 must be greater than zero; expected a pre-exponential factor "
                "above zero"
            ],
        ),
        (
            {"reaction": "oh-ch4", "Ea_units": "K"},
            ["e.csv:2: Ea: is empty; expected an activation energy (0 if none)"],
        ),
        (
            {"reaction": "oh-ch4", "Ea": "x", "Ea_units": "K"},
            ["e.csv:2: Ea: 'x' is not a number; expected an activation energy"],
        ),
        (
            {"reaction": "oh-ch4", "Ea": "1", "Ea_units": "K", "T_min_K": "500", "T_max_K": "300"},
            ["e.csv:2: T_max_K: 300 K is below T_min_K 500 K"],
        ),
        (
            {"reaction": "nope", "Ea": "1", "Ea_units": "K", "origin": "guess"},
            [
                "e.csv:2: origin: 'guess' is not one of literature, manual",
                "e.csv:2: reaction: no reaction with key 'nope' in the store",
            ],
        ),
    ],
)
def test_expression_row_problems(row, expected):
    problems = Problems()
    assert validate_expressions([(2, row)], _resolver(), problems) == []
    assert [p.render("e.csv") for p in problems.sorted()] == expected
