"""Listing measurement sets, directly."""

from __future__ import annotations

import pytest

from ratebank.errors import NotFoundError
from ratebank.services.measurements import list_sets


def test_sets_with_their_counts_and_ranges(store):
    with store.session() as session:
        every = list_sets(session)
        of_one = list_sets(session, reaction="CH4 + OH -> H2O + CH3")
    assert every == of_one  # tests/helpers/data.py measures oh-ch4 only
    s1, s2 = every
    assert (s1.name, s1.reaction_key, s1.points, s1.T_min, s1.T_max) == (
        "s1",
        "oh-ch4",
        3,
        300.0,
        400.0,
    )
    assert (s1.reference, s1.method, s1.bath_gas, s1.k_units) == (
        "test lab A",
        "flash photolysis",
        "He",
        "cm3/molecule/s",
    )
    assert (s2.points, s2.k_units) == (2, "cm3/mol/s")


def test_sets_of_a_reaction_without_any_and_of_an_unknown_one(store):
    with store.session() as session:
        assert list_sets(session, reaction="h2o2-dec") == []
        with pytest.raises(NotFoundError, match="no reaction with key 'nope' in the store"):
            list_sets(session, reaction="nope")
