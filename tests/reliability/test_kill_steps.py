"""A ratebank killed after each internal step of an export or of an upgrade loses nothing.

Export: the safe-output routine kills its own process (SIGKILL) right after the
step named by ``RATEBANK_TEST_KILL_AFTER``. The export writes a folder (a data
package), staged whole beside its target and moved in (first export) or swapped
with the old one in one atomic exchange. After each kill, and whether or not a
previous export was there:

* the store is exactly as before (the export's history entry is committed only
  after the folder is in place);
* the folder is the complete old package (or absent, before a first export) until
  the move or swap, and the complete new one from then on: never a mix;
* the next run (every write first finishes or removes what a dead writer of the
  same target left) leaves no staging folder, and the next export the new package.

Upgrade: ``init`` on a store at the first revision is killed after each step of
its one transaction and after the commit. Each time the store is either as it
was or upgraded with its one ``store.upgrade`` entry, and the next ``init``
finishes the job.
"""

from __future__ import annotations

import json
import os
import re
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from helpers.state import store_state as _state
from sqlalchemy import text

from ratebank import safe_output
from ratebank.store.engine import create_store_engine, database_url
from ratebank.store.schema import HEAD_REVISION, KNOWN_REVISIONS, current_revision, upgrade_store

WORKERS = Path(__file__).with_name("workers.py")
PACKAGE = "mech"
DESCRIPTOR = "datapackage.json"
#: The package's files, in the order the export writes them.
FILES = ("mechanism.csv", "efficiencies.csv", "species.csv", DESCRIPTOR)


def export_steps(previous: bool) -> list[str]:
    """Every step of the export's write, in order (safe_output.STEP_NAMES for a folder)."""
    placed = "swapped" if previous else f"moved:{PACKAGE}"
    return ["stage-created", *(f"written:{name}" for name in FILES), placed, "cleaned"]


STAGING = re.compile(r"\.mech\.ratebank-[0-9a-f]{8}-[0-9]+-[0-9a-f]{16}")


def _ratebank(db, *args, env=None):
    return subprocess.run(
        [sys.executable, "-m", "ratebank", "--db", db, *args],
        capture_output=True,
        text=True,
        env={**os.environ, **(env or {})},
        timeout=120,
    )


def _descriptor_content(raw: bytes) -> dict:
    """The descriptor without its creation times (two exports differ only there)."""
    descriptor = json.loads(raw)
    descriptor.pop("created")
    descriptor["ratebank"].pop("created")
    return descriptor


def _output(package: Path):
    """The package's files (None for a missing one), the descriptor without its times."""
    found = {}
    for name in FILES:
        path = package / name
        raw = path.read_bytes() if path.exists() else None
        found[name] = _descriptor_content(raw) if name == DESCRIPTOR and raw else raw
    return found


def _staging(folder: Path) -> list[Path]:
    return [p for p in folder.iterdir() if STAGING.fullmatch(p.name)]


@pytest.mark.parametrize(
    ("previous", "step"),
    [(previous, step) for previous in (False, True) for step in export_steps(previous)],
    ids=lambda value: {False: "first-export", True: "over-previous"}.get(value, value),
)
def test_an_export_killed_after_any_step_leaves_old_or_new(filled, cli, tmp_path, step, previous):
    folder = tmp_path / "out"
    folder.mkdir()
    target = folder / PACKAGE
    if previous:
        first = cli(filled, "export", str(target), "--leave-out-gaps")
        assert first.exit_code == 0, first.stderr
        assert cli(filled, "fit", "oh-ch4").exit_code == 0  # the next export differs
    old = _output(target)
    before = _state(filled)

    killed = _ratebank(
        filled,
        "export",
        str(target),
        "--leave-out-gaps",
        env={safe_output.KILL_AFTER_VARIABLE: step},
    )
    assert killed.returncode == -signal.SIGKILL, killed.stderr
    after_kill = _output(target)
    assert _state(filled) == before  # not even a history entry

    # what a complete export writes now (the store is unchanged)
    reference = tmp_path / "reference"
    reference.mkdir()
    made = cli(filled, "export", str(reference / PACKAGE), "--leave-out-gaps")
    assert made.exit_code == 0
    new = _output(reference / PACKAGE)
    assert new != old

    steps = export_steps(previous)
    placed = steps.index("swapped" if previous else f"moved:{PACKAGE}")
    index = steps.index(step)
    assert after_kill == (old if index < placed else new)  # whole, never a mix
    assert len(_staging(folder)) == (0 if step == "cleaned" else 1)

    # the next run removes what the kill left
    safe_output.finish_interrupted(target)
    assert _output(target) == (old if index < placed else new)
    assert _staging(folder) == []

    again = cli(filled, "export", str(target), "--leave-out-gaps")
    assert again.exit_code == 0, again.stderr
    assert _output(target) == new
    assert sorted(p.name for p in folder.iterdir()) == [PACKAGE]
    assert sorted(p.name for p in target.iterdir()) == sorted(FILES)


def test_every_step_of_the_export_is_covered():
    # the test walks every step the routine names for a folder: moved (a first export) or
    # swapped (over a previous one); "committed" is the fallback where the file system
    # cannot exchange two names, covered by tests/test_safe_output.py
    for previous in (False, True):
        expanded = []
        for name in safe_output.STEP_NAMES:
            if name == "written:NAME":
                expanded += [f"written:{n}" for n in FILES]
            elif name == "moved:NAME":
                expanded += [] if previous else [f"moved:{PACKAGE}"]
            elif name == "swapped":
                expanded += [name] if previous else []
            elif name != "committed":
                expanded.append(name)
        assert expanded == export_steps(previous)


# --------------------------------------------------------------------------- upgrade

INIT_STEPS = ["locked", "migrated", "recorded", "history", "committed"]


def _old_store(db: str) -> None:
    """A store at the first revision, with a species and its creation entry."""
    engine = create_store_engine(database_url(db))
    try:
        upgrade_store(engine, KNOWN_REVISIONS[0])
        with engine.begin() as connection:
            connection.execute(
                text(
                    "INSERT INTO species (name, formula, molar_mass, molar_mass_source, "
                    "created_at) VALUES ('OH', 'HO', 0.017007, 'formula', :at)"
                ),
                {"at": "2024-03-01 12:00:00"},
            )
            connection.execute(
                text(
                    "INSERT INTO audit (at, author, action, target, detail) VALUES "
                    "(:at, 'ada', 'store.init', NULL, :detail)"
                ),
                {"at": "2024-03-01 12:00:00", "detail": '{"before": null, "after": "0001"}'},
            )
    finally:
        engine.dispose()


def _revision_and_rows(db: str):
    engine = create_store_engine(database_url(db))
    try:
        revision = current_revision(engine)
        with engine.connect() as connection:
            species = connection.execute(text("SELECT name, formula FROM species")).all()
            actions = [
                row[0] for row in connection.execute(text("SELECT action FROM audit ORDER BY id"))
            ]
    finally:
        engine.dispose()
    return revision, species, actions


@pytest.mark.parametrize("step", INIT_STEPS)
def test_an_upgrade_killed_after_any_step_is_all_or_nothing(db_url, step):
    assert len(KNOWN_REVISIONS) >= 2
    _old_store(db_url)
    before = _revision_and_rows(db_url)
    assert before[0] == KNOWN_REVISIONS[0]

    killed = subprocess.run(
        [sys.executable, str(WORKERS), "kill-init", step, db_url],
        capture_output=True,
        text=True,
        timeout=120,
    )
    revision, species, actions = _revision_and_rows(db_url)
    assert species == before[1]
    if revision == KNOWN_REVISIONS[0]:
        assert killed.returncode == -signal.SIGKILL, killed.stderr
        assert actions == before[2]  # exactly as it was
    else:
        # done, and recorded with it
        assert revision == HEAD_REVISION
        assert actions == [*before[2], "store.upgrade"], (step, killed.returncode)

    again = _ratebank(db_url, "init")
    assert again.returncode == 0, again.stderr
    revision, species, actions = _revision_and_rows(db_url)
    assert revision == HEAD_REVISION
    assert species == before[1]
    assert actions == [*before[2], "store.upgrade"]
