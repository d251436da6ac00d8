"""Curators who do the same thing at the same moment: one of them does it, the others are told
in plain words.

* Four ``init`` processes on a fresh SQLite file or a fresh PostgreSQL database:
  exactly one says "Created", the others "up to date", and the history holds one
  ``store.init`` entry; no database text reaches anyone.
* Two curators adding the same steric class, or the same species, on PostgreSQL
  (where the second insert waits for the first transaction and then fails on the
  unique constraint): the second is told about the record, not the constraint.
"""

from __future__ import annotations

import os
import subprocess
import sys
import threading
import time

import pytest
from helpers.pg import pg_base_url, scratch_database
from sqlalchemy import create_engine, text

from ratebank.store.engine import create_store_engine, database_url

PROCESSES = 4
RAW_DATABASE_TEXT = (
    "duplicate key",
    "pg_type",
    "constraint",
    "UNIQUE",
    "IntegrityError",
    "sqlite3",
)
needs_postgres = pytest.mark.skipif(pg_base_url() is None, reason="needs RATEBANK_TEST_PG_URL")


def _concurrent_inits(db: str) -> list[subprocess.CompletedProcess]:
    """Start PROCESSES `ratebank init` at once (each waits for a common start time)."""
    start = time.time() + 1.5  # after every interpreter has started
    code = (
        "import sys, time; from ratebank.cli.app import app; "
        f"time.sleep(max(0.0, {start} - time.time())); "
        "app(sys.argv[1:], prog_name='ratebank')"
    )
    processes = [
        subprocess.Popen(
            [sys.executable, "-c", code, "--db", db, "init"],
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            # the waiting inits queue on the busy timeout while the first one migrates; on
            # a machine busy with other work that can pass the default 30 s, which is not
            # what this test is about
            env={**os.environ, "RATEBANK_AUTHOR": f"curator-{i}", "RATEBANK_BUSY_TIMEOUT": "180"},
        )
        for i in range(PROCESSES)
    ]
    results = []
    for process in processes:
        out, err = process.communicate(timeout=300)
        results.append(subprocess.CompletedProcess(process.args, process.returncode, out, err))
    return results


def _init_entries(db: str) -> list[str]:
    engine = create_store_engine(database_url(db))
    try:
        with engine.connect() as connection:
            return [
                row[0] for row in connection.execute(text("SELECT action FROM audit ORDER BY id"))
            ]
    finally:
        engine.dispose()


def _check_one_created(db: str, results: list[subprocess.CompletedProcess]) -> None:
    outputs = [r.stdout + r.stderr for r in results]
    failed = [f"exit {r.returncode}: {r.stdout}{r.stderr}" for r in results if r.returncode]
    assert not failed, "\n".join(failed)
    created = [o for o in outputs if o.startswith("Created a ratebank store at ")]
    current = [o for o in outputs if "is up to date (schema" in o]
    assert len(created) == 1, outputs
    assert len(current) == PROCESSES - 1, outputs
    for output in outputs:
        assert not any(word in output for word in RAW_DATABASE_TEXT), output
    assert _init_entries(db) == ["store.init"]


@pytest.mark.parametrize("round_", range(3))
def test_concurrent_init_of_a_fresh_sqlite_file_creates_once(tmp_path, round_):
    db = str(tmp_path / f"fresh-{round_}.db")
    _check_one_created(db, _concurrent_inits(db))


@needs_postgres
@pytest.mark.parametrize("round_", range(3))
def test_concurrent_init_of_a_fresh_postgresql_database_creates_once(round_):
    with scratch_database() as db:
        _check_one_created(db, _concurrent_inits(db))


# --------------------------------------------------------------------------- same record


def _pg_store(url: str, cli) -> str:  # type: ignore[no-untyped-def]
    assert cli(url, "init").exit_code == 0
    return url


def _while_another_transaction_holds(url: str, statement: str, args: list[str]):
    """Run ``ratebank ARGS`` while another session has inserted the same row, uncommitted.

    The command's insert waits for that transaction; the other session then commits,
    and the command's insert fails on the unique constraint, as in a real race.
    """
    engine = create_engine(url)
    connection = engine.connect()
    transaction = connection.begin()
    connection.execute(text(statement))
    process = subprocess.Popen(
        [sys.executable, "-m", "ratebank", "--db", url, *args],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    waiting = threading.Event()

    def commit_when_blocked() -> None:
        probe = create_engine(url, isolation_level="AUTOCOMMIT")
        try:
            deadline = time.monotonic() + 60
            while time.monotonic() < deadline and process.poll() is None:
                with probe.connect() as check:
                    blocked = check.execute(
                        text(
                            "SELECT count(*) FROM pg_stat_activity WHERE wait_event_type = "
                            "'Lock' AND datname = current_database()"
                        )
                    ).scalar()
                if blocked:
                    waiting.set()
                    break
                time.sleep(0.02)
        finally:
            probe.dispose()
            transaction.commit()
            connection.close()
            engine.dispose()

    thread = threading.Thread(target=commit_when_blocked)
    thread.start()
    out, err = process.communicate(timeout=300)
    thread.join()
    assert waiting.is_set(), "the command never waited for the other transaction"
    return process.returncode, out, err


@needs_postgres
def test_two_curators_adding_the_same_steric_class(cli):
    with scratch_database() as url:
        _pg_store(url, cli)
        code, out, err = _while_another_transaction_holds(
            url,
            "INSERT INTO steric_rule (reaction_class, steric_factor, version, updated_by, "
            "updated_at) VALUES ('h-abstraction', 0.2, 1, 'grace', now())",
            ["steric", "set-class", "h-abstraction", "0.05"],
        )
        assert code == 1, out
        assert err.startswith("Error: a steric rule for class 'h-abstraction' was added by ")
        assert len(err.strip().splitlines()) == 1
        assert not any(word in err for word in RAW_DATABASE_TEXT), err


@needs_postgres
def test_two_curators_adding_the_same_species(cli):
    with scratch_database() as url:
        _pg_store(url, cli)
        code, out, err = _while_another_transaction_holds(
            url,
            "INSERT INTO species (name, formula, molar_mass, molar_mass_source, created_at) "
            "VALUES ('OH', 'HO', 0.017007, 'formula', now())",
            ["species", "add", "OH", "HO"],
        )
        assert code == 1, out
        assert err == (
            "Error: a species with this name is already in the store (someone may have added "
            "it at the same moment); nothing was written; look again and repeat the command if "
            "it is still needed\n"
        )
