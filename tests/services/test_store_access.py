"""Opening and creating a store, directly."""

from __future__ import annotations

from pathlib import Path

import pytest

from ratebank.errors import StoreError, StoreRevisionError
from ratebank.services.species import add_species
from ratebank.services.store_access import init_store, open_store, store_counts
from ratebank.store.listings import history
from ratebank.store.schema import HEAD_REVISION


def test_init_creates_once_and_records_it(db_url):
    if "://" not in db_url:
        # a missing SQLite file is refused, and none is made
        with pytest.raises(StoreError, match=r"there is no store at .* \(no such file\)"):
            open_store(db_url)
        assert not Path(db_url).exists()
        Path(db_url).touch()  # an empty file: a database that is not a store yet
    with pytest.raises(StoreRevisionError, match="not a ratebank store yet"):
        open_store(db_url)
    store, created = init_store(db_url, author="ada")
    store.close()
    assert (created.before, created.after, created.changed) == (None, HEAD_REVISION, True)
    again, nothing = init_store(db_url, author="ada")
    again.close()
    assert nothing.changed is False
    store = open_store(db_url, author="grace")
    try:
        assert store.author == "grace"
        with store.session() as session:
            entries = history(session)
            assert store_counts(session) == dict.fromkeys(
                ("species", "reactions", "measurement_sets", "points", "expressions"), 0
            )
    finally:
        store.close()
    assert [(e.action, e.author, e.detail["after"]) for e in entries] == [
        ("store.init", "ada", HEAD_REVISION)
    ]


def test_a_session_commits_when_its_block_ends_and_not_after_an_error(db_url):
    store, _ = init_store(db_url, author="ada")
    try:
        with pytest.raises(RuntimeError), store.session(write=True) as session:
            add_species(session, name="O2", formula="O2")
            raise RuntimeError("the caller changed its mind")
        with store.session(write=True) as session:
            add_species(session, name="N2", formula="N2")
        with store.session() as session:
            assert store_counts(session)["species"] == 1
    finally:
        store.close()
