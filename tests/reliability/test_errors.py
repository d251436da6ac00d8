"""Errors of every command: one ``Error: ...`` line and a non-zero exit, never a traceback,
unless ``--traceback`` asks for it.

The failures are the ones a group meets: a store another ratebank is writing, a
database server that cannot be reached, a damaged or foreign file, a store the
user may only read, and Ctrl-C.
"""

from __future__ import annotations

import os
import random
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest
from helpers.cli import snapshot, write
from helpers.data import MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

UNREACHABLE = "postgresql://postgres@127.0.0.1:1/test"


def _one_error_line(outcome, code: int = 1) -> str:
    assert outcome.exit_code == code, (outcome.stdout, outcome.stderr)
    text = outcome.stderr.strip()
    assert text.startswith("Error: "), text
    assert len(text.splitlines()) == 1, text
    assert "Traceback" not in outcome.stderr + outcome.stdout
    return text


WORKERS = Path(__file__).with_name("workers.py")


def _ratebank(*args, env=None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "ratebank", *args],
        capture_output=True,
        text=True,
        env={**os.environ, **(env or {})},
        timeout=120,
    )


def _ratebank_as(user: int | None, warm: Path, *args) -> subprocess.CompletedProcess:
    """``ratebank ARGS`` as ``user`` (None: as we are), see workers.unprivileged."""
    return subprocess.run(
        [
            sys.executable,
            str(WORKERS),
            "unprivileged",
            str(warm),
            str(-1 if user is None else user),
            *args,
        ],
        capture_output=True,
        text=True,
        timeout=120,
        cwd="/",
    )


@pytest.fixture
def store(sqlite_url, cli, tmp_path):
    assert cli(sqlite_url, "init").exit_code == 0
    for command, content in (("species", SPECIES_CSV), ("reactions", REACTIONS_CSV)):
        assert (
            cli(sqlite_url, command, "import", str(write(tmp_path / "in.csv", content))).exit_code
            == 0
        )
    return sqlite_url


# --------------------------------------------------------------------------- busy


@pytest.fixture
def locked(store):
    """Another process holds the store's write lock (as a writing ratebank would)."""
    holder = subprocess.Popen(
        [
            sys.executable,
            "-c",
            "import sqlite3, sys, time\n"
            "c = sqlite3.connect(sys.argv[1], isolation_level=None)\n"
            "c.execute('BEGIN IMMEDIATE')\n"
            'c.execute("INSERT INTO audit (at, author, action, detail) '
            "VALUES ('2024-01-01 00:00:00.000000', 'holder', 'hold', '{}')\")\n"
            "print('locked', flush=True)\n"
            "time.sleep(float(sys.argv[2]))\n"
            "c.execute('ROLLBACK')\n",
            store,
            "60",
        ],
        stdout=subprocess.PIPE,
        text=True,
    )
    assert holder.stdout.readline().strip() == "locked"
    yield store, holder
    holder.kill()
    holder.communicate()


def test_a_busy_store_is_one_line_after_the_wait(locked, cli, tmp_path):
    store, _holder = locked
    started = time.monotonic()
    outcome = cli(store, "species", "add", "CH3OH", "CH3OH", env={"RATEBANK_BUSY_TIMEOUT": "0.5"})
    waited = time.monotonic() - started
    assert _one_error_line(outcome) == (
        "Error: the store is busy: another ratebank has been writing for 0.5 s; try again"
    )
    assert 0.5 <= waited < 10
    # an import is refused the same way, and reading is not blocked by the writer
    data = write(tmp_path / "m.csv", MEASUREMENTS_CSV)
    outcome = cli(store, "data", "import", str(data), env={"RATEBANK_BUSY_TIMEOUT": "0.2"})
    assert "the store is busy: another ratebank has been writing for 0.2 s" in _one_error_line(
        outcome
    )
    listing = cli(store, "species", "list", "--json", env={"RATEBANK_BUSY_TIMEOUT": "0.2"})
    assert listing.exit_code == 0


def test_a_writer_waits_for_the_other_to_finish(store, cli):
    holder = subprocess.Popen(
        [
            sys.executable,
            "-c",
            "import sqlite3, sys, time\n"
            "c = sqlite3.connect(sys.argv[1], isolation_level=None)\n"
            "c.execute('BEGIN IMMEDIATE')\n"
            "print('locked', flush=True)\n"
            "time.sleep(0.8)\n"
            "c.execute('COMMIT')\n",
            store,
        ],
        stdout=subprocess.PIPE,
        text=True,
    )
    assert holder.stdout.readline().strip() == "locked"
    started = time.monotonic()
    outcome = cli(store, "species", "add", "CH3OH", "CH3OH", env={"RATEBANK_BUSY_TIMEOUT": "20"})
    holder.communicate(timeout=30)
    assert outcome.exit_code == 0, outcome.stderr
    assert time.monotonic() - started >= 0.5  # it queued behind the other writer


def test_a_bad_busy_timeout_is_named(store, cli):
    outcome = cli(store, "species", "list", env={"RATEBANK_BUSY_TIMEOUT": "soon"})
    assert _one_error_line(outcome) == (
        "Error: RATEBANK_BUSY_TIMEOUT='soon' is not a number of seconds; expected e.g. 30"
    )


def test_busy_with_traceback_shows_the_trace(locked):
    store, _holder = locked
    result = _ratebank(
        "--traceback",
        "--db",
        store,
        "species",
        "add",
        "O3",
        "O3",
        env={"RATEBANK_BUSY_TIMEOUT": "0.2"},
    )
    assert result.returncode == 1
    assert "Traceback (most recent call last)" in result.stderr
    assert "StoreBusyError: the store is busy" in result.stderr


# --------------------------------------------------------------------------- unreachable


@pytest.mark.parametrize(
    ("url", "expected"),
    [
        (UNREACHABLE, 'connection to server at "127.0.0.1", port 1 failed: Connection refused'),
        (
            "postgresql://postgres@nohost.invalid:5432/test",
            "failed to resolve host 'nohost.invalid'",
        ),
        ("postgresql://postgres@127.0.0.1:notaport/test", "cannot read the store address"),
    ],
    ids=["refused", "unknown-host", "bad-port"],
)
@pytest.mark.parametrize("command", [["init"], ["species", "list"], ["species", "add", "O2", "O2"]])
def test_a_database_that_cannot_be_reached(cli, url, expected, command):
    message = _one_error_line(cli(url, *command))
    assert expected in message


# --------------------------------------------------------------------------- damaged files


def _random_file(path: Path) -> bytes:
    data = os.urandom(8192)
    path.write_bytes(data)
    return data


@pytest.mark.parametrize(
    "command",
    [["init"], ["species", "list"], ["species", "add", "O2", "O2"], ["history"], ["check"]],
)
def test_a_file_of_random_bytes_is_named_and_left_alone(cli, tmp_path, command):
    path = tmp_path / "store.db"
    data = _random_file(path)
    message = _one_error_line(cli(str(path), *command))
    assert message == (
        f"Error: {path} is not a usable store: the file is not a SQLite database or it is "
        "damaged (file is not a database); restore a backup into a new file with "
        "`ratebank restore`"
    )
    assert path.read_bytes() == data
    assert sorted(p.name for p in tmp_path.iterdir()) == ["store.db"]


def test_a_store_damaged_inside_is_one_line(store, cli, tmp_path):
    # Spoil every page after the first few: the schema is readable, the tables are not.
    data = bytearray(Path(store).read_bytes())
    noise = random.Random(20240301)  # the same damage every run
    for offset in range(4096 * 4, len(data), 4096):
        data[offset + 100 : offset + 600] = noise.randbytes(500)
    Path(store).write_bytes(bytes(data))
    for name in ("-wal", "-shm"):
        Path(store + name).unlink(missing_ok=True)
    for command in (["species", "list"], ["reactions", "list"], ["species", "add", "O2", "O2"]):
        outcome = cli(store, *command)
        assert outcome.exit_code != 0
        message = _one_error_line(outcome)
        assert "damaged" in message or "malformed" in message or "not a database" in message


# --------------------------------------------------------------------------- read-only


@pytest.fixture
def read_only_store(cli, tmp_path):
    """A store the user may read but not write (file and folder without write permission).

    The tests run as root in CI, who may write anything: the command then runs as
    ``nobody`` in a subprocess.
    """
    folder = Path(tempfile.mkdtemp(prefix="ratebank-ro-"))
    path = folder / "store.db"
    assert cli(str(path), "init").exit_code == 0
    assert cli(str(path), "species", "add", "CH4", "CH4").exit_code == 0
    os.chmod(path, 0o444)
    os.chmod(folder, 0o755)
    user = 65534 if os.geteuid() == 0 else None
    yield path, folder, user, tmp_path / "warm.db"
    os.chmod(folder, 0o755)
    shutil.rmtree(folder)


def test_a_read_only_store_can_be_read_but_writes_are_one_line(read_only_store):
    path, folder, user, warm = read_only_store
    os.chmod(folder, 0o777)  # the -wal and -shm files may be created; the store is read-only
    before = path.read_bytes()
    listing = _ratebank_as(user, warm, "--db", str(path), "species", "list", "--json")
    assert listing.returncode == 0, listing.stderr
    assert '"CH4"' in listing.stdout
    for command in (["species", "add", "O2", "O2"], ["steric", "set-class", "x", "0.1"]):
        result = _ratebank_as(user, warm, "--db", str(path), *command)
        assert result.returncode == 1
        assert result.stderr.strip() == (
            f"Error: the store {path} is read-only for you (attempt to write a readonly "
            "database); nothing was written; SQLite needs to write the file and to create "
            "store.db-wal and store.db-shm beside it, so ask for write access to the file and "
            "its folder, or work on a copy"
        )
    assert path.read_bytes() == before


def test_a_read_only_folder_is_named_even_for_reading(read_only_store):
    path, folder, user, warm = read_only_store
    os.chmod(folder, 0o555)
    result = _ratebank_as(user, warm, "--db", str(path), "species", "list")
    assert result.returncode == 1
    assert result.stderr.startswith(f"Error: the store {path} is read-only for you")
    assert len(result.stderr.strip().splitlines()) == 1


# --------------------------------------------------------------------------- Ctrl-C


def test_ctrl_c_is_one_line_and_writes_nothing(store, cli, tmp_path, monkeypatch):
    import ratebank.store.audit as audit

    def interrupted(*_args, **_kwargs):
        raise KeyboardInterrupt  # after the rows are inserted, before the commit

    monkeypatch.setattr(audit, "record", interrupted)
    before = snapshot(store)
    outcome = cli(store, "species", "add", "CH3OH", "CH3OH")
    assert _one_error_line(outcome, 130) == (
        "Error: interrupted; nothing was written by the interrupted command"
    )
    assert snapshot(store) == before


def test_ctrl_c_with_traceback_shows_where(store, cli, monkeypatch):
    import ratebank.services.species as species_service

    def interrupted(*_args, **_kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(species_service, "list_species", interrupted)
    result = cli(store, "--traceback", "species", "list")
    assert result.exit_code == 130
    assert "Traceback (most recent call last)" in result.stderr
    assert "KeyboardInterrupt" in result.stderr
    assert result.stderr.strip().endswith(
        "Error: interrupted; nothing was written by the interrupted command"
    )


# --------------------------------------------------------------------------- --traceback


def test_traceback_shows_the_trace_of_a_domain_error(store):
    plain = _ratebank("--db", store, "species", "show", "XYZ")
    assert plain.returncode == 1
    assert plain.stderr == "Error: no species 'XYZ' in the store\n"
    traced = _ratebank("--traceback", "--db", store, "species", "show", "XYZ")
    assert traced.returncode == 1
    assert "Traceback (most recent call last)" in traced.stderr
    assert "ratebank.errors.NotFoundError: no species 'XYZ' in the store" in traced.stderr


def test_traceback_shows_the_trace_of_a_library_error(tmp_path):
    path = tmp_path / "junk.db"
    _random_file(path)
    traced = _ratebank("--traceback", "--db", str(path), "species", "list")
    assert traced.returncode == 1
    assert "Traceback (most recent call last)" in traced.stderr
    assert "sqlite3.DatabaseError: file is not a database" in traced.stderr


# --------------------------------------------------------------------------- every command


ARGUMENTS = {
    "init": [],
    "history": [],
    "demo": None,  # builds its own store (a --db that is not a demo store is refused)
    "backup": ["{tmp}/b.db"],
    "restore": ["{backup}"],
    "fit": [],
    "estimate": [],
    "check": [],
    "rate": ["oh-ch4", "-T", "300"],
    "recommend": ["oh-ch4", "1"],
    "export": ["{tmp}/m"],
    "plot": ["oh-ch4", "-o", "{tmp}/p.png"],
    "review": ["{tmp}/book"],
    "species add": ["O2", "O2"],
    "species import": ["{csv}"],
    "species list": [],
    "species show": ["OH"],
    "reactions add": ["k", "OH + OH -> H2O2"],
    "reactions import": ["{csv}"],
    "reactions list": [],
    "reactions show": ["oh-ch4"],
    "data import": ["{csv}"],
    "data list": [],
    "expressions import": ["{csv}"],
    "expressions list": [],
    "expressions edit": ["1", "--n", "1", "--expect-version", "1"],
    "steric list": [],
    "steric set-class": ["c", "0.1"],
    "steric clear-class": ["c"],
    "steric set-reaction": ["oh-ch4", "0.1"],
    "steric clear-reaction": ["oh-ch4"],
    "steric derived": [],
    "steric plot": ["-o", "{tmp}/s.png"],
    "thermo import": ["{csv}"],
    "thermo janaf": ["OH=H-038"],
    "thermo list": [],
    "thermo reaction": ["oh-ch4", "-T", "300"],
    "thermo set-reverse": ["oh-ch4", "none"],
    "evans-polanyi derived": [],
    "evans-polanyi set-class": ["c", "40", "0.3"],
    "evans-polanyi list": [],
    "evans-polanyi clear-class": ["c"],
    "species edit": ["OH", "--molar-mass", "17", "--expect-version", "1"],
    "reactions edit": ["oh-ch4", "--notes", "n", "--expect-version", "1"],
    "data show": ["s1"],
    "data edit-set": ["s1", "--method", "m", "--expect-version", "1"],
    "data edit-point": ["1", "--T", "300", "--expect-version", "1"],
    "withdraw": ["set", "s1", "--reason", "r"],
    "reinstate": ["set", "s1"],
    "remove": ["set", "s1"],
    "efficiencies import": ["{csv}"],
    "efficiencies list": [],
    "release create": ["r1"],
    "release list": [],
    "release show": ["r1"],
    "diff": ["store", "store"],
}


def test_the_error_table_covers_every_command(all_commands):
    assert sorted(all_commands) == sorted(ARGUMENTS)


@pytest.fixture(scope="module")
def valid_backup(cli, tmp_path_factory):
    folder = tmp_path_factory.mktemp("valid-backup")
    assert cli(str(folder / "source.db"), "init").exit_code == 0
    assert cli(str(folder / "source.db"), "backup", str(folder / "backup.db")).exit_code == 0
    return folder / "backup.db"


@pytest.mark.parametrize("broken", ["random-bytes", "unreachable"])
@pytest.mark.parametrize("command", sorted(k for k, v in ARGUMENTS.items() if v is not None))
def test_every_command_reports_a_broken_store_in_one_line(
    cli, tmp_path, valid_backup, broken, command
):
    if broken == "random-bytes":
        db = str(tmp_path / "store.db")
        _random_file(Path(db))
    else:
        db = UNREACHABLE
    names = {
        "tmp": str(tmp_path),
        "csv": str(write(tmp_path / "in.csv", "name,formula\nO3,O3\n")),
        "backup": str(valid_backup),
    }
    args = [a.format(**names) for a in ARGUMENTS[command]]
    message = _one_error_line(cli(db, *command.split(), *args))
    if broken == "random-bytes":
        assert "is not a usable store: the file is not a SQLite database" in message
    elif command == "backup":
        assert "pg_dump" in message
    else:
        assert "Connection refused" in message
    assert not (tmp_path / "m").exists()
    assert not (tmp_path / "b.db").exists()


# --------------------------------------------------------------------------- the busy loop


class _Cursor:
    def __init__(self, log):
        self.log = log

    def execute(self, statement):
        self.log.append(statement)

    def close(self):
        pass


class _Driver:
    """Stands in for the sqlite3 connection under SQLAlchemy's."""

    in_transaction = False

    def __init__(self):
        self.log: list[str] = []

    def cursor(self):
        return _Cursor(self.log)


class _Connection:
    """A connection whose BEGIN IMMEDIATE reports "busy" at once, ``busy`` times."""

    def __init__(self, busy: int):
        self.busy = busy
        self.attempts = 0

    def exec_driver_sql(self, statement):
        import sqlite3

        from sqlalchemy.exc import OperationalError

        assert statement == "BEGIN IMMEDIATE"
        self.attempts += 1
        if self.attempts <= self.busy:
            raise OperationalError(statement, {}, sqlite3.OperationalError("database is locked"))


def test_an_immediate_busy_answer_is_retried_until_the_lock_is_free():
    from ratebank.store.engine import _begin_immediate

    connection, driver = _Connection(busy=3), _Driver()
    _begin_immediate(connection, driver, 5.0)
    assert connection.attempts == 4
    # each retry waits only for what is left of the bound; the full wait is put back after
    assert driver.log[-1] == "PRAGMA busy_timeout = 5000"
    assert all(entry.startswith("PRAGMA busy_timeout = ") for entry in driver.log)


def test_the_retries_stop_at_the_bound():
    from ratebank.store.engine import StoreBusyError, _begin_immediate

    connection, driver = _Connection(busy=10**9), _Driver()
    started = time.monotonic()
    with pytest.raises(StoreBusyError, match=r"has been writing for 0\.3 s; try again"):
        _begin_immediate(connection, driver, 0.3)
    assert 0.3 <= time.monotonic() - started < 2
    assert connection.attempts > 1


def test_a_path_with_a_question_mark_is_refused_not_shortened(cli, tmp_path):
    # "a?b.db" in an address is the store "a" with options "b.db": two such paths would
    # share one store without anyone noticing.
    folder = tmp_path / "what?"
    folder.mkdir()
    message = _one_error_line(cli(str(folder / "store.db"), "init"))
    assert message == (
        f"Error: the store path '{folder / 'store.db'}' contains '?', which a database "
        "address cannot hold; rename the file or folder"
    )
    assert sorted(p.name for p in tmp_path.iterdir()) == ["what?"]
    assert list(folder.iterdir()) == []
