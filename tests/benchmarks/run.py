"""Benchmarks of ratebank against baselines run in the same process run.

Usage::

    python tests/benchmarks/run.py --scale small      # under a minute
    python tests/benchmarks/run.py --scale full       # the recorded run (README)

Each benchmark times ratebank and its baseline alternately, ``--repeat``
times, and prints the medians as one line::

    NAME: ratebank X s, baseline Y s, ratio R (target <= T)

where R is ratebank's time over the baseline's. The data are SYNTHETIC
(tests/benchmarks/generate.py). Machines here are shared and noisy: compare
ratios, not seconds.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from generate import Files, generate  # noqa: E402

PYTHON = sys.executable
TARGETS = {"load": 1.5, "fit-vs-naive": 0.01, "fit-vs-floor": 2.0, "export": 2.0, "query": 1.5}


def run_process(args: list[str], *, env: dict[str, str] | None = None) -> tuple[float, float]:
    """Wall time [s] and peak resident memory [MB] of one child process."""
    start = time.perf_counter()
    process = subprocess.Popen(
        args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env={**os.environ, **(env or {})}
    )
    _, status, usage = os.wait4(process.pid, 0)
    elapsed = time.perf_counter() - start
    stderr = process.stderr.read().decode() if process.stderr else ""
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"benchmark step failed: {' '.join(args)}\n{stderr}")
    return elapsed, usage.ru_maxrss / 1024.0


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

LOAD_FLOOR = """
import csv, sqlite3, sys
connection = sqlite3.connect(sys.argv[1])
connection.execute("CREATE TABLE floor_point (set_name TEXT, reaction TEXT, T REAL, k REAL, "
                   "units TEXT, uncertainty REAL)")
with open(sys.argv[2], newline="", encoding="utf-8") as handle:
    rows = csv.reader(handle)
    next(rows)
    with connection:
        connection.executemany(
            "INSERT INTO floor_point VALUES (?, ?, ?, ?, ?, ?)",
            ((s, r, float(t), float(k), u, float(e)) for s, r, t, k, u, e in rows),
        )
"""

POINTS_SQL = (
    "SELECT ms.reaction_id, p.temperature, p.rate_constant, p.relative_uncertainty "
    "FROM point p JOIN measurement_set ms ON ms.id = p.set_id ORDER BY ms.reaction_id, p.id"
)


def read_points(db: Path):  # type: ignore[no-untyped-def]
    import numpy as np

    connection = sqlite3.connect(db)
    rows = connection.execute(POINTS_SQL).fetchall()
    connection.close()
    group, T, k, u = (np.array(c) for c in zip(*rows, strict=True))
    return group.astype(np.int64), T.astype(float), k.astype(float), u.astype(float)


def fit_naive(db: Path) -> int:
    """What a user writes: a loop of curve_fit on k = A T^n exp(-Ea/RT), set by set.

    The model is written as the rate law reads (A itself, not ln A), with a
    start from the data: A from the mean k at an Ea of 10 kJ/mol, n = 0.
    """
    import warnings

    import numpy as np
    from scipy.optimize import OptimizeWarning, curve_fit

    warnings.simplefilter("ignore", OptimizeWarning)  # a set of 3 points has no covariance
    group, T, k, u = read_points(db)
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


def fit_floor(db: Path) -> int:
    """A bare batched numpy solve of the weighted normal equations in ln k."""
    import numpy as np

    group, T, k, u = read_points(db)
    _, index = np.unique(group, return_inverse=True)
    m = index.max() + 1
    w = 1.0 / u**2
    X = np.stack([np.ones_like(T), np.log(T), -1.0 / T], axis=1)
    y = np.log(k)
    normal = np.zeros((m, 3, 3))
    rhs = np.zeros((m, 3))
    for a in range(3):
        rhs[:, a] = np.bincount(index, weights=w * X[:, a] * y, minlength=m)
        for b in range(3):
            normal[:, a, b] = np.bincount(index, weights=w * X[:, a] * X[:, b], minlength=m)
    np.linalg.solve(normal, rhs[..., None])
    np.linalg.inv(normal)
    return int(m)


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


EXPORT_FLOOR = """
import csv, math, sqlite3, sys
import numpy as np
connection = sqlite3.connect(sys.argv[1])
species = {i: (m, d) for i, m, d in connection.execute(
    "SELECT id, molar_mass, diameter FROM species")}
reactants = {}
for rid, sid, c in connection.execute(
        "SELECT reaction_id, species_id, coefficient FROM participant WHERE role = 'reactant'"):
    reactants.setdefault(rid, []).extend([sid] * c)
ea = dict(connection.execute(
    "SELECT reaction_id, Ea FROM expression WHERE A IS NULL"))
keys = dict(connection.execute("SELECT id, key FROM reaction"))
ids = sorted(r for r in ea if len(reactants.get(r, [])) == 2)
a = np.array([reactants[r][0] for r in ids]); b = np.array([reactants[r][1] for r in ids])
mass = np.array([species[i][0] for i in a]), np.array([species[i][0] for i in b])
diam = np.array([species[i][1] for i in a]), np.array([species[i][1] for i in b])
k_B, N_A, R, T = 1.380649e-23, 6.02214076e23, 8.314462618, 298.15
mu = mass[0] * mass[1] / (mass[0] + mass[1]) / N_A
z = math.pi * ((diam[0] + diam[1]) / 2) ** 2 * np.sqrt(8 * k_B * T / (math.pi * mu)) * N_A
same = a == b
z = np.where(same, z / 2, z)
E0 = np.array([ea[r] for r in ids]) - R * T / 2
A = 0.1 * z / np.sqrt(T) * 1e6
with open(sys.argv[2], "w", newline="") as handle:
    out = csv.writer(handle)
    out.writerow(["key", "A", "n", "Ea"])
    for r, A_i, E_i in zip(ids, A.tolist(), (E0 / 1000).tolist()):
        out.writerow([keys[r], repr(A_i), "0.5", repr(E_i)])
"""

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


def main() -> None:
    parser = argparse.ArgumentParser(description="ratebank benchmarks (synthetic data)")
    parser.add_argument("--scale", choices=("small", "medium", "full"), default="small")
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--workdir", type=Path, default=None)
    parser.add_argument("--only", action="append", choices=sorted(TARGETS), default=None)
    args = parser.parse_args()
    work = args.workdir or Path(tempfile.gettempdir()) / f"ratebank-bench-{args.scale}"
    work.mkdir(parents=True, exist_ok=True)
    environment()
    marker = work / "generated.json"
    if marker.exists():
        info = json.loads(marker.read_text())
        files = Files(
            **{
                k: Path(v)
                if k in Files.__annotations__ and k not in ("n_reactions", "n_sets", "n_points")
                else v
                for k, v in info.items()
            }
        )
    else:
        files = generate(work, args.scale)
        marker.write_text(
            json.dumps({k: str(v) if isinstance(v, Path) else v for k, v in files.__dict__.items()})
        )
    print(
        f"data: {files.n_reactions} reactions, {files.n_sets} fitted sets "
        f"({files.n_points} points), load file {files.load_points.name} (synthetic)",
        flush=True,
    )
    base, full = build_templates(files, work)
    only = set(args.only or TARGETS)
    repeat = max(1, args.repeat)

    if "load" in only:
        ours, theirs, rss_ours, rss_theirs = [], [], [], []
        for _ in range(repeat):
            db = fresh_copy(base, work, "load.db")
            t, rss = run_process(ratebank(db, "data", "import", str(files.load_points)))
            ours.append(t)
            rss_ours.append(rss)
            floor_db = work / "floor.db"
            floor_db.unlink(missing_ok=True)
            t, rss = run_process([PYTHON, "-c", LOAD_FLOOR, str(floor_db), str(files.load_points)])
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
            start = time.perf_counter()
            fit_floor(full)
            floor.append(time.perf_counter() - start)
        if "fit-vs-naive" in only:
            report("fit-vs-naive", ours, naive)
        if "fit-vs-floor" in only:
            report("fit-vs-floor", ours, floor)

    if "export" in only:
        ours, theirs, rss_ours = [], [], []
        for _ in range(repeat):
            db = fresh_copy(full, work, "export.db")
            t1, r1 = run_process(ratebank(db, "estimate", "--keep-going", "--steric", "0.1"))
            t2, r2 = run_process(
                ratebank(db, "export", str(work / "mechanism"), "--leave-out-gaps")
            )
            ours.append(t1 + t2)
            rss_ours.append(max(r1, r2))
            t, _ = run_process([PYTHON, "-c", EXPORT_FLOOR, str(full), str(work / "floor.csv")])
            theirs.append(t)
        report("export", ours, theirs, f"; peak RSS ratebank {max(rss_ours):.0f} MB")

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


if __name__ == "__main__":
    main()
