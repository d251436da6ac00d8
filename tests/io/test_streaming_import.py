"""The streaming measurement import validates exactly as a row-at-a-time import would."""

from __future__ import annotations

import json
from contextlib import nullcontext
from unittest import mock

import pytest
from helpers.cli import run, snapshot, write
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from ratebank.errors import ImportValidationError, RatebankError
from ratebank.io import csv_import
from ratebank.io.csv_import import import_measurements_file
from ratebank.services.store_access import open_store

HEADER = (
    "set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference,method,"
    "pressure_bar,bath_gas\n"
)

# made up for the tests: good rows with problems sprinkled across the file
BAD_FILE = HEADER + "".join(
    [
        "a,ab,300,1e-12,cm3/molecule/s,0.1,relative,lab,flash,1,He\n",
        "a,ab,310,1e-12,cm3/molecule/s,0.1,relative,lab,flash,1,He\n",
        "a,ab,-5,1e-12,cm3/molecule/s,0.1,relative,lab,flash,1,He\n",
        "b,ab,300,0,cm3/molecule/s,,,other,,,\n",
        "b,ab,320,2e-12,cm3/mol/s,,,other,,,\n",
        "c,nope,300,1e-12,cm3/molecule/s,,,,,,\n",
        "c,nope,310,1e-12,cm3/molecule/s,,,,,,\n",
        "d,ab,300,1e-12,s-1,,,,,,\n",
        "a,ab,330,abc,cm3/molecule/s,0.1,relative,lab,flash,1,He\n",
        "e,ab,300,1e-12,cm3/molecule/s,0.1,sometimes,,,,\n",
        "a,ab,340,1e-12,cm3/molecule/s,0.1,relative,lab2,flash,1,He\n",
        "f,ab,300,nan,cm3/molecule/s,,,,,,\n",
        "b,ba,330,1e-12,cm3/molecule/s,,,other,,,\n",
    ]
)


@pytest.fixture
def store(db_url):
    assert run(db_url, "init").exit_code == 0
    for name, formula in (("A", "H"), ("B", "Cl"), ("AB", "HCl")):
        assert run(db_url, "species", "add", name, formula).exit_code == 0
    assert run(db_url, "reactions", "add", "ab", "A + B -> AB").exit_code == 0
    assert run(db_url, "reactions", "add", "ba", "AB -> A + B").exit_code == 0
    return db_url


def _problems(db: str, path, chunk_rows: int) -> list[str]:
    handle = open_store(db)
    try:
        with handle.session(write=True) as session, pytest.raises(ImportValidationError) as err:
            import_measurements_file(session, path, chunk_rows=chunk_rows)
    finally:
        handle.close()
    return err.value.problems


def test_same_problems_whatever_the_chunk_size(store, tmp_path):
    path = write(tmp_path / "bad.csv", BAD_FILE)
    before = snapshot(store)
    reference = _problems(store, path, chunk_rows=1)  # one row at a time: the slow path
    assert len(reference) >= 9
    for chunk_rows in (2, 3, 5, 100_000):
        assert _problems(store, path, chunk_rows) == reference
    assert snapshot(store) == before
    joined = "\n".join(reference)
    for expected in (
        ":4: T_K: -5 must be greater than zero",
        ":5: k: 0 must be greater than zero",
        ":6: k_units: 'cm3/mol/s' differs from 'cm3/molecule/s'",
        ":7: reaction: no reaction with key 'nope'",
        ":9: k_units: unit 's-1' is for a rate constant of order 1",
        ":10: k: 'abc' is not a number",
        ":11: uncertainty_kind: 'sometimes' is not one of relative, absolute",
        ":12: reference: 'lab2' differs from 'lab' given for set 'a' on line 2",
        ":13: k: 'nan' is not a finite number",
        ":14: reaction: set 'b' was given for reaction 'ab' on line 5",
    ):
        assert expected in joined, expected


def test_a_problem_in_a_late_chunk_undoes_the_early_chunks(store, tmp_path):
    good = "".join(f"s{i},ab,{300 + i},1e-12,cm3/molecule/s,,,,,,\n" for i in range(50))
    path = write(tmp_path / "late.csv", HEADER + good + "s99,ab,0,1e-12,cm3/molecule/s,,,,,,\n")
    before = snapshot(store)
    problems = _problems(store, path, chunk_rows=7)
    assert problems == [
        f"{path}:52: T_K: 0 must be greater than zero; expected a temperature in K greater than zero"
    ]
    assert snapshot(store) == before


def test_chunked_import_stores_every_point(store, tmp_path):
    rows = "".join(
        f"s{i // 4},ab,{300 + 10 * (i % 4)},{1e-12 * (1 + i)},cm3/molecule/s,0.1,,,,,\n"
        for i in range(40)
    )
    path = write(tmp_path / "ok.csv", HEADER + rows)
    handle = open_store(store)
    try:
        with handle.session(write=True) as session:
            summary = import_measurements_file(session, path, chunk_rows=3)
    finally:
        handle.close()
    assert (summary.added, summary.details["sets"]) == (40, 10)
    sets = json.loads(run(store, "data", "list", "--json").stdout)
    assert sorted(s["points"] for s in sets) == [4] * 10
    assert {s["T_min_K"] for s in sets} == {300.0} and {s["T_max_K"] for s in sets} == {330.0}


# ---------------------------------------------------------------- the two read paths agree

CELLS = {
    "set": ["a", "b", "c", " a", ""],
    "reaction": ["ab", "ba", "nope", "", "A + B -> AB"],
    "T_K": ["300", "310", "-5", "abc", "", " 320 "],
    "k": ["1e-12", "2e-12", "0", "inf", ""],
    "k_units": ["cm3/molecule/s", "cm3/mol/s", "", "s-1"],
    "reference": ["", "lab", "lab2"],
}


@st.composite
def measurement_files(draw):  # type: ignore[no-untyped-def]
    """Small measurement files mixing clean rows, bad cells, blank and ragged rows."""
    ending = draw(st.sampled_from(["\n", "\r\n"]))
    lines = ["set,reaction,T_K,k,k_units,reference"]
    for _ in range(draw(st.integers(1, 12))):
        kind = draw(st.sampled_from(["row"] * 6 + ["blank", "commas", "ragged"]))
        if kind == "blank":
            lines.append("")
        elif kind == "commas":
            lines.append(",,,,,")
        elif kind == "ragged":
            lines.append("a,ab,300")
        else:
            lines.append(",".join(draw(st.sampled_from(values)) for values in CELLS.values()))
    return ending.join(lines) + draw(st.sampled_from(["", ending]))


def _outcome(db: str, path, chunk_rows: int, *, plain: bool):  # type: ignore[no-untyped-def]
    handle = open_store(db)
    try:
        with (
            mock.patch.object(csv_import, "_scan_bytes", return_value=False)
            if not plain
            else nullcontext(),
            handle.session(write=True) as session,
        ):
            try:
                summary = import_measurements_file(
                    session, path, chunk_rows=chunk_rows, dry_run=True
                )
            except RatebankError as exc:
                return ("error", str(exc), getattr(exc, "problems", None))
            return ("ok", summary.added, summary.details["sets"])
    finally:
        handle.close()


@settings(
    max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(text=measurement_files())
def test_plain_and_csv_reading_give_the_same_verdict(store, tmp_path, text):
    # the row-by-row csv module path with one row per chunk is the reference
    path = tmp_path / "random.csv"
    path.write_bytes(text.encode())
    reference = _outcome(store, path, 1, plain=False)
    for chunk_rows, plain in ((100_000, True), (2, True), (3, False), (1, True)):
        assert _outcome(store, path, chunk_rows, plain=plain) == reference, (chunk_rows, plain)


def test_plain_and_quoted_files_store_the_same_points(store, tmp_path):
    rows = [f"s{i // 3},ab,{300 + 10 * i},{1e-12 * (1 + i)},cm3/molecule/s,lab" for i in range(9)]
    header = "set,reaction,T_K,k,k_units,reference"
    plain = write(tmp_path / "plain.csv", "\r\n".join([header, *rows, ""]))
    quoted = write(
        tmp_path / "quoted.csv",
        "\n".join([header, *(row.replace(",lab", ',"lab"') for row in rows)]),
    )
    stored = []
    for path in (plain, quoted):
        db = f"sqlite:///{tmp_path / (path.stem + '.db')}"
        assert run(db, "init").exit_code == 0
        for name, formula in (("A", "H"), ("B", "Cl"), ("AB", "HCl")):
            assert run(db, "species", "add", name, formula).exit_code == 0
        assert run(db, "reactions", "add", "ab", "A + B -> AB").exit_code == 0
        assert run(db, "data", "import", str(path)).exit_code == 0
        stored.append(json.loads(run(db, "data", "list", "--json").stdout))
    assert stored[0] == stored[1]
    assert sorted(s["points"] for s in stored[0]) == [3, 3, 3]
