"""Withdrawn records through the library: left out of derived statistics, estimates, checks
and exports at the store's reads; refusals speak of arguments. SQLite and PostgreSQL."""

from __future__ import annotations

import pytest

import ratebank
from ratebank.errors import BadInputError, ConflictError, NotFoundError, StaleEditError


@pytest.fixture
def curated(filled):
    with ratebank.open(filled, author="curator") as store:
        store.fit("oh-ch4")
        yield store


def _fit_id(store) -> int:
    return store.expressions(reaction="oh-ch4", origin="measured-fit")[-1].id


def test_a_withdrawn_fit_leaves_the_derived_statistics_and_comes_back(curated):
    counted = {c.reaction_class: c.count for c in curated.derived_steric_factors()}
    assert counted.get("h-abstraction") == 1
    fit = _fit_id(curated)
    change = curated.withdraw("expression", fit, reason="superseded")
    assert (change.action, change.version, change.reason) == ("withdrawn", 2, "superseded")
    counted = {c.reaction_class: c.count for c in curated.derived_steric_factors()}
    assert counted.get("h-abstraction") is None
    assert fit not in {e.id for e in curated.expressions()}
    listed = {e.id: e.withdrawn for e in curated.expressions(include_withdrawn=True)}
    assert listed[fit] == "superseded"
    curated.reinstate("expression", fit)
    counted = {c.reaction_class: c.count for c in curated.derived_steric_factors()}
    assert counted.get("h-abstraction") == 1


def test_a_withdrawn_reaction_is_left_out_of_checks_exports_and_fits(curated):
    keys = {r.key for r in curated.mechanism_table(leave_out_gaps=True).rows}
    assert "h2o2-dec" in keys
    checked_before = curated.check()
    curated.withdraw("reaction", "h2o2-dec", reason="duplicate of another mechanism's channel")
    assert "h2o2-dec" not in {r.key for r in curated.mechanism_table(leave_out_gaps=True).rows}
    assert "h2o2-dec" not in {r.key for r in curated.reactions()}
    assert "h2o2-dec" in {r.key for r in curated.reactions(include_withdrawn=True)}
    checked = curated.check()
    assert checked.reactions == checked_before.reactions - 1
    assert checked.expressions == checked_before.expressions - 1
    assert "h2o2-dec" not in {f.key for f in checked.flags}
    # its sets and expressions are out with it
    curated.withdraw("reaction", "oh-ch4", reason="test")
    assert curated.measurement_sets() == []
    assert len(curated.measurement_sets(include_withdrawn=True)) == 2
    assert all(s.withdrawn == "test" for s in curated.measurement_sets(include_withdrawn=True))


def test_library_refusals_name_their_arguments_and_write_nothing(curated):
    with pytest.raises(BadInputError, match="unknown kind of record 'sets'") as raised:
        curated.withdraw("sets", "s1", reason="x")
    assert raised.value.argument == "kind"
    with pytest.raises(BadInputError, match="needs a reason") as raised:
        curated.withdraw("set", "s1", reason="")
    assert raised.value.argument == "reason"
    with pytest.raises(BadInputError, match="unknown species field 'diameter'") as raised:
        curated.edit_species("OH", expected_version=1, diameter=3.0)
    assert raised.value.argument == "diameter"
    with pytest.raises(BadInputError, match="nothing to change in set 's1'"):
        curated.edit_set("s1", expected_version=1)
    with pytest.raises(NotFoundError, match="no point 424242"):
        curated.edit_point(424242, expected_version=1, T=300.0)
    with pytest.raises(
        StaleEditError, match="version 3 never existed; reaction 'oh-ch4' is at version 1"
    ):
        curated.edit_reaction("oh-ch4", expected_version=3, notes="x")
    with pytest.raises(ConflictError, match="is not withdrawn"):
        curated.reinstate("set", "s1")
    assert [h.action for h in curated.history(limit=1)] == ["fit"]


def test_the_same_values_again_change_nothing(curated):
    first = curated.edit_set("s1", expected_version=1, method="laser flash photolysis")
    assert first.version == 2 and first.changed["method"][1] == "laser flash photolysis"
    again = curated.edit_set("s1", expected_version=2, method="laser flash photolysis")
    assert (again.version, again.changed) == (2, {})
    assert [h.action for h in curated.history(limit=2)] == ["set.edit", "fit"]
