"""The curation commands through the real command line, on a fresh store per test."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

from ratebank.store.schema import HEAD_REVISION, KNOWN_REVISIONS


@pytest.fixture
def store(db_url):
    assert run(db_url, "init").exit_code == 0
    return db_url


@pytest.fixture
def filled(store, tmp_path):
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(store, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return store


# --------------------------------------------------------------------------- init


def test_init_creates_then_is_a_noop(db_url):
    first = run(db_url, "init")
    assert first.exit_code == 0
    assert "Created a ratebank store" in first.stdout
    before = snapshot(db_url)
    second = run(db_url, "init")
    assert second.exit_code == 0
    assert "is up to date" in second.stdout
    assert snapshot(db_url) == before


def test_init_upgrades_a_store_from_the_first_revision(db_url):
    from ratebank.store.engine import create_store_engine, database_url
    from ratebank.store.schema import upgrade_store

    engine = create_store_engine(database_url(db_url))
    upgrade_store(engine, KNOWN_REVISIONS[0])
    engine.dispose()
    refused = run(db_url, "species", "list")
    assert refused.exit_code == 1
    assert "run `ratebank init` to upgrade it" in refused.stderr
    upgraded = run(db_url, "init")
    assert upgraded.exit_code == 0
    assert f"from schema {KNOWN_REVISIONS[0]} to {HEAD_REVISION}" in upgraded.stdout
    assert run(db_url, "species", "list").exit_code == 0


def test_commands_refuse_a_store_that_was_never_initialised(db_url):
    outcome = run(db_url, "reactions", "list")
    assert outcome.exit_code == 1
    if "://" in db_url:  # a database server: the database exists, the store does not
        assert outcome.stderr.strip() == (
            "Error: this database is not a ratebank store yet: run `ratebank init` to create it"
        )
    else:  # a SQLite file that does not exist is not created by a read
        assert outcome.stderr.strip().startswith(f"Error: there is no store at {db_url} ")
        assert not Path(db_url).exists()
    assert "Traceback" not in outcome.stderr + outcome.stdout


def test_missing_folder_is_one_clear_line(tmp_path):
    outcome = run(str(tmp_path / "nowhere" / "x.db"), "init")
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith("Error: folder ")
    assert len(outcome.stderr.strip().splitlines()) == 1


# --------------------------------------------------------------------------- species


def test_species_import_list_and_show(store, tmp_path):
    outcome = run(store, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)))
    assert outcome.exit_code == 0
    assert "imported 10 species" in outcome.stdout
    table = run(store, "species", "list").stdout
    for header in ("name", "formula", "M (g/mol)", "d (Å)", "ε/k (K)", "Tc (K)", "Pc (bar)"):
        assert header in table
    records = json.loads(run(store, "species", "list", "--json").stdout)
    by_name = {r["name"]: r for r in records}
    assert set(by_name) == {"OH", "CH4", "CH3", "H2O", "HO2", "H2O2", "O2", "O3", "H", "N2"}
    # IUPAC 2021 abridged atomic weights: C 12.011, H 1.008 (from memory)
    assert by_name["CH4"]["molar_mass_g_per_mol"] == pytest.approx(12.011 + 4 * 1.008, rel=1e-9)
    assert by_name["CH4"]["molar_mass_source"] == "formula"
    assert by_name["H2O"]["molar_mass_g_per_mol"] == pytest.approx(18.015, rel=1e-12)
    assert by_name["H2O"]["molar_mass_source"] == "given"
    assert by_name["O2"]["diameter_angstrom"] == pytest.approx(3.467, rel=1e-12)
    assert by_name["O2"]["diameter_method"] == "given"
    assert by_name["O3"]["critical_pressure_bar"] == pytest.approx(55.73, rel=1e-12)
    missing = json.loads(run(store, "species", "list", "--missing-diameter", "--json").stdout)
    assert {r["name"] for r in missing} == {"CH3", "H2O2", "O3", "H"}
    shown = run(store, "species", "show", "O2")
    assert shown.exit_code == 0
    assert "collision diameter (Å)" in shown.stdout
    assert "3.467" in shown.stdout


def test_species_add_then_duplicate_is_refused(store):
    added = run(store, "species", "add", "CH3OH", "CH3OH", "--tc", "512.6", "--pc", "80.97")
    assert added.exit_code == 0
    before = snapshot(store)
    again = run(store, "species", "add", "CH3OH", "CH4O")
    assert again.exit_code == 1
    assert "species 'CH3OH' is already in the store" in again.stderr
    assert snapshot(store) == before


def test_species_show_unknown(store):
    outcome = run(store, "species", "show", "XYZ")
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == "Error: no species 'XYZ' in the store"


HEADER = (
    "name,formula,molar_mass_g_per_mol,diameter_angstrom,diameter_kind,well_depth_K,"
    "critical_temperature_K,critical_pressure_bar,boiling_volume_cm3_per_mol,source\n"
)


@pytest.mark.parametrize(
    ("content", "expected"),
    [
        ("formula,source\nCH4,x\n", ":1: name: required column is missing from the header"),
        (
            "name,formula,diameter_angstorm\nCH4,CH4,3.7\n",
            ":1: diameter_angstorm: unknown column (did you mean 'diameter_angstrom'?); expected columns are name, formula",
        ),
        (HEADER + "CH4,CH4,,abc,,,,,,\n", ":2: diameter_angstrom: 'abc' is not a number"),
        (HEADER + "CH4,CH4,,nan,,,,,,\n", ":2: diameter_angstrom: 'nan' is not a finite number"),
        (HEADER + "CH4,CH4,,inf,,,,,,\n", ":2: diameter_angstrom: 'inf' is not a finite number"),
        (HEADER + "CH4,CH4,,-3.7,,,,,,\n", ":2: diameter_angstrom: -3.7 must be greater than zero"),
        (HEADER + "CH4,CH4,,,,,0,,,\n", ":2: critical_temperature_K: 0 must be greater than zero"),
        (HEADER + "CH4,CH4,,,,,,,,\nCH4,CH4,,,,,,,,\n", ":3: name: species 'CH4' appears twice"),
        (HEADER + "CH4,CH4Q,,,,,,,,\n", ":2: formula: "),
        (HEADER + ",CH4,,,,,,,,\n", ":2: name: is empty; expected the species name"),
        (HEADER + "CH4,CH4,,3.7,round,,,,,\n", ":2: diameter_kind: 'round' is not one of"),
        (HEADER + "CH4,CH4,20.0,,,,,,,\n", ":2: molar_mass_g_per_mol: 20 g/mol does not match"),
        (HEADER + "CH4,CH4,,3.7,,,,,\n", ":2: has 9 cells but the header has 10"),
        (HEADER + 'CH4,"CH4,,,,,,,,,\n', "unclosed quote"),
        ("", ": is empty; expected a header row with the columns name, formula"),
        (HEADER, ": has a header but no data rows"),
    ],
)
def test_species_import_errors(store, tmp_path, content, expected):
    path = write(tmp_path / "bad.csv", content)
    before = snapshot(store)
    outcome = run(store, "species", "import", str(path))
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith("Error: ")
    assert expected in outcome.stderr
    assert str(path) in outcome.stderr
    assert "Traceback" not in outcome.stderr
    assert snapshot(store) == before


def test_species_import_wrong_encoding(store, tmp_path):
    path = tmp_path / "latin1.csv"
    path.write_bytes((HEADER + "CH4,CH4,,,,,,,,Müller lab\n").encode("latin-1"))
    before = snapshot(store)
    outcome = run(store, "species", "import", str(path))
    assert outcome.exit_code == 1
    assert f"{path}:2: byte 0xfc is not UTF-8" in outcome.stderr
    assert snapshot(store) == before


def test_species_duplicate_against_store_and_all_or_nothing(store, tmp_path):
    run(store, "species", "add", "CH4", "CH4")
    before = snapshot(store)
    path = write(tmp_path / "s.csv", HEADER + "O2,O2,,,,,,,,\nCH4,CH4,,,,,,,,\n")
    outcome = run(store, "species", "import", str(path))
    assert outcome.exit_code == 1
    assert f"{path}:3: name: species 'CH4' is already in the store" in outcome.stderr
    assert snapshot(store) == before  # O2 on line 2 was valid but is not written either


def test_many_problems_are_all_reported(store, tmp_path):
    rows = "".join(f"S{i},CH4,,-1,,,,,,\n" for i in range(80))
    outcome = run(store, "species", "import", str(write(tmp_path / "s.csv", HEADER + rows)))
    assert outcome.exit_code == 1
    assert "80 problem(s), nothing was imported" in outcome.stderr
    assert ":2: diameter_angstrom:" in outcome.stderr
    assert "... and 30 more problems" in outcome.stderr


def test_dry_run_writes_nothing(store, tmp_path):
    before = snapshot(store)
    outcome = run(
        store, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)), "--dry-run"
    )
    assert outcome.exit_code == 0
    assert "would import 10 species" in outcome.stdout
    assert snapshot(store) == before


# --------------------------------------------------------------------------- reactions


def test_reactions_import_list_and_lookup_by_any_spelling(store, tmp_path):
    run(store, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)))
    outcome = run(store, "reactions", "import", str(write(tmp_path / "r.csv", REACTIONS_CSV)))
    assert outcome.exit_code == 0, outcome.stderr
    records = {r["key"]: r for r in json.loads(run(store, "reactions", "list", "--json").stdout)}
    assert records["oh-ch4"]["equation"] == "CH4 + OH -> CH3 + H2O"
    assert records["oh-ch4"]["order"] == 2
    assert records["ho2-ho2"]["equation"] == "HO2 + HO2 -> H2O2 + O2"
    assert records["h-o2-m"]["order"] == 3
    assert records["h-o2-m"]["third_body"] is True
    assert records["h2o2-dec"]["order"] == 1
    shown = run(store, "reactions", "show", "H2O + CH3 -> OH + CH4")
    assert shown.exit_code == 1  # the reverse is a different reaction
    assert "no reaction 'CH3 + H2O -> CH4 + OH' in the store" in shown.stderr
    shown = run(store, "reactions", "show", "CH4 + OH -> H2O + CH3", "--json")
    assert json.loads(shown.stdout)["key"] == "oh-ch4"


def test_reaction_add_checks_balance(store):
    run(store, "species", "add", "OH", "HO")
    run(store, "species", "add", "H2O2", "H2O2")
    run(store, "species", "add", "H2O", "H2O")
    before = snapshot(store)
    outcome = run(store, "reactions", "add", "bad", "OH + OH -> H2O")
    assert outcome.exit_code == 1
    assert "does not balance" in outcome.stderr
    assert "O is 2 on the left and 1 on the right" in outcome.stderr
    assert snapshot(store) == before
    ok = run(store, "reactions", "add", "oh-oh", "2 OH -> H2O2", "--class", "recombination")
    assert ok.exit_code == 0
    assert "OH + OH -> H2O2" in ok.stdout


RHEADER = "key,equation\n"


@pytest.mark.parametrize(
    ("rows", "expected"),
    [
        ("a,OH + XY -> CH4\n", ":2: equation: unknown species 'XY'"),
        ("a,OH + CH4 -> CH3 + H2O2\n", ":2: equation: equation"),
        ("a,OH + CH4 CH3 + H2O\n", ":2: equation: "),
        (
            "a,CH3 + H2O -> CH4 + OH\na,OH + CH3 -> CH4 + O\n",
            ":3: key: reaction key 'a' appears twice",
        ),
        (
            "a,OH + CH4 -> CH3 + H2O\n",
            ":2: equation: 'CH4 + OH -> CH3 + H2O' is already in the store as 'oh-ch4'",
        ),
        (
            "a,CH3 + H2O -> CH4 + OH\nb,H2O + CH3 -> OH + CH4\n",
            ":3: equation: 'CH3 + H2O -> CH4 + OH' appears twice in the input",
        ),
        ("oh-ch4,OH + CH3 -> CH4 + O\n", ":2: key: reaction key 'oh-ch4' is already in the store"),
        ("a,CH3 + H2O -> CH4 + OH\nb,\n", ":3: equation: is empty"),
        ("a b,CH3 + H2O -> CH4 + OH\n", ":2: key: 'a b' contains spaces"),
    ],
)
def test_reaction_import_errors(store, tmp_path, rows, expected):
    for name, formula in (
        ("OH", "HO"),
        ("CH4", "CH4"),
        ("CH3", "CH3"),
        ("H2O", "H2O"),
        ("H2O2", "H2O2"),
        ("O", "O"),
    ):
        run(store, "species", "add", name, formula)
    run(store, "reactions", "add", "oh-ch4", "OH + CH4 -> CH3 + H2O")
    before = snapshot(store)
    path = write(tmp_path / "r.csv", RHEADER + rows)
    outcome = run(store, "reactions", "import", str(path))
    assert outcome.exit_code == 1
    assert expected in outcome.stderr
    assert snapshot(store) == before


def test_reaction_listing_filters(filled):
    def keys(*args):
        return {
            r["key"] for r in json.loads(run(filled, "reactions", "list", "--json", *args).stdout)
        }

    assert keys("--species", "OH") == {"oh-ch4", "h2o2-dec"}
    assert keys("--class", "ho2-self") == {"ho2-ho2"}
    assert keys("--status", "measured") == {"oh-ch4"}
    assert keys("--status", "complete") == {"h2o2-dec"}
    assert keys("--status", "ea-only") == {"ho2-ho2"}
    assert keys("--status", "nothing") == {"h-o2-m"}
    table = run(filled, "reactions", "list").stdout
    for header in ("key", "equation", "order", "class", "sets", "points", "expressions", "status"):
        assert header in table
    bad = run(filled, "reactions", "list", "--status", "done")
    assert bad.exit_code == 1
    assert "unknown status 'done'" in bad.stderr


def test_names_with_sql_are_literal(store):
    # a species name is one an equation can hold, quotes and dashes included
    name = "X'OR'1'--DROP"
    assert run(store, "species", "add", name, "CH4").exit_code == 0
    records = json.loads(run(store, "species", "list", "--json", "--name", "DROP").stdout)
    assert [r["name"] for r in records] == [name]
    assert json.loads(run(store, "species", "show", name, "--json").stdout)["name"] == name


# --------------------------------------------------------------------------- data


def test_data_import_converts_to_si(filled):
    sets = {s["set"]: s for s in json.loads(run(filled, "data", "list", "--json").stdout)}
    assert sets["s1"]["points"] == 3
    assert sets["s1"]["T_min_K"] == 300
    assert sets["s1"]["T_max_K"] == 400
    assert sets["s2"]["k_units_given"] == "cm3/mol/s"
    from sqlalchemy import select

    from ratebank.services.store_access import open_store
    from ratebank.store.models import MeasurementSet, Point

    store = open_store(filled)
    with store.session() as session:
        points = {
            (name, t): (k, u)
            for name, t, k, u in session.execute(
                select(
                    MeasurementSet.name,
                    Point.temperature,
                    Point.rate_constant,
                    Point.relative_uncertainty,
                ).join(MeasurementSet)
            )
        }
    store.close()
    # 1 cm3 molecule-1 s-1 = N_A * 1e-6 m3 mol-1 s-1 (scipy.constants, CODATA)
    assert points[("s1", 300)][0] == pytest.approx(6.4e-15 * constants.N_A * 1e-6, rel=1e-12)
    assert points[("s1", 300)][1] == pytest.approx(0.1)
    # cm3 mol-1 s-1 -> m3 mol-1 s-1 is 1e-6 (exact); absolute 1e11 of 1.1e12 is relative 1/11
    assert points[("s2", 800)][0] == pytest.approx(1.1e12 * 1e-6, rel=1e-12)
    assert points[("s2", 800)][1] == pytest.approx(1e11 / 1.1e12, rel=1e-12)


MHEADER = (
    "set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference,method,"
    "pressure_bar,bath_gas\n"
)


@pytest.mark.parametrize(
    ("rows", "expected"),
    [
        ("s9,oh-ch4,0,1e-14,cm3/molecule/s,,,,,,\n", ":2: T_K: 0 must be greater than zero"),
        ("s9,oh-ch4,-5,1e-14,cm3/molecule/s,,,,,,\n", ":2: T_K: -5 must be greater than zero"),
        ("s9,oh-ch4,300,0,cm3/molecule/s,,,,,,\n", ":2: k: 0 must be greater than zero"),
        ("s9,oh-ch4,300,abc,cm3/molecule/s,,,,,,\n", ":2: k: 'abc' is not a number"),
        ("s9,oh-ch4,300,nan,cm3/molecule/s,,,,,,\n", ":2: k: 'nan' is not a finite number"),
        (
            "s9,oh-ch4,300,1e-14,cm3/molecule/s,-0.1,,,,,\n",
            ":2: k_uncertainty: -0.1 must be greater",
        ),
        ("s9,oh-xx,300,1e-14,cm3/molecule/s,,,,,,\n", ":2: reaction: no reaction with key 'oh-xx'"),
        (
            "s9,oh-ch4,300,1e-14,s-1,,,,,,\n",
            ":2: k_units: unit 's-1' is for a rate constant of order 1, but this reaction is of order 2",
        ),
        ("s9,oh-ch4,300,1e-14,furlongs,,,,,,\n", ":2: k_units: "),
        ("s9,oh-ch4,300,1e-14,,,,,,,\n", ":2: k_units: is empty and no default k_units was given"),
        ("s1,oh-ch4,300,1e-14,cm3/molecule/s,,,,,,\n", ":2: set: measurement set 's1' is already"),
        (
            "s9,oh-ch4,300,1e-14,cm3/molecule/s,,,,,,\ns9,h2o2-dec,310,1e-14,cm3/molecule/s,,,,,,\n",
            ":3: reaction: set 's9' was given for reaction 'oh-ch4' on line 2",
        ),
        (
            "s9,oh-ch4,300,1e-14,cm3/molecule/s,,,,,,\ns9,oh-ch4,310,1e-14,cm3/mol/s,,,,,,\n",
            ":3: k_units: 'cm3/mol/s' differs from 'cm3/molecule/s'",
        ),
        (
            "s9,oh-ch4,300,1e-14,cm3/molecule/s,0.1,sometimes,,,,\n",
            ":2: uncertainty_kind: 'sometimes'",
        ),
        ("s9,oh-ch4,300,1e-14,cm3/molecule/s,,,,,0,\n", ":2: pressure_bar: 0 must be greater"),
    ],
)
def test_data_import_errors(filled, tmp_path, rows, expected):
    before = snapshot(filled)
    path = write(tmp_path / "m.csv", MHEADER + rows)
    outcome = run(filled, "data", "import", str(path))
    assert outcome.exit_code == 1
    assert expected in outcome.stderr
    assert snapshot(filled) == before


def test_data_import_default_units_option(filled, tmp_path):
    path = write(
        tmp_path / "m.csv", "set,reaction,T_K,k\ns7,oh-ch4,300,6e-15\ns7,oh-ch4,320,8e-15\n"
    )
    refused = run(filled, "data", "import", str(path))
    assert refused.exit_code == 1
    assert "no k_units column and no default k_units" in refused.stderr
    ok = run(filled, "data", "import", str(path), "--k-units", "cm3 molecule-1 s-1")
    assert ok.exit_code == 0, ok.stderr
    assert "imported 2 points in 1 sets" in ok.stdout
    wrong = run(filled, "data", "import", str(path), "--k-units", "cm6/molecule2/s")
    assert wrong.exit_code == 1


# --------------------------------------------------------------------------- expressions


def test_expressions_import_and_list(filled):
    records = json.loads(
        run(filled, "expressions", "list", "--json", "--units", "atmospheric").stdout
    )
    by_reaction = {r["reaction"]: r for r in records}
    assert by_reaction["ho2-ho2"]["A"] is None
    # E in K means E/R: 987 K stays 987 K in the atmospheric preset
    assert by_reaction["oh-ch4"]["Ea"] == pytest.approx(987.0, rel=1e-12)
    assert by_reaction["oh-ch4"]["A"] == pytest.approx(1.85e-20, rel=1e-12)
    assert by_reaction["oh-ch4"]["n"] == pytest.approx(2.82)
    combustion = json.loads(run(filled, "expressions", "list", "--json").stdout)
    ho2 = next(r for r in combustion if r["reaction"] == "ho2-ho2")
    assert ho2["Ea"] == pytest.approx(-4.9, rel=1e-12)
    assert ho2["Ea_units"] == "kJ/mol"
    oh = next(r for r in combustion if r["reaction"] == "oh-ch4")
    # 987 K * R = J/mol (scipy.constants.R); A in cm3/mol/s = cm3/molecule/s * N_A
    assert oh["Ea"] == pytest.approx(987 * constants.R / 1000, rel=1e-12)
    assert oh["A"] == pytest.approx(1.85e-20 * constants.N_A, rel=1e-12)
    table = run(filled, "expressions", "list").stdout
    assert "Ea (kJ/mol)" in table
    assert "(to estimate)" in table


EHEADER = "reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference\n"


@pytest.mark.parametrize(
    ("rows", "expected"),
    [
        (
            "oh-ch4,1e-12,0,10,kJ/mol,s-1,,,,\n",
            ":2: k_units: unit 's-1' is for a rate constant of order 1",
        ),
        ("oh-ch4,1e-12,0,10,kJ,cm3/molecule/s,,,,\n", ":2: Ea_units: "),
        ("oh-ch4,1e-12,0,,kJ/mol,cm3/molecule/s,,,,\n", ":2: Ea: is empty"),
        (
            "oh-ch4,-1e-12,0,10,kJ/mol,cm3/molecule/s,,,,\n",
            ":2: A: -1e-12 must be greater than zero",
        ),
        ("oh-ch4,1e-12,0,10,kJ/mol,,,,,\n", ":2: k_units: is empty; A needs its unit"),
        (
            "oh-ch4,1e-12,0,10,kJ/mol,cm3/molecule/s,500,300,,\n",
            ":2: T_max_K: 300 K is below T_min_K",
        ),
        (
            "oh-ch4,1e-12,0,10,kJ/mol,cm3/molecule/s,,,0.5,\n",
            ":2: uncertainty_factor: 0.5 is below 1",
        ),
        (
            "nope,1e-12,0,10,kJ/mol,cm3/molecule/s,,,,\n",
            ":2: reaction: no reaction with key 'nope'",
        ),
    ],
)
def test_expression_import_errors(filled, tmp_path, rows, expected):
    before = snapshot(filled)
    outcome = run(filled, "expressions", "import", str(write(tmp_path / "e.csv", EHEADER + rows)))
    assert outcome.exit_code == 1
    assert expected in outcome.stderr
    assert snapshot(filled) == before


# --------------------------------------------------------------------------- history


def test_history_records_the_author(store, monkeypatch):
    outcome = run(store, "species", "add", "CH4", "CH4", env={"RATEBANK_AUTHOR": "ada"})
    assert outcome.exit_code == 0
    records = json.loads(run(store, "history", "--json").stdout)
    assert records[0]["author"] == "ada"
    assert records[0]["action"] == "species.add"
    assert records[0]["detail"]["names"] == ["CH4"]
    table = run(store, "history").stdout
    assert "species.add" in table and "ada" in table


def test_author_option_wins(store):
    from typer.testing import CliRunner

    from ratebank.cli.app import app

    result = CliRunner(env={"RATEBANK_AUTHOR": "ada"}).invoke(
        app, ["--db", store, "--author", "grace", "species", "add", "O2", "O2"]
    )
    assert result.exit_code == 0
    assert json.loads(run(store, "history", "--json").stdout)[0]["author"] == "grace"


def test_reaction_show_has_everything_on_one_screen(filled):
    run(filled, "fit", "oh-ch4", "--form", "arrhenius")
    shown = run(
        filled, "reactions", "show", "oh-ch4", "--units", "atmospheric", "-T", "300", "-T", "1000"
    )
    assert shown.exit_code == 0, shown.stderr
    text = shown.stdout
    for heading in (
        "Reaction oh-ch4",
        "Participants",
        "M (g/mol)",
        "d (Å)",
        "ε/k (K)",
        "Measurement sets (2)",
        "Expressions (2), k = A T^n exp(-Ea/RT), atmospheric units",
        "Ea (K)",
        "k at a temperature grid (cm3/molecule/s)",
        "Steric factors",
        "Check flags (0)",
        "Recent history",
    ):
        assert heading in text, heading
    assert "exported: the expression the export uses (newest measured fit)" in " ".join(
        text.split()
    )
    record = json.loads(
        run(filled, "reactions", "show", "oh-ch4", "--json", "-T", "300", "-T", "1000").stdout
    )
    assert record["rates"]["T_K"] == [300.0, 1000.0]
    assert record["rates"]["k_units"] == "cm3/mol/s"
    chosen = str(record["chosen_expression"]["id"])
    fit = next(e for e in record["expressions"] if e["origin"] == "measured-fit")
    # k = A T^n exp(-Ea/RT) with the listed (combustion-unit) numbers; R from scipy.constants
    expected = fit["A"] * 300.0 ** fit["n"] * math.exp(-fit["Ea"] * 1000 / (constants.R * 300.0))
    assert record["rates"]["by_expression"][chosen][0] == pytest.approx(expected, rel=1e-9)
    assert [h["action"] for h in record["history"]][:1] == ["fit"]
