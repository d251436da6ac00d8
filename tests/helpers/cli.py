"""Driving the real command line in tests, and snapshots of a store's content."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from sqlalchemy import select
from typer.testing import CliRunner

from ratebank.cli.app import app
from ratebank.store.engine import create_store_engine, database_url
from ratebank.store.models import Base


@dataclass
class Outcome:
    exit_code: int
    stdout: str
    stderr: str


def run(db: str, *args: str, env: dict[str, str] | None = None) -> Outcome:
    """Run ``ratebank --db DB ARGS`` in-process and capture its streams."""
    runner = CliRunner(env=env)
    result = runner.invoke(app, ["--db", db, *args])
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        raise result.exception
    return Outcome(result.exit_code, result.stdout, result.stderr)


def snapshot(db: str) -> dict[str, list[tuple]]:
    """Every row of every ratebank table (audit included), for before/after checks."""
    engine = create_store_engine(database_url(db))
    try:
        with engine.connect() as connection:
            return {
                table.name: [
                    tuple(row)
                    for row in connection.execute(
                        select(table).order_by(*table.primary_key.columns)
                    )
                ]
                for table in Base.metadata.sorted_tables
            }
    finally:
        engine.dispose()


def write(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


def fill_store(db: str, folder: Path) -> str:
    """``init`` the store at ``db`` and import helpers.data's species, reactions, points and
    expressions through the command line (the files written in ``folder``); ``db``."""
    from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

    assert run(db, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db, command, "import", str(write(folder / name, text)))
        assert outcome.exit_code == 0, outcome.stdout + outcome.stderr
    return db


def csv_rows(text: str) -> list[tuple[int, dict[str, str]]]:
    """The rows of a CSV text as the importers take them: (line, cells by column)."""
    import csv
    import io

    return list(enumerate(csv.DictReader(io.StringIO(text)), start=2))
