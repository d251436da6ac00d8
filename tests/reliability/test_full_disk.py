"""A full disk: one clear line naming what could not be written, and nothing written.

SQLite reports a full disk as SQLITE_FULL ("database or disk is full"); the same
error comes when a database reaches ``PRAGMA max_page_count``, which is how the
test makes the disk "fill up" in the middle of a large import without filling a
real one. The export's full disk is the operating system's ENOSPC, raised here
where the data meet the disk (``fsync``).
"""

from __future__ import annotations

import errno
import os
import sqlite3
from contextlib import contextmanager

import pytest
from helpers.cli import snapshot, write
from helpers.data import REACTIONS_CSV, SPECIES_CSV
from sqlalchemy import event
from sqlalchemy.engine import Engine
from sqlalchemy.exc import OperationalError

POINTS = 200_000


@pytest.fixture
def store(sqlite_url, cli, tmp_path):
    assert cli(sqlite_url, "init").exit_code == 0
    for command, content in (("species", SPECIES_CSV), ("reactions", REACTIONS_CSV)):
        path = write(tmp_path / f"{command}.csv", content)
        assert cli(sqlite_url, command, "import", str(path)).exit_code == 0
    return sqlite_url


@pytest.fixture
def big_points(tmp_path):
    lines = ["set,reaction,T_K,k,k_units"]
    lines += [
        f"s{i // 100},oh-ch4,{300 + i % 100},{1e-14 * (1 + i % 7)},cm3/molecule/s"
        for i in range(POINTS)
    ]
    return write(tmp_path / "points.csv", "\n".join(lines) + "\n")


@contextmanager
def small_disk():
    """Every SQLite connection opened meanwhile can grow its file by a few pages only."""

    def limit(dbapi_connection, _record):  # type: ignore[no-untyped-def]
        if isinstance(dbapi_connection, sqlite3.Connection):
            pages = dbapi_connection.execute("PRAGMA page_count").fetchone()[0]
            dbapi_connection.execute(f"PRAGMA max_page_count = {pages + 20}")

    event.listen(Engine, "connect", limit)
    try:
        yield
    finally:
        event.remove(Engine, "connect", limit)


def test_a_full_disk_during_a_large_import(store, cli, big_points):
    before = snapshot(store)
    with small_disk():
        outcome = cli(store, "data", "import", str(big_points))
    assert outcome.exit_code == 1
    assert outcome.stderr == (
        f"Error: No space left on device: writing the store {store}; nothing was written; "
        "free some space and run the command again\n"
    )
    assert "savepoint" not in outcome.stderr
    # nothing was written, the file is whole, and with room the same import goes in
    assert snapshot(store) == before
    connection = sqlite3.connect(store)
    assert connection.execute("PRAGMA integrity_check").fetchone() == ("ok",)
    connection.close()
    again = cli(store, "data", "import", str(big_points))
    assert again.exit_code == 0, again.stderr
    assert f"imported {POINTS} points" in again.stdout


def test_a_full_disk_during_an_export_names_the_file(store, cli, tmp_path, monkeypatch):
    out = tmp_path / "out"
    out.mkdir()

    def full(_descriptor):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    before = snapshot(store)
    monkeypatch.setattr(os, "fsync", full)
    outcome = cli(store, "export", str(out / "m"), "--leave-out-gaps")
    monkeypatch.undo()
    assert outcome.exit_code == 1
    assert outcome.stderr == (
        f"Error: No space left on device: writing {out / 'm' / 'mechanism.csv'}; nothing was "
        "written\n"
    )
    assert list(out.iterdir()) == []
    assert snapshot(store) == before


def test_a_full_disk_on_the_database_server_is_said_plainly():
    # PostgreSQL reports a full disk as SQLSTATE 53100 (disk_full); from the server's
    # documentation of error codes
    from ratebank.cli.common import translate_exception

    class DiskFull(Exception):
        sqlstate = "53100"

    error = OperationalError("INSERT ...", {}, DiskFull('could not extend file "base/1/2"'))
    assert translate_exception(error) == (
        "the database server has no space left on its disk; nothing was written; ask its "
        "administrator to free some, then run the command again"
    )
