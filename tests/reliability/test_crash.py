"""Crash safety: a ratebank killed in the middle of a large import or an export changes nothing.

The processes are real (``python -m ratebank``) and are killed once they have
started writing: for SQLite when the write-ahead log has grown by a megabyte
(the import's pages are spilling to disk), for PostgreSQL when the import's
COPY holds its lock on the point table, for the export when its temporary
file is on disk.
"""

from __future__ import annotations

import os
import re
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from helpers.cli import write
from helpers.state import store_state as _state
from sqlalchemy import create_engine, text

WORKERS = Path(__file__).with_name("workers.py")
BIG_POINTS = 300_000


@pytest.fixture(scope="module")
def big_csv(tmp_path_factory) -> Path:
    """300 measurement sets of 1000 points each, valid throughout."""
    path = tmp_path_factory.mktemp("big") / "points.csv"
    lines = ["set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind"]
    lines += [
        f"big-{i // 1000},oh-ch4,{300 + (i % 1000) * 0.7:.3f},{1e-14 * (1 + (i % 13) / 100):.6e},"
        "cm3/molecule/s,0.1,relative"
        for i in range(BIG_POINTS)
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _ratebank(db, *args, env=None) -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-m", "ratebank", "--db", db, *args],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env={**os.environ, **(env or {})},
    )


def _writing_probe(db):
    """A function telling whether an import into ``db`` has started writing points."""
    if "://" not in db:
        wal = Path(f"{db}-wal")
        baseline = wal.stat().st_size if wal.exists() else 0
        return lambda: wal.exists() and wal.stat().st_size > baseline + (1 << 20)
    schema = re.search(r"search_path%3D(\w+)", db).group(1)
    admin = create_engine(db.split("?", 1)[0], isolation_level="AUTOCOMMIT")
    query = text(
        "SELECT count(*) FROM pg_locks l JOIN pg_class c ON c.oid = l.relation "
        "JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname = :schema "
        "AND c.relname = 'point' AND l.mode = 'RowExclusiveLock' AND l.pid <> pg_backend_pid()"
    )

    def writing() -> bool:
        with admin.connect() as connection:
            return bool(connection.execute(query, {"schema": schema}).scalar())

    writing.dispose = admin.dispose  # type: ignore[attr-defined]
    return writing


def _stop_when_writing(process: subprocess.Popen, db: str, sig: int) -> None:
    probe = _writing_probe(db)
    try:
        deadline = time.monotonic() + 120
        while not probe():
            if process.poll() is not None:
                _out, err = process.communicate()
                pytest.fail(f"the import ended (exit {process.returncode}) before it wrote: {err}")
            assert time.monotonic() < deadline, "the import never started writing"
            time.sleep(0.005)
        time.sleep(0.1)  # well inside the write
        assert process.poll() is None, "the import finished before it could be stopped"
        process.send_signal(sig)
    finally:
        getattr(probe, "dispose", lambda: None)()


def test_sigkill_mid_import_leaves_the_store_as_before(filled, big_csv):
    before = _state(filled)
    process = _ratebank(filled, "data", "import", str(big_csv))
    _stop_when_writing(process, filled, signal.SIGKILL)
    process.communicate(timeout=60)
    assert process.returncode == -signal.SIGKILL
    fingerprint, counts, rows = _state(filled)
    assert fingerprint == before[0]
    assert counts == before[1]
    assert rows == before[2]
    if "://" not in filled:
        connection = sqlite3.connect(filled)
        assert connection.execute("PRAGMA integrity_check").fetchone() == ("ok",)
        connection.close()
    # no lock or half transaction is left behind: the next writer gets in at once
    retry = _ratebank(
        filled,
        "data",
        "import",
        str(
            write(
                big_csv.parent / "small.csv",
                "set,reaction,T_K,k,k_units\nafter-kill,oh-ch4,300,6e-15,cm3/molecule/s\n",
            )
        ),
        env={"RATEBANK_BUSY_TIMEOUT": "5"},
    )
    _out, err = retry.communicate(timeout=60)
    assert retry.returncode == 0, err


def test_ctrl_c_mid_import_is_one_line_and_writes_nothing(filled, big_csv):
    before = _state(filled)
    process = _ratebank(filled, "data", "import", str(big_csv))
    _stop_when_writing(process, filled, signal.SIGINT)
    out, err = process.communicate(timeout=60)
    assert process.returncode == 130, err
    assert err == "Error: interrupted; nothing was written by the interrupted command\n"
    assert "imported" not in out
    assert _state(filled) == before


def _temporaries(folder: Path, name: str) -> list[Path]:
    """The files staged by an export of ``name`` (anywhere inside its staging folder)."""
    stages = [
        p
        for p in folder.iterdir()
        if re.fullmatch(
            rf"\.{re.escape(name)}\.ratebank-[0-9a-f]{{8}}-[0-9]+-[0-9a-f]{{16}}", p.name
        )
    ]
    return [f for stage in stages for f in stage.rglob("*") if f.is_file()]


def _package(target: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in target.iterdir()} if target.exists() else {}


@pytest.mark.parametrize("previous", [False, True], ids=["first-export", "over-previous"])
def test_sigkill_mid_export_leaves_no_half_written_file(filled, cli, tmp_path, previous):
    folder = tmp_path / "out"
    folder.mkdir()
    target = folder / "mechanism"
    if previous:
        first = cli(filled, "export", str(target), "--leave-out-gaps")
        assert first.exit_code == 0, first.stderr
        old = _package(target)
        # the next export would write something else
        assert cli(filled, "fit", "oh-ch4").exit_code == 0
    before = _state(filled)
    listing = sorted(p.name for p in folder.iterdir())
    process = subprocess.Popen(
        [sys.executable, str(WORKERS), "slow-export", filled, str(target)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    deadline = time.monotonic() + 60
    # The worker's disk never finishes syncing: the first temporary file is written and
    # flushed, and the process waits on fsync with nothing renamed yet.
    while not any(p.stat().st_size > 0 for p in _temporaries(folder, target.name)):
        assert process.poll() is None, process.communicate()[1]
        assert time.monotonic() < deadline, "the export never started writing"
        time.sleep(0.005)
    process.kill()
    process.communicate(timeout=60)
    assert process.returncode == -signal.SIGKILL

    assert _state(filled) == before  # not even the export's audit entry
    if previous:
        assert _package(target) == old
    else:
        assert not target.exists()
    visible = sorted(p.name for p in folder.iterdir() if not p.name.startswith("."))
    assert visible == [name for name in listing if not name.startswith(".")]
    # What the kill leaves is at most the hidden staging folder, never a half target.
    assert len(_temporaries(folder, target.name)) <= 1

    again = cli(filled, "export", str(target), "--leave-out-gaps")
    assert again.exit_code == 0, again.stderr
    table = target / "mechanism.csv"
    assert table.read_text(encoding="utf-8").startswith("key,equation,order,A,n,Ea,")
    # the next export cleared what the killed one left (its process is gone)
    assert sorted(p.name for p in folder.iterdir()) == ["mechanism"]
