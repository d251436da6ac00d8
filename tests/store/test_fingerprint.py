"""The content fingerprint: what changes it and what does not."""

from __future__ import annotations

import json
import os
import sqlite3

import numpy as np
import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.services.steric import set_class_rule
from ratebank.services.store_access import open_store
from ratebank.store.fingerprint import _column_bytes, store_fingerprint


@pytest.fixture
def filled(sqlite_url, tmp_path):
    assert run(sqlite_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(sqlite_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    assert (
        run(sqlite_url, "estimate", "--keep-going", "--steric", "0.2", "--t-ref", "300").exit_code
        == 0
    )
    return sqlite_url


def _fingerprint(db: str) -> str:
    handle = open_store(db)
    try:
        with handle.session() as session:
            return store_fingerprint(session)
    finally:
        handle.close()


def _execute(db: str, sql: str, *params: object) -> None:
    connection = sqlite3.connect(db)
    with connection:
        connection.execute(sql, params)
    connection.close()


def test_json_is_hashed_as_its_stored_text(filled):
    # the stored text is the content (backup and restore copy it byte for byte)
    before = _fingerprint(filled)
    connection = sqlite3.connect(filled)
    expression_id, stored = connection.execute(
        "SELECT id, provenance FROM expression WHERE provenance IS NOT NULL LIMIT 1"
    ).fetchone()
    connection.close()
    respelled = json.dumps(json.loads(stored), indent=1)
    _execute(filled, "UPDATE expression SET provenance = ? WHERE id = ?", respelled, expression_id)
    assert _fingerprint(filled) != before
    _execute(filled, "UPDATE expression SET provenance = ? WHERE id = ?", stored, expression_id)
    assert _fingerprint(filled) == before


def test_one_ulp_in_a_float_changes_the_fingerprint(filled):
    before = _fingerprint(filled)
    connection = sqlite3.connect(filled)
    species_id, diameter = connection.execute(
        "SELECT id, diameter FROM species WHERE diameter IS NOT NULL LIMIT 1"
    ).fetchone()
    connection.close()
    _execute(
        filled,
        "UPDATE species SET diameter = ? WHERE id = ?",
        float(np.nextafter(diameter, 1.0)),
        species_id,
    )
    assert _fingerprint(filled) != before
    _execute(filled, "UPDATE species SET diameter = ? WHERE id = ?", diameter, species_id)
    assert _fingerprint(filled) == before


@pytest.mark.parametrize(
    ("kind", "first", "second"),
    [
        ("text", ["ab", "c"], ["a", "bc"]),  # cell boundaries count
        ("text", [None, "x"], ["", "x"]),  # NULL is not the empty text
        ("float", [None, 1.0], [0.0, 1.0]),  # NULL is not zero
        ("integer", [1, 2], [2, 1]),  # order counts
        ("json", ['{"a": 1}'], ['{"a": 1.0}']),  # 1 and 1.0 are different JSON numbers
    ],
)
def test_column_bytes_tell_apart(kind, first, second):
    assert _column_bytes(kind, first) != _column_bytes(kind, second)


def test_booleans_hash_as_integers_on_either_dialect():
    # SQLite hands back 0/1, PostgreSQL True/False: the same content
    assert _column_bytes("integer", [True, False, None]) == _column_bytes("integer", [1, 0, None])


def test_values_of_an_unexpected_type_still_hash():
    # SQLite keeps whatever a hand edit wrote: a number in a text column, text in a float one
    assert _column_bytes("text", ["a", 5]).startswith(b"t")
    assert _column_bytes("float", [1.0, "abc"]).startswith(b"t")
    assert _column_bytes("integer", [1, b"\x00"]) != _column_bytes("integer", [1, 0])


def test_fingerprint_follows_content_not_reads(filled):
    store = open_store(filled)
    with store.session() as session:
        first = store_fingerprint(session)
        again = store_fingerprint(session)
    assert first == again and first.startswith("sha256:")
    with store.session(write=True) as session:
        set_class_rule(session, "x", 0.1)
    with store.session() as session:
        assert store_fingerprint(session) != first
    store.close()


@pytest.mark.skipif(not os.environ.get("RATEBANK_TEST_PG_URL"), reason="needs PostgreSQL")
def test_fingerprint_is_the_same_on_sqlite_and_postgresql(tmp_path):
    """The same imports into both dialects give the same content fingerprint."""
    from helpers.pg import scratch_schema

    prints = []
    with scratch_schema() as pg_url:
        for url in (str(tmp_path / "fp.db"), pg_url):
            assert run(url, "init").exit_code == 0
            for command, name, content in (
                ("species", "s.csv", SPECIES_CSV),
                ("reactions", "r.csv", REACTIONS_CSV),
                ("data", "m.csv", MEASUREMENTS_CSV),
                ("expressions", "e.csv", EXPRESSIONS_CSV),
            ):
                path = write(tmp_path / name, content)
                assert run(url, command, "import", str(path)).exit_code == 0
            handle = open_store(url)
            with handle.session() as session:
                prints.append(store_fingerprint(session))
            handle.close()
    assert prints[0] == prints[1]
