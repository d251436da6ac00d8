"""Curation that can change its mind, through the real command line: edit every kind of record
under a version check, withdraw it, reinstate it, remove it; each in the history with units;
every refusal one line with nothing written. On SQLite, and on PostgreSQL with
RATEBANK_TEST_PG_URL set."""

from __future__ import annotations

import json

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

import ratebank

#: A third set of oh-ch4 whose numbers disagree with the others (synthetic).
EXTRA_SET = (
    "s3,oh-ch4,450,9.0e-14,cm3/molecule/s,0.2,relative,test lab C,discharge flow,0.01,He\n"
    "s3,oh-ch4,600,2.5e-13,cm3/molecule/s,0.2,relative,test lab C,discharge flow,0.01,He\n"
)


def _fill(db: str, tmp_path, measurements: str = MEASUREMENTS_CSV) -> str:
    assert run(db, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", measurements),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return db


@pytest.fixture
def filled(db_url, tmp_path):
    return _fill(db_url, tmp_path)


def _history(db: str, target: str) -> list[dict]:
    outcome = run(db, "history", "--target", target, "--json")
    assert outcome.exit_code == 0, outcome.stderr
    return json.loads(outcome.stdout)


def _point_ids(db: str, set_name: str) -> list[int]:
    rows = snapshot(db)
    set_id = next(row[0] for row in rows["measurement_set"] if row[1] == set_name)
    return sorted(row[0] for row in rows["point"] if row[1] == set_id)


def _refused(db: str, *args: str) -> str:
    """Run a command that must be refused: one line, exit code 1, nothing written."""
    before = snapshot(db)
    outcome = run(db, *args)
    assert outcome.exit_code == 1, outcome.stdout
    lines = outcome.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: "), outcome.stderr
    assert snapshot(db) == before
    return lines[0]


# --------------------------------------------------------------------------- edits


def test_species_edit_in_the_units_typed_then_a_stale_edit_is_refused(filled):
    outcome = run(filled, "species", "edit", "OH", "--diameter", "2.75", "--expect-version", "1")
    assert outcome.exit_code == 0, outcome.stderr
    assert "now version 2" in outcome.stdout
    with ratebank.open(filled) as store:
        shown = store.species_detail("OH").species.species
    assert shown.diameter == pytest.approx(2.75e-10, rel=1e-15)  # 1 Angstrom = 1e-10 m
    assert shown.diameter_method == "given"
    entry = _history(filled, "OH")[0]
    assert entry["action"] == "species.edit"
    assert entry["detail"]["changed"]["diameter"] == {
        "before": 3.147,
        "after": 2.75,
        "unit": "Angstrom",
    }
    assert entry["at"].endswith("+00:00")  # a time with its zone
    line = _refused(filled, "species", "edit", "OH", "--diameter", "3.0", "--expect-version", "1")
    assert "species 'OH' was changed by" in line and "you read version 1" in line
    line = _refused(filled, "species", "edit", "OH", "--diameter", "3.0", "--expect-version", "7")
    assert "version 7 never existed; species 'OH' is at version 2" in line
    # the history table shows the change with its unit and the time with its zone
    table = run(filled, "history", "--target", "OH").stdout
    assert "diameter 3.147 -> 2.75 Angstrom" in table
    assert "UTC" in table


def test_species_edit_checks_values_as_an_import_does(filled):
    line = _refused(filled, "species", "edit", "OH", "--molar-mass", "30", "--expect-version", "1")
    assert "molar_mass_g_per_mol" in line and "does not match the formula" in line


def test_reaction_edit_class_and_notes_and_the_equation_only_without_data(filled):
    outcome = run(
        filled, "reactions", "edit", "oh-ch4", "--class", "abstraction", "--expect-version", "1"
    )
    assert outcome.exit_code == 0, outcome.stderr
    entry = _history(filled, "oh-ch4")[0]
    assert entry["detail"]["changed"]["reaction_class"]["before"] == "h-abstraction"
    assert entry["detail"]["changed"]["reaction_class"]["after"] == "abstraction"
    line = _refused(
        filled,
        "reactions", "edit", "oh-ch4", "--equation", "OH + CH4 -> H2O + CH3",
        "--expect-version", "2",
    )  # fmt: skip
    assert "cannot change while 2 measurement sets, 1 expressions depend on it" in line
    _refused(filled, "reactions", "edit", "oh-ch4", "--notes", "x", "--expect-version", "1")
    # a reaction nothing depends on: its equation changes, participants with it
    assert run(filled, "reactions", "add", "h-o2", "H + O2 -> HO2").exit_code == 0
    line = _refused(
        filled, "reactions", "edit", "h-o2", "--equation", "H + O2 -> OH", "--expect-version", "1"
    )
    assert "equation" in line  # not balanced
    outcome = run(
        filled,
        "reactions",
        "edit",
        "h-o2",
        "--equation",
        "H + HO2 -> H2O + O",
        "--expect-version",
        "1",
    )
    assert outcome.exit_code == 1  # O is not a species of the store
    outcome = run(
        filled, "reactions", "edit", "h-o2", "--equation", "H + HO2 -> OH + OH",
        "--expect-version", "1",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    with ratebank.open(filled) as store:
        detail = store.reaction("h-o2")
    assert sorted((p.role, p.species.name, p.coefficient) for p in detail.participants) == [
        ("product", "OH", 2),
        ("reactant", "H", 1),
        ("reactant", "HO2", 1),
    ]


def test_set_and_point_edits_record_before_and_after_in_the_units_typed(filled):
    outcome = run(
        filled, "data", "edit-set", "s1", "--reference", "test lab A, corrected",
        "--pressure", "100", "--pressure-units", "Torr", "--expect-version", "1",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    changed = _history(filled, "s1")[0]["detail"]["changed"]
    assert changed["reference"] == {
        "before": "test lab A",
        "after": "test lab A, corrected",
        "unit": "",
    }
    # 0.1 bar = 1e4 Pa = 75.006... Torr (1 Torr = 101325/760 Pa exactly)
    assert changed["pressure"]["before"] == pytest.approx(1e4 / (101325 / 760), rel=1e-12)
    assert changed["pressure"]["unit"] == "Torr"
    _refused(filled, "data", "edit-set", "s1", "--method", "x", "--expect-version", "1")
    line = _refused(
        filled, "data", "edit-set", "s1", "--systematic-uncertainty", "-0.1",
        "--expect-version", "2",
    )  # fmt: skip
    assert "systematic_uncertainty" in line
    # the set's pressure is its points' pressure: each point moved on to version 2
    point = _point_ids(filled, "s1")[0]
    outcome = run(
        filled, "data", "edit-point", str(point), "--k", "6.5e-15", "--expect-version", "2"
    )
    assert outcome.exit_code == 0, outcome.stderr
    change = _history(filled, "s1")[0]["detail"]["changed"]["k"]
    assert change == {"before": 6.4e-15, "after": 6.5e-15, "unit": "cm3/molecule/s"}
    outcome = run(
        filled, "data", "edit-point", str(point), "--k", "3.9e9", "--k-units", "cm3/mol/s",
        "--expect-version", "3",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    change = _history(filled, "s1")[0]["detail"]["changed"]["k"]
    # 6.5e-15 cm3/molecule/s in cm3/mol/s: times N_A = 6.02214076e23 /mol (SI 2019, exact)
    assert change["before"] == pytest.approx(6.5e-15 * 6.02214076e23, rel=1e-12)
    assert change["unit"] == "cm3/mol/s"
    line = _refused(filled, "data", "edit-point", str(point), "--T", "5", "--expect-version", "4")
    assert "T: 5 K is outside" in line
    _refused(filled, "data", "edit-point", str(point), "--T", "310", "--expect-version", "3")
    _refused(filled, "data", "edit-point", "99999", "--T", "310", "--expect-version", "1")


def test_expression_edit_history_in_units_and_a_version_that_never_existed(filled):
    with ratebank.open(filled) as store:
        literature = {e.reaction_key: e.id for e in store.expressions(origin="literature")}
    expression = str(literature["oh-ch4"])
    outcome = run(
        filled, "expressions", "edit", expression, "--A", "2e-20", "--k-units",
        "cm3/molecule/s", "--expect-version", "1",
    )  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    change = _history(filled, "oh-ch4")[0]["detail"]["changed"]["A"]
    assert change == {"before": 1.85e-20, "after": 2e-20, "unit": "cm3/molecule/s"}
    line = _refused(filled, "expressions", "edit", expression, "--n", "2", "--expect-version", "7")
    assert f"version 7 never existed; expression {expression} is at version 2" in line


def test_recommend_of_the_recommended_expression_writes_nothing(filled):
    with ratebank.open(filled) as store:
        literature = {e.reaction_key: e.id for e in store.expressions(origin="literature")}
    expression = str(literature["h2o2-dec"])
    assert run(filled, "recommend", "h2o2-dec", expression).exit_code == 0
    before = snapshot(filled)
    assert run(filled, "recommend", "h2o2-dec", expression).exit_code == 0
    assert snapshot(filled) == before  # no version, no history entry
    with ratebank.open(filled) as store:
        assert [e.version for e in store.expressions(reaction="h2o2-dec")] == [1]


def test_history_keeps_absolute_paths_of_imports(db_url, tmp_path, monkeypatch):
    assert run(db_url, "init").exit_code == 0
    write(tmp_path / "species.csv", SPECIES_CSV)
    monkeypatch.chdir(tmp_path)
    assert run(db_url, "species", "import", "species.csv").exit_code == 0
    with ratebank.open(db_url) as store:
        entry = store.history(limit=1)[0]
    assert entry.target == str(tmp_path / "species.csv")
    assert entry.at.tzinfo is not None


# --------------------------------------------------------------------------- withdraw


@pytest.mark.parametrize(
    ("kind", "record", "listing"),
    [
        ("set", "s2", ("data", "list")),
        ("reaction", "h2o2-dec", ("reactions", "list")),
        ("expression", None, ("expressions", "list")),
        ("point", None, None),
    ],
)
def test_withdraw_and_reinstate_each_kind(filled, kind, record, listing):
    if kind == "expression":
        with ratebank.open(filled) as store:
            record = str(store.expressions(reaction="ho2-ho2")[0].id)
    if kind == "point":
        record = str(_point_ids(filled, "s1")[0])
    outcome = run(filled, "withdraw", kind, record, "--reason", "typo in the source")
    assert outcome.exit_code == 0, outcome.stderr
    assert "Withdrew" in outcome.stdout
    if listing is not None:
        hidden = run(filled, *listing, "--json").stdout
        shown = run(filled, *listing, "--include-withdrawn", "--json").stdout
        assert len(json.loads(hidden)) == len(json.loads(shown)) - 1
    line = _refused(filled, "withdraw", kind, record, "--reason", "again")
    assert "already withdrawn (typo in the source)" in line
    assert run(filled, "reinstate", kind, record).exit_code == 0
    line = _refused(filled, "reinstate", kind, record)
    assert "is not withdrawn" in line
    actions = [e["action"] for e in _history(filled, _target(filled, kind, record))[:2]]
    assert actions == [f"{kind}.reinstate", f"{kind}.withdraw"]


def _target(db: str, kind: str, record: str) -> str:
    if kind == "point":
        return "s1"
    if kind == "expression":
        return "ho2-ho2"
    return record


def test_a_species_is_withdrawn_only_after_its_reactions(filled):
    line = _refused(filled, "withdraw", "species", "H2O2", "--reason", "not needed")
    assert "takes part in reactions in use (h2o2-dec, ho2-ho2); withdraw them first" in line
    for key in ("h2o2-dec", "ho2-ho2"):
        assert run(filled, "withdraw", "reaction", key, "--reason", "not needed").exit_code == 0
    assert run(filled, "withdraw", "species", "H2O2", "--reason", "not needed").exit_code == 0
    assert "H2O2" not in run(filled, "species", "list").stdout
    assert "H2O2 (withdrawn)" in run(filled, "species", "list", "--include-withdrawn").stdout
    listed = json.loads(run(filled, "species", "list", "--include-withdrawn", "--json").stdout)
    assert {s["name"]: s["withdrawn"] for s in listed}["H2O2"] == "not needed"
    line = _refused(filled, "reinstate", "reaction", "h2o2-dec")
    assert "involves withdrawn species (H2O2); reinstate them first" in line
    # the withdrawn reaction is not exported, nor checked
    with ratebank.open(filled) as store:
        table = store.mechanism_table(leave_out_gaps=True)
    assert "h2o2-dec" not in {row.key for row in table.rows}


def test_refusals_of_lifecycle_commands(filled):
    line = _refused(filled, "withdraw", "thing", "x", "--reason", "r")
    assert "unknown kind of record 'thing'" in line
    line = _refused(filled, "withdraw", "set", "nope", "--reason", "r")
    assert "no measurement set 'nope'" in line
    line = _refused(filled, "withdraw", "set", "s1", "--reason", "  ")
    assert "needs a reason" in line
    line = _refused(filled, "withdraw", "point", "first", "--reason", "r")
    assert "is not one" in line


def test_remove_only_what_nothing_refers_to(filled):
    line = _refused(filled, "remove", "species", "OH")
    assert "cannot be removed" in line and "reaction participations" in line
    assert run(filled, "species", "add", "XY", "N2").exit_code == 0
    outcome = run(filled, "remove", "species", "XY")
    assert outcome.exit_code == 0, outcome.stderr
    assert "XY" not in run(filled, "species", "list", "--include-withdrawn").stdout
    entry = _history(filled, "XY")[0]
    assert entry["action"] == "species.remove" and entry["detail"]["values"]["formula"] == "N2"
    assert run(filled, "fit", "oh-ch4").exit_code == 0
    line = _refused(filled, "remove", "set", "s1")
    assert "measured fits" in line


# --------------------------------------------------------------------------- fits


def _fit(db: str) -> tuple:
    outcome = run(db, "fit", "oh-ch4", "--form", "modified")
    assert outcome.exit_code == 0, outcome.stderr
    with ratebank.open(db) as store:
        fit = store.expressions(reaction="oh-ch4", origin="measured-fit")[-1]
    return fit.A, fit.n, fit.Ea, fit.uncertainty_factor, fit.uncertainty_g, fit.T_min, fit.T_max


def test_a_withdrawn_set_fits_exactly_as_a_store_without_it(db_url, tmp_path):
    withdrawn = _fill(db_url, tmp_path, MEASUREMENTS_CSV + EXTRA_SET)
    with_it = _fit(withdrawn)
    assert run(withdrawn, "withdraw", "set", "s3", "--reason", "contaminated").exit_code == 0
    after = _fit(withdrawn)
    reference = tmp_path / "without"
    reference.mkdir()
    without = _fill(f"sqlite:///{reference / 'without.db'}", reference)
    assert after == _fit(without)  # the same numbers, bit for bit
    assert after != with_it
    # withdrawing the set's points one by one gives the same fit again
    assert run(withdrawn, "reinstate", "set", "s3").exit_code == 0
    for point in _point_ids(withdrawn, "s3"):
        assert run(withdrawn, "withdraw", "point", str(point), "--reason", "bad").exit_code == 0
    assert _fit(withdrawn) == after
    # and a reinstated set is used again
    for point in _point_ids(withdrawn, "s3"):
        assert run(withdrawn, "reinstate", "point", str(point)).exit_code == 0
    assert _fit(withdrawn) == with_it
