"""Shared pieces of the reliability tests: the command line with every command attached.

``ratebank.cli.admin.register`` attaches ``expressions edit``, ``backup`` and
``restore``. Until ``ratebank/cli/app.py`` calls it, these tests attach it to a
copy of the application, leaving the shared one (and the help and README
checks that walk it) untouched.
"""

from __future__ import annotations

import copy
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest
from helpers.cli import Outcome
from helpers.pg import pg_base_url, scratch_schema
from typer.testing import CliRunner

HERE = Path(__file__).resolve().parent
WORKERS = HERE / "workers.py"


def full_app():  # type: ignore[no-untyped-def]
    """The ratebank application with the admin commands attached."""
    from ratebank.cli import admin
    from ratebank.cli.app import app

    if any(info.name == "backup" for info in app.registered_commands):
        return app
    whole = copy.copy(app)
    whole.registered_commands = list(app.registered_commands)
    whole.registered_groups = []
    expressions = None
    for group in app.registered_groups:
        group = copy.copy(group)
        if group.name == "expressions":
            group.typer_instance = copy.copy(group.typer_instance)
            group.typer_instance.registered_commands = list(
                group.typer_instance.registered_commands
            )
            expressions = group.typer_instance
        whole.registered_groups.append(group)
    assert expressions is not None
    admin.register(whole, expressions)
    return whole


def invoke(db: str | None, *args: str, env: dict[str, str] | None = None) -> Outcome:
    """Run ``ratebank --db DB ARGS`` in-process (every command attached; no --db for None)."""
    result = CliRunner(env=env).invoke(full_app(), [*(["--db", db] if db else []), *args])
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
    from typer.main import get_command

    found: list[str] = []

    def walk(command, path):  # type: ignore[no-untyped-def]
        children = getattr(command, "commands", None)
        if children:
            for name, child in children.items():
                walk(child, [*path, name])
        else:
            found.append(" ".join(path))

    walk(get_command(full_app()), [])
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
