"""Worker processes for the reliability tests: ``python workers.py MODE ARGS...``.

Each mode is a separate process on purpose: SQLite's locks, WAL recovery and
PostgreSQL's transactions behave differently between processes than between
connections of one process, and only a real process can be killed.

Modes
-----
curate DB WORKER ITERATIONS OWN_IDS CLASSES OUT
    Import measurement sets, edit its own expressions, edit shared steric rules
    with expected versions and fit now and then; write what it did to OUT (JSON).
writer DB SECONDS OUT
    Import small measurement sets, one transaction each, until SECONDS have
    passed or the file OUT.stop appears; write how many it committed to OUT.
slow-export DB OUT
    Run ``ratebank export`` on a disk that never finishes syncing (``os.fsync``
    sleeps), so that the test can kill it while the temporary files exist.
kill-init STEP DB
    Run ``ratebank init`` and kill the process (SIGKILL) right after STEP: ``locked``,
    ``migrated``, ``recorded`` (inside the one init transaction), ``history`` (before a
    separate history write, if init makes one) or ``committed`` (after the schema change
    is committed).
unprivileged WARM_DB UID ARGS...
    Run ``ratebank ARGS`` as user UID (from root), after loading every module it
    needs by running the same command on the scratch store WARM_DB.
"""

from __future__ import annotations

import json
import os
import random
import sys
import time
from pathlib import Path

SET_POINTS = 20


def _points(set_name: str, reaction: str, count: int, seed: int) -> tuple[dict, list[int]]:
    rng = random.Random(seed)
    temperatures = [f"{300 + 10 * i + rng.random():.6f}" for i in range(count)]
    rates = [f"{1e-14 * (1 + rng.random()):.6e}" for _ in range(count)]
    columns = {
        "set": [set_name] * count,
        "reaction": [reaction] * count,
        "T_K": temperatures,
        "k": rates,
        "k_units": ["cm3/molecule/s"] * count,
        "k_uncertainty": ["0.1"] * count,
    }
    return columns, list(range(2, count + 2))


def curate_worker(
    db: str, worker: int, iterations: int, own_ids: list[int], classes: list[str], out: Path
) -> None:
    from sqlalchemy import select

    from ratebank.errors import ConflictError
    from ratebank.services.expressions import edit_expression
    from ratebank.services.fitting import fit_reactions
    from ratebank.services.measurement_import import import_measurements
    from ratebank.services.steric import set_class_rule
    from ratebank.services.store_access import open_store
    from ratebank.store.models import Expression, StericRule

    store = open_store(db, author=f"worker-{worker}")
    rng = random.Random(worker)
    report: dict = {
        "worker": worker,
        "sets": [],
        "points": 0,
        "own_edits": {str(i): 0 for i in own_ids},
        "own_last_reference": {},
        "steric": {c: {"attempts": 0, "success": 0, "refused": 0} for c in classes},
        "refusals": [],
        "fits_stored": 0,
    }
    try:
        for i in range(iterations):
            name = f"w{worker}-set{i}"
            columns, lines = _points(name, "oh-ch4", SET_POINTS, seed=worker * 100_000 + i)
            with store.session(write=True) as session:
                summary = import_measurements(session, columns, lines, source=name)
            report["sets"].append(name)
            report["points"] += summary.added

            own = own_ids[i % len(own_ids)]
            with store.session() as session:
                version = session.scalar(select(Expression.version).where(Expression.id == own))
            reference = f"worker-{worker} edit {i}"
            with store.session(write=True) as session:
                edit_expression(session, own, expected_version=version, reference=reference)
            report["own_edits"][str(own)] += 1
            report["own_last_reference"][str(own)] = reference

            reaction_class = classes[i % len(classes)]
            with store.session() as session:
                version = session.scalar(
                    select(StericRule.version).where(StericRule.reaction_class == reaction_class)
                )
            # Think time between reading and writing, as a curator would have.
            time.sleep(rng.random() * 0.004)
            counts = report["steric"][reaction_class]
            counts["attempts"] += 1
            try:
                with store.session(write=True) as session:
                    set_class_rule(
                        session,
                        reaction_class,
                        0.01 + rng.random(),
                        source=f"worker-{worker} step {i}",
                        expected_version=version,
                    )
                counts["success"] += 1
            except ConflictError as exc:
                counts["refused"] += 1
                if len(report["refusals"]) < 20:
                    report["refusals"].append(str(exc))

            if i % 40 == 39:
                with store.session(write=True) as session:
                    fitted = fit_reactions(session, ["oh-ch4"], form="arrhenius")
                report["fits_stored"] += fitted.stored
    finally:
        store.close()
        out.write_text(json.dumps(report), encoding="utf-8")


def writer(db: str, seconds: float, out: Path) -> None:
    from ratebank.services.measurement_import import import_measurements
    from ratebank.services.store_access import open_store

    store = open_store(db, author="writer")
    stop = Path(f"{out}.stop")
    committed = 0
    deadline = time.monotonic() + seconds
    try:
        while time.monotonic() < deadline and not stop.exists():
            name = f"live-{committed}"
            columns, lines = _points(name, "oh-ch4", 50, seed=committed)
            with store.session(write=True) as session:
                import_measurements(session, columns, lines, source=name)
            committed += 1
            # replaced whole, so that the test never reads a half-written number
            Path(f"{out}.progress.tmp").write_text(str(committed), encoding="utf-8")
            os.replace(f"{out}.progress.tmp", f"{out}.progress")
    finally:
        store.close()
        out.write_text(json.dumps({"committed": committed}), encoding="utf-8")


def slow_export(db: str, out: str) -> None:
    def never_synced(_descriptor: int) -> None:
        time.sleep(120)

    os.fsync = never_synced  # the export module calls os.fsync through the os module
    from ratebank.cli.app import app

    app(["--db", db, "export", out, "--leave-out-gaps"], prog_name="ratebank")


def kill_init(step: str, db: str) -> None:
    import signal

    from ratebank.services import store_access
    from ratebank.store import audit, schema

    def kill() -> None:
        os.kill(os.getpid(), signal.SIGKILL)

    def after(module, name: str, at: str) -> None:  # type: ignore[no-untyped-def]
        function = getattr(module, name, None)
        if function is None:
            return

        def wrapped(*args, **kwargs):  # type: ignore[no-untyped-def]
            result = function(*args, **kwargs)
            if step == at:
                kill()
            return result

        setattr(module, name, wrapped)

    for name, at in (
        ("_lock_for_init", "locked"),
        ("_migrate", "migrated"),
        ("_record_init", "recorded"),
    ):
        after(schema, name, at)
    # the whole creation or upgrade, committed (whichever function init uses for it)
    for name in ("initialise_store", "upgrade_store"):
        after(store_access, name, "committed")
    record = audit.record

    def record_or_kill(session, action, target, **detail):  # type: ignore[no-untyped-def]
        if step == "history" and action.startswith("store."):
            kill()
        return record(session, action, target, **detail)

    audit.record = record_or_kill
    from ratebank.cli.app import app

    app(["--db", db, "init"], prog_name="ratebank")


def unprivileged(warm_db: str, uid: int, args: list[str]) -> None:
    """Run ``ratebank ARGS`` as user ``uid`` (when started as root), to meet a read-only store.

    Root may write any file, so a read-only store can only be met as another
    user. The interpreter may live where that user cannot read (a home folder),
    so every module the commands need is loaded first, by running the same
    commands on a scratch store, before giving up root.
    """
    import contextlib
    import io

    from ratebank.cli.app import app

    def run(arguments: list[str]) -> int:
        try:
            app(arguments, prog_name="ratebank")
        except SystemExit as exc:
            return exc.code if isinstance(exc.code, int) else 1
        return 0

    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        run(["--db", warm_db, "init"])
        run(["--db", warm_db, *args[2:]])  # args start with "--db", STORE
    if os.geteuid() == 0 and uid >= 0:
        os.setgroups([])
        os.setgid(uid)
        os.setuid(uid)
    sys.exit(run(args))


def main(argv: list[str]) -> None:
    mode, *args = argv
    if mode == "curate":
        db, worker, iterations, own, classes, out = args
        curate_worker(
            db,
            int(worker),
            int(iterations),
            [int(x) for x in own.split(",")],
            classes.split(","),
            Path(out),
        )
    elif mode == "writer":
        db, seconds, out = args
        writer(db, float(seconds), Path(out))
    elif mode == "slow-export":
        slow_export(*args)
    elif mode == "kill-init":
        kill_init(*args)
    elif mode == "unprivileged":
        warm_db, uid, *rest = args
        unprivileged(warm_db, int(uid), rest)
    else:
        raise SystemExit(f"unknown mode {mode!r}")


if __name__ == "__main__":
    main(sys.argv[1:])
