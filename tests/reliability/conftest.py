"""Shared pieces of the reliability tests: the command line, every command of it, and a
PostgreSQL schema of their own."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from pathlib import Path

import pytest
from helpers.cli import Outcome, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from helpers.pg import pg_base_url, scratch_schema
from typer.main import get_command
from typer.testing import CliRunner

from ratebank.cli.app import app

HERE = Path(__file__).resolve().parent
WORKERS = HERE / "workers.py"


def invoke(db: str | None, *args: str, env: dict[str, str] | None = None) -> Outcome:
    """Run ``ratebank --db DB ARGS`` in-process (no ``--db`` for None)."""
    result = CliRunner(env=env).invoke(app, [*(["--db", db] if db else []), *args])
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        raise result.exception
    return Outcome(result.exit_code, result.stdout, result.stderr)


@pytest.fixture(scope="session")
def cli() -> Callable[..., Outcome]:
    """``cli(db, *args, env=None)``: the real command line, in-process."""
    return invoke


@pytest.fixture
def all_commands() -> list[str]:
    """Every command of the application, as typed (``species add``)."""
    found: list[str] = []

    def walk(command, path):  # type: ignore[no-untyped-def]
        children = getattr(command, "commands", None)
        if children:
            for name, child in children.items():
                walk(child, [*path, name])
        else:
            found.append(" ".join(path))

    walk(get_command(app), [])
    return found


@pytest.fixture
def postgres_url() -> Iterator[str]:
    """A fresh PostgreSQL schema (like ``db_url``'s), for tests that run there only.

    Property tests run many examples; they run fully on SQLite (``sqlite_url``)
    and with fewer examples here, where each example costs more.
    """
    if pg_base_url() is None:
        pytest.skip("needs RATEBANK_TEST_PG_URL")
    with scratch_schema() as url:
        yield url


@pytest.fixture
def filled(db_url, cli, tmp_path):
    """A store with the tests' species, reactions, points and expressions (synthetic)."""
    assert cli(db_url, "init").exit_code == 0
    for command, name, content in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = cli(db_url, command, "import", str(write(tmp_path / name, content)))
        assert outcome.exit_code == 0, outcome.stderr
    return db_url
