"""The floors: the same work as ratebank, in the plainest code a careful user would write.

Each floor reads and writes the tables of a ratebank store (a copy of the benchmark's
template, made by ``ratebank init`` and the imports), so it writes into the same columns,
checks, index and foreign keys as ratebank does; it uses only ``csv``, ``json``,
``sqlite3`` and numpy. Every provenance record is the same fixed-size JSON of about 200
bytes, written with ``json.dumps``; every history row goes into the store's history table.

Run as a child process, as ratebank's commands are::

    python floors.py load STORE POINTS.csv
    python floors.py estimate-export STORE OUT.csv

``fit`` is called in the benchmark's own process, as ``ratebank``'s fit is.
The data are SYNTHETIC (``generate.py``).
"""

from __future__ import annotations

import csv
import datetime
import getpass
import json
import math
import sqlite3
import sys

N_A = 6.02214076e23  # Avogadro constant [mol-1]
k_B = 1.380649e-23  # Boltzmann constant [J K-1]
R = 8.314462618  # molar gas constant [J mol-1 K-1]

#: k units the load floor reads: the order they belong to and the factor to SI
#: ((m3 mol-1)^(order-1) s-1).
K_UNITS = {
    "s-1": (1, 1.0),
    "cm3/molecule/s": (2, 1e-6 * N_A),
    "cm3/mol/s": (2, 1e-6),
    "m3/mol/s": (2, 1.0),
    "cm6/molecule2/s": (3, (1e-6 * N_A) ** 2),
}
T_RANGE_K = (10.0, 10000.0)
POINTS_PER_INSERT = 100_000


def connect(path: str) -> sqlite3.Connection:
    connection = sqlite3.connect(path)
    connection.execute("PRAGMA foreign_keys = ON")
    return connection


def now() -> str:
    """UTC time as the store keeps it."""
    return datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M:%S.%f")


def history(connection: sqlite3.Connection, rows: list[tuple[str, str, str, str, str]]) -> None:
    connection.executemany(
        "INSERT INTO audit (at, author, action, target, detail) VALUES (?, ?, ?, ?, ?)", rows
    )


# --------------------------------------------------------------------------- load


def load(db: str, path: str) -> int:
    """Validate the measured points of ``path`` row by row and write them, all or nothing.

    Each number must be finite and positive, T within 10-10,000 K, the set's reaction
    known and its k unit of the reaction's order, every row of a set naming the same
    reaction and unit, and a set not stored before. Sets are created as they are met;
    points go in by ``executemany`` in batches; one transaction; one history row.
    """
    connection = connect(db)
    reactions = {
        key: (rid, order)
        for rid, key, order in connection.execute(
            "SELECT id, key, reaction_order FROM reaction WHERE withdrawn_at IS NULL"
        )
    }
    stored = {name for (name,) in connection.execute("SELECT name FROM measurement_set")}
    at = now()
    sets: dict[str, tuple[int, str, str, float]] = {}
    problems: list[str] = []
    points: list[tuple[int, float, float, float]] = []
    n_points = 0
    insert_set = (
        "INSERT INTO measurement_set (name, reaction_id, original_k_units, source_file, "
        "created_at) VALUES (?, ?, ?, ?, ?)"
    )
    insert_points = (
        "INSERT INTO point (set_id, temperature, rate_constant, relative_uncertainty) "
        "VALUES (?, ?, ?, ?)"
    )
    with connection, open(path, newline="", encoding="utf-8") as handle:
        rows = csv.reader(handle)
        header = next(rows)
        if header != ["set", "reaction", "T_K", "k", "k_units", "k_uncertainty"]:
            raise SystemExit(f"{path}: unexpected columns {header}")
        for line, (name, key, T_text, k_text, unit, u_text) in enumerate(rows, start=2):
            try:
                T, k, u = float(T_text), float(k_text), float(u_text)
            except ValueError:
                problems.append(f"line {line}: a number is not a number")
                continue
            if not (math.isfinite(T) and T_RANGE_K[0] <= T <= T_RANGE_K[1]):
                problems.append(f"line {line}: T {T_text} K outside {T_RANGE_K}")
            if not (math.isfinite(k) and k > 0):
                problems.append(f"line {line}: k {k_text} must be finite and positive")
            if not (math.isfinite(u) and u > 0):
                problems.append(f"line {line}: uncertainty {u_text} must be finite and positive")
            known = sets.get(name)
            if known is None:
                if key not in reactions:
                    problems.append(f"line {line}: unknown reaction {key}")
                    continue
                if name in stored:
                    problems.append(f"line {line}: set {name} is already stored")
                rid, order = reactions[key]
                unit_order, factor = K_UNITS.get(unit, (0, 0.0))
                if unit_order != order:
                    problems.append(f"line {line}: {unit} is not a k unit of order {order}")
                set_id = connection.execute(insert_set, (name, rid, unit, path, at)).lastrowid
                known = sets[name] = (set_id, key, unit, factor)  # type: ignore[assignment]
            elif known[1] != key or known[2] != unit:
                problems.append(f"line {line}: set {name} changes its reaction or unit")
            points.append((known[0], T, k * known[3], u))
            if len(points) == POINTS_PER_INSERT:
                connection.executemany(insert_points, points)
                n_points += len(points)
                points.clear()
        if problems:  # leaving the block by an exception rolls everything back
            raise SystemExit("\n".join(problems[:20]))
        connection.executemany(insert_points, points)
        n_points += len(points)
        detail = json.dumps({"sets": len(sets), "points": n_points})
        history(connection, [(at, getpass.getuser(), "data.import", path, detail)])
    connection.close()
    return n_points


# --------------------------------------------------------------------------- fit

POINTS_SQL = (
    "SELECT ms.reaction_id, p.temperature, p.rate_constant, p.relative_uncertainty "
    "FROM point p JOIN measurement_set ms ON ms.id = p.set_id "
    "WHERE p.withdrawn_at IS NULL AND ms.withdrawn_at IS NULL ORDER BY ms.reaction_id, p.id"
)


def read_points(connection: sqlite3.Connection):  # type: ignore[no-untyped-def]
    """(reaction id, T [K], k [SI], relative uncertainty) of every point in use, as arrays."""
    import numpy as np

    rows = connection.execute(POINTS_SQL).fetchall()
    group, T, k, u = (np.array(c) for c in zip(*rows, strict=True))
    return group.astype(np.int64), T.astype(float), k.astype(float), u.astype(float)


def fit(db: str) -> int:
    """Fit ln k = ln A + n ln T - Ea/RT to every reaction's points in one batched weighted
    solve (weights 1/u^2), then write each fit (A, n, Ea, T range, its covariance in the
    provenance) with ``executemany`` and one history row each, in one transaction."""
    import numpy as np

    connection = connect(db)
    group, T, k, u = read_points(connection)
    reactions, index = np.unique(group, return_inverse=True)
    m = reactions.size
    w = 1.0 / u**2
    X = np.stack([np.ones_like(T), np.log(T), -1.0 / (R * T)], axis=1)
    y = np.log(k)
    normal = np.zeros((m, 3, 3))
    rhs = np.zeros((m, 3))
    for a in range(3):
        rhs[:, a] = np.bincount(index, weights=w * X[:, a] * y, minlength=m)
        for b in range(3):
            normal[:, a, b] = np.bincount(index, weights=w * X[:, a] * X[:, b], minlength=m)
    ln_A, n, Ea = np.linalg.solve(normal, rhs[..., None])[..., 0].T
    covariance = np.linalg.inv(normal)
    starts = np.flatnonzero(np.r_[True, np.diff(index) != 0])
    T_min, T_max = np.minimum.reduceat(T, starts), np.maximum.reduceat(T, starts)
    counts = np.bincount(index, minlength=m)
    upper = covariance[:, [0, 0, 0, 1, 1, 2], [0, 1, 2, 1, 2, 2]]
    keys = dict(connection.execute("SELECT id, key FROM reaction"))
    at, author = now(), getpass.getuser()
    columns = zip(
        reactions.tolist(),
        np.exp(ln_A).tolist(),
        n.tolist(),
        Ea.tolist(),
        T_min.tolist(),
        T_max.tolist(),
        counts.tolist(),
        upper.tolist(),
        strict=True,
    )
    rows, audit = [], []
    with connection:
        (first,) = connection.execute("SELECT coalesce(max(id), 0) + 1 FROM expression").fetchone()
        for i, (rid, A_i, n_i, Ea_i, low, high, count, cov) in enumerate(columns):
            provenance = {
                "method": "weighted least squares in ln k",
                "n_points": count,
                "covariance_lnA_n_Ea": cov,
            }
            rows.append(
                (
                    rid,
                    "measured-fit",
                    A_i,
                    n_i,
                    Ea_i,
                    low,
                    high,
                    json.dumps(provenance),
                    False,
                    1,
                    at,
                    author,
                )
            )
            detail = json.dumps({"expression": first + i, "points": count})
            audit.append((at, author, "fit", keys[rid], detail))
        connection.executemany(
            "INSERT INTO expression (reaction_id, origin, a, n, ea, t_min, t_max, provenance, "
            "recommended, version, created_at, created_by) "
            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            rows,
        )
        history(connection, audit)
    connection.close()
    return int(m)


# --------------------------------------------------------------------------- estimate + export


def estimate_export(db: str, out: str, steric: float = 0.1) -> int:
    """Estimate A of every bimolecular reaction that has only an Ea, store each estimate
    with its provenance and a history row, commit, then write the mechanism CSV.

    Hard-sphere collision theory at T_ref = sqrt(T_min T_max) (the middle of the stated
    range on a log scale): k = P sigma sqrt(8 k_B T / (pi mu)) N_A exp(-E0/RT), written
    as A T^(1/2) exp(-E0/RT) with E0 = max(0, Ea - R T_ref / 2), halved for identical
    partners. CSV in cm3/mol/s and kJ/mol, sorted by key.
    """
    import numpy as np

    connection = connect(db)
    species = {
        i: (name, mass, diameter)
        for i, name, mass, diameter in connection.execute(
            "SELECT id, name, molar_mass, diameter FROM species WHERE withdrawn_at IS NULL"
        )
    }
    reactants: dict[int, list[int]] = {}
    for rid, sid, coefficient in connection.execute(
        "SELECT reaction_id, species_id, coefficient FROM participant WHERE role = 'reactant'"
    ):
        reactants.setdefault(rid, []).extend([sid] * coefficient)
    reactions = {
        rid: (key, equation)
        for rid, key, equation in connection.execute(
            "SELECT id, key, equation FROM reaction WHERE reaction_order = 2 "
            "AND NOT third_body AND withdrawn_at IS NULL"
        )
    }
    partial = [
        row
        for row in connection.execute(
            "SELECT id, reaction_id, ea, t_min, t_max FROM expression WHERE a IS NULL "
            "AND withdrawn_at IS NULL AND origin IN ('literature', 'manual') ORDER BY reaction_id"
        )
        if row[1] in reactions and len(reactants.get(row[1], ())) == 2
    ]
    source, rid, Ea, T_min, T_max = (np.array(c) for c in zip(*partial, strict=True))
    a = np.array([reactants[r][0] for r in rid.tolist()])
    b = np.array([reactants[r][1] for r in rid.tolist()])
    mass_a = np.array([species[s][1] for s in a.tolist()])
    mass_b = np.array([species[s][1] for s in b.tolist()])
    diameter = np.array([(species[i][2] + species[j][2]) / 2 for i, j in zip(a, b, strict=True)])
    T_ref = np.sqrt(T_min * T_max)
    mu = mass_a * mass_b / (mass_a + mass_b) / N_A  # [kg]
    z = math.pi * diameter**2 * np.sqrt(8 * k_B * T_ref / (math.pi * mu)) * N_A  # [m3 mol-1 s-1]
    z = np.where(a == b, z / 2, z)
    A = steric * z / np.sqrt(T_ref)
    E0 = np.maximum(0.0, Ea - R * T_ref / 2)
    reference = f"collision theory (hard-sphere) x steric factor {steric:g} (given)"
    ids = rid.tolist()
    at, author = now(), getpass.getuser()
    columns = zip(
        ids,
        source.tolist(),
        A.tolist(),
        E0.tolist(),
        T_min.tolist(),
        T_max.tolist(),
        T_ref.tolist(),
        z.tolist(),
        strict=True,
    )
    rows, audit = [], []
    with connection:
        connection.execute(
            "DELETE FROM expression WHERE origin = 'collision-estimate' AND NOT recommended"
        )
        (first,) = connection.execute("SELECT coalesce(max(id), 0) + 1 FROM expression").fetchone()
        for i, (r, from_id, A_i, E0_i, low, high, T_i, z_i) in enumerate(columns):
            provenance = {
                "method": "hard-sphere collision theory times a steric factor",
                "steric_factor": steric,
                "T_ref": T_i,
                "collision_rate_SI": z_i,
                "threshold_J_per_mol": E0_i,
                "activation_energy_expression_id": from_id,
            }
            rows.append(
                (
                    r,
                    "collision-estimate",
                    A_i,
                    0.5,
                    E0_i,
                    low,
                    high,
                    10.0,
                    0.0,
                    reference,
                    json.dumps(provenance),
                    False,
                    1,
                    at,
                    author,
                )
            )
            detail = json.dumps({"expression": first + i, "steric_factor": steric})
            audit.append((at, author, "estimate", reactions[r][0], detail))
        connection.executemany(
            "INSERT INTO expression (reaction_id, origin, a, n, ea, t_min, t_max, "
            "uncertainty_factor, uncertainty_g, reference, provenance, recommended, version, "
            "created_at, created_by) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            rows,
        )
        history(connection, audit)
    with open(out, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(
            [
                "key",
                "equation",
                "order",
                "A",
                "n",
                "Ea",
                "k_units",
                "Ea_units",
                "T_min_K",
                "T_max_K",
                "origin",
                "steric_factor",
                "uncertainty_factor",
                "references",
            ]
        )
        for r, _, A_i, _, E0_i, low, high, *_ in sorted(rows, key=lambda row: reactions[row[0]][0]):
            key, equation = reactions[r]
            writer.writerow(
                [
                    key,
                    equation,
                    2,
                    A_i * 1000000.0,
                    0.5,
                    E0_i / 1000,
                    "cm3/mol/s",
                    "kJ/mol",
                    low,
                    high,
                    "collision-estimate",
                    steric,
                    10.0,
                    reference,
                ]
            )
    with connection:
        detail = json.dumps({"rows": len(rows)})
        history(connection, [(now(), author, "export", out, detail)])
    connection.close()
    return len(rows)


if __name__ == "__main__":
    what, *arguments = sys.argv[1:]
    {"load": load, "estimate-export": estimate_export}[what](*arguments)
