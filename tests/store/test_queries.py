"""The column reads of store/queries.py give what the row reads give."""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, REACTIONS_CSV, SPECIES_CSV

import ratebank
from ratebank.store import queries


@pytest.fixture
def store(db_url, tmp_path):
    """helpers.data's species, reactions and expressions (rate numbers made up)."""
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    with ratebank.open(db_url, author="tester") as opened:
        yield opened


def test_reaction_heads_are_the_reactions_as_columns(store):
    with store.session() as session:
        rows = queries.reactions(session)
        heads = queries.reaction_heads(session)
    assert len(rows) > 2
    assert heads.ids == [r.id for r in rows]
    assert heads.keys == [r.key for r in rows]
    assert heads.equations == [r.equation for r in rows]
    assert heads.orders == [r.order for r in rows]
    assert heads.third_body == [bool(r.third_body) for r in rows]


def test_reactant_columns_are_the_reactants_in_order(store):
    with store.session() as session:
        ids = [r.id for r in queries.reactions(session)]
        expected = queries.reactants(session, ids)
        reaction_column, species_column = queries.reactant_columns(session, list(reversed(ids)))
    flat = [(rid, sid) for rid in sorted(ids) for sid, _ in expected[rid]]
    assert list(zip(reaction_column, species_column, strict=True)) == flat
    assert any(len(v) == 1 for v in expected.values())  # an A + A reaction is listed once


@pytest.mark.parametrize("stream_from", [0, 5000])
def test_expressions_reduced_reduces_what_expressions_of_reads(store, monkeypatch, stream_from):
    monkeypatch.setattr(queries, "_STREAM_FROM", stream_from)  # one pass, or lists of ids
    with store.session() as session:
        ids = [r.id for r in queries.reactions(session)]
        expected = queries.expressions_of(session, ids, provenance_keys=(), lean=True)
        seen = queries.expressions_reduced(
            session, ids, lambda rows: [e.id for e in rows], provenance_keys=(), lean=True
        )
        whole = queries.expressions_reduced(session, ids, list, provenance_keys=(), lean=True)
    assert seen == {rid: [e.id for e in rows] for rid, rows in expected.items()}
    assert whole == expected
    assert any(not rows for rows in seen.values())  # a reaction without expressions
