"""Backups of a store in use, and restores into an empty store only."""

from __future__ import annotations

import hashlib
import json
import os
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from helpers.cli import snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from sqlalchemy import func, select, text

from ratebank.services.store_access import open_store, store_counts
from ratebank.store.engine import create_store_engine, database_url
from ratebank.store.fingerprint import store_fingerprint
from ratebank.store.models import AuditEntry, MeasurementSet, Point
from ratebank.store.schema import HEAD_REVISION, KNOWN_REVISIONS, upgrade_store

WORKERS = Path(__file__).with_name("workers.py")


def _fill(db, cli, tmp_path, *, measurements=True):
    assert cli(db, "init").exit_code == 0
    files = [
        ("species", SPECIES_CSV),
        ("reactions", REACTIONS_CSV),
        ("expressions", EXPRESSIONS_CSV),
    ]
    if measurements:
        files.insert(2, ("data", MEASUREMENTS_CSV))
    for command, content in files:
        path = write(tmp_path / f"fill-{command}.csv", content)
        outcome = cli(db, command, "import", str(path))
        assert outcome.exit_code == 0, outcome.stderr
    return db


def _content(db):
    store = open_store(db)
    try:
        with store.session() as session:
            return store_counts(session), store_fingerprint(session)
    finally:
        store.close()


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _fingerprint_line(stdout: str) -> str:
    line = next(x for x in stdout.splitlines() if x.startswith("Content fingerprint: "))
    return line.split(": ", 1)[1].strip()


# --------------------------------------------------------------------------- backup


def test_backup_while_another_process_writes(sqlite_url, cli, tmp_path):
    _fill(sqlite_url, cli, tmp_path, measurements=False)
    out = tmp_path / "writer.json"
    progress = Path(f"{out}.progress")
    writer = subprocess.Popen(
        [sys.executable, str(WORKERS), "writer", sqlite_url, "60", str(out)],
        stderr=subprocess.PIPE,
        text=True,
    )

    def committed_so_far() -> int:
        return int(progress.read_text()) if progress.exists() else 0

    try:
        deadline = time.monotonic() + 30
        while committed_so_far() < 5:
            assert writer.poll() is None, writer.stderr.read() if writer.stderr else ""
            assert time.monotonic() < deadline, "the writer did not start"
            time.sleep(0.02)
        at_start = committed_so_far()
        backup = tmp_path / "copies" / "group.db"
        backup.parent.mkdir()
        outcome = cli(sqlite_url, "backup", str(backup))
        assert outcome.exit_code == 0, outcome.stderr
        # the writer was not stopped by the backup: it keeps committing
        after_backup = committed_so_far()
        deadline = time.monotonic() + 30
        while committed_so_far() < after_backup + 3:
            assert writer.poll() is None
            assert time.monotonic() < deadline, "the writer stalled after the backup"
            time.sleep(0.02)
    finally:
        Path(f"{out}.stop").touch()
        writer.communicate(timeout=60)
    assert writer.returncode == 0
    committed = json.loads(out.read_text())["committed"]

    # the copy is a valid, self-contained store ...
    with open(backup, "rb") as handle:
        header = handle.read(100)
    assert header[:16] == b"SQLite format 3\x00"
    assert (header[18], header[19]) == (1, 1)  # rollback journal, not WAL: one file
    connection = sqlite3.connect(backup)
    assert connection.execute("PRAGMA integrity_check").fetchone() == ("ok",)
    connection.close()
    assert sorted(p.name for p in backup.parent.iterdir()) == ["group.db"]
    store = open_store(str(backup))  # checks the revision
    try:
        with store.session() as session:
            # ... holding one moment of the store: whole transactions, in order
            sets = dict(
                session.execute(
                    select(MeasurementSet.name, func.count(Point.id))
                    .join(Point)
                    .group_by(MeasurementSet.name)
                ).all()
            )
            imports = session.scalar(
                select(func.count(AuditEntry.id)).where(AuditEntry.action == "data.import")
            )
            fingerprint = store_fingerprint(session)
    finally:
        store.close()
    n = len(sets)
    assert at_start <= n <= committed
    assert n < committed
    assert set(sets) == {f"live-{i}" for i in range(n)}
    assert set(sets.values()) == {50}
    assert imports == n
    assert _fingerprint_line(outcome.stdout) == fingerprint


def test_backup_refuses_to_overwrite_unless_forced(sqlite_url, cli, tmp_path):
    _fill(sqlite_url, cli, tmp_path)
    target = tmp_path / "b.db"
    target.write_bytes(b"an older backup")
    refused = cli(sqlite_url, "backup", str(target))
    assert refused.exit_code == 1
    assert refused.stderr.strip() == (
        f"Error: {target} already exists; choose another name, or allow it to be replaced (force)"
    )
    assert target.read_bytes() == b"an older backup"
    forced = cli(sqlite_url, "backup", str(target), "--force")
    assert forced.exit_code == 0, forced.stderr
    assert _content(str(target)) == _content(sqlite_url)
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".")) == []


@pytest.mark.parametrize(
    ("make_target", "expected"),
    [
        (lambda tmp, db: tmp / "missing" / "b.db", "folder {folder} does not exist"),
        (lambda tmp, db: tmp, "{target} is a folder; give a file name"),
        (lambda tmp, db: Path(db), "{target} is the store itself"),
    ],
)
def test_backup_target_problems(sqlite_url, cli, tmp_path, make_target, expected):
    _fill(sqlite_url, cli, tmp_path)
    target = make_target(tmp_path, sqlite_url)
    before = snapshot(sqlite_url)
    listing = sorted(tmp_path.iterdir())
    outcome = cli(sqlite_url, "backup", str(target), "--force")
    assert outcome.exit_code == 1
    assert len(outcome.stderr.strip().splitlines()) == 1
    assert expected.format(folder=target.parent, target=target) in outcome.stderr
    assert snapshot(sqlite_url) == before
    assert sorted(tmp_path.iterdir()) == listing


def test_backup_of_something_that_is_not_a_store(sqlite_url, cli, tmp_path):
    sqlite3.connect(sqlite_url).execute("CREATE TABLE t (x)").connection.close()
    outcome = cli(sqlite_url, "backup", str(tmp_path / "b.db"))
    assert outcome.exit_code == 1
    assert "is not a ratebank store (no schema revision); nothing to back up" in outcome.stderr
    assert not (tmp_path / "b.db").exists()


def test_backup_of_postgres_names_its_tools(postgres_url, cli, tmp_path):
    assert cli(postgres_url, "init").exit_code == 0
    outcome = cli(postgres_url, "backup", str(tmp_path / "b.db"))
    assert outcome.exit_code == 1
    message = outcome.stderr.strip()
    assert len(message.splitlines()) == 1
    assert message.startswith("Error: postgresql+psycopg://")
    assert "pg_dump" in message and "pg_restore" in message
    assert list(tmp_path.iterdir()) == []


# --------------------------------------------------------------------------- restore


@pytest.fixture
def backup_file(cli, tmp_path):
    source = str(tmp_path / "source.db")
    _fill(source, cli, tmp_path)
    assert cli(source, "fit").exit_code == 0
    assert cli(source, "steric", "set-class", "h-abstraction", "0.05").exit_code == 0
    assert (
        cli(source, "expressions", "edit", "2", "--n", "0.5", "--expect-version", "1").exit_code
        == 0
    )
    path = tmp_path / "source-backup.db"
    outcome = cli(source, "backup", str(path))
    assert outcome.exit_code == 0, outcome.stderr
    return path, _content(source), source


@pytest.mark.parametrize("initialised", [False, True], ids=["new", "after-init"])
def test_restore_into_an_empty_store(db_url, cli, backup_file, initialised):
    path, (counts, fingerprint), source = backup_file
    if initialised:
        assert cli(db_url, "init").exit_code == 0
    digest = _digest(path)
    outcome = cli(db_url, "restore", str(path), env={"RATEBANK_AUTHOR": "restorer"})
    assert outcome.exit_code == 0, outcome.stderr
    assert _fingerprint_line(outcome.stdout) == fingerprint
    assert _content(db_url) == (counts, fingerprint)
    assert _digest(path) == digest  # the backup itself is never changed
    history = json.loads(cli(db_url, "history", "--json", "--limit", "200").stdout)
    original = json.loads(cli(source, "history", "--json", "--limit", "200").stdout)
    assert history[0]["action"] == "store.restore"
    assert history[0]["author"] == "restorer"
    assert history[0]["detail"]["fingerprint"] == fingerprint
    assert [h["action"] for h in history[1:]] == [h["action"] for h in original]
    replaced = history[0]["detail"]["replaced_audit"]
    assert [r["action"] for r in replaced] == (["store.init"] if initialised else [])
    # the restored store takes new rows (PostgreSQL's id sequences were moved on)
    assert cli(db_url, "species", "add", "CH3OH", "CH3OH").exit_code == 0
    refit = cli(db_url, "fit", "oh-ch4", "--form", "modified")
    assert refit.exit_code == 0, refit.stderr
    assert _content(db_url)[0]["expressions"] == counts["expressions"] + 1


def test_restore_keeps_json_text_byte_for_byte(db_url, cli, tmp_path):
    # A store written by an earlier release spelled JSON the standard library's
    # way (spaces after separators); a restore must not respell it, or the
    # restored content would not match the backup's fingerprint.
    source = str(tmp_path / "old.db")
    _fill(source, cli, tmp_path)
    assert cli(source, "fit").exit_code == 0
    connection = sqlite3.connect(source)
    with connection:
        for table, column in (("expression", "provenance"), ("audit", "detail")):
            rows = connection.execute(f"SELECT id, {column} FROM {table}").fetchall()
            for row_id, stored in rows:
                connection.execute(
                    f"UPDATE {table} SET {column} = ? WHERE id = ?",
                    (json.dumps(json.loads(stored)), row_id),
                )
    old_texts = connection.execute("SELECT provenance FROM expression ORDER BY id").fetchall()
    connection.close()
    assert any(", " in text for (text,) in old_texts)
    backup = tmp_path / "old-backup.db"
    assert cli(source, "backup", str(backup)).exit_code == 0
    outcome = cli(db_url, "restore", str(backup))
    assert outcome.exit_code == 0, outcome.stderr
    assert _content(db_url) == _content(source)
    engine = create_store_engine(database_url(db_url))
    try:
        with engine.connect() as connection:
            restored = connection.execute(
                text("SELECT CAST(provenance AS TEXT) FROM expression ORDER BY id")
            ).all()
    finally:
        engine.dispose()
    assert [tuple(row) for row in restored] == old_texts


def test_restore_refuses_a_store_that_holds_data(db_url, cli, backup_file, tmp_path):
    path, _, _ = backup_file
    assert cli(db_url, "init").exit_code == 0
    assert cli(db_url, "species", "add", "CH4", "CH4").exit_code == 0
    before = snapshot(db_url)
    outcome = cli(db_url, "restore", str(path))
    assert outcome.exit_code == 1
    assert outcome.stderr.strip().endswith(
        "is not empty (1 species); restore only into an empty store: a new file, or a new "
        "database initialised as a ratebank store"
    )
    assert snapshot(db_url) == before


def _random_bytes(path: Path) -> None:
    path.write_bytes(os.urandom(4096))


def _foreign_sqlite(path: Path) -> None:
    connection = sqlite3.connect(path)
    connection.execute("CREATE TABLE t (x)")
    connection.commit()
    connection.close()


def _truncated(path: Path, backup: Path) -> None:
    data = backup.read_bytes()
    path.write_bytes(data[: len(data) // 3])


def _newer(path: Path, backup: Path) -> None:
    path.write_bytes(backup.read_bytes())
    connection = sqlite3.connect(path)
    connection.execute("UPDATE alembic_version SET version_num = '0099'")
    connection.commit()
    connection.close()


@pytest.mark.parametrize(
    ("damage", "expected"),
    [
        (None, "{path}: no such file"),
        (lambda p, b: _random_bytes(p), "{path} is not a SQLite file; expected a backup written"),
        (lambda p, b: _foreign_sqlite(p), "{path} is a SQLite file but not a ratebank store"),
        (lambda p, b: _truncated(p, b), "{path} is damaged"),
        (lambda p, b: _newer(p, b), "{path} is at schema revision 0099, unknown to ratebank"),
    ],
    ids=["missing", "random-bytes", "foreign", "truncated", "newer"],
)
def test_restore_checks_the_backup_first(cli, backup_file, tmp_path, damage, expected):
    good, _, _ = backup_file
    bad = tmp_path / "bad.db"
    if damage is not None:
        damage(bad, good)
    target = tmp_path / "target.db"
    outcome = cli(str(target), "restore", str(bad))
    assert outcome.exit_code == 1
    assert len(outcome.stderr.strip().splitlines()) == 1
    assert outcome.stderr.startswith("Error: " + expected.format(path=bad).split("{")[0])
    assert not target.exists()  # nothing was created


def test_a_backup_from_the_first_revision_is_upgraded_on_restore(cli, tmp_path):
    old = tmp_path / "old.db"
    engine = create_store_engine(database_url(str(old)))
    upgrade_store(engine, KNOWN_REVISIONS[0])
    with engine.begin() as connection:
        connection.execute(
            text(
                "INSERT INTO species (id, name, formula, molar_mass, molar_mass_source, "
                "created_at) VALUES (1, 'CH4', 'CH4', 0.016043, 'formula', "
                "'2024-03-01 12:00:00.000000')"
            )
        )
    engine.dispose()
    backup = tmp_path / "old-backup.db"
    assert cli(str(old), "backup", str(backup)).exit_code == 0  # before upgrading: allowed
    digest = _digest(backup)
    target = tmp_path / "new.db"
    outcome = cli(str(target), "restore", str(backup))
    assert outcome.exit_code == 0, outcome.stderr
    assert f"(upgraded from schema {KNOWN_REVISIONS[0]})" in outcome.stdout
    assert _digest(backup) == digest
    shown = json.loads(cli(str(target), "species", "show", "CH4", "--json").stdout)
    assert shown["name"] == "CH4"
    engine = create_store_engine(database_url(str(target)))
    with engine.connect() as connection:
        assert connection.execute(text("SELECT version_num FROM alembic_version")).scalar() == (
            HEAD_REVISION
        )
    engine.dispose()
