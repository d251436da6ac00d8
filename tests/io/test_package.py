"""The export as a data package, read back: frictionless validates it, the library's
evaluator agrees with the store's k for every form at 3 temperatures x 3 pressures, an
exported table imports back with every number kept, and a bad package is one clear error.

Every rate number here is synthetic (an invented mechanism).
"""

from __future__ import annotations

import csv
import io
import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import Avogadro as N_A
from scipy.constants import k as K_B

import ratebank
from ratebank.errors import BadInputError
from ratebank.io.package import PackageError

SPECIES = """name,formula
H,H
O,O
O2,O2
HO2,HO2
OH,OH
CO,CO
CO2,CO2
N2,N2
H2O,H2O
H2O2,H2O2
C2H5,C2H5
C2H4,C2H4
CH4,CH4
CH3,CH3
"""
REACTIONS = """key,equation
oh-ch4,OH + CH4 -> CH3 + H2O
oh-co,OH + CO -> H + CO2
o-o-m,O + O + M -> O2 + M
h-oh-m,H + OH + M -> H2O + M
h-o2-m,H + O2 + M -> HO2 + M
c2h5-m,C2H5 + M -> C2H4 + H + M
oh-oh-m,OH + OH + M -> H2O2 + M
o-oh,O + OH -> O2 + H
"""
HEADER = (
    "reaction,form,term,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,"
    "Fc,N,troe_alpha,troe_T3_K,troe_T1_K,troe_T2_K,T_min_K,T_max_K,reference,f298,g_K\n"
)
# synthetic numbers, one reaction per form (and each broadening)
EXPRESSIONS = HEADER + (
    "oh-ch4,arrhenius,,2.0e-18,2.1,1200,K,cm3/molecule/s,,,,,,,,,,,,250,1500,syn arr,1.2,50\n"
    "oh-co,sum,1,1.5e-13,0,0,K,cm3/molecule/s,,,,,,,,,,,,200,400,syn sum,,\n"
    "oh-co,sum,2,2.0e-12,0.5,1500,K,cm3/molecule/s,,,,,,,,,,,,300,2000,syn sum,,\n"
    "o-o-m,sum,1,1.2e17,-1,0,kJ/mol,cm6/mol2/s,,,,,,,,,,,,300,3000,syn third sum,,\n"
    "o-o-m,sum,2,6.2e15,0,-7.5,kJ/mol,cm6/mol2/s,,,,,,,,,,,,300,3000,syn third sum,,\n"
    "h-oh-m,third-body,,2.2e22,-2,0,kJ/mol,cm6/mol2/s,,,,,,,,,,,,300,3000,syn tb,1.5,0\n"
    "h-o2-m,falloff,,4.65e12,0.44,0,kJ/mol,cm3/mol/s,6.37e20,-1.72,2.19,cm6/mol2/s,troe,,,"
    "0.5,30,90000,90000,300,2500,syn troe,,\n"
    "c2h5-m,falloff,,1.1e13,0,167,kJ/mol,s-1,1.7e-6,0,139,cm3/molecule/s,none,,,,,,,"
    "700,1200,syn lindemann,,\n"
    "oh-oh-m,falloff,,2.6e-11,0,0,K,cm3/molecule/s,6.9e-31,-0.8,0,cm6/molecule2/s,fixed-fc,"
    "0.6,,,,,,200,400,syn panel,,\n"
    "o-oh,activated,,1.0e2,0,0,K,s-1,1.5e-13,0,0,cm3/molecule/s,fixed-fc,0.6,1.1,,,,,"
    "200,400,syn activated,,\n"
)
EFFICIENCIES = {"h-oh-m": {"H2O": 6.4, "O2": 0.4}, "h-o2-m": {"H2O": 12.0, "N2": 1.0, "O2": 0.8}}
FORM_OF = {
    "oh-ch4": "arrhenius",
    "oh-co": "sum",
    "o-o-m": "sum",
    "h-oh-m": "third-body",
    "h-o2-m": "falloff",
    "c2h5-m": "falloff",
    "oh-oh-m": "falloff",
    "o-oh": "activated",
}
TEMPERATURES = np.array([300.0, 700.0, 1200.0])
PRESSURES_BAR = [0.01, 1.0, 100.0]
MIXTURE = "N2:0.7,O2:0.2,H2O:0.1"
#: the presets' k units by order, written out here
PRESET_UNITS = {
    "combustion": {1: "s-1", 2: "cm3/mol/s", 3: "cm6/mol2/s"},
    "atmospheric": {1: "s-1", 2: "cm3/molecule/s", 3: "cm6/molecule2/s"},
    "si": {1: "s-1", 2: "m3/mol/s", 3: "m6/mol2/s"},
}
#: m3/mol per unit volume/amount, by hand (1 cm3 = 1e-6 m3; a molecule is 1/N_A mol)
VOLUME_PER_AMOUNT = {"cm3/mol": 1e-6, "cm3/molecule": 1e-6 * N_A, "m3/mol": 1.0}


def _write(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


def _fill(db: str, folder: Path, *, with_expressions: bool = True) -> None:
    store, _ = ratebank.init(db)
    with store:
        store.import_species(_write(folder / "species.csv", SPECIES))
        store.import_reactions(_write(folder / "reactions.csv", REACTIONS))
        if with_expressions:
            store.import_expressions(_write(folder / "expressions.csv", EXPRESSIONS))
            _store_efficiencies(store)


def _store_efficiencies(store) -> None:  # type: ignore[no-untyped-def]
    # the efficiencies import is another command's; here they go in through the store layer
    from ratebank.store.efficiencies import NewEfficiency, write_efficiencies
    from ratebank.store.queries import find_reaction, find_species

    with store.session(write=True) as session:
        write_efficiencies(
            session,
            [
                NewEfficiency(
                    find_reaction(session, key).id,
                    find_species(session, name).id,
                    value,
                    "synthetic",
                )
                for key, values in EFFICIENCIES.items()
                for name, value in values.items()
            ],
        )


@pytest.fixture
def forms_store(db_url, tmp_path) -> str:
    """A fresh store holding one reaction of every form (synthetic numbers)."""
    folder = tmp_path / "in"
    folder.mkdir()
    _fill(db_url, folder)
    return db_url


def _export(db: str, out: Path, preset: str = "combustion"):  # type: ignore[no-untyped-def]
    with ratebank.open(db) as store:
        return store.export(out, preset=preset)


def _rows(path: Path) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(path.read_text(encoding="utf-8"), newline="")))


# --------------------------------------------------------------------------- the package


def test_the_package_validates_with_frictionless_and_holds_every_table(forms_store, tmp_path):
    frictionless = pytest.importorskip("frictionless")
    out = tmp_path / "mech"
    result = _export(forms_store, out)
    report = frictionless.validate(str(out / "datapackage.json"))
    assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "note"])
    assert [task.name for task in report.tasks] == ["mechanism", "efficiencies", "species"]
    assert sorted(p.name for p in out.iterdir()) == [
        "datapackage.json",
        "efficiencies.csv",
        "mechanism.csv",
        "species.csv",
    ]
    rows = _rows(out / "mechanism.csv")
    assert [(r["key"], r["form"], r["term"]) for r in rows] == [
        ("c2h5-m", "falloff", "1"),
        ("h-o2-m", "falloff", "1"),
        ("h-oh-m", "third-body", "1"),
        ("o-o-m", "sum", "1"),
        ("o-o-m", "sum", "2"),
        ("o-oh", "activated", "1"),
        ("oh-ch4", "arrhenius", "1"),
        ("oh-co", "sum", "1"),
        ("oh-co", "sum", "2"),
        ("oh-oh-m", "falloff", "1"),
    ]
    efficiencies = _rows(out / "efficiencies.csv")
    assert {(r["reaction"], r["species"], float(r["efficiency"])) for r in efficiencies} == {
        (key, name, value) for key, values in EFFICIENCIES.items() for name, value in values.items()
    }
    species = {r["name"]: r for r in _rows(out / "species.csv")}
    assert len(species) == 14
    # H2O: 2 x 1.008 + 15.999 g/mol (IUPAC standard atomic weights, from memory)
    assert float(species["H2O"]["molar_mass_kg_mol"]) == pytest.approx(18.015e-3, rel=1e-3)
    meta = json.loads((out / "datapackage.json").read_text(encoding="utf-8"))
    block = meta["ratebank"]
    assert set(block["forms"]) == set(FORM_OF.values()) | {"arrhenius"}
    assert "Pr = k0 * [M]_eff / k_inf" in block["forms"]["falloff"]
    assert "Gilbert, Luther & Troe" in block["broadenings"]["troe"]
    assert "local codes and licensed practice decide" in block["caution"]
    assert "d[A]/dt = -2 r" in block["rate_law_convention"]
    assert result.table_path == out / "mechanism.csv"


@pytest.mark.parametrize("preset", ["combustion", "atmospheric", "si"])
def test_each_limit_has_the_unit_of_its_own_order(forms_store, tmp_path, preset):
    _export(forms_store, tmp_path / "mech", preset)
    units = PRESET_UNITS[preset]
    rows = {(r["key"], r["term"]): r for r in _rows(tmp_path / "mech" / "mechanism.csv")}
    # falloff: k_inf one order fewer than the equation (M counted), k0 the equation's order
    assert (rows["h-o2-m", "1"]["k_units"], rows["h-o2-m", "1"]["k_low_units"]) == (
        units[2],
        units[3],
    )
    assert (rows["c2h5-m", "1"]["k_units"], rows["c2h5-m", "1"]["k_low_units"]) == (
        units[1],
        units[2],
    )
    # activated (written without M): k0 the equation's order, k_inf one fewer
    assert (rows["o-oh", "1"]["k_units"], rows["o-oh", "1"]["k_low_units"]) == (units[1], units[2])
    # third-body and a sum of third-body coefficients: the equation's order, M counted
    assert rows["h-oh-m", "1"]["k_units"] == units[3] and rows["o-o-m", "2"]["k_units"] == units[3]
    # the numbers: A_low of h-o2-m was given as 6.37e20 cm6/mol2/s; by hand in each unit
    volume = VOLUME_PER_AMOUNT[units[2].rsplit("/", 1)[0]]
    given = 6.37e20 * VOLUME_PER_AMOUNT["cm3/mol"] ** 2
    assert float(rows["h-o2-m", "1"]["A_low"]) == pytest.approx(given / volume**2, rel=1e-12)
    given_inf = 4.65e12 * VOLUME_PER_AMOUNT["cm3/mol"]
    assert float(rows["h-o2-m", "1"]["A"]) == pytest.approx(given_inf / volume, rel=1e-12)


# --------------------------------------------------------------------------- the evaluator


def _store_k(db: str, T: np.ndarray, P_bar: float, units):  # type: ignore[no-untyped-def]
    """k of every reaction from ``ratebank rate`` (the library's Store.rate) at P_bar of
    MIXTURE, in the unit the package names for it."""
    with ratebank.open(db) as store:
        return {
            key: np.array(
                [
                    row.k
                    for row in store.rate(
                        key, T.tolist(), k_units=units[key], pressure=P_bar, mixture=MIXTURE
                    ).rows
                ]
            )
            for key in FORM_OF
        }


@pytest.mark.parametrize("preset", ["combustion", "atmospheric"])
def test_the_evaluator_agrees_with_the_store_for_every_form(forms_store, tmp_path, preset):
    _export(forms_store, tmp_path / "mech", preset)
    package = ratebank.read_package(tmp_path / "mech")
    assert package.keys == tuple(sorted(FORM_OF))
    assert {key: r.form for key, r in package.reactions.items()} == FORM_OF
    units = PRESET_UNITS[preset]
    mixture = {"N2": 0.7, "O2": 0.2, "H2O": 0.1}
    for P in PRESSURES_BAR:
        got = package.rate_constants(TEMPERATURES, P=P, mixture=MIXTURE)
        want = _store_k(forms_store, TEMPERATURES, P, package.k_units(pressure=True))
        assert set(got) == set(FORM_OF)
        for key in FORM_OF:
            np.testing.assert_allclose(got[key], want[key], rtol=1e-12, err_msg=key)
        # the same pressure in Pa, and the mixture as a mapping
        again = package.rate_constants(TEMPERATURES, P=P * 1e5, pressure_unit="Pa", mixture=mixture)
        for key in FORM_OF:
            np.testing.assert_allclose(again[key], got[key], rtol=1e-13, err_msg=key)
    # the units it names: k at a pressure has one order fewer for a reaction written with M
    with_p = package.k_units(pressure=True)
    assert with_p["h-o2-m"] == with_p["h-oh-m"] == with_p["o-o-m"] == units[2]
    assert with_p["c2h5-m"] == units[1] and with_p["o-oh"] == units[2]
    assert with_p["oh-ch4"] == with_p["oh-co"] == units[2]


def test_without_a_pressure_the_evaluator_gives_what_rate_gives(forms_store, tmp_path):
    _export(forms_store, tmp_path / "mech", "atmospheric")
    package = ratebank.read_package(tmp_path / "mech")
    free = ["h-oh-m", "o-o-m", "oh-ch4", "oh-co"]
    got = package.rate_constants(TEMPERATURES, keys=free)
    units = package.k_units(pressure=False)
    with ratebank.open(forms_store) as store:
        for key in free:
            report = store.rate(key, TEMPERATURES.tolist(), k_units=units[key])
            want = np.array([row.k for row in report.rows])
            np.testing.assert_allclose(got[key], want, rtol=1e-12, err_msg=key)
    # vectorised over T: a 2-D grid keeps its shape
    grid = package.rate_constants(np.full((2, 3), 500.0), keys=["oh-ch4"])["oh-ch4"]
    assert grid.shape == (2, 3) and np.all(grid == grid[0, 0])


def test_the_evaluator_matches_the_published_formulas_by_hand(forms_store, tmp_path):
    """h-o2-m (Troe) and oh-oh-m (fixed Fc) at 1 bar of the mixture, computed here from the
    row's own numbers: Gilbert, Luther & Troe, Ber. Bunsenges. Phys. Chem. 1983, 87, 169 and
    the evaluation panels' fixed-Fc form with N = 0.75 - 1.27 log10 Fc (both from memory)."""
    _export(forms_store, tmp_path / "mech", "atmospheric")
    rows = {r["key"]: r for r in _rows(tmp_path / "mech" / "mechanism.csv")}
    got = ratebank.read_package(tmp_path / "mech").rate_constants(
        TEMPERATURES, P=1.0, mixture=MIXTURE
    )
    T = TEMPERATURES
    n_M = 1e5 / (K_B * T) * 1e-6  # molecules/cm3

    def law(row, suffix):  # type: ignore[no-untyped-def]
        A, n, Ea_R = (float(row[c + suffix]) for c in ("A", "n", "Ea"))  # Ea in K here
        return A * T**n * np.exp(-Ea_R / T)

    troe = rows["h-o2-m"]
    weight = 0.7 * 1.0 + 0.2 * 0.8 + 0.1 * 12.0
    k0, kinf = law(troe, "_low"), law(troe, "")
    Pr = k0 * n_M * weight / kinf
    a, T3, T1, T2 = (float(troe[c]) for c in ("troe_alpha", "troe_T3_K", "troe_T1_K", "troe_T2_K"))
    Fc = (1 - a) * np.exp(-T / T3) + a * np.exp(-T / T1) + np.exp(-T2 / T)
    c, N = -0.4 - 0.67 * np.log10(Fc), 0.75 - 1.27 * np.log10(Fc)
    x = np.log10(Pr) + c
    F = 10 ** (np.log10(Fc) / (1 + (x / (N - 0.14 * x)) ** 2))
    np.testing.assert_allclose(got["h-o2-m"], kinf * Pr / (1 + Pr) * F, rtol=1e-10)

    panel = rows["oh-oh-m"]
    k0, kinf = law(panel, "_low"), law(panel, "")
    Pr = k0 * n_M / kinf  # no efficiencies stated: every collider counts 1
    Fc = float(panel["Fc"])
    N = 0.75 - 1.27 * math.log10(Fc)
    F = 10 ** (math.log10(Fc) / (1 + (np.log10(Pr) / N) ** 2))
    np.testing.assert_allclose(got["oh-oh-m"], kinf * Pr / (1 + Pr) * F, rtol=1e-10)


def test_a_falloff_without_a_pressure_is_a_clear_error(forms_store, tmp_path):
    _export(forms_store, tmp_path / "mech")
    package = ratebank.read_package(tmp_path / "mech")
    with pytest.raises(BadInputError) as caught:
        package.rate_constants(TEMPERATURES)
    assert str(caught.value) == (
        "c2h5-m, h-o2-m, o-oh, oh-oh-m are pressure-dependent (falloff or activated): give a "
        "pressure P, or leave them out with keys"
    )
    assert caught.value.argument == "P"
    with pytest.raises(BadInputError, match="no reaction 'nope' in the package"):
        package.rate_constants(TEMPERATURES, P=1.0, keys=["nope"])
    with pytest.raises(BadInputError, match="temperatures above 0 K"):
        package.rate_constants([300.0, -1.0], P=1.0)


# --------------------------------------------------------------------------- round trip


def _numbers(path: Path) -> list[dict[str, object]]:
    """The table's cells, numbers as floats (empty stays empty)."""
    found = []
    for row in _rows(path):
        cells: dict[str, object] = {}
        for column, text in row.items():
            try:
                cells[column] = float(text)
            except ValueError:
                cells[column] = text
        found.append(cells)
    return found


@pytest.mark.parametrize("preset", ["combustion", "atmospheric"])
def test_store_export_import_export_keeps_every_number(forms_store, db_url, tmp_path, preset):
    first = tmp_path / "first"
    _export(forms_store, first, preset)
    fresh = db_url + "-fresh" if "://" not in db_url else None
    if fresh is None:
        pytest.skip("the second store of the round trip is a SQLite file")
    folder = tmp_path / "in2"
    folder.mkdir()
    _fill(fresh, folder, with_expressions=False)
    with ratebank.open(fresh) as store:
        summary = store.import_expressions(first / "mechanism.csv")
        assert summary.added == 8  # one expression per reaction (a sum's rows are one)
        _store_efficiencies(store)
    second = tmp_path / "second"
    _export(fresh, second, preset)
    before, after = _numbers(first / "mechanism.csv"), _numbers(second / "mechanism.csv")
    assert len(before) == len(after) == 10
    for old, new in zip(before, after, strict=True):
        assert old.keys() == new.keys()
        for column, value in old.items():
            if isinstance(value, float):
                assert new[column] == pytest.approx(value, rel=1e-12), (old["key"], column)
            else:
                assert new[column] == value, (old["key"], column)
    # and the two packages give the same k
    k1 = ratebank.read_package(first).rate_constants(TEMPERATURES, P=1.0, mixture=MIXTURE)
    k2 = ratebank.read_package(second).rate_constants(TEMPERATURES, P=1.0, mixture=MIXTURE)
    for key in k1:
        np.testing.assert_allclose(k2[key], k1[key], rtol=1e-12)


def test_an_exported_fit_comes_in_as_literature_and_reverse_rows_stay_out(forms_store, tmp_path):
    out = tmp_path / "mech"
    _export(forms_store, out)
    rows = _rows(out / "mechanism.csv")
    for row in rows:
        if row["key"] == "oh-ch4":
            row["origin"] = "measured-fit"
    reverse = dict(rows[0], key="oh-ch4:reverse", origin="detailed-balance-fit", form="arrhenius")
    edited = tmp_path / "edited.csv"
    with edited.open("w", encoding="utf-8", newline="") as handle:
        writer = csv.DictWriter(handle, fieldnames=list(rows[0]), lineterminator="\n")
        writer.writeheader()
        writer.writerows([*rows, reverse])
    # into a store with the same reactions and no expressions yet (in the store it came from,
    # each row would match its stored expression and be refused without update)
    second = str(tmp_path / "second.db")
    folder = tmp_path / "second"
    folder.mkdir()
    _fill(second, folder, with_expressions=False)
    with ratebank.open(second) as store:
        summary = store.import_expressions(edited)
        assert summary.added == 8  # the reverse row is derived, not imported
        imported = [e for e in store.expressions(reaction="oh-ch4") if e.reference == "syn arr"]
    newest = max(imported, key=lambda e: e.id)
    assert newest.origin == "literature"
    with ratebank.open(second) as store, store.session() as session:
        from ratebank.store.queries import expression

        assert expression(session, newest.id).provenance["exported_origin"] == "measured-fit"


# --------------------------------------------------------------------------- bad input


def test_a_table_naming_its_reaction_twice_is_one_clear_error(forms_store, tmp_path):
    out = tmp_path / "mech"
    _export(forms_store, out)
    text = (out / "mechanism.csv").read_text(encoding="utf-8").splitlines()
    bad = _write(
        tmp_path / "bad.csv",
        "\n".join([text[0] + ",reaction", *(line + ",x" for line in text[1:])]) + "\n",
    )
    from ratebank.errors import RatebankError

    with ratebank.open(forms_store) as store, pytest.raises(RatebankError) as caught:
        store.import_expressions(bad)
    assert str(caught.value).splitlines() == [
        f"{bad}: 1 problem(s), nothing was imported",
        f"{bad}:1: key: the reaction is named twice (reaction and key); keep one of the columns",
    ]
    plain = _write(tmp_path / "plain.csv", "reaction,Ea,references\noh-ch4,10,somewhere\n")
    with ratebank.open(forms_store) as store, pytest.raises(RatebankError) as caught:
        store.import_expressions(plain)
    assert f"{plain}:1: references: is a column of an exported mechanism table" in str(caught.value)
    unknown = _write(tmp_path / "unknown.csv", text[0] + ",colour\n" + text[1] + ",red\n")
    with ratebank.open(forms_store) as store, pytest.raises(RatebankError) as caught:
        store.import_expressions(unknown)
    assert f"{unknown}:1: colour: unknown column" in str(caught.value)


@pytest.mark.parametrize(
    ("spoil", "message"),
    [
        ("no-descriptor", "datapackage.json: not found; expected the folder ratebank export"),
        ("not-ours", "datapackage.json: ratebank.package: expected 'ratebank mechanism package'"),
        ("bad-number", "mechanism.csv:3: A: 'lots' is not a finite number"),
        ("bad-form", "mechanism.csv:2: form: 'magic' is not one of arrhenius, sum"),
        ("no-column", "mechanism.csv:1: Ea_units: column missing from the header"),
    ],
)
def test_a_bad_package_is_one_clear_error(forms_store, tmp_path, spoil, message):
    good = tmp_path / "mech"
    _export(forms_store, good)
    bad = tmp_path / "bad"
    shutil.copytree(good, bad)
    table = bad / "mechanism.csv"
    lines = table.read_text(encoding="utf-8").splitlines()
    header = lines[0].split(",")
    if spoil == "no-descriptor":
        (bad / "datapackage.json").unlink()
    elif spoil == "not-ours":
        meta = json.loads((bad / "datapackage.json").read_text(encoding="utf-8"))
        meta["ratebank"]["package"] = "something else"
        (bad / "datapackage.json").write_text(json.dumps(meta), encoding="utf-8")
    elif spoil in ("bad-number", "bad-form"):
        row = 2 if spoil == "bad-number" else 1
        cells = lines[row].split(",")
        column = header.index("A" if spoil == "bad-number" else "form")
        cells[column] = "lots" if spoil == "bad-number" else "magic"
        lines[row] = ",".join(cells)
        table.write_text("\n".join(lines) + "\n", encoding="utf-8")
    else:
        at = header.index("Ea_units")
        table.write_text(
            "\n".join(
                ",".join(c for i, c in enumerate(line.split(",")) if i != at) for line in lines
            )
            + "\n",
            encoding="utf-8",
        )
    with pytest.raises(PackageError) as caught:
        ratebank.read_package(bad)
    text = str(caught.value)
    assert len(text.splitlines()) == 1
    assert text.startswith(str(bad)) and message in text, text
