"""The estimate's reads of store/estimate_reads.py give what the general reads give."""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.data import REACTIONS_CSV, SPECIES_CSV

import ratebank
from ratebank.store import estimate_reads, queries


@pytest.fixture
def store(db_url, tmp_path):
    """helpers.data's species and reactions."""
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    with ratebank.open(db_url, author="tester") as opened:
        yield opened


@pytest.mark.parametrize("whole_from", [0, 10**9])
@pytest.mark.parametrize("every", [1, 2])
def test_reactant_table_is_reactant_columns(store, monkeypatch, whole_from, every):
    """Read in one pass over the table (whole_from 0) or by lists of ids, for all the
    reactions or every other one: the same reactants, in the same order."""
    monkeypatch.setattr(estimate_reads, "WHOLE_TABLE_FROM", whole_from)
    with store.session() as session:
        ids = [r.id for r in queries.reactions(session)][::every]
        expected = queries.reactant_columns(session, ids)
        found = estimate_reads.reactant_table(session, list(reversed(ids)))
    assert [list(column) for column in found] == [list(column) for column in expected]
    assert len(set(found[0].tolist())) == len(ids)


@pytest.fixture
def estimated(db_url, tmp_path):
    """helpers.data's store, its expressions imported and ho2-ho2 estimated (a run)."""
    from helpers.data import EXPRESSIONS_CSV

    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    with ratebank.open(db_url, author="tester") as opened:
        opened.estimate(["ho2-ho2"], steric=0.1, T_ref=300.0)
        yield opened


@pytest.mark.parametrize("whole_from", [0, 10**9])
@pytest.mark.parametrize(
    "key", ["line", "source_file", "steric_rule", "partners", "T_ref", "evans_polanyi"]
)
def test_expressions_with_key_are_the_reduced_expressions(estimated, monkeypatch, whole_from, key):
    """Each reaction's expressions with one key of their whole provenance (the run's part or
    the row's own, a partner's record put back), as the general read gives them."""
    monkeypatch.setattr(estimate_reads, "EXPRESSIONS_WHOLE_FROM", whole_from)
    with estimated.session() as session:
        ids = [r.id for r in queries.reactions(session)]
        expected = queries.expressions_reduced(
            session, ids, list, provenance_keys=(key,), lean=True
        )
        found = estimate_reads.expressions_with_key(session, ids, key, list)
    plain = {rid: [e._replace(terms=()) for e in rows] for rid, rows in expected.items()}
    assert found == plain
    assert any(rows for rows in found.values()) and any(not rows for rows in found.values())
    if key != "evans_polanyi":
        assert any(e.provenance for rows in found.values() for e in rows)
