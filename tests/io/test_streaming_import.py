"""The streaming measurement import validates exactly as a row-at-a-time import would."""

from __future__ import annotations

import pytest
from helpers.cli import run, snapshot, write

from ratebank.errors import ImportValidationError
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
    import json

    sets = json.loads(run(store, "data", "list", "--json").stdout)
    assert sorted(s["points"] for s in sets) == [4] * 10
    assert {s["T_min_K"] for s in sets} == {300.0} and {s["T_max_K"] for s in sets} == {330.0}
