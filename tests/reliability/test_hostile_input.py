"""Hostile and malformed input through the real command line (property-based).

Whatever the four importers are fed (arbitrary text, random bytes, text in the
wrong encoding, stray delimiters and quotes, huge and non-finite numbers, very
long lines, SQL in names), the result is either a correct import or one
``Error: ...`` message with a non-zero exit: never a traceback, never a partial
write. Names containing SQL are stored and found as literal text.

The unit, formula and equation parsers have property tests of their own in
tests/science; these tests are about files, the store and the command line.
"""

from __future__ import annotations

import csv
import io
import json
import re
import uuid

import pytest
from helpers.cli import snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from hypothesis import HealthCheck, assume, event, example, given, settings
from hypothesis import strategies as st
from hypothesis.control import currently_in_test_context

SQL = [
    "'; DROP TABLE species; --",
    "Robert'); DROP TABLE reaction;--",
    '" OR ""="',
    "1' OR '1'='1",
    "' UNION SELECT author FROM audit --",
    "1; DELETE FROM point",
    "%",
    "_",
    "\\",
    "%_\\'",
    "$$ $tag$",
    "/* comment */",
    "NULL",
]
NUMBERS = [
    "nan",
    "NaN",
    "-nan",
    "inf",
    "-inf",
    "Infinity",
    "1e308",
    "1.8e308",
    "-1e309",
    "1e-400",
    "4.9e-324",
    "0",
    "-0",
    "1_000",
    "0x1p3",
    "1,5",
    "１２３",
    "٣",
    "٣٠٠",
    "３００",
    "1e-320",
    "-4.9e-324",
    "1e",
    ".",
    "+",
    " 42 ",
    "9" * 400,
    "-" + "9" * 400,
]
UNITS = [
    "cm3/molecule/s",
    "cm3 molecule-1 s-1",
    "cm3/mol/s",
    "s-1",
    "cm6/molecule2/s",
    "kJ/mol",
    "kcal/mol",
    "K",
    "cm-1",
    "furlong",
    "cm3/molecule/s/s",
    "(((",
    "cm^999999",
]
AWKWARD = st.text(alphabet="\",';|\t\r\n\x00\x0b\x0c\x1c\x85\u2028\ufeff é中", max_size=8)
HUGE = st.sampled_from(["x" * 5_000, "y" * 120_000])  # the second is longer than a cell may be

# Values that are valid in their column for the store the tests seed (bimolecular
# k units go with the bimolecular reactions used); "{n}" makes a name new to the store.
VALID = {
    "name": ["S{n}-{i}", "S{n}-{i}'OR'1'-'1", "CH2(S){n}-{i}", "x_{n}-{i}"],
    "formula": ["CH4", "HO", "H2O2", "CH2", "C2H6"],
    "diameter_angstrom": ["3.7", ""],
    "well_depth_K": ["100", ""],
    "critical_temperature_K": ["190.6", ""],
    "critical_pressure_bar": ["46", ""],
    "acentric_factor": ["0.011", ""],
    "boiling_volume_cm3_per_mol": ["37.9", ""],
    "source": ["lab notes", "Müller", "1' OR '1'='1", ""],
    "key": ["r{n}-{i}", "k';--{n}-{i}", "x%_{n}-{i}"],
    "equation": [
        "OH + OH -> H2O2",
        "H + O2 -> HO2",
        "HO2 + OH -> H2O + O2",
        "H + OH -> H2O",
        "CH3 + H -> CH4",
        "H + HO2 -> H2O2",
        "H + O3 -> O2 + OH",
        "H + OH + M -> H2O + M",
    ],
    "class": ["recombination", "' OR '1'='1", ""],
    "notes": ["note", "'; --", ""],
    "set": ["h{n}-{i}", "s'); DELETE FROM point;--{n}-{i}"],
    "reaction": ["oh-ch4", "CH4 + OH -> CH3 + H2O", "OH+CH4->H2O+CH3"],
    "T_K": ["300", "1000.5", "1e3"],
    "k": ["1e-14", "2.5e-12"],
    "k_units": ["cm3/molecule/s", "cm3 molecule-1 s-1", "cm^3/(molecule*s)"],
    "k_uncertainty": ["0.1", ""],
    "uncertainty_kind": ["relative", ""],
    "reference": ["test lab", "'; DROP TABLE point; --", ""],
    "method": ["flash photolysis", ""],
    "pressure_bar": ["1", ""],
    "bath_gas": ["He", ""],
    "A": ["1e-12", "1.85e-20"],
    "n": ["0", "2.82"],
    "Ea": ["10", "-4.9", "987"],
    "Ea_units": ["kJ/mol", "K", "kcal/mol", "cm-1"],
    "T_min_K": ["200", ""],
    "T_max_K": ["2000", ""],
    "uncertainty_factor": ["1.2", "3", ""],
    "origin": ["literature", "manual", ""],
}
#: Values that are wrong in most columns (but never crash anything).
INVALID = [
    "round",
    "Qq",
    "nope",
    "a b",
    "sometimes",
    "measured-fit",
    "0.5",
    "-2",
    "s-1",
    "OH + CH4 CH3 + H2O",
    "2OH -> H2O2",
]

COLUMNS = {
    "species": [
        "name",
        "formula",
        "molar_mass_g_per_mol",
        "diameter_angstrom",
        "diameter_kind",
        "well_depth_K",
        "critical_temperature_K",
        "critical_pressure_bar",
        "acentric_factor",
        "boiling_volume_cm3_per_mol",
        "source",
    ],
    "reactions": ["key", "equation", "class", "notes"],
    "data": [
        "set",
        "reaction",
        "T_K",
        "k",
        "k_units",
        "k_uncertainty",
        "uncertainty_kind",
        "reference",
        "method",
        "pressure_bar",
        "bath_gas",
    ],
    "expressions": [
        "reaction",
        "A",
        "n",
        "Ea",
        "Ea_units",
        "k_units",
        "T_min_K",
        "T_max_K",
        "uncertainty_factor",
        "reference",
        "origin",
    ],
}
REQUIRED = {
    "species": ["name", "formula"],
    "reactions": ["key", "equation"],
    "data": ["set", "reaction", "T_K", "k"],
    "expressions": ["reaction", "Ea"],
}
#: What each import adds: (table whose new rows are counted, message noun).
ADDS = {
    "species": "species",
    "reactions": "reaction",
    "data": "point",
    "expressions": "expression",
}
HYPOTHESIS = settings(
    max_examples=30,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)


def _plausible(column: str, n: int, i: int) -> st.SearchStrategy[str]:
    return st.sampled_from(VALID.get(column, [""])).map(lambda v: v.format(n=n, i=i))


def _hostile() -> st.SearchStrategy[str]:
    return st.one_of(
        st.sampled_from(INVALID),
        st.sampled_from(UNITS),
        st.sampled_from(NUMBERS),
        st.floats().map(repr),
        st.integers(min_value=-(10**400), max_value=10**400).map(str),
        st.sampled_from(SQL),
        AWKWARD,
        st.text(max_size=20),
        HUGE,
    )


@st.composite
def csv_files(draw, kind: str) -> bytes:
    """A CSV file for one importer: a plausible header, hostile cells, any encoding."""
    columns = COLUMNS[kind]
    header = draw(
        st.one_of(
            st.just(columns),
            st.just(columns),
            st.just(columns),
            st.lists(
                st.sampled_from([*columns, "bogus", "Name", " name", ""]),
                min_size=1,
                max_size=len(columns) + 2,
            ),
            st.lists(st.sampled_from(columns), min_size=1, unique=True).map(
                lambda chosen: list(dict.fromkeys(REQUIRED[kind] + chosen))
            ),
        )
    )
    # Rows of plausible values with a few hostile cells put in: both clean files
    # (which must import exactly) and dirty ones (which must be refused whole) come up.
    n = draw(st.integers(min_value=0, max_value=10**9))
    # Half the files are clean (they must import exactly), half are dirty (they must
    # be refused whole); a clean file may still be refused, say for a duplicate.
    dirty = draw(st.booleans())
    rows = []
    for i in range(draw(st.integers(min_value=1, max_value=6))):
        row = [draw(_plausible(c, n, i)) for c in header]
        for _ in range(draw(st.integers(1, 2)) if dirty else 0):
            row[draw(st.integers(0, len(row) - 1))] = draw(_hostile())
        rows.append(row)
    if dirty and draw(st.booleans()):
        # an extra or missing cell, or a row of delimiters
        rows.append(draw(st.lists(st.sampled_from(["", ",", '"', "x"]), max_size=8)))
    quoting = draw(st.sampled_from(["csv", "raw"]))
    newline = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    if quoting == "csv":
        buffer = io.StringIO()
        csv.writer(buffer, lineterminator=newline).writerows([header, *rows])
        content = buffer.getvalue()
    else:
        content = newline.join(",".join(r) for r in [header, *rows]) + newline
    encoding = draw(
        st.sampled_from(["utf-8", "utf-8-sig", "latin-1", "utf-16", "utf-16-le", "cp1252"])
        if dirty
        else st.sampled_from(["utf-8", "utf-8-sig"])
    )
    return content.encode(encoding, errors="replace")


def _new_rows(before, after, table):
    old = before[table]  # rows hold dicts (JSON columns): compare, do not hash
    return [row for row in after[table] if row not in old]


def _check(cli, db, kind, path, *extra):
    """The import either worked, exactly, or failed in one message and wrote nothing."""
    before = snapshot(db)
    outcome = cli(db, kind, "import", str(path), *extra)  # a traceback would raise here
    assert "Traceback" not in outcome.stdout + outcome.stderr
    after = snapshot(db)
    if currently_in_test_context():
        event("imported" if outcome.exit_code == 0 else "refused")
    if outcome.exit_code == 0:
        match = re.search(r": imported (\d+) ", outcome.stdout)
        assert match, outcome.stdout
        added = int(match.group(1))
        assert len(_new_rows(before, after, ADDS[kind])) == added
        assert len(after["audit"]) == len(before["audit"]) + (1 if added else 0)
        assert outcome.stderr == ""
        return outcome, before, after
    assert outcome.exit_code == 1, outcome
    assert outcome.stderr.startswith("Error: "), outcome.stderr
    assert outcome.stdout == ""
    assert after == before
    return outcome, before, after


def _seed(db, cli, tmp_path):
    assert cli(db, "init").exit_code == 0
    for command, content in (
        ("species", SPECIES_CSV),
        ("reactions", REACTIONS_CSV),
        ("data", MEASUREMENTS_CSV),
        ("expressions", EXPRESSIONS_CSV),
    ):
        path = write(tmp_path / f"seed-{command}.csv", content)
        assert cli(db, command, "import", str(path)).exit_code == 0
    return db


@pytest.fixture
def seeded(sqlite_url, cli, tmp_path):
    """A SQLite store holding the tests' species, reactions, measurements and expressions."""
    return _seed(sqlite_url, cli, tmp_path)


@pytest.fixture
def seeded_postgres(postgres_url, cli, tmp_path):
    return _seed(postgres_url, cli, tmp_path)


@pytest.fixture
def store(db_url, cli, tmp_path):
    return _seed(db_url, cli, tmp_path)


# --------------------------------------------------------------------------- importers


def _any_csv_file(db, cli, tmp_path, kind, data):
    content = data.draw(csv_files(kind), label="file")
    path = tmp_path / "input.csv"
    path.write_bytes(content)
    extra = []
    if kind == "data":
        extra = data.draw(st.sampled_from([[], ["--k-units", "cm3/molecule/s"]]))
    outcome, before, after = _check(cli, db, kind, path, *extra)
    if outcome.exit_code == 0 and kind == "species":
        # the names stored are the names given (stripped), SQL and all
        text = content.decode("utf-8-sig")
        cells = {c.strip() for r in csv.reader(io.StringIO(text, newline="")) for c in r}
        for row in _new_rows(before, after, "species"):
            assert row[1] in cells


@pytest.mark.parametrize("kind", list(COLUMNS))
@HYPOTHESIS
@given(data=st.data())
def test_any_csv_file_imports_correctly_or_fails_in_one_message(seeded, cli, tmp_path, kind, data):
    _any_csv_file(seeded, cli, tmp_path, kind, data)


@pytest.mark.parametrize("kind", list(COLUMNS))
@settings(HYPOTHESIS, max_examples=12)
@given(data=st.data())
def test_any_csv_file_on_postgresql(seeded_postgres, cli, tmp_path, kind, data):
    _any_csv_file(seeded_postgres, cli, tmp_path, kind, data)


@pytest.mark.parametrize("kind", list(COLUMNS))
@settings(
    max_examples=20,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(content=st.one_of(st.binary(max_size=3000), st.text(max_size=3000).map(str.encode)))
@example(content=b"")
@example(content=b"\xff\xfe" + "name,formula\nCH4,CH4\n".encode("utf-16-le"))
@example(content="name,formula\nCH4,CH4\nMüller,C\n".encode("latin-1"))
@example(content=b"name,formula\n\x00\x00\x00")
@example(content=b'name,formula\n"unclosed,CH4\n')
@example(content=b"key,equation\n" + b"a," * 50_000 + b"\n")
def test_arbitrary_bytes_never_crash_an_importer(seeded, cli, tmp_path, kind, content):
    path = tmp_path / "input.csv"
    path.write_bytes(content)
    _check(cli, seeded, kind, path, *(["--k-units", "s-1"] if kind == "data" else []))


def test_a_cell_longer_than_the_limit_is_one_message(seeded, cli, tmp_path):
    path = write(tmp_path / "long.csv", "name,formula\n" + "N" * 150_000 + ",CH4\n")
    outcome, _, _ = _check(cli, seeded, "species", path)
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        f"Error: {path}:2: a cell is longer than 100000 characters; expected valid CSV"
    )


@pytest.mark.parametrize(
    ("encoding", "expected"),
    [("latin-1", "is not UTF-8"), ("utf-16", "is UTF-16 text"), ("cp1252", "is not UTF-8")],
)
def test_wrong_encodings_are_named(seeded, cli, tmp_path, encoding, expected):
    path = tmp_path / "enc.csv"
    path.write_bytes("name,formula,source\nCH3OH,CH3OH,Müller lab\n".encode(encoding))
    outcome, _, _ = _check(cli, seeded, "species", path)
    assert outcome.exit_code == 1
    assert expected in outcome.stderr.splitlines()[0]
    assert "save it as UTF-8" in outcome.stderr


# --------------------------------------------------------------------------- SQL in names


SQL_SPECIES = {
    # name: formula; these names are written in equations below, so they use only the
    # characters an equation allows in a name (letters, digits and ( ) _ - , ' *)
    "HO'OR'1'-'1": "HO",
    "C'H4--": "CH4",
    "CH3'()": "CH3",
    "H2O'--*": "H2O",
}
SQL_KEY = "oh';DROP--"


def test_names_with_sql_are_stored_and_found_as_literal_text(db_url, cli, tmp_path):
    assert cli(db_url, "init").exit_code == 0
    rows = "".join(f'"{name}",{formula}\n' for name, formula in SQL_SPECIES.items())
    rows += "\"X'--DROP'TABLE\",CH4\nx_sure_,O2\n"
    outcome, _, _ = _check(
        cli, db_url, "species", write(tmp_path / "s.csv", "name,formula\n" + rows)
    )
    assert outcome.exit_code == 0, outcome.stderr
    oh, ch4, ch3, h2o = SQL_SPECIES
    equation = f"{oh} + {ch4} -> {ch3} + {h2o}"
    reactions = f'key,equation,class\n"{SQL_KEY}","{equation}","\' OR \'1\'=\'1"\n'
    outcome, _, _ = _check(cli, db_url, "reactions", write(tmp_path / "r.csv", reactions))
    assert outcome.exit_code == 0, outcome.stderr
    points = (
        "set,reaction,T_K,k,k_units\n"
        f'"s\'); DELETE FROM point;--","{SQL_KEY}",300,1e-14,cm3/molecule/s\n'
        f'"s\'); DELETE FROM point;--","{SQL_KEY}",400,2e-14,cm3/molecule/s\n'
    )
    outcome, _, _ = _check(cli, db_url, "data", write(tmp_path / "p.csv", points))
    assert outcome.exit_code == 0, outcome.stderr

    def as_json(*args):
        result = cli(db_url, *args, "--json")
        assert result.exit_code == 0, result.stderr
        return json.loads(result.stdout)

    shown = as_json("species", "show", oh)
    assert shown["name"] == oh
    assert [r["key"] for r in as_json("reactions", "list", "--species", oh)] == [SQL_KEY]
    assert [r["key"] for r in as_json("reactions", "list", "--species", h2o)] == [SQL_KEY]
    detail = as_json("reactions", "show", SQL_KEY)
    assert {p["name"] for p in detail["participants"]} == set(SQL_SPECIES)
    assert detail["class"] == "' OR '1'='1"
    assert [s["set"] for s in detail["sets"]] == ["s'); DELETE FROM point;--"]
    # any spelling of the equation finds it too
    assert as_json("reactions", "show", f"{ch4} + {oh} -> {h2o} + {ch3}")["key"] == SQL_KEY
    assert [r["key"] for r in as_json("reactions", "list", "--class", "' OR '1'='1")] == [SQL_KEY]
    assert as_json("reactions", "list", "--class", "x' OR '1'='1") == []
    assert as_json("data", "list", "--reaction", SQL_KEY)[0]["points"] == 2
    assert as_json("history", "--target", "' OR '1'='1") == []
    # LIKE wildcards in a filter are literal (no species name can hold % or \\)
    assert as_json("species", "list", "--name", "%") == []
    assert {r["name"] for r in as_json("species", "list", "--name", "_")} == {"x_sure_"}
    assert as_json("species", "list", "--name", "\\") == []
    assert {r["name"] for r in as_json("species", "list", "--name", "--")} == {
        "C'H4--",
        "H2O'--*",
        "X'--DROP'TABLE",
    }
    unknown = cli(db_url, "species", "show", "' OR '1'='1")
    assert unknown.exit_code == 1
    assert unknown.stderr.strip() == "Error: no species \"' OR '1'='1\" in the store"


def test_name_filters_are_case_sensitive_on_both_backends(db_url, cli):
    # CO is carbon monoxide, Co is cobalt: a filter is literal text, case included.
    assert cli(db_url, "init").exit_code == 0
    for name, formula in (("CO", "CO"), ("Co", "Co"), ("CH3CO", "C2H3O"), ("oh-radical", "HO")):
        assert cli(db_url, "species", "add", name, formula).exit_code == 0

    def names(fragment):
        outcome = cli(db_url, "species", "list", "--json", "--name", fragment)
        assert outcome.exit_code == 0, outcome.stderr
        return {r["name"] for r in json.loads(outcome.stdout)}

    assert names("CO") == {"CO", "CH3CO"}
    assert names("Co") == {"Co"}
    assert names("co") == set()
    assert names("OH") == set()
    assert names("oh") == {"oh-radical"}


NAME_TEXT = st.text(
    alphabet=st.characters(codec="utf-8", exclude_categories=("Cs", "Cc")), min_size=1, max_size=40
)
#: Names an equation can hold, with the quotes and dashes SQL is made of.
PARSER_NAMES = st.from_regex(r"[A-Za-z(][A-Za-z0-9_',*-]{0,24}", fullmatch=True)
NAMES = st.one_of(
    st.sampled_from(SQL),
    NAME_TEXT,
    st.tuples(st.sampled_from(SQL), NAME_TEXT).map("".join),
    PARSER_NAMES,
)
FRAGMENTS = st.one_of(
    st.sampled_from(["%", "_", "\\", "'", '"', "--", ";", "a", "A", "s", "S"]), NAME_TEXT
)


def _any_name(db, cli, name, fragment):
    from ratebank.services.input_rules import species_name_problem

    stored = name.strip()
    assume(stored)
    outcome = cli(db, "species", "add", "--", name, "CH4")
    assert "Traceback" not in outcome.stderr
    rule = species_name_problem(stored)
    if rule is not None:  # refused, with the reason, and nothing written
        assert outcome.exit_code == 1
        assert f"command line: name: {rule}" in outcome.stderr
        return
    if outcome.exit_code != 0:  # e.g. a name drawn again: it is in the store already
        assert outcome.stderr.startswith("Error: ")
        assume(f"species {stored!r} is already in the store" in outcome.stderr)
    shown = cli(db, "species", "show", "--json", "--", stored)
    assert shown.exit_code == 0, shown.stderr
    assert json.loads(shown.stdout)["name"] == stored
    listed = cli(db, "species", "list", "--json")
    every = {r["name"] for r in json.loads(listed.stdout)}
    assert stored in every
    filtered = cli(db, "species", "list", "--json", "--name", fragment)
    assert filtered.exit_code == 0, filtered.stderr
    assert {r["name"] for r in json.loads(filtered.stdout)} == {n for n in every if fragment in n}


@pytest.fixture
def empty_sqlite(sqlite_url, cli):
    assert cli(sqlite_url, "init").exit_code == 0
    return sqlite_url


@pytest.fixture
def empty_postgres(postgres_url, cli):
    assert cli(postgres_url, "init").exit_code == 0
    return postgres_url


@settings(HYPOTHESIS, max_examples=25)
@given(name=NAMES, fragment=FRAGMENTS)
def test_any_name_is_stored_and_filtered_as_literal_text(empty_sqlite, cli, name, fragment):
    _any_name(empty_sqlite, cli, name, fragment)


@settings(HYPOTHESIS, max_examples=12)
@given(name=NAMES, fragment=FRAGMENTS)
def test_any_name_on_postgresql(empty_postgres, cli, name, fragment):
    _any_name(empty_postgres, cli, name, fragment)


# --------------------------------------------------------------------------- known gaps

# The two backends must agree: a value the store cannot hold on one of them is refused
# by validation, with its file and line, on both.


def test_a_nul_character_is_refused_by_validation(store, cli, tmp_path):
    path = tmp_path / "nul.csv"
    path.write_bytes(b"name,formula\nA\x00B,CH4\n")
    outcome, _, _ = _check(cli, store, "species", path)
    assert outcome.exit_code == 1
    assert f"{path}:2:" in outcome.stderr
    assert "NUL" in outcome.stderr


def test_a_name_longer_than_the_store_holds_is_refused_by_validation(store, cli, tmp_path):
    path = write(tmp_path / "long.csv", "name,formula\n" + "N" * 300 + ",CH4\n")
    outcome, _, _ = _check(cli, store, "species", path)
    assert outcome.exit_code == 1
    assert f"{path}:2: name:" in outcome.stderr


# --------------------------------------------------------------------------- loose numbers

#: A valid row of each importer for the seeded store ("{n}" makes names new).
CLEAN_ROWS = {
    "species": {
        "name": "Z{n}",
        "formula": "CH4",
        "molar_mass_g_per_mol": "16.04",
        "diameter_angstrom": "3.7",
        "well_depth_K": "100",
        "critical_temperature_K": "190.6",
        "critical_pressure_bar": "46",
        "acentric_factor": "0.011",
        "boiling_volume_cm3_per_mol": "37.9",
    },
    "data": {
        "set": "loose{n}",
        "reaction": "oh-ch4",
        "T_K": "300",
        "k": "1e-14",
        "k_units": "cm3/molecule/s",
        "k_uncertainty": "0.1",
        "pressure_bar": "1",
    },
    "expressions": {
        "reaction": "oh-ch4",
        "A": "1e-12",
        "n": "0.5",
        "Ea": "10",
        "Ea_units": "kJ/mol",
        "k_units": "cm3/molecule/s",
        "T_min_K": "200",
        "T_max_K": "2000",
        "uncertainty_factor": "2",
    },
}
NUMBER_COLUMNS = [
    (kind, column)
    for kind, row in CLEAN_ROWS.items()
    for column, value in row.items()
    if value[:1].isdigit()
]
OTHER_DIGITS = st.characters(categories=["Nd"]).filter(lambda c: not c.isascii())
#: Numbers Python's float would read but the accepted syntax does not, and values too
#: close to zero to be stored at full precision.
LOOSE_NUMBERS = st.one_of(
    st.sampled_from(["1_000", "3_00.5", "1e1_0", "٣٠٠", "３００", "1e-320", "4.9e-324"]),
    st.tuples(st.integers(1, 999), st.integers(0, 999)).map(lambda p: f"{p[0]}_{p[1]:03d}"),
    st.text(OTHER_DIGITS, min_size=1, max_size=4),
    st.tuples(st.integers(10, 9999), OTHER_DIGITS).map(
        lambda p: str(p[0])[:1] + p[1] + str(p[0])[1:]
    ),
    st.integers(309, 323).map(lambda e: f"2.5e-{e}"),
)


def _one_row_file(path, row):
    buffer = io.StringIO()
    csv.writer(buffer, lineterminator="\n").writerows([list(row), list(row.values())])
    path.write_text(buffer.getvalue(), encoding="utf-8")
    return path


@pytest.mark.parametrize(("kind", "column"), NUMBER_COLUMNS)
@settings(HYPOTHESIS, max_examples=8)
@given(loose=LOOSE_NUMBERS)
def test_loose_numbers_are_refused_in_every_number_column(
    seeded, cli, tmp_path, kind, column, loose
):
    n = uuid.uuid4().hex  # names new to the store in every example
    row = {name: value.format(n=n) for name, value in CLEAN_ROWS[kind].items()}
    row[column] = loose
    path = _one_row_file(tmp_path / "loose.csv", row)
    outcome, _, _ = _check(cli, seeded, kind, path)
    assert outcome.exit_code == 1, (column, loose)
    assert f"{path}:2: {column}: " in outcome.stderr
    assert (
        "is not a number written with the digits 0-9" in outcome.stderr
        or "too close to zero to be stored at full precision" in outcome.stderr
    ), outcome.stderr


@pytest.mark.parametrize("kind", list(CLEAN_ROWS))
def test_the_clean_rows_import(seeded, cli, tmp_path, kind):
    row = {name: value.format(n=7) for name, value in CLEAN_ROWS[kind].items()}
    outcome, _, _ = _check(cli, seeded, kind, _one_row_file(tmp_path / "clean.csv", row))
    assert outcome.exit_code == 0, outcome.stderr


@pytest.mark.parametrize("option", ["--molar-mass", "--tc", "--diameter"])
@settings(HYPOTHESIS, max_examples=8)
@given(loose=LOOSE_NUMBERS)
def test_loose_numbers_are_refused_on_the_command_line(seeded, cli, option, loose):
    before = snapshot(seeded)
    outcome = cli(seeded, "species", "add", "CH3OH", "CH3OH", option, loose)
    assert outcome.exit_code != 0
    assert "Traceback" not in outcome.stderr
    assert f"Invalid value for '{option}'" in outcome.stderr
    assert snapshot(seeded) == before


@pytest.mark.parametrize(("column", "value"), [("T_K", "5"), ("T_K", "20000"), ("T_K", "1e-300")])
def test_temperatures_outside_10_to_10000_k_are_refused(seeded, cli, tmp_path, column, value):
    row = {name: v.format(n=3) for name, v in CLEAN_ROWS["data"].items()}
    row[column] = value
    path = _one_row_file(tmp_path / "t.csv", row)
    outcome, _, _ = _check(cli, seeded, "data", path)
    assert outcome.exit_code == 1
    assert f"{path}:2: T_K: {float(value):g} K is outside 10 to 10000 K" in outcome.stderr


# --------------------------------------------------------------------------- identifiers

#: Characters that are invisible or control text: zero-width spaces and joiners, the
#: byte-order mark, bidirectional overrides and isolates, and every other control or
#: format character (except the line ends and NUL, which end a CSV row or are refused
#: as binary before any name is read).
INVISIBLE = st.one_of(
    st.sampled_from(
        ["\u200b", "\u200c", "\u200d", "\u2060", "\ufeff", "\u202e", "\u202d", "\u2066", "\u2069"]
    ),
    st.characters(categories=["Cc", "Cf"]).filter(lambda c: c not in "\n\r\x00"),
)
#: (importer, column, clean value) of every name, key and set name a file carries.
IDENTIFIER_CELLS = [
    ("species", "name", "Zq{n}"),
    ("reactions", "key", "rk{n}"),
    ("reactions", "class", "cls{n}"),
    ("data", "set", "loose{n}"),
]
REACTION_ROW = {"key": "rk{n}", "equation": "H + O3 -> O2 + OH", "class": "cls{n}"}


@pytest.mark.parametrize(("kind", "column", "clean"), IDENTIFIER_CELLS)
@settings(HYPOTHESIS, max_examples=10)
@given(char=INVISIBLE, at=st.integers(1, 2))
def test_invisible_characters_in_names_keys_and_sets_are_refused(
    seeded, cli, tmp_path, kind, column, clean, char, at
):
    n = uuid.uuid4().hex
    template = REACTION_ROW if kind == "reactions" else CLEAN_ROWS[kind]
    row = {name: value.format(n=n) for name, value in template.items()}
    value = clean.format(n=n)
    row[column] = value[:at] + char + value[at:]
    path = _one_row_file(tmp_path / "names.csv", row)
    outcome, _, _ = _check(cli, seeded, kind, path)
    assert outcome.exit_code == 1, repr(row[column])
    assert f"{path}:2: {column}: " in outcome.stderr
    # the reason: the character by its code point, or the space rule of keys and species
    assert f"U+{ord(char):04X}" in outcome.stderr or "space" in outcome.stderr, outcome.stderr


@given(char=INVISIBLE)
@settings(HYPOTHESIS, max_examples=10)
def test_invisible_characters_in_a_steric_class_are_refused(seeded, cli, char):
    before = snapshot(seeded)
    outcome = cli(seeded, "steric", "set-class", f"h{char}abstraction", "0.1")
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith("Error: reaction class ")
    assert f"U+{ord(char):04X}" in outcome.stderr
    assert snapshot(seeded) == before


@pytest.mark.parametrize(
    ("name", "reason"),
    [
        ("=1+1 x", "'+' separates species in an equation"),
        ("\u041e\u041d", "U+041E CYRILLIC CAPITAL LETTER O"),
        ("M", "M is the third body"),
        ("@SUM(1)", "unexpected character '@'"),
        ("a b", "a space"),
    ],
)
def test_species_names_an_equation_cannot_hold_are_refused(seeded, cli, tmp_path, name, reason):
    path = write(tmp_path / "s.csv", f'name,formula\n"{name}",HO\n')
    outcome, _, _ = _check(cli, seeded, "species", path)
    assert outcome.exit_code == 1
    assert f"{path}:2: name: " in outcome.stderr
    assert reason in outcome.stderr


@settings(HYPOTHESIS, max_examples=10)
@given(
    side=st.lists(st.sampled_from(["OH", "CH4", "H2O", "HO2", "O2", "H"]), min_size=1, max_size=3),
    third_body=st.booleans(),
    n=st.integers(0, 10**9),
)
def test_a_reaction_whose_two_sides_are_the_same_is_refused(
    seeded, cli, tmp_path, side, third_body, n
):
    text = " + ".join(side + (["M"] if third_body else []))
    shuffled = " + ".join(reversed(side)) + (" + M" if third_body else "")
    path = write(tmp_path / "r.csv", f"key,equation\nsame{n},{text} -> {shuffled}\n")
    outcome, _, _ = _check(cli, seeded, "reactions", path)
    assert outcome.exit_code == 1
    assert f"{path}:2: equation: both sides of " in outcome.stderr
