"""Concurrent curators: worker processes import, fit and edit one store at once; nothing is lost.

Each worker imports its own measurement sets, edits its own expressions (never
refused: nobody else touches them) and edits two shared steric rules with the
version it read (refused whenever the other worker got there first). Counting
afterwards proves that no insert and no edit was lost, and that every refusal
was the one-line conflict message naming the other worker.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

from helpers.data import EXPRESSIONS_CSV, REACTIONS_CSV, SPECIES_CSV
from sqlalchemy import func, select

from ratebank.services.steric import set_class_rule
from ratebank.services.store_access import open_store
from ratebank.store.models import AuditEntry, Expression, MeasurementSet, Point, StericRule

WORKERS = Path(__file__).with_name("workers.py")
WORKER_COUNT = 2
ITERATIONS = 200
OWN_EXPRESSIONS = 3
CLASSES = ["shared-a", "shared-b"]


def _prepare(db, cli, tmp_path) -> dict[int, list[int]]:
    assert cli(db, "init").exit_code == 0
    for command, text in (
        ("species", SPECIES_CSV),
        ("reactions", REACTIONS_CSV),
        ("expressions", EXPRESSIONS_CSV),
    ):
        path = tmp_path / f"{command}.csv"
        path.write_text(text, encoding="utf-8")
        assert cli(db, command, "import", str(path)).exit_code == 0
    # Each worker's own literature expressions, on a reaction with a complete A.
    rows = "".join(
        f"h2o2-dec,{1e13 * (1 + w + i / 10)},0,200,kJ/mol,s-1,800,1500,3,worker-{w} own {i}\n"
        for w in range(WORKER_COUNT)
        for i in range(OWN_EXPRESSIONS)
    )
    own = tmp_path / "own.csv"
    own.write_text(EXPRESSIONS_CSV.splitlines()[0] + "\n" + rows, encoding="utf-8")
    assert cli(db, "expressions", "import", str(own)).exit_code == 0
    store = open_store(db, author="setup")
    try:
        with store.session(write=True) as session:
            for reaction_class in CLASSES:
                set_class_rule(session, reaction_class, 0.1)
        with store.session() as session:
            ids = list(
                session.scalars(
                    select(Expression.id)
                    .where(Expression.reference.like("worker-% own %"))
                    .order_by(Expression.id)
                )
            )
    finally:
        store.close()
    return {w: ids[w * OWN_EXPRESSIONS : (w + 1) * OWN_EXPRESSIONS] for w in range(WORKER_COUNT)}


def test_concurrent_curators_lose_nothing(db_url, cli, tmp_path):
    own = _prepare(db_url, cli, tmp_path)
    started = time.monotonic()
    processes = []
    for worker in range(WORKER_COUNT):
        out = tmp_path / f"worker-{worker}.json"
        args = [
            sys.executable,
            str(WORKERS),
            "curate",
            db_url,
            str(worker),
            str(ITERATIONS),
            ",".join(str(i) for i in own[worker]),
            ",".join(CLASSES),
            str(out),
        ]
        processes.append(
            (
                out,
                subprocess.Popen(
                    args,
                    stdout=subprocess.PIPE,
                    stderr=subprocess.PIPE,
                    text=True,
                    env={**os.environ, "RATEBANK_BUSY_TIMEOUT": "60"},
                ),
            )
        )
    reports = []
    for out, process in processes:
        _stdout, stderr = process.communicate(timeout=240)
        assert process.returncode == 0, stderr
        reports.append(json.loads(out.read_text(encoding="utf-8")))
    elapsed = time.monotonic() - started

    store = open_store(db_url)
    try:
        with store.session() as session:
            # every insert is there
            sets = dict(
                session.execute(
                    select(MeasurementSet.name, func.count(Point.id))
                    .join(Point, Point.set_id == MeasurementSet.id)
                    .where(MeasurementSet.name.like("w%-set%"))
                    .group_by(MeasurementSet.name)
                ).all()
            )
            expected_sets = {name for r in reports for name in r["sets"]}
            assert len(expected_sets) == WORKER_COUNT * ITERATIONS
            assert set(sets) == expected_sets
            assert sum(sets.values()) == sum(r["points"] for r in reports)
            assert set(sets.values()) == {20}
            imports = session.scalar(
                select(func.count(AuditEntry.id)).where(
                    AuditEntry.action == "data.import", AuditEntry.target.like("w%-set%")
                )
            )
            assert imports == WORKER_COUNT * ITERATIONS

            # no edit of a worker's own expressions was lost or refused
            for report in reports:
                for expression_id, edits in report["own_edits"].items():
                    expression = session.get(Expression, int(expression_id))
                    assert expression.version == 1 + edits
                    assert expression.reference == report["own_last_reference"][expression_id]
                    assert expression.updated_by == f"worker-{report['worker']}"

            # shared rules: successes + refusals = attempts; the version counts every success
            refused_total = 0
            for reaction_class in CLASSES:
                counts = [r["steric"][reaction_class] for r in reports]
                for c in counts:
                    assert c["success"] + c["refused"] == c["attempts"]
                successes = sum(c["success"] for c in counts)
                refused_total += sum(c["refused"] for c in counts)
                rule = session.scalar(
                    select(StericRule).where(StericRule.reaction_class == reaction_class)
                )
                assert rule.version == 1 + successes
                changes = session.scalar(
                    select(func.count(AuditEntry.id)).where(
                        AuditEntry.action == "steric.rule.change",
                        AuditEntry.target == reaction_class,
                    )
                )
                assert changes == successes
            # the workers did collide, and every refusal named the other worker
            assert refused_total >= 1
            for report in reports:
                for message in report["refusals"]:
                    assert "\n" not in message
                    assert " was changed by worker-" in message
                    assert f"worker-{report['worker']} " not in message.split(" at ")[0]
                    assert "UTC (now version " in message
                    assert message.endswith("read it again before changing it")

            # the fits made while the others imported were all stored
            fits = session.scalar(
                select(func.count(Expression.id)).where(Expression.origin == "measured-fit")
            )
            assert fits == sum(r["fits_stored"] for r in reports)
    finally:
        store.close()
    assert elapsed < 90, f"the workers took {elapsed:.0f} s"
