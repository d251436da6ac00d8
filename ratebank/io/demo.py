"""The demo: build a fresh store from the invented scenario in ``seed_demo/``.

Every k(T) value, activation energy and expression of the scenario is
synthetic. The demo never overwrites a store it did not build itself.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path
from typing import Any

from ratebank.errors import RatebankError
from ratebank.io import csv_import
from ratebank.io.export import ExportResult, export_mechanism
from ratebank.services.checks import CheckReport, check_store
from ratebank.services.estimation import EstimateReport, estimate
from ratebank.services.fitting import FitReport, fit_reactions
from ratebank.services.quick_listings import list_reactions
from ratebank.services.steric import set_reaction_steric
from ratebank.services.store_access import store_counts
from ratebank.services.validate import ImportSummary

DEMO_MARK = "demo.build"
DEMO_STERIC_REACTION = "ho2-ho2"
DEMO_STERIC_VALUE = 0.02
FILES = (
    "species.csv",
    "reactions.csv",
    "measurements.csv",
    "expressions.csv",
    "expressions_pressure.csv",
    "efficiencies.csv",
)


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
    fit: FitReport | None = None
    estimate: EstimateReport | None = None
    check: CheckReport | None = None
    exports: list[ExportResult] = field(default_factory=list)
    origins: dict[str, int] = field(default_factory=dict)
    #: the demo store's review book (a report.book.BookFiles), once written
    book: Any = None


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
    """Build the demo store at ``db``, then fit, estimate, check and export into ``out``.

    The steps are those a curator runs before a simulation: import the seed
    files, fit every measured reaction (``--form auto``), estimate every
    activation-energy-only bimolecular reaction that can be estimated
    (``--keep-going``), check, and export the mechanism in the combustion and
    atmospheric presets, leaving out the gaps.
    """
    from ratebank.services.store_access import init_store
    from ratebank.store import audit

    seed = seed_folder()
    db = db.expanduser().absolute()
    out = out.expanduser().absolute()
    if not db.parent.is_dir():
        raise DemoError(f"folder {db.parent} does not exist for the demo store")
    if out.exists() and not out.is_dir():
        raise DemoError(f"{out} exists and is not a folder; choose another --out")
    _clear(db)
    store, _ = init_store(str(db), author=author or "ratebank demo")
    try:
        result = DemoResult(db=db, out=out, imports=[], counts={})
        with store.session(write=True) as session:
            result.imports.append(csv_import.import_species_file(session, seed / "species.csv"))
            result.imports.append(csv_import.import_reactions_file(session, seed / "reactions.csv"))
            result.imports.append(
                csv_import.import_measurements_file(session, seed / "measurements.csv")
            )
            result.imports.append(
                csv_import.import_expressions_file(session, seed / "expressions.csv")
            )
            result.imports.append(
                csv_import.import_expressions_file(session, seed / "expressions_pressure.csv")
            )
            result.imports.append(
                csv_import.import_efficiencies_file(session, seed / "efficiencies.csv")
            )
            audit.record(session, DEMO_MARK, str(db), seed=str(seed))
        with store.session(write=True) as session:
            # The demo curator's own choice for the self-reaction (synthetic, by analogy);
            # the other HO2 reactions stay without a steric factor and are reported.
            set_reaction_steric(
                session,
                DEMO_STERIC_REACTION,
                DEMO_STERIC_VALUE,
                source="synthetic: demo curator's choice by analogy with radical + O3 (invented)",
            )
        with store.session(write=True) as session:
            result.fit = fit_reactions(session, form="auto")
        with store.session(write=True) as session:
            result.estimate = estimate(session, keep_going=True)
        with store.session() as session:
            result.check = check_store(session)
            result.counts = store_counts(session)
            for reaction in list_reactions(session):
                result.statuses[reaction.status] = result.statuses.get(reaction.status, 0) + 1
        out.mkdir(parents=True, exist_ok=True)
        for preset in ("combustion", "atmospheric"):
            with store.session(write=True) as session:
                result.exports.append(
                    export_mechanism(
                        session,
                        out / f"mechanism-{preset}",
                        preset=preset,
                        leave_out_gaps=True,
                        store_label=store.display_url,
                    )
                )
        for row in result.exports[0].table.rows:
            result.origins[row.origin] = result.origins.get(row.origin, 0) + 1
    finally:
        store.close()
    return result
