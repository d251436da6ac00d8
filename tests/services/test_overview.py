"""The one-screen overview of a reaction, directly.

k = A T^n exp(-Ea/RT) is recomputed here with ``scipy.constants.R`` from the stored numbers.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants

from ratebank.errors import NotFoundError
from ratebank.services.fitting import fit_reactions
from ratebank.services.overview import DEFAULT_GRID, reaction_overview
from ratebank.store.queries import expressions_of, find_reaction


def _k(e, T):
    return e.A * T**e.n * math.exp(-e.Ea / (constants.R * T))


def test_k_at_the_requested_temperatures_and_the_exported_choice(store):
    with store.session(write=True) as session:
        fit_reactions(session, ["oh-ch4"], form="arrhenius")
    with store.session() as session:
        overview = reaction_overview(session, "CH4 + OH -> H2O + CH3", temperatures=[300, 1000])
        reaction = find_reaction(session, "oh-ch4")
        stored = {e.id: e for e in expressions_of(session, [reaction.id])[reaction.id]}
    assert overview.detail.key == "oh-ch4"
    assert overview.temperatures == [300.0, 1000.0]
    assert set(overview.rates) == set(stored)
    for expression_id, rates in overview.rates.items():
        expected = [_k(stored[expression_id], T) for T in (300.0, 1000.0)]
        assert rates == pytest.approx(expected, rel=1e-12)
    chosen = stored[overview.chosen_id]
    assert (chosen.origin, overview.chosen_rule) == ("measured-fit", "newest measured fit")
    # a fit records the steric factor it implies
    assert [(i, origin) for i, origin, _ in overview.steric_factors] == [
        (chosen.id, "measured-fit")
    ]
    assert overview.flags == []


def test_the_default_grid_spans_the_stated_ranges(store):
    with store.session() as session:
        oh = reaction_overview(session, "oh-ch4")
        nothing = reaction_overview(session, "h-o2-m")
    # oh-ch4: the literature range 200-2000 K covers the measured 300-1000 K
    assert oh.temperatures == [float(t) for t in np.round(np.geomspace(200, 2000, 5), 1)]
    assert nothing.temperatures == list(DEFAULT_GRID)
    assert (nothing.rates, nothing.chosen_id, nothing.chosen_rule) == ({}, None, None)
    assert [f.code for f in nothing.flags] == ["nothing-usable"]


def test_an_unknown_reaction(store):
    with store.session() as session, pytest.raises(NotFoundError):
        reaction_overview(session, "nope")
