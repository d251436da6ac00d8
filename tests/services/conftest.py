"""Fixtures of the service tests: a store filled with the small test data set."""

from __future__ import annotations

import pytest
from helpers.cli import csv_rows, fill_store

from ratebank.services.store_access import open_store


@pytest.fixture
def filled(db_url, tmp_path):
    """The address of a store holding tests/helpers/data.py's species, reactions, points and
    expressions."""
    return fill_store(db_url, tmp_path)


@pytest.fixture
def store(filled):
    """The filled store, opened as the author 'tester'."""
    handle = open_store(filled, author="tester")
    yield handle
    handle.close()


@pytest.fixture
def forms_store(store):
    """The filled store plus the species and reactions of helpers.data's FORMS_* set."""
    from helpers.data import FORMS_REACTIONS_CSV, FORMS_SPECIES_CSV

    from ratebank.services.reactions import import_reactions
    from ratebank.services.species import import_species

    with store.session(write=True) as session:
        import_species(session, csv_rows(FORMS_SPECIES_CSV), source="s.csv")
        import_reactions(session, csv_rows(FORMS_REACTIONS_CSV), source="r.csv")
    return store
