"""An estimate of many reactions: its common provenance stored once, every reaction in the
history, and every reader seeing the whole provenance."""

from __future__ import annotations

import pytest
from helpers.cli import run, write

import ratebank
from ratebank.services import estimation
from ratebank.store import estimate_reads, queries
from ratebank.store.listings import expression_summaries
from ratebank.store.models import Expression, ProvenanceRun
from ratebank.store.records import expression_for_edit

# SYNTHETIC: invented species and reactions (OH + CxHy -> H2O + CxH(y-1)), 1,000 of them.
N_X, N_Y = 10, 100


def _species_csv() -> str:
    lines = ["name,formula,diameter_angstrom,well_depth_K,source"]
    for x in range(1, N_X + 1):
        for y in range(1, N_Y + 2):
            lines.append(
                f"C{x}H{y},C{x}H{y},{3.0 + 0.12 * x + 0.01 * y:.4f},{80 + 8 * x},synthetic"
            )
    lines += ["OH,HO,3.147,79.8,synthetic", "H2O,H2O,2.641,809.1,synthetic"]
    return "\n".join(lines) + "\n"


def _keys() -> list[str]:
    return [f"r-{x}-{y}" for x in range(1, N_X + 1) for y in range(2, N_Y + 2)]


@pytest.fixture
def thousand(db_url, tmp_path):
    """A store of 1,000 SYNTHETIC bimolecular reactions, each with an activation energy and
    no A."""
    reactions = ["key,equation,class"] + [
        f"r-{x}-{y},OH + C{x}H{y} -> H2O + C{x}H{y - 1},synthetic-transfer"
        for x in range(1, N_X + 1)
        for y in range(2, N_Y + 2)
    ]
    energies = ["reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference"]
    energies += [
        f"{key},,,{10 + i % 37},kJ/mol,,300,{1000 + i % 500},,synthetic"
        for i, key in enumerate(_keys())
    ]
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", _species_csv()),
        ("reactions", "r.csv", "\n".join(reactions) + "\n"),
        ("expressions", "e.csv", "\n".join(energies) + "\n"),
    ):
        outcome = run(db_url, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return db_url


def test_the_history_of_a_thousand_estimates_lists_each_reaction(thousand):
    with ratebank.open(thousand, author="tester") as store:
        report = store.estimate(steric=0.1)
        assert len(report.rows) == 1000 and not report.skipped
        entries = store.history(limit=5000)
        estimates = [e for e in entries if e.action == "estimate"]
        assert sorted(e.target for e in estimates) == sorted(_keys())
        by_key = {row.key: row for row in report.rows}
        for entry in estimates:
            row = by_key[entry.target]
            assert entry.detail["expression"] == row.expression_id
            assert entry.detail["steric_factor"] == 0.1
            assert entry.detail["model"] == "hard-sphere"
        # the history of one reaction, as `history --target KEY` reads it
        one = store.history(target="r-7-42")
        assert [e.action for e in one][:1] == ["estimate"]
        with store.session() as session:
            runs = (
                session.query(ProvenanceRun)
                .filter(ProvenanceRun.action != "expressions.import")
                .all()
            )
            assert len(runs) == 1 and runs[0].action == "estimate"
            assert {e.detail["run"] for e in estimates} == {runs[0].id}
    # the command line shows it too
    shown = run(thousand, "history", "--target", "r-3-17")
    assert shown.exit_code == 0 and "estimate" in shown.stdout


def _whole_provenance(session, expression_id):
    """Every reader's view of one expression's provenance."""
    row = queries.expression(session, expression_id)
    summary = next(s for s in expression_summaries(session) if s.id == expression_id)
    loaded = expression_for_edit(session, expression_id)
    return row.provenance, summary.provenance, loaded.provenance


def test_a_run_stores_the_common_provenance_once_and_readers_see_it_whole(thousand):
    from ratebank.services.store_access import open_store

    store = open_store(thousand, author="tester")
    try:
        with store.session(write=True) as session:
            report = estimation.estimate(session, steric=0.1)
        first = report.rows[0]
        with store.session() as session:
            stored = session.get(Expression, first.expression_id)
            run_row = session.get(ProvenanceRun, stored.run_id)
            # the row keeps only what differs from the run's common part
            assert "method" not in stored.provenance and "method" in run_row.content
            assert run_row.content["steric_factor"] == 0.1
            assert "activation_energy_expression_id" in stored.provenance
            views = _whole_provenance(session, first.expression_id)
        for provenance in views:
            assert provenance["method"] == "simple collision theory times a steric factor"
            assert provenance["steric_rule"] == "given by the user"
            assert provenance["collision_model"] == "hard-sphere"
            assert provenance["T_ref"] == pytest.approx(first.T_ref)
            assert provenance["partners"]["b"]["species"] in ("OH", f"{first.key}")
            assert provenance == views[0]
        expected_keys = {
            "method", "collision_model", "steric_factor", "steric_rule", "steric_detail",
            "uncertainty_factor", "activation_energy_J_per_mol",
            "activation_energy_expression_id", "activation_energy_from_relation",
            "threshold_energy_J_per_mol", "threshold_energy_held_at_zero",
            "activation_energy_below_collision_rate_J_per_mol",
            "collision_activation_energy_J_per_mol", "T_ref", "T_ref_from",
            "valid_range_stated", "collision_rate_at_T_ref_SI", "self_reaction", "partners",
            "estimated_diameters", "form", "max_relative_deviation_of_fit", "estimated_part",
        }  # fmt: skip
        assert set(views[0]) == expected_keys
        # a second estimate replaces the first: the first run, no longer named, is removed
        with store.session(write=True) as session:
            estimation.estimate(session, steric=0.2)
        with store.session() as session:
            (only,) = session.query(ProvenanceRun).filter(ProvenanceRun.action == "estimate")
            assert only.content["steric_factor"] == 0.2
    finally:
        store.close()


def test_estimates_read_in_one_pass_are_those_read_by_ids(thousand, monkeypatch):
    """Reading the whole store in one pass (as for a large store) and by lists of ids give the
    same estimates and provenance; a second run replaces the first."""

    def estimated():
        with ratebank.open(thousand, author="tester") as store:
            report = store.estimate(steric=0.1)
            with store.session() as session:
                stored = queries.expressions_of(session)
            provenance = {
                e.reaction_id: e.provenance
                for rows in stored.values()
                for e in rows
                if e.origin == "collision-estimate"
            }
            return report, provenance

    by_ids, first = estimated()
    monkeypatch.setattr(queries, "_STREAM_FROM", 0)
    monkeypatch.setattr(estimate_reads, "EXPRESSIONS_WHOLE_FROM", 0)
    streamed, second = estimated()
    assert len(first) == 1000 and first == second  # the whole provenance, run's part included
    assert [(r.key, r.A, r.Ea, r.uncertainty_factor) for r in streamed.rows] == [
        (r.key, r.A, r.Ea, r.uncertainty_factor) for r in by_ids.rows
    ]
    assert streamed.rows[0].replaced == [by_ids.rows[0].expression_id]
    assert all(len(r.replaced) == 1 for r in streamed.rows)


def test_a_run_keeps_each_partner_record_once_and_rows_name_their_partners(thousand):
    """The partners' records are the run's, by species name; a row names its partners, and
    its provenance read back holds the records in their place."""
    from ratebank.services.store_access import open_store
    from ratebank.store.runs import PARTNERS

    store = open_store(thousand, author="tester")
    try:
        with store.session(write=True) as session:
            report = estimation.estimate(session, steric=0.1)
        row = report.rows[5]
        with store.session() as session:
            stored = session.get(Expression, row.expression_id)
            run_row = session.get(ProvenanceRun, stored.run_id)
            records = run_row.content[PARTNERS]
            assert set(records) == {
                f"C{x}H{y}" for x in range(1, N_X + 1) for y in range(2, N_Y + 2)
            } | {"OH"}
            named = stored.provenance["partners"]
            assert {named["a"], named["b"]} == set(row.equation.split(" -> ")[0].split(" + "))
            whole = queries.expression(session, row.expression_id).provenance
        assert whole["partners"] == {
            "identical": False, "a": records[named["a"]], "b": records[named["b"]]
        }  # fmt: skip
        assert whole["partners"]["a"]["species"] == named["a"]
        assert PARTNERS not in whole
    finally:
        store.close()


def test_the_report_rows_read_as_a_list(thousand):
    """The report's rows (made from the estimate's columns as they are asked for) index,
    slice, iterate and compare as a list of rows."""
    with ratebank.open(thousand, author="tester") as store:
        report = store.estimate(steric=0.1)
    rows = list(report.rows)
    assert len(rows) == len(report.rows) == 1000
    assert report.rows[-1] == rows[-1] and report.rows[0] == rows[0]
    assert report.rows[10:13] == rows[10:13]
    assert report.rows == rows and report.rows != rows[:-1]
    assert [r.key for r in rows] == sorted(_keys())
    assert len({r.expression_id for r in rows}) == 1000
    with pytest.raises(IndexError):
        report.rows[1000]
