"""Generate a SYNTHETIC large store for the benchmarks (not real chemistry data).

Species are the hydrocarbons C_xH_y (x = 1..30, y = 1..100) plus OH and H2O,
each with a made-up collision diameter and well depth. Reactions are
hydrogen transfers C_xH_y + C_uH_v -> C_xH_(y-1) + C_uH_(v+1) and
OH + C_xH_y -> H2O + C_xH_(y-1), so every equation balances. Every number
here is invented for timing; none of it describes a real reaction.

Scale "full": 100,000 reactions, 10,000 measurement sets of 10 points each
(1,000,000 points in one CSV), activation energies for the other reactions.
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


def generate(folder: Path, scale: str = "small", seed: int = 2026) -> Files:
    """Write species.csv, reactions.csv, measurements.csv and expressions.csv."""
    size = SCALES[scale]
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    species_path = folder / "species.csv"
    names = []
    with species_path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["name", "formula", "diameter_angstrom", "well_depth_K", "source"])
        for x in range(1, 31):
            for y in range(1, 101):
                name = f"C{x}H{y}"
                names.append((x, y))
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
