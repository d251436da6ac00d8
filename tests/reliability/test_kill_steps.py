"""A ratebank killed after each internal step of an export or of an upgrade loses nothing.

Export: the safe-output routine kills its own process (SIGKILL) right after the
step named by ``RATEBANK_TEST_KILL_AFTER``. After each kill, and whether or not a
previous export was there:

* the store is exactly as before (the export's history entry is committed only
  after the files are in place);
* the two files are the complete old output or the complete new output, except
  after the kill between the two renames, when the new table stands beside the
  old descriptor with the commit marker that says how to finish (the routine's
  documented limit: two names cannot be renamed at once);
* the next run (every write first finishes or removes what a dead writer of the
  same target left) leaves the complete old output (killed before the commit
  marker) or the complete new one (killed after it), and no staging folder.

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
TABLE, DESCRIPTOR = "mechanism.csv", "mechanism.resource.json"
#: Every step of the export's write, in order (safe_output.STEP_NAMES for two files).
EXPORT_STEPS = [
    "stage-created",
    f"written:{TABLE}",
    f"written:{DESCRIPTOR}",
    "committed",
    f"moved:{TABLE}",
    f"moved:{DESCRIPTOR}",
    "cleaned",
]
COMMIT_STEP = EXPORT_STEPS.index("committed")
STAGING = re.compile(r"\.mechanism\.csv\.ratebank-[0-9a-f]{8}-[0-9]+-[0-9a-f]{16}")


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


def _output(folder: Path):
    table, descriptor = folder / TABLE, folder / DESCRIPTOR
    return (
        table.read_bytes() if table.exists() else None,
        _descriptor_content(descriptor.read_bytes()) if descriptor.exists() else None,
    )


def _staging(folder: Path) -> list[Path]:
    return [p for p in folder.iterdir() if STAGING.fullmatch(p.name)]


@pytest.mark.parametrize("previous", [False, True], ids=["first-export", "over-previous"])
@pytest.mark.parametrize("step", EXPORT_STEPS)
def test_an_export_killed_after_any_step_leaves_old_or_new(filled, cli, tmp_path, step, previous):
    folder = tmp_path / "out"
    folder.mkdir()
    target = folder / TABLE
    if previous:
        first = cli(filled, "export", str(target), "--leave-out-gaps")
        assert first.exit_code == 0, first.stderr
        assert cli(filled, "fit", "oh-ch4").exit_code == 0  # the next export differs
    old = _output(folder)
    before = _state(filled)

    killed = _ratebank(
        filled,
        "export",
        str(target),
        "--leave-out-gaps",
        env={safe_output.KILL_AFTER_VARIABLE: step},
    )
    assert killed.returncode == -signal.SIGKILL, killed.stderr
    after_kill = _output(folder)
    assert _state(filled) == before  # not even a history entry

    # what a complete export writes now (the store is unchanged)
    reference = tmp_path / "reference"
    reference.mkdir()
    assert cli(filled, "export", str(reference / TABLE), "--leave-out-gaps").exit_code == 0
    new = _output(reference)
    assert new != old

    index = EXPORT_STEPS.index(step)
    staged = _staging(folder)
    if index < COMMIT_STEP:
        assert after_kill == old
    elif step == f"moved:{TABLE}":
        # the documented limit: the new table beside the old descriptor, with the marker
        assert after_kill == (new[0], old[1])
        assert len(staged) == 1 and (staged[0] / safe_output.COMMIT_MARKER).is_file()
    elif step == "committed":
        assert after_kill == old
        assert (staged[0] / safe_output.COMMIT_MARKER).is_file()
    else:
        assert after_kill == new
    assert len(staged) <= (0 if step == "cleaned" else 1)

    # the next run finishes (after the marker) or undoes (before it) what the kill left
    safe_output.finish_interrupted(target)
    assert _output(folder) == (new if index >= COMMIT_STEP else old)
    assert _staging(folder) == []

    again = cli(filled, "export", str(target), "--leave-out-gaps")
    assert again.exit_code == 0, again.stderr
    assert _output(folder) == new
    assert sorted(p.name for p in folder.iterdir()) == [TABLE, DESCRIPTOR]


def test_every_step_of_the_export_is_covered():
    # the test walks every step the routine names for a two-file unit
    expanded = []
    for name in safe_output.STEP_NAMES:
        if name.endswith(":NAME"):
            expanded += [name.replace("NAME", TABLE), name.replace("NAME", DESCRIPTOR)]
        elif name != "swapped":  # a folder's step; this export writes two files
            expanded.append(name)
    order = {"stage-created": 0, "written": 1, "committed": 2, "moved": 3, "cleaned": 4}
    assert sorted(expanded, key=lambda s: order[s.split(":")[0]]) == EXPORT_STEPS


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
