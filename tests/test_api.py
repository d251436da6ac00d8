"""The public Python API, driven directly: ``ratebank.open`` / ``ratebank.init`` and the Store.

Each test gets a fresh store (SQLite, and PostgreSQL when RATEBANK_TEST_PG_URL is set) filled
with the small inputs of tests/helpers/data.py, whose rate numbers are made up for the tests.
Unit factors from ``scipy.constants``: 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1; an Ea
given in K means Ea/R.
"""

from __future__ import annotations

import csv
import json
import math
import re
import subprocess
import sys
from pathlib import Path

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

import ratebank
from ratebank import api
from ratebank.errors import (
    BadInputError,
    ConflictError,
    ExportGapsError,
    ImportValidationError,
    NotFoundError,
    RatebankError,
    RefusedEstimateError,
    StaleEditError,
    StoreError,
    StoreRevisionError,
    UnitError,
)
from ratebank.numbers import round_significant
from ratebank.services.store_access import StoreHandle
from ratebank.store.schema import HEAD_REVISION

PER_MOLECULE = constants.N_A * 1e-6  # cm3/molecule/s in m3/mol/s
README = Path(__file__).resolve().parents[1] / "README.md"


@pytest.fixture
def files(tmp_path: Path) -> dict[str, Path]:
    """The small test inputs as CSV files."""
    return {
        kind: write(tmp_path / f"{kind}.csv", text)
        for kind, text in (
            ("species", SPECIES_CSV),
            ("reactions", REACTIONS_CSV),
            ("measurements", MEASUREMENTS_CSV),
            ("expressions", EXPRESSIONS_CSV),
        )
    }


@pytest.fixture
def store(db_url):
    """A fresh, initialised, empty store opened as the author 'tester'."""
    opened, _ = ratebank.init(db_url, author="tester")
    yield opened
    opened.close()


@pytest.fixture
def filled(store, files):
    """The store holding every small test input."""
    store.import_species(files["species"])
    store.import_reactions(files["reactions"])
    store.import_measurements(files["measurements"])
    store.import_expressions(files["expressions"])
    return store


def _literature_id(store, key: str) -> int:
    return store.expressions(reaction=key, origin="literature")[0].id


# --------------------------------------------------------------------------- the front door


def test_init_creates_a_store_then_changes_nothing(db_url):
    created, result = ratebank.init(db_url, author="tester")
    with created:
        assert (result.before, result.after, result.changed) == (None, HEAD_REVISION, True)
        assert created.author == "tester"
    again, result = ratebank.init(db_url)
    again.close()
    assert (result.before, result.changed) == (HEAD_REVISION, False)
    with ratebank.open(db_url) as opened:
        assert isinstance(opened, ratebank.Store)
        assert opened.species() == []
        assert [e.action for e in opened.history()] == ["store.init"]


def test_open_refuses_a_database_that_is_not_a_store_yet(db_url):
    if "://" not in db_url:
        # a missing SQLite file is refused without making one
        with pytest.raises(StoreError, match=r"there is no store at .* \(no such file\)"):
            ratebank.open(db_url)
        assert not Path(db_url).exists()
        Path(db_url).touch()  # an empty file: a database that is not a store yet
    with pytest.raises(StoreRevisionError, match="not a ratebank store yet"):
        ratebank.open(db_url)


def test_a_with_block_closes_the_store_even_after_an_error(db_url, monkeypatch):
    ratebank.init(db_url)[0].close()
    closed: list[str] = []
    close = StoreHandle.close

    def recording_close(handle: StoreHandle) -> None:
        closed.append(handle.display_url)
        close(handle)

    monkeypatch.setattr(StoreHandle, "close", recording_close)
    with ratebank.open(db_url) as opened:
        opened.reactions()
        assert closed == []
    assert len(closed) == 1
    with pytest.raises(NotFoundError), ratebank.open(db_url) as opened:
        opened.reaction("no-such-reaction")
    assert len(closed) == 2


def test_import_ratebank_is_cheap_and_the_front_door_loads_on_use():
    code = """
import sys
import ratebank
heavy = sorted(m for m in sys.modules if m.split(".")[0] in ("sqlalchemy", "numpy", "ratebank"))
print("AFTER IMPORT", heavy)
assert callable(ratebank.open) and callable(ratebank.init)
print("STORE", ratebank.Store.__module__, "sqlalchemy" in sys.modules)
try:
    ratebank.no_such_name
except AttributeError as exc:
    print("MISSING", exc)
"""
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    assert "AFTER IMPORT ['ratebank']" in result.stdout
    assert "STORE ratebank.api True" in result.stdout
    assert "MISSING module 'ratebank' has no attribute 'no_such_name'" in result.stdout


# --------------------------------------------------------------------------- imports and adds


def test_every_import_reports_what_it_added(store, files):
    species = store.import_species(files["species"])
    reactions = store.import_reactions(files["reactions"])
    points = store.import_measurements(files["measurements"])
    expressions = store.import_expressions(files["expressions"])
    assert (species.kind, species.rows, species.added, species.dry_run) == (
        "species", 10, 10, False,
    )  # fmt: skip
    assert (reactions.kind, reactions.added) == ("reactions", 4)
    assert (points.kind, points.added, points.details["sets"]) == ("measurements", 5, 2)
    assert (expressions.added, expressions.details) == (
        3,
        {"complete": 2, "activation_energy_only": 1},
    )
    assert len(store.species()) == 10
    assert len(store.reactions()) == 4
    assert sum(s.points for s in store.measurement_sets()) == 5
    assert len(store.expressions()) == 3


def test_a_dry_run_writes_nothing(store, files, db_url):
    store.import_species(files["species"])
    store.import_reactions(files["reactions"])
    before = snapshot(db_url)
    summaries = [
        store.import_measurements(files["measurements"], dry_run=True),
        store.import_expressions(files["expressions"], dry_run=True),
    ]
    assert [(s.added, s.dry_run) for s in summaries] == [(5, True), (3, True)]
    assert snapshot(db_url) == before


def test_measurement_units_come_from_the_file_or_the_argument(store, files, tmp_path, db_url):
    store.import_species(files["species"])
    store.import_reactions(files["reactions"])
    unitless = write(tmp_path / "unitless.csv", "set,reaction,T_K,k\nu1,oh-ch4,300,6.4e-15\n")
    before = snapshot(db_url)
    with pytest.raises(BadInputError, match="no k_units column") as caught:
        store.import_measurements(unitless)
    assert caught.value.argument == "k_units"
    assert snapshot(db_url) == before
    store.import_measurements(unitless, k_units="cm3/molecule/s")
    (summary,) = store.measurement_sets(reaction="oh-ch4")
    assert (summary.name, summary.k_units, summary.points) == ("u1", "cm3/molecule/s", 1)


def test_a_bad_import_file_is_refused_whole(store, files, tmp_path, db_url):
    store.import_species(files["species"])
    bad = write(
        tmp_path / "bad.csv",
        "key,equation\nfine,OH + CH4 -> CH3 + H2O\nunbalanced,OH + CH4 -> CH3 + H2O2\n",
    )
    before = snapshot(db_url)
    with pytest.raises(ImportValidationError) as caught:
        store.import_reactions(bad)
    assert len(caught.value.problems) == 1
    assert ":3:" in caught.value.problems[0]
    assert snapshot(db_url) == before


def test_add_species_and_reaction_take_the_file_columns(store):
    store.add_species("OH", "HO", diameter_angstrom=3.147, diameter_kind="lennard-jones")
    store.add_species("CH4", "CH4", molar_mass_g_per_mol=16.04, source="test value")
    store.add_species("CH3", "CH3")
    store.add_species("H2O", "H2O")
    added = store.add_reaction(
        "oh-ch4", "OH + CH4 -> CH3 + H2O", reaction_class="h-abstraction", notes="test"
    )
    assert (added.key, added.equation) == ("oh-ch4", "CH4 + OH -> CH3 + H2O")
    by_name = {s.name: s for s in store.species()}
    assert by_name["OH"].diameter == pytest.approx(3.147e-10, rel=1e-12)  # 1 Å = 1e-10 m
    assert by_name["CH4"].molar_mass == pytest.approx(16.04e-3, rel=1e-12)
    assert by_name["CH4"].molar_mass_source == "given"
    assert by_name["CH3"].molar_mass_source == "formula"
    detail = store.reaction("CH4 + OH -> H2O + CH3")
    assert (detail.key, detail.reaction_class, detail.notes) == ("oh-ch4", "h-abstraction", "test")


def test_add_species_refuses_an_unknown_field(store, db_url):
    before = snapshot(db_url)
    with pytest.raises(BadInputError, match="unknown species field 'diameter'") as caught:
        store.add_species("OH", "HO", diameter=3.1)
    assert caught.value.argument == "diameter"
    with pytest.raises(BadInputError, match="neither a number nor text"):
        store.add_species("OH", "HO", diameter_angstrom=[3.1])
    assert snapshot(db_url) == before


# --------------------------------------------------------------------------- listings and shows


def test_listings_filter_like_the_commands(filled):
    assert [s.name for s in filled.species(missing_diameter=True)] == ["CH3", "H", "H2O2", "O3"]
    assert sorted(s.name for s in filled.species(name_contains="O2")) == ["H2O2", "HO2", "O2"]
    assert {r.key: r.status for r in filled.reactions()} == {
        "h-o2-m": "nothing",
        "h2o2-dec": "complete",
        "ho2-ho2": "ea-only",
        "oh-ch4": "measured",
    }
    assert [r.key for r in filled.reactions(species="HO2")] == ["h-o2-m", "ho2-ho2"]
    assert [r.key for r in filled.reactions(reaction_class="decomposition")] == ["h2o2-dec"]
    assert [r.key for r in filled.reactions(status="ea-only")] == ["ho2-ho2"]
    sets = filled.measurement_sets(reaction="CH4 + OH -> H2O + CH3")
    assert [(s.name, s.points, s.T_min, s.T_max) for s in sets] == [
        ("s1", 3, 300.0, 400.0),
        ("s2", 2, 800.0, 1000.0),
    ]
    assert len(filled.expressions(origin="literature")) == 3
    assert [e.reaction_key for e in filled.expressions(reaction="h2o2-dec")] == ["h2o2-dec"]
    oh = filled.species_detail("OH")
    assert oh.species.species.formula == "HO" and oh.thermochemistry is None
    assert sorted(key for key, _, _ in oh.species.reactions) == ["h2o2-dec", "oh-ch4"]


def test_reaction_and_its_overview(filled):
    detail = filled.reaction("oh-ch4")
    assert [p.species.name for p in detail.participants if p.role == "reactant"] == ["CH4", "OH"]
    assert len(detail.sets) == 2
    literature = _literature_id(filled, "oh-ch4")
    overview = filled.reaction_overview("oh-ch4", temperatures=[300.0, 1000.0])
    assert overview.temperatures == [300.0, 1000.0]
    # the test's own expression A T^n exp(-Ea/T) (Ea in K), evaluated by hand
    for T, k in zip(overview.temperatures, overview.rates[literature], strict=True):
        by_hand = 1.85e-20 * T**2.82 * math.exp(-987.0 / T) * PER_MOLECULE
        assert k == pytest.approx(by_hand, rel=1e-12)


# --------------------------------------------------------------------------- the main job


def test_fit_stores_a_fit_that_rate_evaluates(filled):
    report = filled.fit(["oh-ch4"], form="arrhenius")
    (row,) = report.rows
    assert (row.key, row.status, row.form, row.n, row.n_points, row.n_sets) == (
        "oh-ch4", "stored", "arrhenius", 0.0, 5, 2,
    )  # fmt: skip
    assert (report.stored, report.failed) == (1, 0)
    rates = filled.rate("oh-ch4", [300.0, 1000.0], k_units="cm3/molecule/s")
    assert (rates.origin, rates.expression_id) == ("measured-fit", row.expression_id)
    for rate_row in rates.rows:
        # k = A T^n exp(-Ea / RT) of the fit, A in m3/mol/s, Ea in J/mol (SI)
        k_si = row.A * rate_row.T**row.n * math.exp(-row.Ea / (constants.R * rate_row.T))
        assert rate_row.k == pytest.approx(k_si / PER_MOLECULE, rel=1e-12)
    assert filled.fit(["oh-ch4"], form="arrhenius").rows[0].status == "unchanged"


def test_estimate_needs_a_reference_temperature_where_none_is_stated(filled, db_url):
    before = snapshot(db_url)
    with pytest.raises(RefusedEstimateError, match="no reference temperature") as caught:
        filled.estimate(["ho2-ho2"], steric=0.1)
    assert [s.key for s in caught.value.report.skipped] == ["ho2-ho2"]
    assert snapshot(db_url) == before
    report = filled.estimate(["ho2-ho2"], steric=0.1, T_ref=298.0)
    (row,) = report.rows
    assert (row.key, row.T_ref, row.steric_factor, row.collision_model) == (
        "ho2-ho2", 298.0, 0.1, "hard-sphere",
    )  # fmt: skip
    assert row.n == 0.5  # the hard-sphere estimate is stored exactly with n = 1/2 (README)
    (stored,) = filled.expressions(reaction="ho2-ho2", origin="collision-estimate")
    assert (stored.id, stored.A) == (row.expression_id, row.A)


def test_check_flags_and_ignores(filled):
    report = filled.check(T_range=(300.0, 2000.0))
    codes = {(f.key, f.code) for f in report.flags}
    assert ("h2o2-dec", "extrapolation") in codes  # its expression holds over 800-1500 K
    assert ("h-o2-m", "nothing-usable") in codes
    assert not report.clean
    only = filled.check(["h2o2-dec"], T_range=(300.0, 2000.0), ignore=["extrapolation"])
    assert only.flags == []
    assert only.ignored == ["extrapolation"]


def test_recommend_changes_what_rate_and_export_use(filled, tmp_path):
    filled.fit(["oh-ch4"])
    literature = _literature_id(filled, "oh-ch4")
    chosen = filled.recommend("oh-ch4", literature)
    assert (chosen.id, chosen.origin, chosen.recommended) == (literature, "literature", True)
    rates = filled.rate("oh-ch4", [500.0], k_units="cm3/molecule/s")
    assert rates.expression_id == literature
    assert rates.rows[0].k == pytest.approx(1.85e-20 * 500.0**2.82 * math.exp(-987 / 500), 1e-12)
    with pytest.raises(ConflictError, match="belongs to reaction"):
        filled.recommend("h2o2-dec", literature)
    table = filled.mechanism_table(leave_out_gaps=True)
    assert {r.key: r.expression_id for r in table.rows}["oh-ch4"] == literature


def test_export_writes_the_table_or_names_the_gaps(filled, tmp_path):
    out = tmp_path / "mechanism"
    with pytest.raises(ExportGapsError) as caught:
        filled.export(out)
    assert caught.value.gaps == ["h-o2-m", "ho2-ho2"]
    assert not out.exists()
    result = filled.export(out, preset="atmospheric", leave_out_gaps=True)
    assert (result.folder, result.table_path) == (out, out / "mechanism.csv")
    assert result.descriptor_path == out / "datapackage.json"
    with result.table_path.open(encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    assert [r["key"] for r in rows] == ["h2o2-dec", "oh-ch4"]
    assert {r["k_units"] for r in rows} == {"s-1", "cm3/molecule/s"}
    descriptor = json.loads(result.descriptor_path.read_text(encoding="utf-8"))
    assert descriptor["ratebank"]["left_out"] == ["h-o2-m", "ho2-ho2"]
    assert descriptor["ratebank"]["store"] == filled.address
    (entry,) = filled.history(target=str(out))
    assert (entry.action, entry.author) == ("export", "tester")


def test_history_filters(filled):
    newest = filled.history(limit=2)
    assert len(newest) == 2
    assert newest[0].action == "expressions.import"
    assert {e.author for e in filled.history(author="tester")} == {"tester"}
    assert filled.history(author="somebody else") == []
    assert [e.action for e in filled.history(target="oh-ch4")] == []
    filled.fit(["oh-ch4"])
    assert [e.action for e in filled.history(target="oh-ch4")] == ["fit"]


def test_edit_expression_with_a_stale_version_is_refused(filled, db_url):
    expression_id = _literature_id(filled, "h2o2-dec")
    edit = filled.edit_expression(
        expression_id, expected_version=1, uncertainty_factor=2.5, T_min=700.0
    )
    assert edit.version == 2
    assert set(edit.changed) == {"uncertainty_factor", "T_min"}
    (stored,) = filled.expressions(reaction="h2o2-dec")
    assert (stored.uncertainty_factor, stored.T_min, stored.version) == (2.5, 700.0, 2)
    before = snapshot(db_url)
    with pytest.raises(StaleEditError):
        filled.edit_expression(expression_id, expected_version=1, uncertainty_factor=4.0)
    assert snapshot(db_url) == before


# --------------------------------------------------------------------------- steric factors


def test_class_rules_set_change_and_clear(filled):
    rule = filled.set_class_steric("h-abstraction", 0.05, source="analogy", uncertainty_factor=3)
    assert (rule.reaction_class, rule.steric_factor, rule.version) == ("h-abstraction", 0.05, 1)
    changed = filled.set_class_steric("h-abstraction", 0.06, expected_version=1)
    assert changed.version == 2
    # ConflictError, of which StaleEditError is the kind expressions raise
    with pytest.raises(ConflictError, match="now version 2, you read version 1"):
        filled.set_class_steric("h-abstraction", 0.07, expected_version=1)
    rules, on_reactions = filled.steric_rules()
    assert [(r.reaction_class, r.steric_factor) for r in rules] == [("h-abstraction", 0.06)]
    assert on_reactions == []
    # the local P of a textbook P = A / z is e^(-1/2) A / z (the project's definition, README)
    textbook = filled.set_class_steric("ho2-self", 0.2, definition="textbook")
    assert textbook.steric_factor == pytest.approx(0.2 * math.exp(-0.5), rel=1e-12)
    filled.clear_class_steric("h-abstraction")
    assert [r.reaction_class for r in filled.steric_rules()[0]] == ["ho2-self"]


def test_reaction_steric_set_and_clear(filled):
    stored = filled.set_reaction_steric("HO2 + HO2 -> H2O2 + O2", 0.02, source="analogy")
    assert (stored.key, stored.steric_factor) == ("ho2-ho2", 0.02)
    assert filled.reaction("ho2-ho2").steric_factor == 0.02
    assert [r.key for r in filled.steric_rules()[1]] == ["ho2-ho2"]
    filled.clear_reaction_steric("ho2-ho2")
    assert filled.reaction("ho2-ho2").steric_factor is None
    assert filled.steric_rules()[1] == []


def test_derived_steric_factors_come_from_the_fits(filled):
    assert filled.derived_steric_factors() == []
    fit = filled.fit(["oh-ch4"]).rows[0]
    (group,) = filled.derived_steric_factors(collision="lennard-jones")
    assert group.reaction_class == "h-abstraction"
    assert [s.key for s in group.samples] == ["oh-ch4"]
    (hard_sphere,) = filled.derived_steric_factors()
    assert hard_sphere.samples[0].steric_factor == pytest.approx(fit.steric_factor, rel=1e-12)
    with pytest.raises(BadInputError) as caught:
        filled.derived_steric_factors(collision="soft-sphere")
    assert caught.value.argument == "collision"


# --------------------------------------------------------------------------- plots


def test_arrhenius_plot_and_its_data(filled, tmp_path):
    data = filled.arrhenius_plot_data(["oh-ch4"], k_units="cm3/molecule/s")
    (reaction,) = data
    first = reaction.sets[0]
    assert (reaction.key, reaction.k_unit, first.name) == ("oh-ch4", "cm3/molecule/s", "s1")
    assert first.k.tolist() == pytest.approx([6.4e-15, 1.4e-14, 2.6e-14], rel=1e-12)
    result = filled.plot(["oh-ch4", "OH + CH4 -> CH3 + H2O"], tmp_path / "arrhenius.svg")
    assert [d.key for d in result.data] == ["oh-ch4"]  # named twice, plotted once
    assert (result.file.path, result.file.format) == (tmp_path / "arrhenius.svg", "svg")
    assert "<svg" in (tmp_path / "arrhenius.svg").read_text(encoding="utf-8")[:1000]


def test_plots_refuse_a_bad_target_before_reading(filled, tmp_path):
    with pytest.raises(RatebankError, match=re.escape("must end in .png, .svg or .pdf")):
        filled.plot(["no-such-reaction"], tmp_path / "plot.gif")
    with pytest.raises(BadInputError) as caught:
        filled.plot([], tmp_path / "plot.png")
    assert caught.value.argument == "keys"
    assert list(tmp_path.glob("plot*")) == []


def test_steric_plot(filled, tmp_path):
    filled.fit(["oh-ch4"])
    result = filled.steric_plot(tmp_path / "steric.png", width=4, height=3, dpi=50)
    assert result.data.count == 1
    assert (result.file.width_px, result.file.height_px) == (200, 150)
    assert (tmp_path / "steric.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature


# --------------------------------------------------------------------------- typed errors


@pytest.mark.parametrize(
    ("call", "error", "argument"),
    [
        (lambda s: s.reaction("no-such-reaction"), NotFoundError, None),
        (lambda s: s.species_detail("Xe"), NotFoundError, None),
        (lambda s: s.rate("no-such-reaction", [300.0]), NotFoundError, None),
        (lambda s: s.rate("ho2-ho2", [300.0]), NotFoundError, None),  # no usable expression
        (lambda s: s.reactions(status="bogus"), BadInputError, "status"),
        (lambda s: s.expressions(origin="bogus"), BadInputError, "origin"),
        (lambda s: s.rate("oh-ch4", [-5.0]), BadInputError, "temperatures"),
        (lambda s: s.fit(form="bogus"), BadInputError, "form"),
        (lambda s: s.estimate(collision="bogus"), BadInputError, "collision"),
        (lambda s: s.check(ignore=["no-such-check"]), BadInputError, "ignore"),
        (lambda s: s.set_class_steric("c", 0.1, definition="odd"), BadInputError, "definition"),
        (lambda s: s.mechanism_table(preset="bogus"), UnitError, None),
    ],
)
def test_errors_are_the_typed_ones(filled, db_url, call, error, argument):
    before = snapshot(db_url)
    with pytest.raises(error) as caught:
        call(filled)
    if argument is not None:
        assert caught.value.argument == argument
    assert "--" not in str(caught.value)  # the library speaks of arguments, not options
    assert snapshot(db_url) == before


# --------------------------------------------------------------------------- keeping it safe


def test_backup_and_restore(sqlite_url, files, tmp_path):
    opened, _ = ratebank.init(sqlite_url)
    with opened:
        opened.import_species(files["species"])
        copy = opened.backup(tmp_path / "copy.db")
    assert copy.counts["species"] == 10
    with pytest.raises(RatebankError, match="already exists"):
        api.backup(sqlite_url, tmp_path / "copy.db")
    again = api.backup(sqlite_url, tmp_path / "copy.db", force=True)
    assert again.fingerprint == copy.fingerprint
    restored = api.restore(tmp_path / "restored.db", tmp_path / "copy.db", author="tester")
    assert (restored.fingerprint, restored.counts) == (copy.fingerprint, copy.counts)
    with ratebank.open(tmp_path / "restored.db") as reopened:
        assert len(reopened.species()) == 10


def test_demo_builds_its_store(tmp_path):
    result = api.demo(tmp_path / "demo.db", tmp_path / "out")
    assert result.counts["reactions"] > 0
    assert [e.folder.name for e in result.exports] == [
        "mechanism-combustion",
        "mechanism-atmospheric",
    ]
    assert all(e.table_path == e.folder / "mechanism.csv" for e in result.exports)
    with ratebank.open(tmp_path / "demo.db") as demo_store:
        assert len(demo_store.reactions()) == result.counts["reactions"]


# --------------------------------------------------------------------------- the README


def _readme_example() -> str:
    section = README.read_text(encoding="utf-8").split("### From Python\n", 1)[1]
    return section.split("```python\n", 1)[1].split("```", 1)[0]


def _readme_block(title: str) -> str:
    section = README.read_text(encoding="utf-8").split(f"### {title}\n", 1)[1]
    return section.split("```python\n", 1)[1].split("```", 1)[0]


def test_the_readme_reading_example_runs_on_the_export_of_the_first(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    exec(compile(_readme_example(), "README.md", "exec"), {"__name__": "readme_example"})
    capsys.readouterr()
    reading = _readme_block("Reading an export back")
    assert len([line for line in reading.splitlines() if line.strip()]) == 5
    namespace: dict[str, object] = {"__name__": "readme_reading"}
    exec(compile(reading, "README.md", "exec"), namespace)
    assert capsys.readouterr().out.splitlines() == ["50 cm3/molecule/s"]
    k = namespace["k"]["oh-ch4"]  # type: ignore[index]
    with ratebank.open(tmp_path / "group.db") as store:
        report = store.rate("oh-ch4", [300.0, 2000.0], k_units="cm3/molecule/s")
    # a bimolecular reaction's k does not depend on P: the ends of the grid are rate's
    assert [k[0], k[-1]] == pytest.approx([r.k for r in report.rows], rel=1e-12)


def test_the_readme_example_gives_the_command_lines_numbers(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    namespace: dict[str, object] = {"__name__": "readme_example"}
    exec(compile(_readme_example(), "README.md", "exec"), namespace)
    printed = capsys.readouterr().out.splitlines()
    report = namespace["report"]

    db = str(tmp_path / "group.db")
    outcome = run(db, "rate", "oh-ch4", "-T", "298", "-T", "1000",
                  "--k-units", "cm3/molecule/s", "--json")  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    cli = json.loads(outcome.stdout)
    assert (cli["expression_id"], cli["k_units"]) == (report.expression_id, report.k_units)
    # the command line's JSON rounds every number to 15 significant digits
    assert [(r["T_K"], r["k"], r["uncertainty_factor"]) for r in cli["rates"]] == [
        tuple(round_significant(v) for v in (r.T, r.k, r.uncertainty_factor)) for r in report.rows
    ]
    assert printed == [
        f"{r['T_K']:g} K: k = {r['k']:.3e} {cli['k_units']}, factor {r['uncertainty_factor']:.2f}"
        for r in cli["rates"]
    ]
    outcome = run(db, "export", str(tmp_path / "cli"), "--preset", "atmospheric",
                  "--leave-out-gaps")  # fmt: skip
    assert outcome.exit_code == 0, outcome.stderr
    exported = (tmp_path / "mechanism" / "mechanism.csv").read_text(encoding="utf-8")
    assert exported == (tmp_path / "cli" / "mechanism.csv").read_text(encoding="utf-8")
    assert exported.count("\n") > 10
