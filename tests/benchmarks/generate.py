"""Generate a SYNTHETIC large store for the benchmarks (not real chemistry data).

Species are the hydrocarbons C_xH_y (x = 1..30, y = 1..100) plus OH and H2O,
each with a made-up collision diameter and well depth. Reactions are
hydrogen transfers C_xH_y + C_uH_v -> C_xH_(y-1) + C_uH_(v+1) and
OH + C_xH_y -> H2O + C_xH_(y-1), so every equation balances. Every number
here is invented for timing; none of it describes a real reaction.

Scale "full": 100,000 reactions, 10,000 measurement sets of 10 points each
(1,000,000 points in one CSV), activation energies for the other reactions.

The scaling benchmark's stores (:func:`generate_job`, sizes in :data:`JOB_SIZES`) have
the same species and kinds of reaction, drawn with whole-array operations so that a
million reactions take seconds: one measured set of 10 points per 10 reactions, and an
activation energy for every reaction without a set.
"""

from __future__ import annotations

import argparse
import csv
from dataclasses import dataclass
from pathlib import Path

import numpy as np

#: ``sets`` x ``points_per_set`` points are fitted; ``load_points`` points (one
#: set of 10 per reaction, as many reactions as needed) are imported by the load
#: benchmark.
SCALES = {
    "full": {"reactions": 100_000, "sets": 10_000, "points_per_set": 10, "load_points": 1_000_000},
    "medium": {"reactions": 20_000, "sets": 2_000, "points_per_set": 10, "load_points": 200_000},
    "small": {"reactions": 5_000, "sets": 1_000, "points_per_set": 10, "load_points": 50_000},
}


#: Reactions in the scaling benchmark's stores, by ``run.py --scale``: each size's cost
#: per reaction is compared with that of the size below it.
JOB_SIZES = {
    "small": (1_000, 10_000),
    "medium": (10_000, 100_000),
    "full": (10_000, 100_000, 1_000_000),
}
#: Changed whenever generate_job writes different files (cached files are then rebuilt).
JOB_DATA_VERSION = 1


@dataclass(frozen=True)
class Files:
    folder: Path
    species: Path
    reactions: Path
    measurements: Path
    load_points: Path
    expressions: Path
    n_reactions: int
    n_sets: int
    n_points: int


def write_species(folder: Path) -> Path:
    """species.csv: C_xH_y (x = 1..30, y = 1..100), OH and H2O, with invented data."""
    path = folder / "species.csv"
    with path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["name", "formula", "diameter_angstrom", "well_depth_K", "source"])
        for x in range(1, 31):
            for y in range(1, 101):
                name = f"C{x}H{y}"
                diameter = 3.0 + 0.12 * x + 0.01 * y
                writer.writerow(
                    [
                        name,
                        name,
                        f"{diameter:.4f}",
                        f"{80 + 8 * x:.1f}",
                        "synthetic benchmark species",
                    ]
                )
        writer.writerow(["OH", "HO", "3.147", "79.8", "synthetic benchmark species"])
        writer.writerow(["H2O", "H2O", "2.641", "809.1", "synthetic benchmark species"])
    return path


def generate(folder: Path, scale: str = "small", seed: int = 2026) -> Files:
    """Write species.csv, reactions.csv, measurements.csv and expressions.csv."""
    size = SCALES[scale]
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    species_path = write_species(folder)

    reactions_path = folder / "reactions.csv"
    seen: set[tuple[int, int, int, int]] = set()
    keys: list[str] = []
    with reactions_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["key", "equation", "class"])
        n_oh = size["reactions"] // 50
        count = 0
        for x in range(1, 31):
            for y in range(2, 101):
                if count >= n_oh:
                    break
                key = f"r{count}"
                writer.writerow([key, f"OH + C{x}H{y} -> H2O + C{x}H{y - 1}", "oh-transfer"])
                keys.append(key)
                count += 1
        while count < size["reactions"]:
            x, u = rng.integers(1, 31, size=2)
            y = int(rng.integers(2, 101))
            v = int(rng.integers(1, 100))
            if (x, y) == (u, v) or (x, y) == (u, v + 1):
                continue
            signature = (int(x), y, int(u), v)
            if signature in seen:
                continue
            seen.add(signature)
            key = f"r{count}"
            writer.writerow(
                [key, f"C{x}H{y} + C{u}H{v} -> C{x}H{y - 1} + C{u}H{v + 1}", f"transfer-{x % 7}"]
            )
            keys.append(key)
            count += 1

    n_sets, per_set = size["sets"], size["points_per_set"]
    measured = rng.choice(len(keys), size=n_sets, replace=False)
    measurements_path = folder / "measurements.csv"
    A = 10 ** rng.uniform(-12.5, -11.0, n_sets)
    E_over_R = rng.uniform(500.0, 5000.0, n_sets)
    with measurements_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["set", "reaction", "T_K", "k", "k_units", "k_uncertainty"])
        T = np.linspace(300.0, 1200.0, per_set)
        for s, index in enumerate(measured):
            k = A[s] * np.exp(-E_over_R[s] / T) * np.exp(0.1 * rng.standard_normal(per_set))
            key = keys[index]
            for t, value in zip(T, k, strict=True):
                writer.writerow([f"s{s}", key, f"{t:.2f}", f"{value:.6e}", "cm3/molecule/s", "0.1"])

    load_path = folder / "load-points.csv"
    n_load_sets = size["load_points"] // per_set
    with load_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["set", "reaction", "T_K", "k", "k_units", "k_uncertainty"])
        T = np.linspace(300.0, 1200.0, per_set)
        a = 10 ** rng.uniform(-12.5, -11.0, n_load_sets)
        b = rng.uniform(500.0, 5000.0, n_load_sets)
        for s in range(n_load_sets):
            key = keys[s % len(keys)]
            k = a[s] * np.exp(-b[s] / T)
            for t, value in zip(T, k, strict=True):
                writer.writerow(
                    [f"load{s}", key, f"{t:.2f}", f"{value:.6e}", "cm3/molecule/s", "0.1"]
                )

    expressions_path = folder / "expressions.csv"
    measured_set = set(int(i) for i in measured)
    with expressions_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["reaction", "Ea", "Ea_units", "T_min_K", "T_max_K", "reference"])
        for index, key in enumerate(keys):
            if index in measured_set:
                continue
            writer.writerow(
                [
                    key,
                    f"{rng.uniform(5.0, 80.0):.4f}",
                    "kJ/mol",
                    "300",
                    "1500",
                    "synthetic benchmark activation energy",
                ]
            )
    return Files(
        folder,
        species_path,
        reactions_path,
        measurements_path,
        load_path,
        expressions_path,
        len(keys),
        n_sets,
        n_sets * per_set,
    )


@dataclass(frozen=True)
class JobFiles:
    folder: Path
    species: Path
    reactions: Path
    measurements: Path
    expressions: Path
    n_reactions: int
    n_sets: int
    n_points: int


def generate_job(folder: Path, n_reactions: int, seed: int = 2026) -> JobFiles:
    """The input files of the whole job for ``n_reactions`` reactions (SYNTHETIC).

    As :func:`generate`, but every column is drawn as an array: the OH transfers
    first (one in 50, at most one per hydrocarbon), then distinct hydrogen transfers
    between two hydrocarbons; a set of 10 points on every 10th reaction, an
    activation energy on every other one.
    """
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    species_path = write_species(folder)

    n_oh = min(n_reactions // 50, 30 * 99)
    oh_x, oh_y = np.divmod(np.arange(n_oh), 99)
    oh_x, oh_y = oh_x + 1, oh_y + 2
    # (x, y, u, v): C_xH_y + C_uH_v -> C_xH_(y-1) + C_uH_(v+1), each drawn once
    need = n_reactions - n_oh
    draws = np.empty((0, 4), dtype=np.int64)
    while len(draws) < need:
        more = 2 * (need - len(draws)) + 1000
        x, u = rng.integers(1, 31, size=(2, more))
        y, v = rng.integers(2, 101, size=more), rng.integers(1, 100, size=more)
        keep = ~(((x == u) & (y == v)) | ((x == u) & (y == v + 1)))
        draws = np.concatenate([draws, np.stack([x, y, u, v], axis=1)[keep]])
        code = ((draws[:, 0] * 101 + draws[:, 1]) * 31 + draws[:, 2]) * 101 + draws[:, 3]
        _, first = np.unique(code, return_index=True)
        draws = draws[np.sort(first)]
    x, y, u, v = draws[:need].T
    keys = [f"r{i}" for i in range(n_reactions)]
    reactions_path = folder / "reactions.csv"
    with reactions_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["key", "equation", "class"])
        writer.writerows(
            (keys[i], f"OH + C{a}H{b} -> H2O + C{a}H{b - 1}", "oh-transfer")
            for i, (a, b) in enumerate(zip(oh_x.tolist(), oh_y.tolist(), strict=True))
        )
        writer.writerows(
            (
                keys[n_oh + i],
                f"C{a}H{b} + C{c}H{d} -> C{a}H{b - 1} + C{c}H{d + 1}",
                f"transfer-{a % 7}",
            )
            for i, (a, b, c, d) in enumerate(
                zip(x.tolist(), y.tolist(), u.tolist(), v.tolist(), strict=True)
            )
        )

    per_set = 10
    measured = np.arange(0, n_reactions, 10)
    n_sets = measured.size
    T = np.linspace(300.0, 1200.0, per_set)
    A = 10 ** rng.uniform(-12.5, -11.0, (n_sets, 1))
    E_over_R = rng.uniform(500.0, 5000.0, (n_sets, 1))
    k = A * np.exp(-E_over_R / T) * np.exp(0.1 * rng.standard_normal((n_sets, per_set)))
    T_text = [f"{t:.2f}" for t in T]
    measurements_path = folder / "measurements.csv"
    with measurements_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["set", "reaction", "T_K", "k", "k_units", "k_uncertainty"])
        for s, (index, values) in enumerate(zip(measured.tolist(), k.tolist(), strict=True)):
            writer.writerows(
                (f"s{s}", keys[index], t, f"{value:.6e}", "cm3/molecule/s", "0.1")
                for t, value in zip(T_text, values, strict=True)
            )

    others = np.setdiff1d(np.arange(n_reactions), measured)
    Ea = rng.uniform(5.0, 80.0, others.size)
    expressions_path = folder / "expressions.csv"
    with expressions_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["reaction", "Ea", "Ea_units", "T_min_K", "T_max_K", "reference"])
        writer.writerows(
            (keys[i], f"{e:.4f}", "kJ/mol", "300", "1500", "synthetic benchmark activation energy")
            for i, e in zip(others.tolist(), Ea.tolist(), strict=True)
        )
    return JobFiles(
        folder,
        species_path,
        reactions_path,
        measurements_path,
        expressions_path,
        n_reactions,
        n_sets,
        n_sets * per_set,
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("folder", type=Path)
    parser.add_argument("--scale", choices=sorted(SCALES), default="small")
    args = parser.parse_args()
    files = generate(args.folder, args.scale)
    print(
        f"{files.n_reactions} reactions, {files.n_sets} sets, {files.n_points} points "
        f"in {files.folder}"
    )


if __name__ == "__main__":
    main()
