"""Benchmarks of ratebank against baselines run in the same process run.

Usage::

    python tests/benchmarks/run.py --scale small      # about a minute
    python tests/benchmarks/run.py --scale full       # the recorded run (README)

Each benchmark times ratebank and its baseline alternately, ``--repeat``
times, and prints the medians as one line::

    NAME: ratebank X s, baseline Y s, ratio R (target <= T)

where R is ratebank's time over the baseline's. The baselines are floors that do the
same work as ratebank in the plainest code a careful user would write (floors.py), and,
for the fit, also a loop of ``curve_fit``. Two more lines::

    memory: export peak X MB (target <= 200)
    scale: ratebank X us/reaction at 1M, Y us/reaction at 100k, ratio R (target <= 1.25)

the peak resident memory of ratebank's estimate and export, and the cost per reaction
of the whole job (imports, fit, estimate, check, export through the ``ratebank`` command)
at the largest store over that at the one below it (``generate.JOB_SIZES``). The data are
SYNTHETIC (tests/benchmarks/generate.py). Machines here are shared and noisy: compare
ratios, not seconds.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import signal
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import floors  # noqa: E402
from generate import (  # noqa: E402
    JOB_DATA_VERSION,
    JOB_SIZES,
    Files,
    JobFiles,
    generate,
    generate_job,
)

PYTHON = sys.executable
FLOORS = str(HERE / "floors.py")
TARGETS = {
    "load": 1.3,
    "fit-vs-floor": 1.5,
    "fit-vs-naive": 0.05,
    "export": 1.5,
    "query": 1.2,
    "scale": 1.25,
}
MEMORY_TARGET_MB = 200
#: what ``--only`` accepts: every line's name
BENCHMARKS = (*TARGETS, "memory")


class TooLarge(Exception):
    """A child process passed the memory limit and was stopped."""

    def __init__(self, elapsed: float, rss_mb: float):
        super().__init__(f"stopped after {elapsed:.0f} s at {rss_mb:.0f} MB")
        self.elapsed, self.rss_mb = elapsed, rss_mb
        #: the job's step that was stopped, and the time of the steps done before it
        self.step = ""
        self.steps: dict[str, float] = {}


#: Runs the command given as its arguments and prints its pid, then its wall time [s], peak
#: resident memory [kB] and exit status. A child's ru_maxrss starts at the high-water mark of
#: the process that started it (Linux keeps it across fork and exec), so the benchmark's own
#: memory would count in every child's: this small process starts them instead.
MEASURE = """
import os, subprocess, sys, time
start = time.perf_counter()
process = subprocess.Popen(sys.argv[1:], stdout=subprocess.DEVNULL)
print(process.pid, flush=True)
_, status, usage = os.wait4(process.pid, 0)
print(time.perf_counter() - start, usage.ru_maxrss, os.waitstatus_to_exitcode(status))
"""


def run_process(
    args: list[str],
    *,
    env: dict[str, str] | None = None,
    ok: tuple[int, ...] = (0,),
    limit_mb: float = 0.0,
) -> tuple[float, float]:
    """Wall time [s] and peak resident memory [MB] of one child process (its exit status
    must be one of ``ok``), started by MEASURE. With ``limit_mb``, a watcher thread stops
    the child once its resident memory passes that, and TooLarge is raised: the machines
    are shared."""
    with tempfile.TemporaryFile() as errors:
        measure = subprocess.Popen(
            [PYTHON, "-S", "-c", MEASURE, *args],
            stdout=subprocess.PIPE,
            stderr=errors,
            env={**os.environ, **(env or {})},
            text=True,
        )
        assert measure.stdout is not None
        pid = int(measure.stdout.readline())
        stopped: list[float] = []
        done = threading.Event()
        if limit_mb:
            watch = (pid, measure.pid, limit_mb, stopped, done)
            threading.Thread(target=_watch, args=watch, daemon=True).start()
        result = measure.stdout.read().split()
        done.set()
        measure.wait()
        errors.seek(0)
        stderr = errors.read().decode(errors="replace")
    elapsed, rss_kb, status = float(result[0]), int(result[1]), int(result[2])
    if stopped:
        raise TooLarge(elapsed, stopped[0])
    if status not in ok:
        raise SystemExit(f"benchmark step failed: {' '.join(args)}\n{stderr}")
    return elapsed, rss_kb / 1024.0


def _watch(
    pid: int, parent: int, limit_mb: float, stopped: list[float], done: threading.Event
) -> None:
    """Kill ``pid`` once its resident memory passes ``limit_mb`` (while it is still the
    child of ``parent`` and the run is not ``done``)."""
    status = Path(f"/proc/{pid}/status")
    while not done.is_set():
        try:
            fields = dict(line.split(":", 1) for line in status.read_text().splitlines())
        except OSError:
            return  # gone
        if int(fields.get("PPid", "0")) != parent:
            return
        rss = int(fields.get("VmRSS", "0 kB").split()[0]) / 1024
        if rss > limit_mb:
            stopped.append(rss)
            os.kill(pid, signal.SIGKILL)
            return
        done.wait(0.5)


def fresh_copy(template: Path, folder: Path, name: str) -> Path:
    target = folder / name
    for suffix in ("", "-wal", "-shm"):
        Path(str(target) + suffix).unlink(missing_ok=True)
    shutil.copyfile(template, target)
    return target


def ratebank(db: Path, *args: str) -> list[str]:
    return [PYTHON, "-m", "ratebank", "--db", str(db), "--quiet", *args]


def _at_head(store: Path) -> bool:
    """True when a cached template is at this ratebank's schema revision (else rebuilt)."""
    import sqlite3

    from ratebank.store.schema import HEAD_REVISION

    connection = sqlite3.connect(store)
    try:
        row = connection.execute("SELECT version_num FROM alembic_version").fetchone()
    except sqlite3.Error:
        return False
    finally:
        connection.close()
    return bool(row) and row[0] == HEAD_REVISION


def build_templates(files: Files, folder: Path) -> tuple[Path, Path]:
    """(store with species and reactions, the same with the fit data and activation energies)."""
    base = folder / "template-base.db"
    full = folder / "template-full.db"
    if base.exists() and full.exists() and _at_head(base) and _at_head(full):
        return base, full
    for path in (base, full):
        for suffix in ("", "-wal", "-shm"):
            Path(str(path) + suffix).unlink(missing_ok=True)
    for step in (
        ["init"],
        ["species", "import", str(files.species)],
        ["reactions", "import", str(files.reactions)],
    ):
        run_process(ratebank(base, *step))
    _checkpoint(base)
    shutil.copyfile(base, full)
    for step in (
        ["data", "import", str(files.measurements)],
        ["expressions", "import", str(files.expressions)],
    ):
        run_process(ratebank(full, *step))
    _checkpoint(full)
    return base, full


def _checkpoint(db: Path) -> None:
    connection = sqlite3.connect(db)
    connection.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    connection.close()


# --------------------------------------------------------------------------- baselines


def fit_naive(db: Path) -> int:
    """What a user writes: a loop of curve_fit on k = A T^n exp(-Ea/RT), set by set.

    The model is written as the rate law reads (A itself, not ln A), with a
    start from the data: A from the mean k at an Ea of 10 kJ/mol, n = 0.
    """
    import warnings

    import numpy as np
    from scipy.optimize import OptimizeWarning, curve_fit

    warnings.simplefilter("ignore", OptimizeWarning)  # a set of 3 points has no covariance
    connection = sqlite3.connect(db)
    group, T, k, u = floors.read_points(connection)
    connection.close()
    R = 8.314462618

    def model(T, A, n, Ea):  # type: ignore[no-untyped-def]
        return A * T**n * np.exp(-Ea / (R * T))

    fitted = 0
    boundaries = np.flatnonzero(np.diff(group)) + 1
    for idx in np.split(np.arange(group.size), boundaries):
        t, kk, uu = T[idx], k[idx], u[idx]
        p0 = (kk.mean() * np.exp(10_000.0 / (R * t.mean())), 0.0, 10_000.0)
        try:
            curve_fit(model, t, kk, p0=p0, sigma=uu * kk, absolute_sigma=True, maxfev=20_000)
            fitted += 1
        except RuntimeError:
            pass
    return fitted


def fit_ratebank(db: Path) -> int:
    from ratebank.services.fitting import fit_reactions
    from ratebank.services.store_access import open_store

    store = open_store(str(db))
    try:
        with store.session(write=True) as session:
            report = fit_reactions(session, form="modified")
    finally:
        store.close()
    return report.stored


QUERY_FLOOR = """
import sys{imports}
import json, sqlite3
connection = sqlite3.connect(sys.argv[1])
rows = connection.execute(
    "SELECT r.key, r.equation, r.reaction_order, r.reaction_class FROM reaction r "
    "WHERE EXISTS (SELECT 1 FROM participant p JOIN species s ON s.id = p.species_id "
    "WHERE p.reaction_id = r.id AND s.name = ?) ORDER BY r.key", ("OH",)).fetchall()
print(json.dumps([dict(zip(("key", "equation", "order", "class"), row)) for row in rows]))
"""


# --------------------------------------------------------------------------- runner


def report(name: str, ours: list[float], theirs: list[float], extra: str = "") -> None:
    mine, base = statistics.median(ours), statistics.median(theirs)
    print(
        f"{name}: ratebank {mine:.3f} s, baseline {base:.3f} s, ratio {mine / base:.3g} "
        f"(target <= {TARGETS[name]:g}){extra}",
        flush=True,
    )


def environment() -> None:
    import numpy

    print(
        f"environment: Python {platform.python_version()}, numpy {numpy.__version__}, "
        f"SQLite {sqlite3.sqlite_version}, {os.cpu_count()} cores, {platform.machine()}, "
        f"{time.strftime('%Y-%m-%d')}",
        flush=True,
    )


def compile_ratebank() -> None:
    """Write ratebank's bytecode before timing anything.

    An installed ratebank has its bytecode from pip, as the baselines' libraries do; a
    working copy on a machine that sets PYTHONDONTWRITEBYTECODE would otherwise compile
    every module from source in every child process, which no user pays twice.
    """
    import compileall

    import ratebank

    compileall.compile_dir(Path(ratebank.__file__).parent, quiet=1)


def cached_files(work: Path, scale: str) -> Files:
    """The generated files of ``scale`` in ``work``, made once."""
    marker = work / "generated.json"
    if marker.exists():
        info = json.loads(marker.read_text())
        counts = ("n_reactions", "n_sets", "n_points")
        return Files(**{k: v if k in counts else Path(v) for k, v in info.items()})
    files = generate(work, scale)
    marker.write_text(
        json.dumps({k: str(v) if isinstance(v, Path) else v for k, v in files.__dict__.items()})
    )
    return files


def job_files(work: Path, n_reactions: int) -> JobFiles:
    """The scaling job's input files for ``n_reactions``, made once per generator version."""
    folder = work / f"job-{label(n_reactions)}"
    marker = folder / "generated.json"
    if marker.exists():
        info = json.loads(marker.read_text())
        if info.pop("version", None) == JOB_DATA_VERSION:
            counts = ("n_reactions", "n_sets", "n_points")
            return JobFiles(**{k: v if k in counts else Path(v) for k, v in info.items()})
    files = generate_job(folder, n_reactions)
    info = {k: str(v) if isinstance(v, Path) else v for k, v in files.__dict__.items()}
    marker.write_text(json.dumps({"version": JOB_DATA_VERSION, **info}))
    return files


def label(n: int) -> str:
    """1000 -> '1k', 1000000 -> '1M'."""
    return f"{n // 1_000_000}M" if n >= 1_000_000 else f"{n // 1_000}k"


#: The whole job, as a user runs it: (step, ratebank arguments, exit statuses that are no
#: failure). ``check`` exits 1 when it flags anything.
JOB_STEPS = (
    ("init", ["init"], (0,)),
    ("species", ["species", "import", "{species}"], (0,)),
    ("reactions", ["reactions", "import", "{reactions}"], (0,)),
    ("data", ["data", "import", "{measurements}"], (0,)),
    ("expressions", ["expressions", "import", "{expressions}"], (0,)),
    ("fit", ["fit"], (0,)),
    ("estimate", ["estimate", "--steric", "0.1", "--keep-going"], (0,)),
    ("check", ["check"], (0, 1)),
    ("export", ["export", "{out}", "--leave-out-gaps"], (0,)),
)


def run_job(files: JobFiles, limit_mb: float) -> tuple[float, dict[str, float], dict[str, float]]:
    """Wall time [s] and peak resident memory [MB] of each step of the whole job; TooLarge
    (with the steps done so far in ``steps``) when a step passes ``limit_mb``."""
    db = files.folder / "job.db"
    for suffix in ("", "-wal", "-shm"):
        Path(str(db) + suffix).unlink(missing_ok=True)
    names = {
        "species": files.species,
        "reactions": files.reactions,
        "measurements": files.measurements,
        "expressions": files.expressions,
        "out": files.folder / "mechanism",
    }
    steps: dict[str, float] = {}
    memory: dict[str, float] = {}
    for step, arguments, ok in JOB_STEPS:
        args = [a.format(**names) for a in arguments]
        try:
            steps[step], memory[step] = run_process(ratebank(db, *args), ok=ok, limit_mb=limit_mb)
        except TooLarge as error:
            error.step, error.steps = step, steps
            raise
    return sum(steps.values()), steps, memory


def scaling(work: Path, scale: str, limit_mb: float) -> None:
    """One line per store size, then the ratio of the two largest sizes' cost per reaction."""
    cost = {}
    for n in JOB_SIZES[scale]:
        files = job_files(work, n)
        try:
            total, steps, memory = run_job(files, limit_mb)
        except TooLarge as error:
            done = ", ".join(f"{step} {t:.1f} s" for step, t in error.steps.items())
            print(
                f"scale {label(n)}: stopped: {error.step} passed {limit_mb:.0f} MB ({error}); "
                f"before it {done}",
                flush=True,
            )
            break
        cost[n] = total / n * 1e6
        peak = max(memory, key=memory.__getitem__)
        detail = ", ".join(f"{step} {t:.1f} s {memory[step]:.0f} MB" for step, t in steps.items())
        print(
            f"scale {label(n)}: {total:.1f} s for {n:,} reactions ({files.n_sets:,} sets, "
            f"{files.n_points:,} points), {cost[n]:.0f} us/reaction, "
            f"peak RSS {memory[peak]:.0f} MB ({peak}); {detail}",
            flush=True,
        )
    sizes = JOB_SIZES[scale]
    large, below = sizes[-1], sizes[-2]
    if large not in cost or below not in cost:
        print(
            f"scale: ratebank did not finish the {label(large if below in cost else below)} "
            f"job within {limit_mb:.0f} MB, no ratio (target <= {TARGETS['scale']:g})",
            flush=True,
        )
        return
    print(
        f"scale: ratebank {cost[large]:.0f} us/reaction at {label(large)}, "
        f"{cost[below]:.0f} us/reaction at {label(below)}, ratio {cost[large] / cost[below]:.3g} "
        f"(target <= {TARGETS['scale']:g})",
        flush=True,
    )


def main() -> None:
    parser = argparse.ArgumentParser(description="ratebank benchmarks (synthetic data)")
    parser.add_argument("--scale", choices=("small", "medium", "full"), default="small")
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--workdir", type=Path, default=None)
    parser.add_argument("--only", action="append", choices=BENCHMARKS, default=None)
    parser.add_argument(
        "--job-memory-limit",
        type=float,
        default=12_000,
        metavar="MB",
        help="stop a step of the scaling job whose resident memory passes this (0: no limit)",
    )
    args = parser.parse_args()
    work = args.workdir or Path(tempfile.gettempdir()) / f"ratebank-bench-{args.scale}"
    work.mkdir(parents=True, exist_ok=True)
    environment()
    compile_ratebank()
    only = set(args.only or BENCHMARKS)
    repeat = max(1, args.repeat)
    if only - {"scale"}:
        files = cached_files(work, args.scale)
        print(
            f"data: {files.n_reactions} reactions, {files.n_sets} fitted sets "
            f"({files.n_points} points), load file {files.load_points.name} (synthetic)",
            flush=True,
        )
        base, full = build_templates(files, work)

    if "load" in only:
        ours, theirs, rss_ours, rss_theirs = [], [], [], []
        for _ in range(repeat):
            db = fresh_copy(base, work, "load.db")
            t, rss = run_process(ratebank(db, "data", "import", str(files.load_points)))
            ours.append(t)
            rss_ours.append(rss)
            db = fresh_copy(base, work, "floor.db")
            t, rss = run_process([PYTHON, FLOORS, "load", str(db), str(files.load_points)])
            theirs.append(t)
            rss_theirs.append(rss)
        # memory must not grow with the file: load the first half too
        half = work / "load-half.csv"
        with files.load_points.open() as source, half.open("w") as target:
            lines = source.readlines()
            target.writelines(lines[: 1 + (len(lines) - 1) // 2])
        db = fresh_copy(base, work, "load.db")
        _, rss_half = run_process(ratebank(db, "data", "import", str(half)))
        report(
            "load",
            ours,
            theirs,
            f"; peak RSS ratebank {max(rss_ours):.0f} MB (half the file: {rss_half:.0f} MB), "
            f"baseline {max(rss_theirs):.0f} MB",
        )

    if "fit-vs-naive" in only or "fit-vs-floor" in only:
        ours, naive, floor = [], [], []
        for _ in range(repeat):
            db = fresh_copy(full, work, "fit.db")
            start = time.perf_counter()
            fit_ratebank(db)
            ours.append(time.perf_counter() - start)
            if "fit-vs-naive" in only:
                start = time.perf_counter()
                fit_naive(full)
                naive.append(time.perf_counter() - start)
            db = fresh_copy(full, work, "fit-floor.db")
            start = time.perf_counter()
            floors.fit(str(db))
            floor.append(time.perf_counter() - start)
        if "fit-vs-naive" in only:
            report("fit-vs-naive", ours, naive)
        if "fit-vs-floor" in only:
            report("fit-vs-floor", ours, floor)

    if "export" in only or "memory" in only:
        ours, theirs, rss_ours = [], [], []
        for _ in range(repeat):
            db = fresh_copy(full, work, "export.db")
            t1, r1 = run_process(ratebank(db, "estimate", "--keep-going", "--steric", "0.1"))
            t2, r2 = run_process(
                ratebank(db, "export", str(work / "mechanism"), "--leave-out-gaps")
            )
            ours.append(t1 + t2)
            rss_ours.append(max(r1, r2))
            db = fresh_copy(full, work, "export-floor.db")
            t, _ = run_process(
                [PYTHON, FLOORS, "estimate-export", str(db), str(work / "floor.csv")]
            )
            theirs.append(t)
        if "export" in only:
            report("export", ours, theirs)
        print(
            f"memory: export peak {max(rss_ours):.0f} MB (target <= {MEMORY_TARGET_MB})",
            flush=True,
        )

    if "query" in only:
        ours, theirs, bare = [], [], []
        floor_imports = "\nimport typer, rich.table, sqlalchemy.orm"
        for _ in range(max(repeat, 5)):
            ours.append(
                run_process(ratebank(full, "reactions", "list", "--species", "OH", "--json"))[0]
            )
            theirs.append(
                run_process([PYTHON, "-c", QUERY_FLOOR.format(imports=floor_imports), str(full)])[0]
            )
            bare.append(run_process([PYTHON, "-c", QUERY_FLOOR.format(imports=""), str(full)])[0])
        report(
            "query",
            ours,
            theirs,
            f"; against the same script without those imports: ratio "
            f"{statistics.median(ours) / statistics.median(bare):.3g}",
        )

    if "scale" in only:
        scaling(work, args.scale, args.job_memory_limit)


if __name__ == "__main__":
    main()
