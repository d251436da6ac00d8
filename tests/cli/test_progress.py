"""Progress bars: drawn on a terminal's stderr, never with --quiet or when not a terminal."""

from __future__ import annotations

import os
import pty
import select
import subprocess
import sys

import pytest
from helpers.cli import run, write

HEADER = "set,reaction,T_K,k,k_units\n"


def _big_points_file(tmp_path, n_sets=200, per_set=10):
    lines = [HEADER]
    for s in range(n_sets):
        for i in range(per_set):
            T = 300.0 + 20.0 * i
            lines.append(f"set{s},ab,{T},{1e-12 * 2.0 ** (-1000.0 / T)},cm3/molecule/s\n")
    return write(tmp_path / "points.csv", "".join(lines))


@pytest.fixture
def store(tmp_path):
    db = str(tmp_path / "p.db")
    assert run(db, "init").exit_code == 0
    assert run(db, "species", "add", "A", "H").exit_code == 0
    assert run(db, "species", "add", "B", "Cl").exit_code == 0
    assert run(db, "species", "add", "AB", "HCl").exit_code == 0
    assert run(db, "reactions", "add", "ab", "A + B -> AB").exit_code == 0
    return db


def _run_with_terminal_stderr(args, env=None):
    """Run the CLI with stderr on a pseudo-terminal; return (exit code, stdout, terminal text)."""
    master, slave = pty.openpty()
    process = subprocess.Popen(
        [sys.executable, "-m", "ratebank", *args],
        stdout=subprocess.PIPE,
        stderr=slave,
        env={**os.environ, "COLUMNS": "250", **(env or {})},
    )
    os.close(slave)
    chunks = []
    finished = False
    while True:
        ready, _, _ = select.select([master], [], [], 0.2)
        if ready:
            try:
                data = os.read(master, 65536)
            except OSError:  # the terminal closes when the process exits
                break
            if not data:
                break
            chunks.append(data)
        elif finished:
            break
        else:
            # read once more after the process ended, so its last output is not lost
            finished = process.poll() is not None
    stdout = process.communicate()[0]
    os.close(master)
    return process.returncode, stdout.decode(), b"".join(chunks).decode(errors="replace")


def test_progress_bar_on_a_terminal(store, tmp_path):
    path = _big_points_file(tmp_path)
    code, stdout, terminal = _run_with_terminal_stderr(["--db", store, "data", "import", str(path)])
    assert code == 0
    assert "imported 2000 points in 200 sets" in stdout
    assert "importing points" in terminal


def test_no_progress_bar_with_quiet(store, tmp_path):
    path = _big_points_file(tmp_path)
    code, stdout, terminal = _run_with_terminal_stderr(
        ["--db", store, "--quiet", "data", "import", str(path)]
    )
    assert code == 0
    assert terminal.strip() == ""
    assert stdout.strip() == ""


def test_no_progress_bar_when_not_a_terminal(store, tmp_path):
    path = _big_points_file(tmp_path)
    result = subprocess.run(
        [sys.executable, "-m", "ratebank", "--db", store, "data", "import", str(path)],
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0
    assert result.stderr == ""
    assert "imported 2000 points" in result.stdout
