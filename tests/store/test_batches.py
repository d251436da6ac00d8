"""The whole-store reads a batch at a time that the check makes, on the tests' small data set."""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.services.curation import withdraw_record
from ratebank.services.store_access import open_store
from ratebank.store import queries
from ratebank.store.batches import expressions_of_batch, reactions_in_batches


@pytest.fixture
def store(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    handle = open_store(db_url, author="tester")
    yield handle
    handle.close()


@pytest.mark.parametrize("size", [1, 2, 100])
def test_reactions_come_by_id_in_batches_of_the_size_asked(store, size):
    with store.session(write=True) as session:
        withdraw_record(session, "reaction", "oh-ch4", reason="SYNTHETIC: a test")
    with store.session() as session:
        batches = list(reactions_in_batches(session, size))
        whole = queries.reactions(session)
    assert all(len(batch) == size for batch in batches[:-1]) and 0 < len(batches[-1]) <= size
    read = [r for batch in batches for r in batch]
    assert [r.id for r in read] == sorted(r.id for r in whole)  # by id, each once
    assert sorted(read, key=lambda r: r.key) == whole
    assert "oh-ch4" not in {r.key for r in whole} and len(whole) >= 3


def test_a_batch_has_the_expressions_the_whole_read_gives(store):
    with store.session(write=True) as session:
        withdraw_record(session, "expression", 1, reason="SYNTHETIC: a test")
    with store.session() as session:
        ids = [r.id for r in queries.reactions(session)]
        batch = expressions_of_batch(session, ids)
        assert _comparable(batch) == _comparable(queries.expressions_of(session, ids))
        assert _comparable(expressions_of_batch(session, ids[:1])) == _comparable(
            queries.expressions_of(session, ids[:1])
        )
    assert all(e.id != 1 for rows in batch.values() for e in rows)
    assert sum(len(rows) for rows in batch.values()) >= 2


def _comparable(found):
    """The rows with their times as text and the flag as a bool (the driver's plain values
    on SQLite are text and 0/1)."""
    return {
        reaction_id: [
            e._replace(
                recommended=bool(e.recommended),
                created_at=str(e.created_at),
                updated_at=str(e.updated_at),
            )
            for e in rows
        ]
        for reaction_id, rows in found.items()
    }
