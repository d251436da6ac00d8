"""Tests of ratebank.science.equation: syntax, canonical form, order, element balance."""

from __future__ import annotations

import doctest
import subprocess
import sys

import pytest
from hypothesis import given
from hypothesis import strategies as st

from ratebank.errors import EquationError, RatebankError
from ratebank.science import equation as equation_module
from ratebank.science.equation import (
    MAX_COEFFICIENT,
    Equation,
    canonical_equation,
    check_element_balance,
    check_species_name,
    parse_equation,
)
from ratebank.science.formula import parse_formula

# ---------------------------------------------------------------------------
# Parsing and canonical text
# ---------------------------------------------------------------------------

# (text, reactants, products, third body, canonical)
PARSED = [
    (
        "CH4 + OH -> CH3 + H2O",
        ("CH4", "OH"),
        ("CH3", "H2O"),
        False,
        "CH4 + OH -> CH3 + H2O",
    ),
    ("OH + CH4 -> H2O + CH3", ("CH4", "OH"), ("CH3", "H2O"), False, "CH4 + OH -> CH3 + H2O"),
    ("H + O2 + M -> HO2 + M", ("H", "O2"), ("HO2",), True, "H + O2 + M -> HO2 + M"),
    ("M + O2 + H -> M + HO2", ("H", "O2"), ("HO2",), True, "H + O2 + M -> HO2 + M"),
    ("H+O2+M->HO2+M", ("H", "O2"), ("HO2",), True, "H + O2 + M -> HO2 + M"),
    ("HO2 + HO2 -> H2O2 + O2", ("HO2", "HO2"), ("H2O2", "O2"), False, "HO2 + HO2 -> H2O2 + O2"),
    ("2 HO2 -> O2 + H2O2", ("HO2", "HO2"), ("H2O2", "O2"), False, "HO2 + HO2 -> H2O2 + O2"),
    ("O + O3 -> 2 O2", ("O", "O3"), ("O2", "O2"), False, "O + O3 -> O2 + O2"),
    ("2 OH -> H2O2", ("OH", "OH"), ("H2O2",), False, "OH + OH -> H2O2"),
    ("OH + 2 OH -> X", ("OH", "OH", "OH"), ("X",), False, "OH + OH + OH -> X"),
    ("C2H5 -> C2H4 + H", ("C2H5",), ("C2H4", "H"), False, "C2H5 -> C2H4 + H"),
    ("CH2(S) + N2 -> CH2 + N2", ("CH2(S)", "N2"), ("CH2", "N2"), False, "CH2(S) + N2 -> CH2 + N2"),
    ("n-C3H7 -> C3H6 + H", ("n-C3H7",), ("C3H6", "H"), False, "n-C3H7 -> C3H6 + H"),
    ("1-C4H8 + OH -> P1", ("1-C4H8", "OH"), ("P1",), False, "1-C4H8 + OH -> P1"),
    ("1,3-C4H6 -> X_2", ("1,3-C4H6",), ("X_2",), False, "1,3-C4H6 -> X_2"),
    ("O2* + A' -> B", ("A'", "O2*"), ("B",), False, "A' + O2* -> B"),
    ("  A   +B->  C  ", ("A", "B"), ("C",), False, "A + B -> C"),
    ("m + A -> B + m", ("A", "m"), ("B", "m"), False, "A + m -> B + m"),
]


@pytest.mark.parametrize(("text", "reactants", "products", "third_body", "canonical"), PARSED)
def test_parse_equation(text, reactants, products, third_body, canonical):
    parsed = parse_equation(text)
    assert parsed == Equation(reactants, products, third_body)
    assert parsed.reactants == reactants
    assert parsed.products == products
    assert parsed.third_body is third_body
    assert parsed.canonical == canonical
    assert str(parsed) == canonical
    assert canonical_equation(text) == canonical


@pytest.mark.parametrize("text", [row[0] for row in PARSED])
def test_canonical_is_idempotent(text):
    parsed = parse_equation(text)
    again = parse_equation(parsed.canonical)
    assert again == parsed
    assert again.canonical == parsed.canonical


@pytest.mark.parametrize(
    ("text", "order", "unimolecular", "bimolecular", "termolecular", "self_reaction"),
    [
        ("C2H5 -> C2H4 + H", 1, True, False, False, False),
        ("CH4 + OH -> CH3 + H2O", 2, False, True, False, False),
        ("HO2 + HO2 -> H2O2 + O2", 2, False, True, False, True),
        ("2 OH -> H2O2", 2, False, True, False, True),
        ("C2H6 + M -> CH3 + CH3 + M", 2, False, False, False, False),
        ("H + O2 + M -> HO2 + M", 3, False, False, True, False),
        ("OH + OH + M -> H2O2 + M", 3, False, False, True, False),
        ("NO + NO + O2 -> NO2 + NO2", 3, False, False, True, False),
    ],
)
def test_order_and_molecularity(
    text, order, unimolecular, bimolecular, termolecular, self_reaction
):
    parsed = parse_equation(text)
    assert parsed.order == order
    assert parsed.is_unimolecular is unimolecular
    assert parsed.is_bimolecular is bimolecular
    assert parsed.is_termolecular is termolecular
    assert parsed.is_self_reaction is self_reaction


def test_counts_and_species():
    parsed = parse_equation("HO2 + 2 OH + M -> H2O2 + OH + O + M")
    assert parsed.reactant_counts == {"HO2": 1, "OH": 2}
    assert parsed.product_counts == {"H2O2": 1, "O": 1, "OH": 1}
    assert parsed.species == ("H2O2", "HO2", "O", "OH")
    assert parsed.order == 4


def test_equation_built_by_hand_is_sorted():
    built = Equation(["OH", "CH4"], ("H2O", "CH3"))
    assert built == parse_equation("CH4 + OH -> CH3 + H2O")
    assert built.reactants == ("CH4", "OH")
    assert Equation.from_counts({"OH": 2}, {"H2O2": 1}) == parse_equation("2 OH -> H2O2")
    assert Equation.from_counts({"H": 1, "O2": 1}, {"HO2": 1}, third_body=True).canonical == (
        "H + O2 + M -> HO2 + M"
    )


@pytest.mark.parametrize(
    ("reactants", "products", "fragment"),
    [
        ((), ("A",), "at least one of its reactants"),
        (("A",), (), "at least one of its products"),
        (("A", "M"), ("B",), "third_body=True"),
        (("A", ""), ("B",), "non-empty species names"),
    ],
)
def test_equation_construction_refusals(reactants, products, fragment):
    with pytest.raises(EquationError, match=fragment):
        Equation(reactants, products)


def test_from_counts_refuses_bad_coefficient():
    with pytest.raises(EquationError, match="coefficient of 'OH' is 0"):
        Equation.from_counts({"OH": 0}, {"H2O2": 1})


NAMES = st.sampled_from(
    ["CH4", "OH", "H", "O2", "HO2", "CH2(S)", "n-C3H7", "1-C4H8", "H2O", "O", "O3", "X_1", "A'"]
)


def _side_text(names: list[str], coefficients: list[int], third_body: bool, spaced: bool) -> str:
    terms = [name if c == 1 else f"{c} {name}" for name, c in zip(names, coefficients, strict=True)]
    if third_body:
        terms.append("M")
    return (" + " if spaced else "+").join(terms)


@given(
    reactants=st.lists(NAMES, min_size=1, max_size=4),
    products=st.lists(NAMES, min_size=1, max_size=4),
    third_body=st.booleans(),
    data=st.data(),
)
def test_permutations_give_the_same_canonical_text(reactants, products, third_body, data):
    reference = parse_equation(
        _side_text(reactants, [1] * len(reactants), third_body, True)
        + " -> "
        + _side_text(products, [1] * len(products), third_body, True)
    )
    # Shuffle each side, move M anywhere, and fold repeated names into coefficients.
    shuffled = []
    for names in (reactants, products):
        order = data.draw(st.permutations(names))
        counts: dict[str, int] = {}
        for name in order:
            counts[name] = counts.get(name, 0) + 1
        terms = [name if n == 1 else f"{n} {name}" for name, n in counts.items()]
        if third_body:
            terms.insert(data.draw(st.integers(0, len(terms))), "M")
        separator = data.draw(st.sampled_from([" + ", "+", "  +  "]))
        shuffled.append(separator.join(terms))
    arrow = data.draw(st.sampled_from([" -> ", "->", "  ->  "]))
    permuted = parse_equation(arrow.join(shuffled))
    assert permuted == reference
    assert permuted.canonical == reference.canonical
    assert parse_equation(reference.canonical) == reference


# ---------------------------------------------------------------------------
# Refusals: every case names its column and what was expected
# ---------------------------------------------------------------------------

# (text, column or None, fragment of the message)
EQUATION_ERRORS = [
    ("A + B", None, "no '->' in equation 'A + B': expected reactants -> products"),
    ("A -> B -> C", 8, "a second '->'"),
    ("-> B", 1, "no reactants before '->'"),
    ("A ->", 3, "no products after '->'"),
    ("A + + B -> C", 3, "missing species after '+'"),
    ("+ A -> B", 1, "missing species before '+'"),
    ("A + -> B", 3, "missing species after '+'"),
    ("A -> B +", 8, "missing species after '+'"),
    ("0 A -> B", 1, "coefficient '0'"),
    ("1.5 A -> B", 1, "coefficient '1.5'"),
    ("A -> 1/2 B", 6, "coefficient '1/2'"),
    ("-1 A -> B", 1, "coefficient '-1'"),
    (f"{MAX_COEFFICIENT + 1} A -> B", 1, f"coefficient '{MAX_COEFFICIENT + 1}'"),
    ("99999999999999999999 A -> B", 1, "coefficient '99999999999999999999'"),
    ("2 -> B", 1, "coefficient '2' with no species after it"),
    ("2OH -> H2O2", 1, "species '2OH' starts with a number"),
    ("CH4 OH -> B", 5, "'OH' follows 'CH4' without a '+'"),
    ("2 A B -> C", 5, "'B' follows 'A' without a '+'"),
    ("A&B -> C", 2, "unexpected character '&' in species 'A&B'"),
    ("_A -> B", 1, "species '_A' starts with '_'"),
    ("CH2(S -> B", 4, "'(' is never closed in species 'CH2(S'"),
    ("CH2S) -> B", 5, "unmatched ')' in species 'CH2S)'"),
    ("A + M -> B", 5, "the third body 'M' is on the left side only"),
    ("A -> B + M", 10, "the third body 'M' is on the right side only"),
    ("A + M + M -> B + M", 9, "a second third body 'M' on the left side"),
    ("A + M -> B + M + M", 18, "a second third body 'M' on the right side"),
    ("2 M + A -> B + M", 1, "coefficient before the third body 'M'"),
    ("M -> A", 1, "the left side holds only the third body 'M'"),
    ("A + M -> M", 10, "the right side holds only the third body 'M'"),
]


@pytest.mark.parametrize(("text", "column", "fragment"), EQUATION_ERRORS)
def test_equation_errors(text, column, fragment):
    with pytest.raises(EquationError) as caught:
        parse_equation(text)
    message = str(caught.value)
    assert fragment in message
    if column is not None:
        assert f"at column {column} in equation '{text.strip()}': " in message
    assert "\n" not in message


#: Symbols and punctuation of every script: whatever a separator is drawn with, only "->"
#: is the arrow.
SEPARATORS = st.text(
    alphabet=st.one_of(
        st.characters(categories=["Sm", "So", "Pd", "Po", "Ps", "Pe"]), st.sampled_from("<=>-~")
    ),
    min_size=1,
    max_size=4,
).filter(lambda separator: "->" not in separator)


@given(separator=SEPARATORS)
def test_text_without_the_arrow_is_one_malformed_equation(separator):
    # Any other way of joining two sides is an equation without its arrow: one message,
    # which shows how an equation is written.
    text = f"CH4 + OH {separator} CH3 + H2O"
    with pytest.raises(EquationError) as caught:
        parse_equation(text)
    message = str(caught.value)
    assert message.startswith("no '->' in equation ")
    assert message.endswith(": expected reactants -> products, e.g. 'CH4 + OH -> CH3 + H2O'")


def test_the_message_shows_how_an_equation_is_written():
    with pytest.raises(EquationError) as caught:
        parse_equation("A ~ B")
    assert str(caught.value) == (
        "no '->' in equation 'A ~ B': expected reactants -> products, e.g. 'CH4 + OH -> CH3 + H2O'"
    )


@pytest.mark.parametrize("text", ["", "   "])
def test_empty_equation(text):
    with pytest.raises(EquationError, match="empty equation"):
        parse_equation(text)


def test_equation_errors_are_ratebank_and_value_errors():
    with pytest.raises(RatebankError):
        parse_equation("A + B")
    with pytest.raises(ValueError):
        parse_equation("A + B")
    with pytest.raises(EquationError, match="must be given as text"):
        parse_equation(None)


@given(
    st.one_of(
        st.text(),
        st.text(alphabet="AHOCM2 +-><=()'*_,1.0", max_size=30),
    )
)
def test_any_text_equation(text):
    try:
        parsed = parse_equation(text)
    except EquationError:
        return
    assert parsed.reactants and parsed.products
    assert parse_equation(parsed.canonical) == parsed


# ---------------------------------------------------------------------------
# Species names: exactly those the parser reads as one species
# ---------------------------------------------------------------------------

VALID_NAMES = ["OH", "CH2(S)", "1-C4H8", "1,3-C4H6", "n-C3H7", "O2*", "A'", "X_2", "(M)", "m"]
# (name, fragment of the reason)
INVALID_NAMES = [
    ("=1+1 x", "'+' separates species in an equation"),
    ("A B", "a space at column 2"),
    ("M", "M is the third body in equations"),
    ("2", "coefficient '2' with no species after it"),
    ("2OH", "starts with a number"),
    ("-x", "starts with '-'"),
    ("\u041e\u041d", "U+041E CYRILLIC CAPITAL LETTER O"),  # looks like OH
    ("OH\u200b", "U+200B ZERO WIDTH SPACE"),
    ("CH2(S", "is never closed"),
    ("", "must not be empty"),
]


@pytest.mark.parametrize("name", VALID_NAMES)
def test_valid_species_names(name):
    assert check_species_name(name) is None
    assert name in parse_equation(f"{name} + H -> X_Y").reactants


@pytest.mark.parametrize(("name", "fragment"), INVALID_NAMES)
def test_invalid_species_names_say_why(name, fragment):
    with pytest.raises(EquationError) as caught:
        check_species_name(name)
    assert fragment in str(caught.value)


@given(st.one_of(st.text(max_size=12), st.text(alphabet="AHOM2 +-><()'*_,1.\u041e", max_size=8)))
def test_a_name_is_valid_exactly_when_an_equation_reads_it_as_that_species(name):
    try:
        check_species_name(name)
        valid = True
    except EquationError:
        valid = False
    try:
        read = parse_equation(f"{name} -> Q_Q").reactants == (name,)
    except EquationError:
        read = False
    assert valid == read


# ---------------------------------------------------------------------------
# Element balance
# ---------------------------------------------------------------------------

FORMULAS = {
    name: parse_formula(name)
    for name in ["CH4", "OH", "CH3", "H2O", "H2O2", "H", "O2", "HO2", "O", "O3", "C2H6", "N2"]
}


@pytest.mark.parametrize(
    "text",
    [
        "CH4 + OH -> CH3 + H2O",
        "O + O3 -> 2 O2",
        "H + O2 + M -> HO2 + M",
        "HO2 + HO2 -> H2O2 + O2",
        "CH3 + CH3 -> C2H6",
        "2 OH -> H2O2",
    ],
)
def test_balanced_equations(text):
    assert check_element_balance(text, FORMULAS) is None
    assert check_element_balance(parse_equation(text), FORMULAS) is None


def test_unbalanced_equation_message():
    with pytest.raises(EquationError) as caught:
        check_element_balance("CH4 + OH -> CH3 + H2O2", FORMULAS)
    assert str(caught.value) == (
        "equation 'CH4 + OH -> CH3 + H2O2' does not balance: O is 1 on the left and 2 on the right"
    )


def test_first_unbalanced_element_in_hill_order():
    # C is checked before H and O (Hill order), so C is named here.
    with pytest.raises(EquationError, match="C is 2 on the left and 1 on the right"):
        check_element_balance("CH3 + CH3 -> CH4", FORMULAS)


def test_coefficients_count_in_balance():
    with pytest.raises(EquationError, match="O is 4 on the left and 3 on the right"):
        check_element_balance("O + O3 -> O2 + O", FORMULAS)


def test_unknown_species():
    with pytest.raises(EquationError) as caught:
        check_element_balance("CH4 + XY -> CH3 + H2O", FORMULAS)
    assert "unknown species 'XY'" in str(caught.value)


def test_formula_text_values_accepted_and_bad_ones_named():
    check_element_balance(
        "CH4 + OH -> CH3 + H2O", {"CH4": "CH4", "OH": "HO", "CH3": "CH3", "H2O": "H2O"}
    )
    with pytest.raises(EquationError, match=r"formula of species 'OH': .*unknown element"):
        check_element_balance("CH4 + OH -> CH3 + H2O", {**FORMULAS, "OH": "Xy"})


# ---------------------------------------------------------------------------
# Start-up cost and doctests
# ---------------------------------------------------------------------------


def test_equation_work_loads_neither_numpy_nor_scipy():
    code = (
        "import sys\n"
        "from ratebank.science import equation\n"
        "equation.check_element_balance('O + O3 -> 2 O2', {'O': 'O', 'O3': 'O3', 'O2': 'O2'})\n"
        "print('scipy' in sys.modules, 'numpy' in sys.modules)\n"
    )
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    )
    assert result.stdout.split() == ["False", "False"]


def test_doctests():
    outcome = doctest.testmod(equation_module)
    assert outcome.failed == 0
    assert outcome.attempted > 0
