"""Collision partners of bimolecular reactions."""

from __future__ import annotations

import pytest

from ratebank.errors import BadInputError
from ratebank.services.partners import PairColumns, collision_pairs
from ratebank.store import queries


def test_pairs_of_bimolecular_reactions_and_reasons_for_the_others(store):
    with store.session() as session:
        reactions = queries.reactions(session)
        pairs = collision_pairs(session, reactions)
    by_key = {r.key: pairs[r.id] for r in reactions}
    assert by_key["ho2-ho2"].identical and by_key["ho2-ho2"].a.name == "HO2"
    assert {by_key["oh-ch4"].a.name, by_key["oh-ch4"].b.name} == {"OH", "CH4"}
    assert "third-body" in by_key["h-o2-m"]
    assert "of order 1" in by_key["h2o2-dec"]


def test_pair_columns_carry_si_values(store):
    """Diameters in m (3.458 Å for HO2, tests/helpers/data.py); the A + A flag per pair."""
    with store.session() as session:
        reaction = queries.find_reaction(session, "ho2-ho2")
        pair = collision_pairs(session, [reaction])[reaction.id]
    columns = PairColumns.of([pair])
    assert columns.diameter_a[0] == pytest.approx(3.458e-10)
    assert columns.identical.tolist() == [True]
    assert "well_depth_a" in columns.rate_arguments("lennard-jones")


def test_unknown_collision_model_names_the_argument(store):
    with store.session() as session, pytest.raises(BadInputError) as caught:
        collision_pairs(session, [], model="soft-sphere")
    assert caught.value.argument == "collision"


def test_polarity_comes_from_the_dipole_moment(store):
    """A species with no diameter and a dipole moment of 1.85 D (H2O, CRC from memory) is
    outside the correlations whatever its name."""
    from ratebank.science.diameters import DEBYE
    from ratebank.services.partners import _completed

    with store.session() as session:
        o3 = queries.find_species(session, "O3")
    polar = o3._replace(dipole_moment=1.85 * DEBYE)
    assert "strongly polar (1.85 D)" in _completed(polar, "hard-sphere")
    assert _completed(o3, "hard-sphere").diameter_method == "tee-gotoh-stewart"
    mixed = _completed(o3._replace(diameter=4.1e-10, diameter_method="given"), "lennard-jones")
    assert mixed.mixed_sources and mixed.diameter_estimated and mixed.well_depth_estimated
