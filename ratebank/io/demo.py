"""The demo: build a fresh store from the invented scenario in ``seed_demo/``.

Every k(T) value, activation energy and expression of the scenario is
synthetic. The demo never overwrites a store it did not build itself.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path

from ratebank.errors import RatebankError
from ratebank.io import csv_import
from ratebank.services import curate
from ratebank.services.curate import ImportSummary

DEMO_MARK = "demo.build"
FILES = ("species.csv", "reactions.csv", "measurements.csv", "expressions.csv")


class DemoError(RatebankError):
    """The demo cannot be built where it was asked to."""


def seed_folder() -> Path:
    """The folder holding the demo CSV files (installed or in a checkout)."""
    try:
        folder = Path(str(resources.files("ratebank._seed_demo")))
        if (folder / "species.csv").is_file():
            return folder
    except ModuleNotFoundError:
        pass
    checkout = Path(__file__).resolve().parents[2] / "seed_demo"
    if (checkout / "species.csv").is_file():
        return checkout
    raise DemoError("the ratebank installation is missing its seed_demo files")


@dataclass
class DemoResult:
    db: Path
    out: Path
    imports: list[ImportSummary]
    counts: dict[str, int]
    statuses: dict[str, int] = field(default_factory=dict)


def _is_demo_store(db: Path) -> bool:
    import sqlite3

    try:
        connection = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
        try:
            row = connection.execute(
                "SELECT 1 FROM audit WHERE action = ? LIMIT 1", (DEMO_MARK,)
            ).fetchone()
        finally:
            connection.close()
    except sqlite3.Error:
        return False
    return row is not None


def _clear(db: Path) -> None:
    if not db.exists():
        return
    if not _is_demo_store(db):
        raise DemoError(
            f"{db} exists and is not a ratebank demo store; choose another --db for the demo"
        )
    for suffix in ("", "-wal", "-shm"):
        Path(str(db) + suffix).unlink(missing_ok=True)


def run_demo(db: Path, out: Path, *, author: str | None = None) -> DemoResult:
    """Build the demo store at ``db`` from the seed files and summarise it."""
    from ratebank.services.store_access import init_store
    from ratebank.store import audit

    seed = seed_folder()
    db = db.expanduser().absolute()
    if not db.parent.is_dir():
        raise DemoError(f"folder {db.parent} does not exist for the demo store")
    _clear(db)
    store, _ = init_store(str(db), author=author or "ratebank demo")
    try:
        imports = []
        with store.session(write=True) as session:
            imports.append(csv_import.import_species_file(session, seed / "species.csv"))
            imports.append(csv_import.import_reactions_file(session, seed / "reactions.csv"))
            imports.append(csv_import.import_measurements_file(session, seed / "measurements.csv"))
            imports.append(csv_import.import_expressions_file(session, seed / "expressions.csv"))
            audit.record(session, DEMO_MARK, str(db), seed=str(seed))
        with store.session() as session:
            counts = curate.store_counts(session)
            statuses: dict[str, int] = {}
            for reaction in curate.list_reactions(session):
                statuses[reaction.status] = statuses.get(reaction.status, 0) + 1
    finally:
        store.close()
    return DemoResult(db=db, out=out, imports=imports, counts=counts, statuses=statuses)
