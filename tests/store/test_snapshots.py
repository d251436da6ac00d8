"""Whole-store copies at the store level: snapshots, file facts, table copies."""

from __future__ import annotations

import sqlite3

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.services.store_access import init_store, open_store
from ratebank.store.listings import history
from ratebank.store.schema import HEAD_REVISION
from ratebank.store.snapshots import (
    CONTENT_TABLES,
    audit_entry_count,
    content,
    content_table_counts,
    copy_tables,
    read_only_content,
    sqlite_file_facts,
    take_audit_trail,
    write_sqlite_snapshot,
)


@pytest.fixture
def filled_sqlite(sqlite_url, tmp_path):
    assert run(sqlite_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(sqlite_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    return sqlite_url


def test_a_snapshot_is_a_whole_undamaged_copy(filled_sqlite, tmp_path):
    store = open_store(filled_sqlite)
    try:
        copy = tmp_path / "copy.db"
        facts = write_sqlite_snapshot(store.engine, copy)
        with store.session() as session:
            expected = content(session)
    finally:
        store.close()
    assert (facts.integrity, facts.revision) == ("ok", HEAD_REVISION)
    assert read_only_content(copy) == expected
    # self-contained: no write-ahead log travels with it
    assert sqlite3.connect(copy).execute("PRAGMA journal_mode").fetchone()[0] == "delete"


def test_the_facts_of_files_that_are_not_stores(tmp_path):
    foreign = tmp_path / "foreign.db"
    sqlite3.connect(foreign).execute("CREATE TABLE t (x)").connection.close()
    assert sqlite_file_facts(foreign).revision is None
    assert sqlite_file_facts(foreign).integrity == "ok"
    junk = tmp_path / "junk.db"
    junk.write_bytes(b"x" * 4096)
    with pytest.raises(sqlite3.DatabaseError):
        sqlite_file_facts(junk)


def test_every_row_is_copied_into_an_empty_store(filled_sqlite, db_url, tmp_path):
    source = open_store(filled_sqlite)
    # on SQLite, db_url is the filled store's own file
    target, _ = init_store(
        db_url if "://" in db_url else str(tmp_path / "target.db"), author="restorer"
    )
    try:
        with source.session() as session:
            expected = content(session)
            source_counts = content_table_counts(session)
            trail = audit_entry_count(session)
        assert content_table_counts(target.engine) == dict.fromkeys(
            (m.__tablename__ for m in CONTENT_TABLES), 0
        )
        with target.session(write=True) as session:
            removed = take_audit_trail(session)
            assert audit_entry_count(session) == 0
            copy_tables(session, source.engine)
            assert content(session) == expected
        with target.session() as session:
            assert content_table_counts(session) == source_counts
            assert audit_entry_count(session) == trail
            assert history(session, limit=1)[0].action == "expressions.import"
    finally:
        source.close()
        target.close()
    assert [(r["action"], r["author"]) for r in removed] == [("store.init", "restorer")]
