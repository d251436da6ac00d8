"""Imports that update: rows matching stored records are compared, changed ones updated, new
ones added, identical ones left alone; the history keeps before and after in the file's
units; all or nothing. On SQLite and PostgreSQL (the ``db_url`` fixture)."""

from __future__ import annotations

import pytest
from helpers.cli import snapshot, write
from helpers.data import (
    FORMS_EXPRESSIONS_CSV,
    FORMS_REACTIONS_CSV,
    FORMS_SPECIES_CSV,
    MEASUREMENTS_CSV,
    REACTIONS_CSV,
    SPECIES_CSV,
)

import ratebank
from ratebank.errors import ImportValidationError, StaleEditError

HEADER = "reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,reference\n"


def _row(i: int, A: str = "", Ea: str = "", T_max: str = "1000") -> str:
    # synthetic numbers: the i-th evaluation of oh-ch4 in an invented master file
    return f"oh-ch4,{A or f'{i}e-13'},0,{Ea or str(10 + i)},kJ/mol,cm3/molecule/s,250,{T_max},review {i}\n"


@pytest.fixture
def store(db_url, tmp_path):
    ratebank.init(db_url)
    handle = ratebank.open(db_url, author="tester")
    handle.import_species(write(tmp_path / "species.csv", SPECIES_CSV))
    handle.import_reactions(write(tmp_path / "reactions.csv", REACTIONS_CSV))
    yield handle
    handle.close()


@pytest.fixture
def master(store, tmp_path):
    """23 expressions stored; the grown master file changes 3, adds 2 and repeats 20."""
    store.import_expressions(
        write(tmp_path / "first.csv", HEADER + "".join(map(_row, range(1, 24))))
    )
    rows = [
        _row(1, A="1.5e-13"),
        _row(2, Ea="14.5"),
        _row(3, T_max="1200"),
        *map(_row, range(4, 26)),
    ]
    return write(tmp_path / "master.csv", HEADER + "".join(rows))


def test_an_update_of_a_master_file_counts_3_changed_2_new_and_20_identical(store, master, db_url):
    summary = store.import_expressions(master, update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (2, 3, 20)
    rows = {e.reference: e for e in store.expressions(reaction="oh-ch4")}
    assert len(rows) == 25
    # the numbers of the file, in SI: 1.5e-13 cm3/molecule/s times N_A / 1e6 (2019 SI value)
    assert rows["review 1"].A == pytest.approx(1.5e-13 * 6.02214076e23 * 1e-6, rel=1e-15)
    assert rows["review 2"].Ea == pytest.approx(14.5e3, rel=1e-15)
    assert rows["review 3"].T_max == 1200.0
    # an update changes the numbers, so the version (the optimistic lock) rises
    assert [rows[f"review {i}"].version for i in (1, 2, 3, 4, 24)] == [2, 2, 2, 1, 1]


def test_the_history_shows_each_change_with_before_and_after_in_the_file_units(store, master):
    store.import_expressions(master, update=True)
    entries = [h for h in store.history(limit=20) if h.action == "expression.update"]
    changes = sorted(h.detail["changed"][1:] for h in entries)
    assert changes == [
        ["A: 1e-13 -> 1.5e-13 cm3/molecule/s"],
        ["Ea: 12 -> 14.5 kJ/mol"],
        ["T_max_K: 1000 -> 1200 K"],
    ]
    assert {h.target for h in entries} == {"oh-ch4"}
    assert {h.detail["source"] for h in entries} == {str(master)}


def test_a_dry_run_reports_the_counts_and_writes_nothing(store, master, db_url):
    before = snapshot(db_url)
    summary = store.import_expressions(master, update=True, dry_run=True)
    assert (summary.added, summary.changed, summary.unchanged, summary.dry_run) == (2, 3, 20, True)
    assert snapshot(db_url) == before


def test_without_update_a_matching_row_is_refused_and_nothing_is_written(store, master, db_url):
    before = snapshot(db_url)
    with pytest.raises(ImportValidationError) as raised:
        store.import_expressions(master)
    assert raised.value.problems[0] == (
        f"{master}:2: reaction: the arrhenius expression of 'oh-ch4' (review 1) is already in "
        "the store (expression 1); an import that updates changes it"
    )
    assert raised.value.total == 23
    assert snapshot(db_url) == before


def test_an_update_with_a_bad_row_writes_nothing(store, master, db_url, tmp_path):
    bad = write(
        tmp_path / "bad.csv", master.read_text() + "oh-ch4,1e-13,0,abc,kJ/mol,cm3/molecule/s,,,x\n"
    )
    before = snapshot(db_url)
    with pytest.raises(ImportValidationError) as raised:
        store.import_expressions(bad, update=True)
    assert raised.value.problems == [
        f"{bad}:27: Ea: 'abc' is not a number; expected an activation energy"
    ]
    assert snapshot(db_url) == before


def test_species_update_compares_the_file_columns_and_records_them_in_file_units(store, tmp_path):
    changed = SPECIES_CSV.replace("OH,HO,,3.147", "OH,HO,,3.2").replace(
        "O3,O3,,,,,261.0,55.73", "O3,O3,,,,,261.0,56"
    )
    summary = store.import_species(write(tmp_path / "s2.csv", changed), update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 2, 8)
    assert store.species_detail("OH").species.species.diameter == pytest.approx(3.2e-10, rel=1e-15)
    texts = {
        h.target: h.detail["changed"]
        for h in store.history(limit=5)
        if h.action == "species.update"
    }
    assert texts["OH"] == ["diameter_angstrom: 3.147 -> 3.2 Å"]
    assert texts["O3"] == ["critical_pressure_bar: 55.73 -> 56 bar"]


def test_reaction_update_changes_notes_and_refuses_a_new_equation_once_data_refer_to_it(
    store, tmp_path, db_url
):
    store.import_measurements(write(tmp_path / "points.csv", MEASUREMENTS_CSV))
    notes = REACTIONS_CSV.replace("decomposition,unimolecular", "decomposition,thermal")
    summary = store.import_reactions(write(tmp_path / "r2.csv", notes), update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 1, 3)
    assert store.history(limit=1)[0].detail["changed"] == ["notes: 'unimolecular' -> 'thermal'"]
    moved = notes.replace("OH + CH4 -> CH3 + H2O", "OH + CH4 -> CH3 + H + OH")
    before = snapshot(db_url)
    with pytest.raises(ImportValidationError) as raised:
        store.import_reactions(write(tmp_path / "r3.csv", moved), update=True)
    assert raised.value.problems == [
        f"{tmp_path / 'r3.csv'}:2: equation: reaction 'oh-ch4' is stored as "
        "'CH4 + OH -> CH3 + H2O' and has measurements, expressions or efficiencies; its "
        "equation cannot change"
    ]
    assert snapshot(db_url) == before


def test_a_set_is_compared_as_a_whole_and_its_fits_stay_until_the_next_fit(store, tmp_path):
    store.import_measurements(write(tmp_path / "points.csv", MEASUREMENTS_CSV))
    fit = store.fit(keys=["oh-ch4"]).rows[0]
    first = {e.id: e.A for e in store.expressions(reaction="oh-ch4")}
    grown = (
        MEASUREMENTS_CSV.replace("400,2.6e-14", "400,2.7e-14")
        + "s3,oh-ch4,500,6e-14,cm3/molecule/s,,,test lab C,,,\n"
    )
    summary = store.import_measurements(write(tmp_path / "grown.csv", grown), update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (1, 1, 1)
    assert summary.details["points"] == 6
    entry = next(h for h in store.history(limit=5) if h.action == "set.update")
    assert entry.target == "s1"
    assert entry.detail["changed"] == ["k at 400 K: 2.6e-14 -> 2.7e-14 cm3/molecule/s"]
    assert entry.detail["fits_using_it"] == list(first)
    shown = store.measurement_set("s1")
    assert shown.stored.points.rate_constant[2] == pytest.approx(2.7e-14 * 6.02214076e17)
    assert shown.k_set_units.tolist() == pytest.approx([6.4e-15, 1.4e-14, 2.7e-14], rel=1e-14)
    # the fit stays as it was until a new fit of the new points
    assert {e.id: e.A for e in store.expressions(reaction="oh-ch4")} == first
    assert [f.id for f in shown.stored.fits] == list(first)
    assert fit.key == "oh-ch4"


def test_an_identical_set_file_changes_nothing(store, tmp_path, db_url):
    points = write(tmp_path / "points.csv", MEASUREMENTS_CSV)
    store.import_measurements(points)
    before = snapshot(db_url)
    summary = store.import_measurements(points, update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 0, 2)
    assert snapshot(db_url) == before


def test_a_sum_term_and_a_broadening_parameter_update_their_expression(store, tmp_path):
    store.import_species(write(tmp_path / "forms_species.csv", FORMS_SPECIES_CSV))
    store.import_reactions(write(tmp_path / "forms_reactions.csv", FORMS_REACTIONS_CSV))
    store.import_expressions(write(tmp_path / "forms.csv", FORMS_EXPRESSIONS_CSV))
    changed = FORMS_EXPRESSIONS_CSV.replace("2.0e-12,0,1500", "2.2e-12,0,1500").replace(
        "fixed-fc,0.6", "fixed-fc,0.65"
    )
    summary = store.import_expressions(write(tmp_path / "f2.csv", changed), update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 2, 2)
    by_key = {e.reaction_key: e for e in store.expressions()}
    # term 2 of the sum: 2.2e-12 cm3/molecule/s in SI (times N_A / 1e6, 2019 SI value)
    assert by_key["oh-co"].terms[0][1] == pytest.approx(2.2e-12 * 6.02214076e17, rel=1e-15)
    assert by_key["c2h5-m"].broadening["Fc"] == 0.65
    assert (by_key["oh-co"].version, by_key["c2h5-m"].version, by_key["h-o2-m"].version) == (
        2,
        2,
        1,
    )
    texts = sorted(h.detail["changed"][1] for h in store.history(limit=2))
    assert texts == ["Fc: 0.6 -> 0.65", "term 2 A: 2e-12 -> 2.2e-12 cm3/molecule/s"]


@pytest.mark.parametrize("chunk_rows", [1, 2, 100_000])
def test_a_set_update_gives_the_same_verdict_whatever_the_chunk_size(
    store, tmp_path, db_url, chunk_rows
):
    from ratebank.io.csv_import import import_measurements_file

    store.import_measurements(write(tmp_path / "points.csv", MEASUREMENTS_CSV))
    grown = (
        MEASUREMENTS_CSV
        + "s2,oh-ch4,1200,3.1e12,cm3/mol/s,3e11,absolute,test lab B,shock tube,1.5,Ar\n"
    )
    path = write(tmp_path / "grown.csv", grown)
    with store.session(write=True) as session:
        summary = import_measurements_file(session, path, update=True, chunk_rows=chunk_rows)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 1, 1)
    entry = next(h for h in store.history(limit=3) if h.action == "set.update")
    assert entry.detail["changed"] == ["points: 2 (800-1000 K) -> 3 (800-1200 K)"]
    shown = store.measurement_set("s2")
    assert shown.k_set_units.tolist() == pytest.approx([1.1e12, 2.2e12, 3.1e12], rel=1e-14)
    assert store.measurement_set("s1").stored.points.size == 3
    with store.session() as session:
        again = import_measurements_file(session, path, update=True, chunk_rows=chunk_rows)
    assert (again.added, again.changed, again.unchanged) == (0, 0, 2)


def test_a_reaction_without_data_takes_a_new_equation_and_its_participants(store, tmp_path):
    moved = REACTIONS_CSV.replace("H2O2 -> OH + OH", "H2O2 -> HO2 + H")
    summary = store.import_reactions(write(tmp_path / "r2.csv", moved), update=True)
    assert (summary.added, summary.changed, summary.unchanged) == (0, 1, 3)
    shown = store.reaction("h2o2-dec")
    assert shown.equation == "H2O2 -> H + HO2"
    assert sorted((p.role, p.species.name, p.coefficient) for p in shown.participants) == [
        ("product", "H", 1),
        ("product", "HO2", 1),
        ("reactant", "H2O2", 1),
    ]
    assert store.history(limit=1)[0].detail["changed"] == [
        "equation: 'H2O2 -> OH + OH' -> 'H2O2 -> H + HO2'"
    ]


def test_an_updated_species_is_a_new_version_and_an_edit_of_the_old_one_is_refused(store, tmp_path):
    changed = SPECIES_CSV.replace("OH,HO,,3.147", "OH,HO,,3.2")
    store.import_species(write(tmp_path / "s2.csv", changed), update=True)
    with pytest.raises(StaleEditError):
        store.edit_species("OH", expected_version=1, source="a colleague's edit")
    assert store.edit_species("OH", expected_version=2, source="read again").version == 3
