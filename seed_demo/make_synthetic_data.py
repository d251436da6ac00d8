"""Write the synthetic rate data of the ratebank demo and check the whole demo.

Every rate number this script produces is invented: the "measured" k(T) sets are drawn
from made-up Arrhenius laws with log-normal scatter, and the "literature" expressions are
made-up review values. They must not be used for any real purpose. Only the species data
in species.csv (molar masses, collision diameters, critical constants) are real, with their
sources named in that file.

Usage (from the project root)::

    python seed_demo/make_synthetic_data.py           # write measurements.csv, expressions.csv
    python seed_demo/make_synthetic_data.py --check   # only validate the four CSV files

The output is deterministic (a fixed numpy seed), so running the script again reproduces
the files byte for byte. It needs only numpy and scipy; it does not import ratebank.
"""

from __future__ import annotations

import argparse
import csv
import math
import re
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from scipy import constants

HERE = Path(__file__).resolve().parent
SEED = 20240917

# fmt: off
SPECIES_COLUMNS = [
    "name", "formula", "molar_mass_g_per_mol", "diameter_angstrom", "diameter_kind",
    "well_depth_K", "critical_temperature_K", "critical_pressure_bar",
    "boiling_volume_cm3_per_mol", "source",
]
REACTION_COLUMNS = ["key", "equation", "class", "notes"]
MEASUREMENT_COLUMNS = [
    "set", "reaction", "T_K", "k", "k_units", "k_uncertainty", "uncertainty_kind",
    "reference", "method", "pressure_bar", "bath_gas",
]
EXPRESSION_COLUMNS = [
    "reaction", "A", "n", "Ea", "Ea_units", "k_units", "T_min_K", "T_max_K",
    "uncertainty_factor", "reference",
]
# fmt: on

# k units by reaction order, and their factor from the molecular unit of that order.
K_UNITS = {
    1: {"s-1": 1.0},
    2: {
        "cm3/molecule/s": 1.0,
        "cm3/mol/s": constants.N_A,
        "dm3/mol/s": constants.N_A * 1e-3,
    },
    3: {"cm6/molecule2/s": 1.0},
}
# Activation-energy units -> factor to J/mol ("K" means E/R).
EA_UNITS = {"kJ/mol": 1e3, "kcal/mol": 4184.0, "K": constants.R}

# IUPAC abridged standard atomic weights (2021), enough for this demo's elements.
ATOMIC_WEIGHT = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Ar": 39.95, "He": 4.0026}


# --------------------------------------------------------------------------------------
# The invented "true" laws behind the measured sets.
# k = A (T/300 K)^n exp(-E_over_R / T), A in the molecular unit of the reaction's order
# (cm3 molecule-1 s-1, s-1 or cm6 molecule-2 s-1). All values are made up.
# --------------------------------------------------------------------------------------
TRUE_LAWS: dict[str, tuple[float, float, float]] = {
    "oh-ch4": (0.9e-12, 2.0, 1500.0),
    "oh-c2h6": (4.4e-12, 1.6, 1060.0),
    "oh-c3h8": (3.6e-12, 1.7, 560.0),
    "oh-h2": (2.9e-12, 1.5, 1950.0),
    "h-ch4": (2.6e-12, 2.0, 4600.0),
    "h-c2h6": (8.5e-12, 1.7, 3900.0),
    "h-c3h8": (1.4e-11, 1.5, 3500.0),
    "o-ch4": (3.6e-12, 1.6, 4450.0),
    "o-c2h6": (4.5e-12, 1.7, 2800.0),
    "o-h2": (1.6e-12, 2.1, 3250.0),
    "o-o3": (7.2e-12, 0.0, 2110.0),
    "no-o3": (2.6e-12, 0.0, 1420.0),
    "o-no2": (5.4e-12, 0.0, 75.0),
    "h-o2": (2.9e-10, 0.0, 8250.0),
    "oh-co": (1.5e-13, 1.35, 130.0),
    "c2h5-decomp": (4.0e12, 0.0, 17800.0),
    "h-o2-m": (3.7e-32, -1.05, 0.0),
}


@dataclass(frozen=True)
class SetPlan:
    set_id: str
    reaction: str
    lab: str
    series: int
    method: str
    t_range: tuple[float, float]
    n_points: int
    k_units: str
    uncertainty: float  # relative (fraction) for both kinds; absolute = fraction * k
    kind: str  # "relative" or "absolute"
    pressure: tuple[float, float] | None  # bar; a range means it varies from point to point
    bath_gas: str
    bias: float  # the lab's systematic offset from the true law (invented)


def torr(pressure: float) -> tuple[float, float]:
    """A constant pressure given in Torr, as a (low, high) range in bar."""
    value = pressure * constants.torr / constants.bar
    return value, value


FP_RF = "flash photolysis / resonance fluorescence"
LFP_LIF = "laser flash photolysis / laser-induced fluorescence"
ST_RA = "shock tube / resonance absorption"
ST_LA = "shock tube / laser absorption"
DF_RF = "discharge flow / resonance fluorescence"
DF_MS = "discharge flow / mass spectrometry"
PP_MS = "pulsed photolysis / photoionization mass spectrometry"

# fmt: off
SETS: list[SetPlan] = [
    SetPlan("s01-oh-ch4-lab-a", "oh-ch4", "Lab A", 3, LFP_LIF, (250, 420), 10,
            "cm3/molecule/s", 0.12, "relative", torr(50), "He", 1.00),
    SetPlan("s02-oh-ch4-lab-b", "oh-ch4", "Lab B", 7, ST_LA, (900, 1600), 8,
            "cm3/mol/s", 0.25, "relative", (1.2, 2.4), "Ar", 1.08),
    SetPlan("s03-oh-c2h6-lab-a", "oh-c2h6", "Lab A", 4, LFP_LIF, (240, 400), 9,
            "cm3/molecule/s", 0.10, "relative", None, "", 0.97),
    SetPlan("s04-oh-c3h8-lab-c", "oh-c3h8", "Lab C", 2, DF_RF, (260, 410), 8,
            "cm3/molecule/s", 0.15, "absolute", torr(2), "He", 1.04),
    SetPlan("s05-oh-h2-lab-c", "oh-h2", "Lab C", 5, DF_RF, (250, 480), 11,
            "dm3/mol/s", 0.15, "relative", torr(2), "He", 0.95),
    SetPlan("s06-h-ch4-lab-b", "h-ch4", "Lab B", 2, ST_RA, (850, 1700), 9,
            "cm3/mol/s", 0.25, "relative", (1.5, 3.0), "Ar", 1.00),
    SetPlan("s07-h-c2h6-lab-b", "h-c2h6", "Lab B", 3, ST_RA, (1100, 1700), 8,
            "cm3/mol/s", 0.20, "relative", (1.5, 3.0), "Ar", 1.06),
    SetPlan("s08-h-c2h6-lab-d", "h-c2h6", "Lab D", 1, PP_MS, (600, 1000), 7,
            "dm3/mol/s", 0.22, "relative", torr(10), "He", 0.93),
    SetPlan("s09-h-c3h8-lab-d", "h-c3h8", "Lab D", 2, PP_MS, (700, 1300), 8,
            "dm3/mol/s", 0.20, "relative", torr(10), "He", 1.00),
    SetPlan("s10-o-ch4-lab-b", "o-ch4", "Lab B", 4, ST_RA, (600, 1800), 10,
            "cm3/mol/s", 0.25, "relative", (1.0, 2.0), "Ar", 1.00),
    SetPlan("s11-o-c2h6-lab-d", "o-c2h6", "Lab D", 3, PP_MS, (500, 1000), 9,
            "dm3/mol/s", 0.18, "relative", torr(10), "He", 1.05),
    SetPlan("s12-o-h2-lab-c", "o-h2", "Lab C", 6, DF_RF, (400, 900), 10,
            "cm3/molecule/s", 0.15, "relative", torr(2), "He", 1.00),
    SetPlan("s13-o-h2-lab-b", "o-h2", "Lab B", 5, ST_RA, (900, 1500), 7,
            "cm3/mol/s", 0.25, "relative", (1.2, 2.5), "Ar", 1.10),
    SetPlan("s14-o-o3-lab-a", "o-o3", "Lab A", 5, FP_RF, (230, 400), 9,
            "cm3/molecule/s", 0.12, "relative", torr(100), "N2", 1.00),
    SetPlan("s15-no-o3-lab-a", "no-o3", "Lab A", 6, FP_RF, (220, 380), 9,
            "cm3/molecule/s", 0.10, "relative", torr(100), "N2", 1.00),
    SetPlan("s16-no-o3-lab-c", "no-o3", "Lab C", 1, DF_MS, (250, 360), 6,
            "dm3/mol/s", 0.15, "relative", torr(3), "He", 0.94),
    SetPlan("s17-o-no2-lab-c", "o-no2", "Lab C", 3, DF_RF, (230, 420), 9,
            "cm3/molecule/s", 0.12, "relative", torr(2), "He", 1.00),
    SetPlan("s18-h-o2-lab-b", "h-o2", "Lab B", 1, ST_RA, (1050, 2000), 10,
            "cm3/mol/s", 0.20, "relative", (1.0, 3.5), "Ar", 1.00),
    SetPlan("s19-oh-co-lab-a", "oh-co", "Lab A", 2, LFP_LIF, (300, 800), 11,
            "cm3/molecule/s", 0.12, "relative", torr(50), "He", 1.00),
    SetPlan("s20-c2h5-decomp-lab-d", "c2h5-decomp", "Lab D", 4, PP_MS, (760, 980), 8,
            "s-1", 0.20, "relative", torr(10), "He", 1.00),
    SetPlan("s21-h-o2-m-lab-a", "h-o2-m", "Lab A", 8, FP_RF, (298, 750), 9,
            "cm6/molecule2/s", 0.15, "relative", torr(200), "Ar", 1.00),
]
# fmt: on

# --------------------------------------------------------------------------------------
# Invented "literature" expressions. A is in k_units times K^-n (k = A T^n exp(-Ea/RT),
# T in K). Rows with A = "" carry only an activation energy: the gaps to be filled from
# collision theory. All values are made up.
# --------------------------------------------------------------------------------------
REVIEW = "synthetic: invented review value"
COMPILED = "synthetic: invented Ea from a fictional compilation; A to be estimated"
# fmt: off
EXPRESSIONS: list[tuple[str, ...]] = [
    # reaction, A, n, Ea, Ea_units, k_units, T_min, T_max, uncertainty_factor, reference
    # -- complete expressions --
    ("oh-ch4", "7.9e-12", "0", "2120", "K", "cm3/molecule/s", "250", "400", "1.3",
     "synthetic: invented older review value (two-parameter, low T only)"),
    ("h-ho2-oh", "1.1e14", "0", "1.4", "kJ/mol", "cm3/mol/s", "300", "2000", "2", REVIEW),
    ("h-ho2-h2", "4.2e13", "0", "0.75", "kcal/mol", "cm3/mol/s", "300", "2000", "2", REVIEW),
    ("o-ho2", "2.6e-11", "0", "0", "K", "cm3/molecule/s", "220", "400", "1.5", REVIEW),
    ("oh-ho2", "4.3e-11", "0", "0", "K", "cm3/molecule/s", "250", "1000", "1.5", REVIEW),
    ("ho2-no", "8.5e-12", "0", "0", "K", "cm3/molecule/s", "220", "450", "1.3", REVIEW),
    ("oh-oh", "1.2e5", "2.3", "0", "kcal/mol", "cm3/mol/s", "250", "2000", "2", REVIEW),
    ("n-o2", "1.4e-11", "0", "3550", "K", "cm3/molecule/s", "300", "3000", "1.6", REVIEW),
    ("no3-no", "2.2e-11", "0", "0", "K", "cm3/molecule/s", "220", "420", "1.5", REVIEW),
    ("hco-h", "7.2e13", "0", "0", "kJ/mol", "cm3/mol/s", "300", "2500", "2", REVIEW),
    ("hco-oh", "3.0e10", "0", "0", "kJ/mol", "dm3/mol/s", "300", "2500", "3", REVIEW),
    ("hco-o", "3.1e13", "0", "0", "kcal/mol", "cm3/mol/s", "300", "2500", "3", REVIEW),
    ("ch3-o", "5.1e13", "0", "0", "kJ/mol", "cm3/mol/s", "300", "2500", "2", REVIEW),
    ("ch3-ho2", "1.8e13", "0", "0", "kJ/mol", "cm3/mol/s", "300", "1500", "3", REVIEW),
    ("c2h5-h", "3.1e13", "0", "0", "kJ/mol", "cm3/mol/s", "300", "2000", "2", REVIEW),
    ("c2h5-o2", "1.7e-13", "0", "2.3", "kJ/mol", "cm3/molecule/s", "600", "1200", "3", REVIEW),
    ("ch3o-o2", "7.2e-14", "0", "1050", "K", "cm3/molecule/s", "250", "1000", "2", REVIEW),
    ("ch2oh-o2", "9.8e-12", "0", "0", "K", "cm3/molecule/s", "250", "700", "1.5", REVIEW),
    ("nc3h7-o2", "4.6e11", "0", "12.5", "kJ/mol", "cm3/mol/s", "600", "1200", "3", REVIEW),
    ("ch3-o2-o", "2.4e13", "0", "125.0", "kJ/mol", "cm3/mol/s", "1000", "2500", "3", REVIEW),
    ("nc3h7-decomp", "9.5e12", "0", "30.6", "kcal/mol", "s-1", "600", "1200", "3", REVIEW),
    ("ch3co-decomp", "1.3e12", "0", "66.0", "kJ/mol", "s-1", "500", "1200", "3", REVIEW),
    ("hco-m", "4.0e16", "-0.8", "70.0", "kJ/mol", "cm3/mol/s", "500", "2500", "3", REVIEW),
    ("h-h-m", "2.6e-30", "-1.0", "0", "kJ/mol", "cm6/molecule2/s", "300", "2500", "3",
     REVIEW),
    ("h-oh-m", "4.4e-26", "-2.0", "0", "kJ/mol", "cm6/molecule2/s", "300", "2500", "3",
     REVIEW),
    ("o-o2-m", "2.6e-28", "-2.3", "0", "K", "cm6/molecule2/s", "200", "400", "1.3", REVIEW),
    ("oh-oh-m", "2.1e-29", "-0.9", "0", "K", "cm6/molecule2/s", "250", "1400", "2", REVIEW),
    # -- activation energy only (A to be estimated from collision theory) --
    ("oh-ch2o", "", "", "2.6", "kJ/mol", "", "250", "450", "", COMPILED),
    ("oh-ch3oh", "", "", "710", "K", "", "250", "500", "", COMPILED),
    ("oh-h2o2", "", "", "0.41", "kcal/mol", "", "250", "450", "", COMPILED),
    ("oh-ch3cho", "", "", "230", "K", "", "250", "400", "", COMPILED),
    ("h-ch2o", "", "", "17.0", "kJ/mol", "", "500", "1500", "", COMPILED),
    ("h-ch3oh", "", "", "6.1", "kcal/mol", "", "500", "1500", "", COMPILED),
    ("h-h2o", "", "", "84.0", "kJ/mol", "", "1000", "2000", "", COMPILED),
    ("h-h2o2", "", "", "7.9", "kcal/mol", "", "300", "1000", "", COMPILED),
    ("o-c3h8", "", "", "2950", "K", "", "500", "1200", "", COMPILED),
    ("o-h2o", "", "", "72.0", "kJ/mol", "", "1000", "2000", "", COMPILED),
    ("o-ch2o", "", "", "13.0", "kJ/mol", "", "300", "1500", "", COMPILED),
    ("ho2-ho2", "", "", "11.2", "kcal/mol", "", "800", "1400", "", COMPILED),
    ("ho2-co", "", "", "96.0", "kJ/mol", "", "700", "1500", "", COMPILED),
    ("ho2-o3", "", "", "560", "K", "", "250", "400", "", COMPILED),
    ("h-o3", "", "", "520", "K", "", "250", "400", "", COMPILED),
    ("oh-o3", "", "", "880", "K", "", "220", "450", "", COMPILED),
    ("no2-o3", "", "", "2380", "K", "", "230", "400", "", COMPILED),
    ("h-no2", "", "", "3.2", "kJ/mol", "", "300", "1000", "", COMPILED),
    ("o-n2o-no", "", "", "26.6", "kcal/mol", "", "1200", "2000", "", COMPILED),
    ("o-n2o-n2", "", "", "109.0", "kJ/mol", "", "1200", "2000", "", COMPILED),
    ("ch3-o2", "", "", "7600", "K", "", "1000", "2000", "", COMPILED),
    ("hco-o2", "", "", "3.4", "kJ/mol", "", "300", "1500", "", COMPILED),
    ("ch3o-decomp", "", "", "24.5", "kcal/mol", "", "600", "1200", "", COMPILED),
]
# fmt: on


# --------------------------------------------------------------------------------------
# Generation
# --------------------------------------------------------------------------------------
def true_k(reaction: str, temperature: np.ndarray) -> np.ndarray:
    a, n, e_over_r = TRUE_LAWS[reaction]
    return a * (temperature / 300.0) ** n * np.exp(-e_over_r / temperature)


def measurement_rows(rng: np.random.Generator) -> list[dict[str, str]]:
    rows: list[dict[str, str]] = []
    for plan in SETS:
        lo, hi = plan.t_range
        grid = np.linspace(lo, hi, plan.n_points)
        step = (hi - lo) / (plan.n_points - 1)
        temperature = np.round(grid + rng.uniform(-0.3, 0.3, plan.n_points) * step, 2)
        temperature[0], temperature[-1] = max(temperature[0], lo), min(temperature[-1], hi)
        # Relative uncertainty grows a little towards the ends of the range.
        x = (temperature - temperature.mean()) / (0.5 * (hi - lo))
        rel_u = np.round(plan.uncertainty * (1.0 + 0.25 * x**2), 3)
        k_model = true_k(plan.reaction, temperature) * plan.bias
        k_obs = k_model * np.exp(rng.normal(0.0, np.log1p(rel_u)))
        order = 1 if plan.k_units == "s-1" else 3 if plan.k_units.startswith("cm6") else 2
        factor = K_UNITS[order][plan.k_units]
        k_obs = k_obs * factor
        if plan.pressure is None:
            pressure = [""] * plan.n_points
        else:
            p_lo, p_hi = plan.pressure
            values = rng.uniform(p_lo, p_hi, plan.n_points) if p_hi > p_lo else [p_lo] * len(grid)
            pressure = [f"{p:.5g}" for p in values]
        reference = (
            f"synthetic: {plan.lab} {plan.method.split(' / ')[0]} series {plan.series} (invented)"
        )
        for i in range(plan.n_points):
            if plan.kind == "absolute":
                uncertainty = f"{rel_u[i] * k_obs[i]:.4e}"
            else:
                uncertainty = f"{rel_u[i]:.3g}"
            rows.append(
                {
                    "set": plan.set_id,
                    "reaction": plan.reaction,
                    "T_K": f"{temperature[i]:.2f}",
                    "k": f"{k_obs[i]:.5e}",
                    "k_units": plan.k_units,
                    "k_uncertainty": uncertainty,
                    "uncertainty_kind": plan.kind,
                    "reference": reference,
                    "method": plan.method,
                    "pressure_bar": pressure[i],
                    "bath_gas": plan.bath_gas,
                }
            )
    return rows


def expression_rows() -> list[dict[str, str]]:
    return [dict(zip(EXPRESSION_COLUMNS, row, strict=True)) for row in EXPRESSIONS]


def write_csv(path: Path, columns: list[str], rows: list[dict[str, str]]) -> None:
    with path.open("w", newline="", encoding="utf-8") as handle:
        writer = csv.DictWriter(handle, fieldnames=columns, lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)


# --------------------------------------------------------------------------------------
# Checks
# --------------------------------------------------------------------------------------
FORMULA_TOKEN = re.compile(r"([A-Z][a-z]?)(\d*)")


def parse_formula(formula: str) -> dict[str, int]:
    if not formula or FORMULA_TOKEN.sub("", formula):
        raise ValueError(f"not a plain element-symbol formula: {formula!r}")
    counts: dict[str, int] = {}
    for symbol, number in FORMULA_TOKEN.findall(formula):
        if symbol not in ATOMIC_WEIGHT:
            raise ValueError(f"unknown element {symbol!r} in {formula!r}")
        counts[symbol] = counts.get(symbol, 0) + int(number or 1)
    return counts


def parse_side(side: str) -> list[tuple[int, str]]:
    terms = []
    for term in side.split(" + "):
        parts = term.split(" ")
        if len(parts) == 2 and parts[0].isdigit():
            terms.append((int(parts[0]), parts[1]))
        elif len(parts) == 1 and parts[0]:
            terms.append((1, parts[0]))
        else:
            raise ValueError(f"bad term {term!r}")
    return terms


def significant_digits(text: str) -> int:
    mantissa = text.lower().split("e")[0].lstrip("+-").replace(".", "").lstrip("0")
    return len(mantissa)


def read_csv(path: Path, columns: list[str], problems: list[str]) -> list[dict[str, str]]:
    with path.open(newline="", encoding="utf-8") as handle:
        reader = csv.DictReader(handle)
        if reader.fieldnames != columns:
            problems.append(f"{path.name}: header {reader.fieldnames} != {columns}")
        return list(reader)


def collision_rate(a: dict, b: dict, temperature: np.ndarray, same: bool) -> np.ndarray:
    """Hard-sphere collision-rate constant in cm3 molecule-1 s-1 (1/2 for A + A)."""
    d = 0.5 * (a["d"] + b["d"]) * 1e-10
    mu = a["m"] * b["m"] / (a["m"] + b["m"]) * 1e-3 / constants.N_A
    z = math.pi * d**2 * np.sqrt(8 * constants.k * temperature / (math.pi * mu)) * 1e6
    return 0.5 * z if same else z


def species_physics(row: dict[str, str]) -> dict:
    mass = sum(ATOMIC_WEIGHT[e] * c for e, c in parse_formula(row["formula"]).items())
    if row["molar_mass_g_per_mol"]:
        mass = float(row["molar_mass_g_per_mol"])
    d = None
    if row["diameter_angstrom"]:
        d = float(row["diameter_angstrom"])
    elif row["critical_temperature_K"] and row["critical_pressure_bar"]:
        pc_atm = float(row["critical_pressure_bar"]) * constants.bar / constants.atm
        d = 2.44 * (float(row["critical_temperature_K"]) / pc_atm) ** (1 / 3)
    elif row["boiling_volume_cm3_per_mol"]:
        d = 1.166 * float(row["boiling_volume_cm3_per_mol"]) ** (1 / 3)
    return {"m": mass, "d": d}


def steric_factor(k_of_t, z_of_t, temperature: float, local_ea: float) -> float:
    """P = k / (z exp(-E0/RT)) with E0 = Ea_local - RT/2 (hard-sphere convention)."""
    e0 = local_ea - 0.5 * constants.R * temperature
    return float(k_of_t / (z_of_t * math.exp(-e0 / (constants.R * temperature))))


def check(directory: Path = HERE) -> list[str]:
    problems: list[str] = []
    species = read_csv(directory / "species.csv", SPECIES_COLUMNS, problems)
    reactions = read_csv(directory / "reactions.csv", REACTION_COLUMNS, problems)
    measurements = read_csv(directory / "measurements.csv", MEASUREMENT_COLUMNS, problems)
    expressions = read_csv(directory / "expressions.csv", EXPRESSION_COLUMNS, problems)

    # species
    phys: dict[str, dict] = {}
    for row in species:
        name = row["name"]
        if name in phys or name == "M":
            problems.append(f"species {name}: duplicate or reserved name")
        try:
            phys[name] = species_physics(row)
        except ValueError as exc:
            problems.append(f"species {name}: {exc}")
            continue
        for column in SPECIES_COLUMNS[2:9]:
            if column != "diameter_kind" and row[column] and float(row[column]) <= 0:
                problems.append(f"species {name}: {column} must be positive")
        if bool(row["diameter_angstrom"]) != bool(row["diameter_kind"]):
            problems.append(f"species {name}: diameter and diameter_kind go together")
        if row["diameter_kind"] not in ("", "hard-sphere", "lennard-jones"):
            problems.append(f"species {name}: bad diameter_kind")
        if not row["source"]:
            problems.append(f"species {name}: no source")
    if not 20 <= len(species) <= 40:
        problems.append(f"{len(species)} species, expected 20-40")

    # reactions
    order: dict[str, int] = {}
    participants: dict[str, list[str]] = {}
    for row in reactions:
        key = row["key"]
        if key in order:
            problems.append(f"reaction {key}: duplicate key")
        try:
            left, right = row["equation"].split(" -> ")
            lhs, rhs = parse_side(left), parse_side(right)
        except ValueError as exc:
            problems.append(f"reaction {key}: {exc}")
            continue
        if ("M" in [s for _, s in lhs]) != ("M" in [s for _, s in rhs]):
            problems.append(f"reaction {key}: M must appear on both sides")
        balance: dict[str, int] = {}
        for sign, side in ((1, lhs), (-1, rhs)):
            for coefficient, name in side:
                if name == "M":
                    continue
                if name not in phys:
                    problems.append(f"reaction {key}: unknown species {name}")
                    continue
                formula = next(s["formula"] for s in species if s["name"] == name)
                for element, count in parse_formula(formula).items():
                    balance[element] = balance.get(element, 0) + sign * coefficient * count
        if any(balance.values()):
            problems.append(f"reaction {key}: not balanced {balance}")
        order[key] = sum(c for c, _ in lhs)
        participants[key] = [s for c, s in lhs for _ in range(c) if s != "M"]
    if not 40 <= len(reactions) <= 80:
        problems.append(f"{len(reactions)} reactions, expected 40-80")

    # measurements
    seen_sets: dict[str, str] = {}
    for i, row in enumerate(measurements, start=2):
        where = f"measurements.csv line {i}"
        key = row["reaction"]
        if key not in order:
            problems.append(f"{where}: unknown reaction {key}")
            continue
        if seen_sets.setdefault(row["set"], key) != key:
            problems.append(f"{where}: set {row['set']} spans two reactions")
        if row["k_units"] not in K_UNITS.get(order[key], {}):
            problems.append(f"{where}: {row['k_units']} does not fit order {order[key]}")
        if float(row["T_K"]) <= 0 or float(row["k"]) <= 0 or float(row["k_uncertainty"]) <= 0:
            problems.append(f"{where}: T, k and uncertainty must be positive")
        if significant_digits(row["k"]) < 5 or significant_digits(row["T_K"]) < 5:
            problems.append(f"{where}: fewer than 5 significant digits")
        if row["uncertainty_kind"] not in ("relative", "absolute"):
            problems.append(f"{where}: bad uncertainty_kind")
        if not row["reference"].startswith("synthetic:"):
            problems.append(f"{where}: reference not labelled synthetic")

    # expressions
    for i, row in enumerate(expressions, start=2):
        where = f"expressions.csv line {i} ({row['reaction']})"
        key = row["reaction"]
        if key not in order:
            problems.append(f"{where}: unknown reaction")
            continue
        if row["Ea_units"] not in EA_UNITS:
            problems.append(f"{where}: bad Ea_units")
        if row["A"] and (float(row["A"]) <= 0 or row["k_units"] not in K_UNITS[order[key]]):
            problems.append(f"{where}: bad A or k_units for order {order[key]}")
        ea = float(row["Ea"]) * EA_UNITS[row["Ea_units"]]
        if not 0 <= ea <= 150e3:
            problems.append(f"{where}: Ea {ea / 1e3:.1f} kJ/mol outside 0-150")
        if not 0 < float(row["T_min_K"]) < float(row["T_max_K"]):
            problems.append(f"{where}: bad T range")
        if not row["reference"].startswith("synthetic:"):
            problems.append(f"{where}: reference not labelled synthetic")

    # physics of the invented laws: bimolecular k well below the collision rate, sensible P
    def pair(key: str):
        reactants = participants[key]
        if order[key] != 2 or len(reactants) != 2:
            return None
        a, b = (phys[s] for s in reactants)
        if a["d"] is None or b["d"] is None:
            return None
        return a, b, reactants[0] == reactants[1]

    for key in sorted({p.reaction for p in SETS}):
        found = pair(key)
        if found is None:
            continue
        temps = np.concatenate(
            [np.linspace(*p.t_range, p.n_points) for p in SETS if p.reaction == key]
        )
        z = collision_rate(*found[:2], temps, found[2])
        if np.any(true_k(key, temps) > 0.5 * z):
            problems.append(f"law {key}: k above half the collision rate")
        t_mean = float(np.exp(np.mean(np.log(temps))))
        _, n, e_over_r = TRUE_LAWS[key]
        p = steric_factor(
            true_k(key, np.array(t_mean))[()],
            collision_rate(*found[:2], np.array(t_mean), found[2]),
            t_mean,
            constants.R * (e_over_r + n * t_mean),
        )
        if not 1e-3 <= p <= 0.5:
            problems.append(f"law {key}: steric factor {p:.3g} outside 1e-3..0.5")
    for row in expressions:
        found = pair(row["reaction"]) if row["A"] and row["reaction"] in order else None
        if found is None:
            continue
        a = float(row["A"]) / K_UNITS[2][row["k_units"]]
        n = float(row["n"] or 0)
        ea = float(row["Ea"]) * EA_UNITS[row["Ea_units"]]
        temps = np.linspace(float(row["T_min_K"]), float(row["T_max_K"]), 50)
        k = a * temps**n * np.exp(-ea / (constants.R * temps))
        if np.any(k > 0.5 * collision_rate(*found[:2], temps, found[2])):
            problems.append(f"expression {row['reaction']}: k above half the collision rate")
    return problems


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="only validate the CSV files")
    args = parser.parse_args(argv)
    if not args.check:
        rng = np.random.default_rng(SEED)
        write_csv(HERE / "measurements.csv", MEASUREMENT_COLUMNS, measurement_rows(rng))
        write_csv(HERE / "expressions.csv", EXPRESSION_COLUMNS, expression_rows())
    problems = check()
    for problem in problems:
        print(problem, file=sys.stderr)
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
