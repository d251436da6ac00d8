"""Backup and restore, called directly (the command line's cases are in
tests/reliability/test_backup.py)."""

from __future__ import annotations

import sqlite3

import pytest

from ratebank.errors import ConflictError, RefusedError, StoreRevisionError
from ratebank.services.backup import (
    BackupExistsError,
    InvalidBackupError,
    RestoreTargetNotEmptyError,
    backup_store,
    restore_store,
)
from ratebank.services.species import add_species
from ratebank.services.store_access import init_store, open_store, store_counts
from ratebank.store.fingerprint import store_fingerprint
from ratebank.store.listings import history


@pytest.fixture
def source(filled):
    """The filled store, if it is a SQLite file (only those are backed up)."""
    if "://" in filled:
        pytest.skip("backups are of SQLite stores")
    return filled


def _content(db):
    store = open_store(db)
    try:
        with store.session() as session:
            return store_counts(session), store_fingerprint(session)
    finally:
        store.close()


def test_a_backup_is_the_store_and_a_restore_gives_it_back(source, tmp_path):
    target = tmp_path / "backup.db"
    result = backup_store(source, target)
    assert result.path == target and target.exists()
    assert (result.counts, result.fingerprint) == _content(source)
    assert result.counts == {
        "species": 10,
        "reactions": 4,
        "measurement_sets": 2,
        "points": 5,
        "expressions": 3,
    }
    restored_into = str(tmp_path / "restored.db")
    restored = restore_store(restored_into, target, author="ada")
    assert (restored.counts, restored.fingerprint) == _content(source)
    assert restored.backup_revision == restored.revision
    store = open_store(restored_into)
    with store.session() as session:
        entry = history(session, limit=1)[0]
    store.close()
    assert (entry.action, entry.author) == ("store.restore", "ada")
    assert [e["action"] for e in entry.detail["replaced_audit"]] == []  # a new file had none


def test_an_existing_file_is_replaced_only_when_asked(source, tmp_path):
    target = tmp_path / "backup.db"
    target.write_bytes(b"an older backup")
    with pytest.raises(BackupExistsError) as raised:
        backup_store(source, target)
    assert str(raised.value) == (
        f"{target} already exists; choose another name, or allow it to be replaced (force)"
    )
    assert isinstance(raised.value, RefusedError)
    assert target.read_bytes() == b"an older backup"
    assert backup_store(source, target, force=True).fingerprint == _content(source)[1]


def test_a_store_that_is_not_one_is_not_backed_up(tmp_path):
    path = tmp_path / "other.db"
    sqlite3.connect(path).execute("CREATE TABLE t (x)").connection.close()
    with pytest.raises(StoreRevisionError, match="is not a ratebank store"):
        backup_store(str(path), tmp_path / "b.db")
    assert not (tmp_path / "b.db").exists()


def test_a_restore_checks_the_file_and_the_target(source, tmp_path):
    with pytest.raises(InvalidBackupError, match="no such file"):
        restore_store(str(tmp_path / "t.db"), tmp_path / "missing.db")
    junk = tmp_path / "junk.db"
    junk.write_bytes(b"not a database at all")
    with pytest.raises(InvalidBackupError, match="is not a SQLite file"):
        restore_store(str(tmp_path / "t.db"), junk)
    assert not (tmp_path / "t.db").exists()
    backup = tmp_path / "b.db"
    backup_store(source, backup)
    target = str(tmp_path / "target.db")
    store, _ = init_store(target, author="tester")
    with store.session(write=True) as session:
        add_species(session, name="CH4", formula="CH4")
    store.close()
    with pytest.raises(RestoreTargetNotEmptyError) as raised:
        restore_store(target, backup)
    assert isinstance(raised.value, ConflictError)
    assert "is not empty (1 species); restore only into an empty store" in str(raised.value)
