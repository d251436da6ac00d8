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
