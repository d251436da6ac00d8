"""Fit, estimate, check, rate, recommend and export through the real command line.

The scenario is the tests' own, not the demo's. Collision diameters and well
depths are the Svehla (1962) gas-phase Lennard-Jones values as printed in
Poling, Prausnitz & O'Connell, App. B (from memory); the OH values are from
memory and uncertain. Molar masses are computed here from IUPAC 2021 abridged
atomic weights typed below (from memory) and given to the importer explicitly,
so the tests know them exactly. Every reaction, activation energy and k(T)
set is made up for the tests; the two laws the synthetic data follow have the
shape of published expressions (O + O3 and OH + CH4, from memory), nothing more.

Every expected number is computed here independently: collision theory by
hand from scipy.constants (CODATA), unit factors by arithmetic on exact SI
constants, the descriptor checked with the frictionless package (Table Schema
reference implementation), and Omega(2,2)* from the chemicals package.
"""

from __future__ import annotations

import csv
import datetime as dt
import json
import math
import os
import re
import shutil
from pathlib import Path

import numpy as np
import pytest
from helpers.cli import run, snapshot, write
from scipy import constants

K_B = constants.k  # scipy.constants (CODATA)
N_A = constants.N_A  # scipy.constants (CODATA)
R = constants.R  # scipy.constants (CODATA)
PI = constants.pi

# IUPAC 2021 abridged standard atomic weights, g/mol (from memory).
ATOMIC_WEIGHT = {"H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Ar": 39.95}

# name: (formula, Lennard-Jones diameter in Å, well depth eps/k_B in K).
# Svehla (1962) as printed in Poling, Prausnitz & O'Connell App. B (from memory);
# OH from memory, uncertain. Species without a diameter take part in no estimate.
SPECIES = {
    "OH": ("OH", 3.147, 79.8),
    "CH4": ("CH4", 3.758, 148.6),
    "H2": ("H2", 2.827, 59.7),
    "O2": ("O2", 3.467, 106.7),
    "C2H6": ("C2H6", 4.443, 215.7),
    "O": ("O", None, None),
    "O3": ("O3", None, None),
    "H": ("H", None, None),
    "H2O": ("H2O", None, None),
    "CH3": ("CH3", None, None),
    "HO2": ("HO2", None, None),
    "H2O2": ("H2O2", None, None),
    "C2H5": ("C2H5", None, None),
}

# Made up for the tests (equations balance; classes and notes are ours).
REACTIONS = {
    "o-o3": ("O + O3 -> O2 + O2", "o-transfer"),
    "oh-ch4": ("OH + CH4 -> CH3 + H2O", "h-abstraction"),
    "oh-h2": ("OH + H2 -> H2O + H", "h-abstraction"),
    "oh-oh": ("OH + OH -> H2O2", "self-reaction"),
    "h2o2-dec": ("H2O2 -> OH + OH", "decomposition"),
    "h-o2-m": ("H + O2 + M -> HO2 + M", "recombination"),
    "oh-c2h6": ("OH + C2H6 -> C2H5 + H2O", "h-abstraction"),
    "ch4-o2": ("CH4 + O2 -> CH3 + HO2", ""),
    "oh-o3": ("OH + O3 -> HO2 + O2", ""),
}
MECHANISM_KEYS = ["o-o3", "oh-ch4", "oh-h2", "oh-oh", "h2o2-dec", "h-o2-m"]

# Synthetic measurements (made up for the tests), exact values of two known laws:
# k = 8.0e-12 exp(-2060/T) cm3 molecule-1 s-1 (the shape of the published O + O3
# expression, from memory) on 11 points 200-400 K, and
# k = 1.85e-20 T^2.82 exp(-987/T) cm3 molecule-1 s-1 (the shape of Atkinson 2003
# for OH + CH4, from memory) on 19 points 200-2000 K.
O_O3_LAW = (8.0e-12, 0.0, 2060.0)
OH_CH4_LAW = (1.85e-20, 2.82, 987.0)
O_O3_T = np.linspace(200.0, 400.0, 11)
OH_CH4_T = np.linspace(200.0, 2000.0, 19)

# Expressions (made up for the tests). oh-oh and oh-h2 have only an activation
# energy; their A is to be estimated.
EXPRESSION_HEADER = "reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference"
MECHANISM_EXPRESSIONS = {
    "oh-oh": ",,3.5,kJ/mol,,300,1200,,made-up activation energy for the tests",
    "oh-h2": ",,4.2,kcal/mol,,250,1000,,made-up activation energy for the tests",
    "h2o2-dec": "2.0e13,0,200,kJ/mol,s-1,800,1500,3,made-up review for the tests",
    "h-o2-m": "5.0e-32,-1.6,0,K,cm6/molecule2/s,200,1500,1.5,made-up review for the tests",
}
OH_OH_EA = 3.5e3  # J/mol
OH_H2_EA = 4.2 * 4184.0  # J/mol; thermochemical calorie (arithmetic on exact SI constants)
OH_OH_STERIC, OH_H2_STERIC = 0.2, 0.05
OH_H2_T_REF = 500.0

# Value in the unit times the factor gives SI (arithmetic on exact SI constants:
# 1 cm3 = 1e-6 m3, 1 molecule = 1/N_A mol, 1 thermochemical cal = 4.184 J, E/R in K).
K_TO_SI = {
    "s-1": 1.0,
    "m3/mol/s": 1.0,
    "m6/mol2/s": 1.0,
    "cm3/mol/s": 1e-6,
    "cm3/molecule/s": 1e-6 * N_A,
    "cm6/mol2/s": 1e-12,
    "cm6/molecule2/s": 1e-12 * N_A**2,
}
E_TO_SI = {"J/mol": 1.0, "kJ/mol": 1e3, "kcal/mol": 4184.0, "K": R}
COLUMNS = [
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
    "uncertainty_f298",
    "uncertainty_g_K",
    "linearised_at_K",
    "linearisation_max_ln_deviation",
    "reverse",
    "reverse_max_relative_deviation",
    # the form columns (the expressions file's names)
    "form",
    "term",
    "A_low",
    "n_low",
    "Ea_low",
    "k_low_units",
    "broadening",
    "Fc",
    "N",
    "troe_alpha",
    "troe_T3_K",
    "troe_T1_K",
    "troe_T2_K",
]


# --------------------------------------------------------------------------- independent science


def molar_mass(formula: str) -> float:
    """kg/mol from the atomic weights typed above."""
    total = 0.0
    for symbol, count in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        total += ATOMIC_WEIGHT[symbol] * (int(count) if count else 1)
    return total * 1e-3


def hard_sphere_z(T, a: str, b: str):
    """z(T) [m3 mol-1 s-1] by hand (scipy.constants (CODATA)); half for A + A."""
    d_ab = 0.5 * (SPECIES[a][1] + SPECIES[b][1]) * 1e-10
    sigma = PI * d_ab**2
    m_a, m_b = molar_mass(SPECIES[a][0]), molar_mass(SPECIES[b][0])
    mu = m_a * m_b / (m_a + m_b) / N_A
    c = np.sqrt(8.0 * K_B * np.asarray(T, dtype=float) / (PI * mu))
    z = sigma * c * N_A
    return 0.5 * z if a == b else z


def omega22(T, a: str, b: str):
    """Omega(2,2)* from the reference library, T* = T / sqrt(eps_A eps_B)."""
    from chemicals.lennard_jones import collision_integral_Neufeld_Janzen_Aziz

    eps = math.sqrt(SPECIES[a][2] * SPECIES[b][2])
    return np.array(
        [collision_integral_Neufeld_Janzen_Aziz(t / eps, 2, 2) for t in np.atleast_1d(T)]
    )


def modified_arrhenius(T, A, n, Ea_si):
    T = np.asarray(T, dtype=float)
    return A * T**n * np.exp(-Ea_si / (R * T))


def law_si(law):
    """(A, n, Ea) of a cm3 molecule-1 s-1 / E/R-in-K law, in SI."""
    A, n, theta = law
    return A * K_TO_SI["cm3/molecule/s"], n, theta * R


def hard_sphere_estimate(a: str, b: str, steric: float, ea: float, t_ref: float):
    """The n = 1/2 form of P z(T) exp(-E0/RT): A = P z(T_ref)/sqrt(T_ref), Ea_row = E0."""
    e0 = ea - R * t_ref / 2.0
    return steric * float(hard_sphere_z(t_ref, a, b)) / math.sqrt(t_ref), 0.5, e0


def implied_steric(law, temperatures, a: str, b: str) -> float:
    """P = k(T_m) / (z(T_m) exp(-E0/RT_m)), E0 = Ea_local - R T_m/2, T_m the geometric mean."""
    A, n, ea = law_si(law)
    t_m = float(np.exp(np.mean(np.log(temperatures))))
    ea_local = ea + n * R * t_m
    e0 = ea_local - R * t_m / 2.0
    k = float(modified_arrhenius(t_m, A, n, ea))
    return k / (float(hard_sphere_z(t_m, a, b)) * math.exp(-e0 / (R * t_m)))


def expected_rows() -> dict[str, dict]:
    """The mechanism store's exported rows, in SI, computed independently."""
    o_o3 = law_si(O_O3_LAW)
    oh_ch4 = law_si(OH_CH4_LAW)
    oh_oh = hard_sphere_estimate("OH", "OH", OH_OH_STERIC, OH_OH_EA, math.sqrt(300.0 * 1200.0))
    oh_h2 = hard_sphere_estimate("OH", "H2", OH_H2_STERIC, OH_H2_EA, OH_H2_T_REF)
    return {
        "o-o3": dict(
            order=2, law=o_o3, T=(200.0, 400.0), origin="measured-fit", steric=None,
            factor=1.0, references="o-o3-set: made-up flash photolysis set for the tests",
        ),
        "oh-ch4": dict(
            order=2, law=oh_ch4, T=(200.0, 2000.0), origin="measured-fit",
            steric=implied_steric(OH_CH4_LAW, OH_CH4_T, "OH", "CH4"),
            factor=1.0, references="oh-ch4-set: made-up shock tube set for the tests",
        ),
        "oh-oh": dict(
            order=2, law=oh_oh, T=(300.0, 1200.0), origin="collision-estimate",
            steric=OH_OH_STERIC, factor=10.0,  # default factor of 10: common practice
            references="collision theory (hard-sphere) x steric factor 0.2 (given by the user)",
        ),
        "oh-h2": dict(
            order=2, law=oh_h2, T=(250.0, 1000.0), origin="collision-estimate",
            steric=OH_H2_STERIC, factor=10.0,
            references="collision theory (hard-sphere) x steric factor 0.05 (given by the user)",
        ),
        "h2o2-dec": dict(
            order=1, law=(2.0e13, 0.0, 200e3), T=(800.0, 1500.0), origin="literature",
            steric=None, factor=3.0, references="made-up review for the tests",
        ),
        "h-o2-m": dict(
            order=3, law=(5.0e-32 * K_TO_SI["cm6/molecule2/s"], -1.6, 0.0), T=(200.0, 1500.0),
            origin="literature", steric=None, factor=1.5,
            references="made-up review for the tests",
        ),
    }  # fmt: skip


# --------------------------------------------------------------------------- building stores


def species_csv(names, critical=None) -> str:
    """Species rows; ``critical`` maps a name to (Tc in K, Pc in bar) for those without d."""
    critical = critical or {}
    lines = [
        "name,formula,molar_mass_g_per_mol,diameter_angstrom,well_depth_K,"
        "critical_temperature_K,critical_pressure_bar,source"
    ]
    for name in names:
        formula, diameter, well = SPECIES[name]
        tc, pc = critical.get(name, ("", ""))
        lines.append(
            f"{name},{formula},{molar_mass(formula) * 1e3!r},"
            f"{'' if diameter is None else diameter},{'' if well is None else well},{tc},{pc},"
            "Svehla 1962 via Poling App. B (from memory)"
        )
    return "\n".join(lines) + "\n"


def reactions_csv(keys) -> str:
    lines = ["key,equation,class,notes"]
    lines += [f"{k},{REACTIONS[k][0]},{REACTIONS[k][1]},made up for the tests" for k in keys]
    return "\n".join(lines) + "\n"


def points_csv(key: str, law, temperatures, reference: str) -> str:
    A, n, theta = law
    lines = ["set,reaction,T_K,k,reference"]
    for T in temperatures:
        k = A * T**n * math.exp(-theta / T)
        lines.append(f"{key}-set,{key},{float(T)!r},{float(k)!r},{reference}")
    return "\n".join(lines) + "\n"


def expressions_csv(rows: dict[str, str]) -> str:
    return EXPRESSION_HEADER + "\n" + "".join(f"{k},{v}\n" for k, v in rows.items())


def ok(db: str, *args: str):
    outcome = run(db, *args)
    assert outcome.exit_code == 0, (args, outcome.stdout, outcome.stderr)
    return outcome


def load(
    db: str, folder: Path, species, reactions, points=(), expressions=None, critical=None
) -> None:
    folder.mkdir(exist_ok=True)
    text = species_csv(species, critical)
    ok(db, "species", "import", str(write(folder / "species.csv", text)))
    ok(db, "reactions", "import", str(write(folder / "reactions.csv", reactions_csv(reactions))))
    for i, text in enumerate(points):
        path = write(folder / f"points{i}.csv", text)
        ok(db, "data", "import", str(path), "--k-units", "cm3/molecule/s")
    if expressions:
        path = write(folder / "expressions.csv", expressions_csv(expressions))
        ok(db, "expressions", "import", str(path))


O_O3_POINTS = points_csv("o-o3", O_O3_LAW, O_O3_T, "made-up flash photolysis set for the tests")
OH_CH4_POINTS = points_csv("oh-ch4", OH_CH4_LAW, OH_CH4_T, "made-up shock tube set for the tests")


@pytest.fixture
def store(db_url):
    assert run(db_url, "init").exit_code == 0
    return db_url


@pytest.fixture
def measured(store, tmp_path):
    """Species, o-o3 and oh-ch4 with their synthetic data; nothing fitted yet."""
    load(store, tmp_path / "in", SPECIES, ["o-o3", "oh-ch4"], [O_O3_POINTS, OH_CH4_POINTS])
    return store


@pytest.fixture
def fitted(store, tmp_path):
    """Only oh-ch4, measured and fitted: a store with nothing to flag."""
    load(store, tmp_path / "in", ["OH", "CH4", "CH3", "H2O"], ["oh-ch4"], [OH_CH4_POINTS])
    ok(store, "fit", "--form", "auto")
    return store


@pytest.fixture
def mechanism(store, tmp_path):
    """Six reactions: two fits, two hard-sphere estimates, two literature expressions."""
    load(
        store,
        tmp_path / "in",
        SPECIES,
        MECHANISM_KEYS,
        [O_O3_POINTS, OH_CH4_POINTS],
        MECHANISM_EXPRESSIONS,
    )
    assert "1 fit(s) stored" in ok(store, "fit", "o-o3", "--form", "arrhenius").stdout
    assert "1 fit(s) stored" in ok(store, "fit", "oh-ch4", "--form", "auto").stdout
    first = ok(store, "estimate", "oh-oh", "--steric", str(OH_OH_STERIC))
    assert "1 estimate(s) stored; 0 reaction(s) not estimated." in first.stdout
    second = ok(
        store, "estimate", "oh-h2", "--steric", str(OH_H2_STERIC), "--t-ref", str(OH_H2_T_REF)
    )
    assert "1 estimate(s) stored" in second.stdout
    return store


@pytest.fixture
def out(tmp_path) -> Path:
    folder = tmp_path / "out"
    folder.mkdir()
    return folder


def read_table(path: Path) -> tuple[list[str], dict[str, dict[str, str]]]:
    with path.open(newline="", encoding="utf-8") as handle:
        reader = csv.DictReader(handle)
        rows = {row["key"]: row for row in reader}
        return list(reader.fieldnames or []), rows


def flat(text: str) -> str:
    """Output with its line wrapping undone (the console wraps long lines)."""
    return " ".join(text.split())


def listing(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir())


def k_of_row(row: dict[str, str], T) -> np.ndarray:
    """k from the CSV row's own numbers, in its k_units."""
    ea_si = float(row["Ea"]) * E_TO_SI[row["Ea_units"]]
    return (
        float(row["A"])
        * np.asarray(T, dtype=float) ** float(row["n"])
        * np.exp(-ea_si / (R * np.asarray(T, dtype=float)))
    )


def side(text: str) -> list[str]:
    names = []
    for term in text.split(" + "):
        parts = term.split(" ")
        names += [parts[-1]] * (int(parts[0]) if len(parts) == 2 else 1)
    return sorted(names)


def assert_valid_resource(descriptor: Path) -> None:
    """frictionless package (Table Schema reference implementation)."""
    import frictionless

    report = frictionless.validate(str(descriptor))
    assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "note"])
    package = frictionless.Package.from_descriptor(str(descriptor))
    assert [r.name for r in package.resources] == ["mechanism", "efficiencies", "species"]
    resource = package.get_resource("mechanism")
    assert resource.tabular
    assert [f.name for f in resource.schema.fields] == COLUMNS
    _, rows = read_table(descriptor.with_name(resource.path))
    with resource:
        for row in resource.row_stream:
            assert float(row["A"]) == float(rows[row["key"]]["A"])


# --------------------------------------------------------------------------- 1-3: end to end


UNIT_CHOICES = {
    "combustion": (["--preset", "combustion"], "cm3/mol/s", "cm6/mol2/s", "kJ/mol"),
    "atmospheric": (["--preset", "atmospheric"], "cm3/molecule/s", "cm6/molecule2/s", "K"),
    "si": (["--preset", "si"], "m3/mol/s", "m6/mol2/s", "J/mol"),
    "explicit": (
        ["--k-units", "cm3/molecule/s", "--e-units", "kcal/mol"],
        "cm3/molecule/s",
        "cm6/molecule2/s",
        "kcal/mol",
    ),
}


@pytest.mark.parametrize("choice", list(UNIT_CHOICES))
def test_export_reproduces_independent_numbers(mechanism, out, choice):
    options, k2, k3, e_unit = UNIT_CHOICES[choice]
    k_units = {1: "s-1", 2: k2, 3: k3}
    target = out / "mech"
    outcome = ok(mechanism, "export", str(target), *options)
    descriptor = target / "datapackage.json"
    assert flat(outcome.stdout) == (
        f"Wrote 6 reactions to the data package {target} (datapackage.json, mechanism.csv, "
        "efficiencies.csv, species.csv)"
    )
    assert listing(out) == ["mech"]
    assert listing(target) == [
        "datapackage.json",
        "efficiencies.csv",
        "mechanism.csv",
        "species.csv",
    ]

    header, rows = read_table(target / "mechanism.csv")
    assert header == COLUMNS
    assert sorted(rows) == sorted(MECHANISM_KEYS)
    expected = expected_rows()
    for key, row in rows.items():
        want = expected[key]
        A_si, n, ea_si = want["law"]
        unit = k_units[want["order"]]
        assert int(row["order"]) == want["order"], key
        assert row["k_units"] == unit and row["Ea_units"] == e_unit, key
        # unit factors: arithmetic on exact SI constants; the law: as built above
        assert float(row["A"]) == pytest.approx(A_si / K_TO_SI[unit], rel=1e-9), key
        assert float(row["n"]) == pytest.approx(n, rel=1e-9, abs=1e-12), key
        assert float(row["Ea"]) == pytest.approx(ea_si / E_TO_SI[e_unit], rel=1e-9, abs=1e-12)
        assert (float(row["T_min_K"]), float(row["T_max_K"])) == want["T"], key
        assert row["origin"] == want["origin"], key
        if want["steric"] is None:
            assert row["steric_factor"] == "", key
        else:
            assert float(row["steric_factor"]) == pytest.approx(want["steric"], rel=1e-9), key
        assert float(row["uncertainty_factor"]) == pytest.approx(want["factor"], rel=1e-9)
        assert row["references"] == want["references"], key
        # one Arrhenius term each: a reaction written with M is third-body, no k0 columns
        assert row["form"] == ("third-body" if " M " in row["equation"] + " " else "arrhenius")
        assert row["term"] == "1" and all(row[c] == "" for c in COLUMNS[-11:]), key
        left, right = (side(s) for s in REACTIONS[key][0].split(" -> "))
        got_left, got_right = (side(s) for s in row["equation"].split(" -> "))
        assert (got_left, got_right) == (left, right), key

        # rate at T_min, T_ref and T_max agrees with the row (and with the law)
        t_min, t_max = want["T"]
        temperatures = [t_min, math.sqrt(t_min * t_max), t_max]
        args = [text for t in temperatures for text in ("-T", repr(t))]
        record = json.loads(ok(mechanism, "rate", key, *args, "--k-units", unit, "--json").stdout)
        assert record["origin"] == want["origin"]
        assert record["k_units"] == unit
        rated = np.array([r["k"] for r in record["rates"]])
        # JSON carries 15 significant digits (README: numbers as written)
        assert [r["T_K"] for r in record["rates"]] == pytest.approx(temperatures, rel=1e-14)
        assert all(r["in_range"] for r in record["rates"])
        np.testing.assert_allclose(k_of_row(row, temperatures), rated, rtol=1e-9)
        independent = modified_arrhenius(temperatures, A_si, n, ea_si) / K_TO_SI[unit]
        np.testing.assert_allclose(independent, rated, rtol=1e-9)

    # the self-reaction row carries the 1/2 of r = k[A]^2, d[A]/dt = -2r (scipy.constants (CODATA))
    t_ref = math.sqrt(300.0 * 1200.0)
    d = SPECIES["OH"][1] * 1e-10
    m = molar_mass("OH")
    z_counted_twice = PI * d**2 * math.sqrt(8 * K_B * t_ref / (PI * m / 2 / N_A)) * N_A
    a_twice = OH_OH_STERIC * z_counted_twice / math.sqrt(t_ref) / K_TO_SI[k2]
    assert float(rows["oh-oh"]["A"]) / a_twice == pytest.approx(0.5, rel=1e-9)

    # 2: the descriptor
    assert_valid_resource(descriptor)
    meta = json.loads(descriptor.read_text(encoding="utf-8"))
    assert meta["profile"] == "tabular-data-package"
    assert [r["path"] for r in meta["resources"]] == [
        "mechanism.csv",
        "efficiencies.csv",
        "species.csv",
    ]
    extra = meta["ratebank"]
    from ratebank import __version__

    assert extra["version"] == __version__
    assert re.fullmatch(r"sha256:[0-9a-f]{64}", extra["content_fingerprint"])
    created = dt.datetime.fromisoformat(extra["created"])
    assert abs((dt.datetime.now(dt.UTC) - created).total_seconds()) < 600
    assert meta["created"] == extra["created"]
    assert "r = k * prod([X_i]^nu_i)" in extra["rate_law_convention"]
    assert "d[A]/dt = -2 r" in extra["rate_law_convention"]
    for text in (extra["caution"], meta["description"]):
        assert "validated against measurements" in text
        assert "local codes and licensed practice decide" in text
    assert extra["units"]["k_units_by_order"] == {"1": "s-1", "2": k2, "3": k3}
    assert extra["units"]["Ea_units"] == e_unit
    assert extra["units"]["preset"] == ("explicit" if choice == "explicit" else choice)
    assert extra["rows"] == 6 and extra["left_out"] == [] and extra["linearised"] == []
    assert extra["chosen_by"]["oh-ch4"]["rule"] == "newest measured fit"
    assert extra["chosen_by"]["h2o2-dec"]["rule"] == "newest literature"
    assert extra["chosen_by"]["oh-oh"]["rule"] == "newest collision estimate"

    # the fingerprint is of the content: a second export of the same store gives the same
    ok(mechanism, "export", str(out / "again"), *options)
    again = json.loads((out / "again" / "datapackage.json").read_text(encoding="utf-8"))
    assert again["ratebank"]["content_fingerprint"] == extra["content_fingerprint"]


def test_descriptor_validation_catches_a_corrupted_table(mechanism, out, tmp_path):
    ok(mechanism, "export", str(out / "mech"))
    bad = tmp_path / "bad"
    shutil.copytree(out, bad)
    text = (bad / "mech" / "mechanism.csv").read_text(encoding="utf-8").splitlines()
    cells = text[1].split(",")
    cells[3] = "not-a-number"
    text[1] = ",".join(cells)
    write(bad / "mech" / "mechanism.csv", "\n".join(text) + "\n")
    import frictionless  # frictionless package (Table Schema reference implementation)

    report = frictionless.validate(str(bad / "mech" / "datapackage.json"))
    assert not report.valid
    assert ["A", "type-error"] in report.flatten(["fieldName", "type"])


def test_exported_table_reproduces_k_of_the_store(mechanism, out):
    from ratebank.services.rates import rate
    from ratebank.services.store_access import open_store

    ok(mechanism, "export", str(out / "mech"), "--preset", "atmospheric")
    _, rows = read_table(out / "mech" / "mechanism.csv")
    handle = open_store(mechanism)
    try:
        with handle.session() as session:
            for key, row in rows.items():
                t_min, t_max = float(row["T_min_K"]), float(row["T_max_K"])
                temperatures = [t_min, math.sqrt(t_min * t_max), t_max]
                report = rate(session, key, temperatures, k_units=row["k_units"])
                from_store = np.array([r.k for r in report.rows])
                np.testing.assert_allclose(k_of_row(row, temperatures), from_store, rtol=1e-9)
    finally:
        handle.close()


# --------------------------------------------------------------------------- 4: check


def test_check_flags_impossible_rate_and_steric_factor(store, tmp_path):
    load(
        store,
        tmp_path / "in",
        SPECIES,
        ["oh-c2h6", "oh-h2"],
        expressions={
            "oh-c2h6": "1e-8,0,0,K,cm3/molecule/s,300,1000,,made-up impossible value for the tests",
            "oh-h2": MECHANISM_EXPRESSIONS["oh-h2"],
        },
    )
    ok(store, "estimate", "oh-h2", "--steric", "5")
    text = run(store, "check")
    assert text.exit_code == 1
    assert "2 flag(s)." in text.stdout
    outcome = run(store, "check", "--json")
    assert outcome.exit_code == 1
    report = json.loads(outcome.stdout)
    assert report["clean"] is False
    flags = {(f["key"], f["code"]): f for f in report["flags"]}
    assert set(flags) == {("oh-c2h6", "above-collision-limit"), ("oh-h2", "steric-above-one")}
    # k is constant and z grows as T^(1/2): the worst point is T_min (scipy.constants (CODATA))
    above = flags[("oh-c2h6", "above-collision-limit")]
    ratio = 1e-8 * K_TO_SI["cm3/molecule/s"] / float(hard_sphere_z(300.0, "OH", "C2H6"))
    assert above["value"] == pytest.approx(ratio, rel=1e-9)
    assert above["T_K"] == pytest.approx(300.0, rel=1e-12)
    assert f"is {ratio:.3g} times the collision limit (hard-sphere" in above["message"]
    assert "at 300 K" in above["message"]
    steric = flags[("oh-h2", "steric-above-one")]
    assert steric["value"] == 5.0
    assert "is estimated with a steric factor of 5 > 1" in steric["message"]
    ignored = run(store, "check", "--ignore", "steric-above-one", "--json")
    assert [f["code"] for f in json.loads(ignored.stdout)["flags"]] == ["above-collision-limit"]


def test_check_flags_an_estimate_resting_on_an_estimated_diameter(store, tmp_path):
    load(
        store,
        tmp_path / "in",
        ["OH", "O3", "O2", "HO2"],
        ["oh-o3"],
        expressions={"oh-o3": ",,8,kJ/mol,,220,450,,made-up activation energy for the tests"},
        critical={"O3": (261.0, 55.73)},  # O3 Tc in K and Pc in bar (from memory)
    )
    estimate = json.loads(ok(store, "estimate", "oh-o3", "--steric", "0.1", "--json").stdout)
    assert estimate["estimated"][0]["estimated_diameters"] == ["O3"]
    species = {r["name"]: r for r in json.loads(ok(store, "species", "list", "--json").stdout)}
    from chemicals.lennard_jones import sigma_Tee_Gotoh_Steward_1  # reference library

    assert species["O3"]["diameter_method"] == "tee-gotoh-stewart"
    assert species["O3"]["diameter_angstrom"] == pytest.approx(
        sigma_Tee_Gotoh_Steward_1(261.0, 55.73e5), rel=1e-6
    )
    outcome = run(store, "check", "--json")
    assert outcome.exit_code == 1
    (flag,) = json.loads(outcome.stdout)["flags"]
    assert (flag["key"], flag["code"]) == ("oh-o3", "estimated-diameter")
    assert "uses estimated diameters of O3" in flag["message"]


def test_check_passes_on_a_clean_store(fitted):
    outcome = run(fitted, "check")
    assert outcome.exit_code == 0, outcome.stdout
    assert "Clean: nothing flagged, everything checked." in outcome.stdout
    report = json.loads(ok(fitted, "check", "--json", "--t-range", "200", "2000").stdout)
    assert report == {
        "clean": True,
        "reactions": 1,
        "expressions": 1,
        "t_range_K": [200.0, 2000.0],
        "ignored": [],
        "collision_model": None,
        "unchecked": [],
        "flags": [],
        "notes": [],
    }
    wider = run(fitted, "check", "--t-range", "200", "2500", "--json")
    assert wider.exit_code == 1
    assert [f["code"] for f in json.loads(wider.stdout)["flags"]] == ["extrapolation"]


# --------------------------------------------------------------------------- 5: failures


@pytest.fixture
def gappy(store, tmp_path):
    """oh-ch4 fitted; oh-h2 (class h-abstraction) and ch4-o2 (no class) with only an Ea."""
    load(
        store,
        tmp_path / "in",
        SPECIES,
        ["oh-ch4", "oh-h2", "ch4-o2"],
        [OH_CH4_POINTS],
        {
            "oh-h2": MECHANISM_EXPRESSIONS["oh-h2"],
            "ch4-o2": ",,50,kJ/mol,,,,,made-up activation energy for the tests",
        },
    )
    ok(store, "fit", "--form", "auto")
    return store


def test_estimate_without_a_steric_factor_writes_nothing(gappy, out):
    before = snapshot(gappy)
    outcome = run(gappy, "estimate", "ch4-o2", "oh-h2")
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith(
        "Error: 1 of 2 requested reaction(s) cannot be estimated, so nothing was written"
    )
    assert "ch4-o2: no applicable steric factor (no class:" in outcome.stderr
    assert "oh-h2" not in outcome.stderr
    assert snapshot(gappy) == before
    as_json = run(gappy, "estimate", "ch4-o2", "--json")
    assert as_json.exit_code == 1
    record = json.loads(as_json.stdout)
    assert record["written"] is False and record["estimated"] == []
    assert record["not_estimated"][0]["key"] == "ch4-o2"
    assert "no applicable steric factor" in record["not_estimated"][0]["reason"]
    assert snapshot(gappy) == before
    assert listing(out) == []
    # oh-h2 alone takes the steric factor its class's measured reaction implies
    alone = json.loads(ok(gappy, "estimate", "oh-h2", "--json").stdout)
    assert alone["estimated"][0]["steric_rule"] == (
        "derived from 1 measured reaction(s) of class h-abstraction"
    )
    assert alone["estimated"][0]["steric_factor"] == pytest.approx(
        implied_steric(OH_CH4_LAW, OH_CH4_T, "OH", "CH4"), rel=1e-9
    )


def test_export_with_gaps_writes_nothing(gappy, out):
    before = snapshot(gappy)
    outcome = run(gappy, "export", str(out / "mech"))
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        "Error: 2 reaction(s) have no usable expression, so nothing was written: ch4-o2, "
        "oh-h2. Fit, estimate or import them, or leave the gaps out (--leave-out-gaps)"
    )
    assert listing(out) == []
    assert snapshot(gappy) == before


def test_export_leaving_out_gaps_lists_them(gappy, out):
    outcome = ok(gappy, "export", str(out / "mech"), "--leave-out-gaps")
    assert flat(outcome.stdout).endswith("; left out 2: ch4-o2, oh-h2")
    _, rows = read_table(out / "mech" / "mechanism.csv")
    assert list(rows) == ["oh-ch4"]
    meta = json.loads((out / "mech" / "datapackage.json").read_text(encoding="utf-8"))
    assert meta["ratebank"]["left_out"] == ["ch4-o2", "oh-h2"]
    assert meta["ratebank"]["rows"] == 1
    assert_valid_resource(out / "mech" / "datapackage.json")


def test_export_into_a_missing_folder_writes_nothing(fitted, tmp_path):
    before = snapshot(fitted)
    target = tmp_path / "nowhere" / "mech"
    outcome = run(fitted, "export", str(target))
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        f"Error: folder {target.parent} does not exist; create it or choose another output"
    )
    assert not target.parent.exists()
    assert snapshot(fitted) == before


@pytest.mark.skipif(
    hasattr(os, "geteuid") and os.geteuid() == 0,
    reason="running as root: folder permissions are not enforced, so a chmod 0o500 folder "
    "is still writable (the not-writable branch is tested with os.access patched below)",
)
def test_export_into_a_read_only_folder_writes_nothing(fitted, out):
    before = snapshot(fitted)
    out.chmod(0o500)
    try:
        outcome = run(fitted, "export", str(out / "mech"))
        assert outcome.exit_code == 1
        assert outcome.stderr.strip() == f"Error: folder {out} is not writable; nothing was written"
        assert listing(out) == []
    finally:
        out.chmod(0o700)
    assert snapshot(fitted) == before


def test_export_into_a_folder_reported_unwritable_writes_nothing(fitted, out, monkeypatch):
    import ratebank.io.export as export_module

    real_access = os.access

    def access(path, mode, *args, **kwargs):
        if Path(path).resolve() == out.resolve() and mode & os.W_OK:
            return False
        return real_access(path, mode, *args, **kwargs)

    monkeypatch.setattr(export_module.os, "access", access)
    before = snapshot(fitted)
    outcome = run(fitted, "export", str(out / "mech"))
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == f"Error: folder {out} is not writable; nothing was written"
    assert listing(out) == []
    assert snapshot(fitted) == before


def test_export_onto_a_folder_of_other_files_or_a_file_writes_nothing(fitted, out):
    (out / "taken").mkdir()
    (out / "taken" / "notes.txt").write_text("the user's own")
    (out / "plain").write_text("a file")
    before = snapshot(fitted)
    outcome = run(fitted, "export", str(out / "taken"))
    assert outcome.exit_code == 1
    assert "holds files that ratebank did not write (notes.txt)" in outcome.stderr
    assert listing(out / "taken") == ["notes.txt"]
    outcome = run(fitted, "export", str(out / "plain"))
    assert outcome.exit_code == 1
    assert "plain exists and is not a folder" in outcome.stderr
    assert (out / "plain").read_text() == "a file"
    # the earlier layout's file name is answered with what an export is now
    outcome = run(fitted, "export", str(out / "mech.csv"))
    assert outcome.exit_code == 1
    assert "an export is a folder (a data package" in outcome.stderr
    assert "give a folder name such as mech" in outcome.stderr
    assert listing(out) == ["plain", "taken"]
    assert snapshot(fitted) == before


def test_two_parameter_export_linearises_each_row_inside_its_range(mechanism, out):
    ok(mechanism, "export", str(out / "mod"))
    ok(mechanism, "export", str(out / "lin"), "--form", "arrhenius")
    _, modified = read_table(out / "mod" / "mechanism.csv")
    _, linear = read_table(out / "lin" / "mechanism.csv")
    assert list(linear) == list(modified)
    curved = [key for key, row in modified.items() if float(row["n"]) != 0.0]
    assert curved == ["h-o2-m", "oh-ch4", "oh-h2", "oh-oh"]
    for key in curved:
        row, base = linear[key], modified[key]
        n = float(base["n"])
        t_min, t_max = float(base["T_min_K"]), float(base["T_max_K"])
        T = float(row["linearised_at_K"])
        assert T == pytest.approx(math.sqrt(t_min * t_max), rel=1e-12) and float(row["n"]) == 0.0
        # local form at T (from memory): A T^n e^n and Ea + n R T, here in kJ/mol
        assert float(row["A"]) == pytest.approx(float(base["A"]) * T**n * math.exp(n), rel=1e-12)
        assert float(row["Ea"]) == pytest.approx(float(base["Ea"]) + n * R * T / 1e3, rel=1e-12)
        # within its recorded deviation of the modified form at 20 temperatures of its range
        grid = list(np.geomspace(t_min, t_max, 20))
        deviation = np.abs(np.log(k_of_row(row, grid) / k_of_row(base, grid)))
        assert deviation.max() <= float(row["linearisation_max_ln_deviation"]) * (1 + 1e-9)
        for column in ("key", "order", "k_units", "T_min_K", "T_max_K", "origin", "references"):
            assert row[column] == base[column]
    meta = json.loads((out / "lin" / "datapackage.json").read_text(encoding="utf-8"))
    assert meta["ratebank"]["form"] == "arrhenius"
    assert [entry["key"] for entry in meta["ratebank"]["linearised"]] == curved
    assert_valid_resource(out / "lin" / "datapackage.json")

    # a linearisation temperature outside a row's range is refused, naming the rows
    before = snapshot(mechanism)
    refused = run(mechanism, "export", str(out / "x"), "--form", "arrhenius",
                  "--linearise-at", "5000")  # fmt: skip
    assert refused.exit_code == 1
    assert refused.stderr.startswith("Error: 4 expression(s) with n != 0 cannot be written")
    assert "5000 K is outside" in refused.stderr and "(option --linearise-at)" in refused.stderr
    assert not (out / "x").exists()
    assert snapshot(mechanism) == before


# --------------------------------------------------------------------------- 6: recommend


def test_recommend_changes_the_exported_expression(mechanism, out, tmp_path):
    literature = {"o-o3": "1.0e-11,0,2200,K,cm3/molecule/s,220,380,1.3,made-up evaluation"}
    path = write(tmp_path / "lit.csv", expressions_csv(literature))
    ok(mechanism, "expressions", "import", str(path))
    ok(mechanism, "export", str(out / "first"), "--preset", "atmospheric")
    _, first = read_table(out / "first" / "mechanism.csv")
    assert first["o-o3"]["origin"] == "measured-fit"

    records = json.loads(
        ok(mechanism, "expressions", "list", "--reaction", "o-o3", "--json").stdout
    )
    (lit_id,) = [r["id"] for r in records if r["origin"] == "literature"]
    before = snapshot(mechanism)
    wrong = run(mechanism, "recommend", "oh-ch4", str(lit_id))
    assert wrong.exit_code == 1
    assert f"expression {lit_id} belongs to reaction 'o-o3', not 'oh-ch4'" in wrong.stderr
    assert snapshot(mechanism) == before

    done = ok(mechanism, "recommend", "o-o3", str(lit_id))
    assert flat(done.stdout) == (
        f"Expression {lit_id} (literature) is now the recommended one for o-o3."
    )
    ok(mechanism, "export", str(out / "second"), "--preset", "atmospheric")
    _, second = read_table(out / "second" / "mechanism.csv")
    row = second["o-o3"]
    assert row["origin"] == "literature"
    assert float(row["A"]) == pytest.approx(1.0e-11, rel=1e-9)
    assert float(row["Ea"]) == pytest.approx(2200.0, rel=1e-9)
    assert (row["T_min_K"], row["T_max_K"], row["uncertainty_factor"]) == ("220.0", "380.0", "1.3")
    assert row["references"] == "made-up evaluation"
    assert {k: v for k, v in second.items() if k != "o-o3"} == {
        k: v for k, v in first.items() if k != "o-o3"
    }
    meta_first = json.loads((out / "first" / "datapackage.json").read_text(encoding="utf-8"))
    meta = json.loads((out / "second" / "datapackage.json").read_text(encoding="utf-8"))
    assert meta["ratebank"]["chosen_by"]["o-o3"] == {"expression_id": lit_id, "rule": "recommended"}
    assert meta["ratebank"]["content_fingerprint"] != meta_first["ratebank"]["content_fingerprint"]


# --------------------------------------------------------------------------- 7: fit forms


def test_fit_auto_takes_n_only_when_the_data_support_it(measured):
    outcome = ok(measured, "fit", "--form", "auto", "--units", "atmospheric", "--json")
    fits = {r["key"]: r for r in json.loads(outcome.stdout)}
    assert {k: r["status"] for k, r in fits.items()} == {"o-o3": "stored", "oh-ch4": "stored"}
    curved = fits["oh-ch4"]
    assert curved["form"] == "modified"
    assert curved["n"] == pytest.approx(2.82, rel=1e-6)
    assert curved["A"] == pytest.approx(1.85e-20, rel=1e-6)
    assert curved["Ea"] == pytest.approx(987.0, rel=1e-6)
    assert (curved["points"], curved["sets"]) == (19, 1)
    straight = fits["o-o3"]
    assert straight["form"] == "arrhenius"
    assert straight["n"] == 0.0
    assert straight["A"] == pytest.approx(8.0e-12, rel=1e-9)
    assert straight["Ea"] == pytest.approx(2060.0, rel=1e-9)

    stored = json.loads(
        ok(
            measured, "expressions", "list", "--origin", "measured-fit", "--units",
            "atmospheric", "--json",
        ).stdout
    )  # fmt: skip
    by_key = {r["reaction"]: r for r in stored}
    assert by_key["oh-ch4"]["provenance"]["form"] == "modified"
    assert by_key["oh-ch4"]["n"] == pytest.approx(2.82, rel=1e-6)
    assert by_key["o-o3"]["provenance"]["form"] == "arrhenius"
    assert by_key["o-o3"]["n"] == 0.0

    again = json.loads(ok(measured, "fit", "--form", "auto", "--json").stdout)
    assert {r["status"] for r in again} == {"unchanged"}

    fixed = json.loads(ok(measured, "fit", "oh-ch4", "--fixed-n", "2", "--json").stdout)
    (record,) = fixed
    assert record["status"] == "stored"
    assert record["n"] == 2.0
    assert record["message"] == "n fixed at 2 by the user"
    stored = json.loads(
        ok(measured, "expressions", "list", "--reaction", "oh-ch4", "--json").stdout
    )
    newest = max(stored, key=lambda r: r["id"])
    assert newest["id"] == record["expression_id"]
    assert newest["n"] == 2.0
    assert newest["provenance"]["fixed_n"] == 2.0
    assert len(stored) == 2


# --------------------------------------------------------------------------- 8: Lennard-Jones


def test_lennard_jones_estimate_follows_the_reference_collision_integral(store, tmp_path):
    ea = 50e3  # J/mol, made up for the tests
    load(
        store,
        tmp_path / "in",
        ["CH4", "O2", "CH3", "HO2"],
        ["ch4-o2"],
        expressions={"ch4-o2": ",,50,kJ/mol,,,,,made-up activation energy for the tests"},
    )
    outcome = ok(
        store, "estimate", "ch4-o2", "--collision", "lennard-jones", "--steric", "0.1",
        "--t-range", "300", "1500", "--units", "si", "--json",
    )  # fmt: skip
    (row,) = json.loads(outcome.stdout)["estimated"]
    t_ref = math.sqrt(300.0 * 1500.0)
    assert row["collision_model"] == "lennard-jones"
    assert row["T_ref_K"] == pytest.approx(t_ref, rel=1e-12)
    assert (row["T_min_K"], row["T_max_K"]) == (300.0, 1500.0)
    deviation = row["max_fit_deviation"]
    assert 0.0 < deviation < 0.05

    (stored,) = json.loads(
        ok(store, "expressions", "list", "--reaction", "ch4-o2", "--origin",
           "collision-estimate", "--units", "si", "--json").stdout
    )  # fmt: skip
    assert (stored["A"], stored["n"], stored["Ea"]) == (row["A"], row["n"], row["Ea"])

    def z_lj(T):
        # hard-sphere z by hand (scipy.constants (CODATA)) times the chemicals Omega(2,2)*
        return hard_sphere_z(T, "CH4", "O2") * omega22(T, "CH4", "O2")

    h = 1e-4  # central difference in ln T on the chemicals function
    slope = (
        math.log(omega22(t_ref * math.exp(h), "CH4", "O2")[0])
        - math.log(omega22(t_ref * math.exp(-h), "CH4", "O2")[0])
    ) / (2 * h)
    e_z = R * t_ref / 2 + R * t_ref * slope
    e0 = ea - e_z

    def model(T):
        return 0.1 * z_lj(T) * np.exp(-e0 / (R * np.asarray(T, dtype=float)))

    def exported(T):
        return modified_arrhenius(T, stored["A"], stored["n"], stored["Ea"])

    at_ref = abs(exported(t_ref) / model(t_ref)[0] - 1.0)
    assert at_ref <= deviation + 1e-7
    grid = np.geomspace(300.0, 1500.0, 60)
    worst = float(np.max(np.abs(exported(grid) / model(grid) - 1.0)))
    assert worst == pytest.approx(deviation, abs=1e-7)
    # the Lennard-Jones rate is not the hard-sphere one: Omega(2,2)* is not 1 here
    hard = (
        0.1
        * float(hard_sphere_z(t_ref, "CH4", "O2"))
        * math.exp(-(ea - R * t_ref / 2) / (R * t_ref))
    )
    assert abs(exported(t_ref) / hard - 1.0) > 10 * deviation


# --------------------------------------------------------------------------- weighted fit


def test_weighted_fit_and_its_uncertainty_match_a_hand_least_squares(store, tmp_path, out):
    # made-up scatter for the tests: the OH + CH4-shaped law times a fixed pattern
    T = OH_CH4_T
    A, n, theta = OH_CH4_LAW
    scatter = np.exp(0.04 * np.sin(np.arange(T.size) * 1.7))
    k = A * T**n * np.exp(-theta / T) * scatter
    u = 0.05 + 0.15 * (np.arange(T.size) % 4) / 3  # relative, one standard deviation
    lines = ["set,reaction,T_K,k,k_uncertainty,uncertainty_kind,reference"]
    lines += [
        f"noisy,oh-ch4,{float(t)!r},{float(x)!r},{float(s)!r},relative,made-up scattered set"
        for t, x, s in zip(T, k, u, strict=True)
    ]
    load(store, tmp_path / "in", ["OH", "CH4", "CH3", "H2O"], ["oh-ch4"], ["\n".join(lines)])
    ok(store, "fit", "--form", "modified")
    ok(store, "export", str(out / "mech"), "--preset", "si")
    _, rows = read_table(out / "mech" / "mechanism.csv")
    row = rows["oh-ch4"]

    # weighted linear least squares in ln k with sigma_ln_k = u (first-order, common
    # practice), absolute covariance; columns scaled for conditioning
    k_si = k * K_TO_SI["cm3/molecule/s"]
    design = np.stack([np.ones_like(T), np.log(T), -1.0 / (R * T)], axis=1)
    scale = np.abs(design).max(axis=0)
    weighted = design / scale / u[:, np.newaxis]
    beta, *_ = np.linalg.lstsq(weighted, np.log(k_si) / u, rcond=None)
    beta = beta / scale
    inverse = np.linalg.inv(weighted.T @ weighted)
    covariance = inverse / np.outer(scale, scale)
    assert float(row["A"]) == pytest.approx(math.exp(beta[0]), rel=1e-9)
    assert float(row["n"]) == pytest.approx(beta[1], rel=1e-9)
    assert float(row["Ea"]) == pytest.approx(beta[2], rel=1e-9)

    def sigma(temperatures):
        temperatures = np.asarray(temperatures, dtype=float)
        g = np.stack(
            [np.ones_like(temperatures), np.log(temperatures), -1.0 / (R * temperatures)], axis=1
        )
        return np.sqrt(np.einsum("ij,jk,ik->i", g, covariance, g))

    # the row's f(T) = f298 exp|g (1/T - 1/298)| (the evaluation panels' form) covers
    # exp(sigma_ln_k) over the fitted range, and the table's factor is its largest value there
    f298, g = float(row["uncertainty_f298"]), float(row["uncertainty_g_K"])
    grid = np.geomspace(200.0, 2000.0, 25)
    panel = np.log(f298) + np.abs(g * (1.0 / grid - 1.0 / 298.0))
    assert np.all(panel >= sigma(grid) * (1 - 1e-9))
    assert math.log(float(row["uncertainty_factor"])) == pytest.approx(panel.max(), rel=1e-9)
    temperatures = [200.0, 632.0, 2000.0]
    args = [text for t in temperatures for text in ("-T", repr(t))]
    record = json.loads(ok(store, "rate", "oh-ch4", *args, "--units", "si", "--json").stdout)
    factors = np.array([r["uncertainty_factor"] for r in record["rates"]])
    expected = np.log(f298) + np.abs(g * (1.0 / np.array(temperatures) - 1.0 / 298.0))
    np.testing.assert_allclose(np.log(factors), expected, rtol=1e-9)
