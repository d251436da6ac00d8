"""``--update`` on the import commands and ``data show``, driven through the command line."""

from __future__ import annotations

import json

import pytest
from helpers.cli import fill_store, run, snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, SPECIES_CSV


@pytest.fixture
def filled(db_url, tmp_path):
    return fill_store(db_url, tmp_path)


def test_update_reports_added_changed_and_unchanged(filled, tmp_path):
    grown = EXPRESSIONS_CSV.replace("2.0e13,0,200", "2.5e13,0,200") + (
        "h-o2-m,4e-32,-1,0,kJ/mol,cm6/molecule2/s,300,2000,2,test review\n"
    )
    path = write(tmp_path / "grown.csv", grown)
    outcome = run(filled, "expressions", "import", str(path), "--update")
    assert outcome.exit_code == 0, outcome.stderr
    assert outcome.stdout.strip() == f"{path}: updated expressions: 1 added, 1 changed, 2 unchanged"
    history = json.loads(run(filled, "history", "--target", "h2o2-dec", "--json").stdout)
    assert history[0]["action"] == "expression.update"
    assert history[0]["detail"]["changed"][1] == "A: 2e+13 -> 2.5e+13 s-1"


def test_update_dry_run_shows_the_counts_and_writes_nothing(filled, tmp_path):
    path = write(tmp_path / "grown.csv", MEASUREMENTS_CSV.replace("6.4e-15", "6.5e-15"))
    before = snapshot(filled)
    outcome = run(filled, "data", "import", str(path), "--update", "--dry-run")
    assert outcome.exit_code == 0, outcome.stderr
    assert outcome.stdout.strip() == (
        f"{path}: valid; would update sets: 0 added, 1 changed, 1 unchanged (5 points read) "
        "(dry run, nothing written)"
    )
    assert snapshot(filled) == before


def test_a_stored_row_without_update_is_one_clear_line_and_nothing_is_written(filled, tmp_path):
    path = write(tmp_path / "again.csv", "name,formula\nCH4,CH4\n")
    before = snapshot(filled)
    outcome = run(filled, "species", "import", str(path))
    assert outcome.exit_code == 1
    assert f"{path}:2: name: species 'CH4' is already in the store" in outcome.stderr
    assert "Traceback" not in outcome.stderr
    assert snapshot(filled) == before


def test_species_update_with_an_identical_file_changes_nothing(filled, tmp_path):
    path = write(tmp_path / "species.csv", SPECIES_CSV)
    before = snapshot(filled)
    outcome = run(filled, "species", "import", str(path), "--update")
    assert outcome.stdout.strip() == f"{path}: updated species: 0 added, 0 changed, 10 unchanged"
    assert snapshot(filled) == before


def test_data_show_lists_the_points_in_both_units_and_the_fits(filled):
    assert run(filled, "fit", "oh-ch4").exit_code == 0
    record = json.loads(run(filled, "data", "show", "s2", "--json").stdout)
    assert record["reaction"] == "oh-ch4"
    assert (record["reference"], record["method"], record["bath_gas"]) == (
        "test lab B",
        "shock tube",
        "Ar",
    )
    assert record["pressures_bar"] == [1.5]
    assert record["k_units_given"] == "cm3/mol/s"
    assert record["withdrawn"] is False
    points = record["points"]
    assert [p["T_K"] for p in points] == [800.0, 1000.0]
    assert [p["k_given_units"] for p in points] == [1.1e12, 2.2e12]
    # the uncertainty was given absolute: 1e11 of 1.1e12 and 2e11 of 2.2e12
    assert [p["relative_uncertainty"] for p in points] == pytest.approx([1 / 11, 1 / 11])
    assert [f["origin"] for f in record["fits"]] == ["measured-fit"]
    table = run(filled, "data", "show", "s1", "--units", "atmospheric")
    assert table.exit_code == 0
    assert "Measurement set s1" in table.stdout
    assert "6.400e-15" in table.stdout
    assert "flash photolysis" in table.stdout
    assert "Fits that used it (1)" in table.stdout


def test_data_show_of_an_unknown_set_is_one_line(filled):
    outcome = run(filled, "data", "show", "nope")
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == "Error: no measurement set 'nope' in the store"


def test_data_show_says_what_in_the_set_is_withdrawn(filled):
    record = json.loads(run(filled, "data", "show", "s1", "--json").stdout)
    first = record["points"][0]["id"]
    assert run(filled, "withdraw", "point", str(first), "--reason", "a spike").exit_code == 0
    record = json.loads(run(filled, "data", "show", "s1", "--json").stdout)
    assert (record["withdrawn"], record["withdrawn_points"]) == (False, 1)
    assert run(filled, "withdraw", "set", "s1", "--reason", "contaminated").exit_code == 0
    record = json.loads(run(filled, "data", "show", "s1", "--json").stdout)
    assert record["withdrawn"] is True
    assert "yes (1 points withdrawn)" in run(filled, "data", "show", "s1").stdout


def test_an_update_that_would_replace_withdrawn_points_is_refused(filled, tmp_path):
    record = json.loads(run(filled, "data", "show", "s1", "--json").stdout)
    point = str(record["points"][0]["id"])
    assert run(filled, "withdraw", "point", point, "--reason", "a spike").exit_code == 0
    path = write(tmp_path / "grown.csv", MEASUREMENTS_CSV.replace("2.6e-14", "2.7e-14"))
    before = snapshot(filled)
    outcome = run(filled, "data", "import", str(path), "--update")
    assert outcome.exit_code == 1
    assert (
        f"{path}:2: set: measurement set 's1' has 1 withdrawn points, which new points would "
        "replace; reinstate them or edit the points one by one"
    ) in outcome.stderr
    assert snapshot(filled) == before
