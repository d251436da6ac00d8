"""Benchmark of ``ratebank review`` on a SYNTHETIC store of 1,000 reactions.

Usage::

    python tests/benchmarks/review.py            # 1,000 reactions, 200 of them measured

The store is made as for the other benchmarks (``generate.py``: invented
hydrogen transfers; every number is made up), fitted and estimated; then the
review book is written ``--repeat`` times. The baseline, timed alternately in
the same run, is the naive way to draw the same plots: a loop that makes a new
matplotlib figure per reaction, draws its measured points and one line, and
saves it as SVG. The line printed is::

    review: ratebank X s, baseline Y s, ratio R; N pages, M MB, P plots

Machines here are shared: compare ratios and sizes, not seconds.
"""

from __future__ import annotations

import argparse
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from generate import SCALES, generate  # noqa: E402
from run import ratebank, run_process  # noqa: E402

SCALES.setdefault(
    "review", {"reactions": 1_000, "sets": 200, "points_per_set": 10, "load_points": 0}
)

NAIVE_PLOTS = """
import sqlite3, sys
from pathlib import Path
import matplotlib
matplotlib.use("Agg")
import matplotlib.pyplot as plt
import numpy as np
connection = sqlite3.connect(sys.argv[1])
rows = connection.execute(
    "SELECT r.key, p.temperature, p.rate_constant FROM reaction r "
    "LEFT JOIN measurement_set s ON s.reaction_id = r.id LEFT JOIN point p ON p.set_id = s.id "
    "ORDER BY r.key").fetchall()
by_key = {}
for key, T, k in rows:
    by_key.setdefault(key, []).append((T, k))
out = Path(sys.argv[2]); out.mkdir(exist_ok=True)
for key, points in by_key.items():
    figure, axes = plt.subplots(figsize=(8.2, 4.6))
    points = [(T, k) for T, k in points if T is not None]
    if points:
        T, k = np.array(points).T
        axes.plot(1000 / T, np.log10(k), "o")
    grid = np.linspace(300, 2000, 200)
    axes.plot(1000 / grid, -11 - 1000 / grid)
    axes.set_title(key); axes.legend(["points", "expression"])
    figure.savefig(out / f"{key}.svg")
    plt.close(figure)
"""


def main() -> None:
    parser = argparse.ArgumentParser(description="review-book benchmark (synthetic data)")
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--workdir", type=Path, default=None)
    args = parser.parse_args()
    work = args.workdir or Path(tempfile.gettempdir()) / "ratebank-bench-review"
    work.mkdir(parents=True, exist_ok=True)
    db = work / "review.db"
    if not db.exists():
        files = generate(work / "data", "review")
        steps = [
            ["init"],
            ["species", "import", str(files.species)],
            ["reactions", "import", str(files.reactions)],
            ["data", "import", str(files.measurements)],
            ["expressions", "import", str(files.expressions)],
            ["fit"],
            ["estimate", "--steric", "0.1", "--keep-going"],
        ]
        for step in steps:
            run_process(ratebank(db, *step))
    ours, theirs = [], []
    book = work / "book"
    for _ in range(max(1, args.repeat)):
        t, _ = run_process(ratebank(db, "review", str(book)))
        ours.append(t)
        naive = work / "naive"
        shutil.rmtree(naive, ignore_errors=True)
        start = time.perf_counter()
        run_process([sys.executable, "-c", NAIVE_PLOTS, str(db), str(naive)])
        theirs.append(time.perf_counter() - start)
    pages = len(list(book.rglob("*.html")))
    plots = sum(1 for page in (book / "reactions").glob("*.html") if "<svg" in page.read_text())
    size = sum(p.stat().st_size for p in book.rglob("*") if p.is_file()) / 1e6
    a, b = statistics.median(ours), statistics.median(theirs)
    print(
        f"review: ratebank {a:.1f} s, baseline {b:.1f} s, ratio {a / b:.2f}; "
        f"{pages} pages, {size:.0f} MB, {plots} plots"
    )


if __name__ == "__main__":
    main()
