"""Steric-factor rules and the steric factors implied by measured fits."""

from __future__ import annotations

import math

import pytest
from helpers.cli import run, write

from ratebank.errors import BadInputError, ConflictError, NotFoundError
from ratebank.science import collision
from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius
from ratebank.services import steric
from ratebank.services.store_access import open_store
from ratebank.store import queries


def test_class_rule_versions_refuse_stale_edits(store):
    with store.session(write=True) as session:
        rule = steric.set_class_rule(session, "ho2-self", 0.05, source="analogy")
        assert rule.version == 1
    with store.session(write=True) as session:
        steric.set_class_rule(session, "ho2-self", 0.04, expected_version=1)
    with (
        store.session(write=True) as session,
        pytest.raises(ConflictError, match=r"changed by tester at .* you read version 1"),
    ):
        steric.set_class_rule(session, "ho2-self", 0.03, expected_version=1)
    with store.session() as session:
        rules, _ = steric.list_rules(session)
    assert [(r.reaction_class, r.steric_factor, r.version) for r in rules] == [
        ("ho2-self", 0.04, 2)
    ]


@pytest.mark.parametrize("value", [0.0, -1.0, math.inf, math.nan])
def test_steric_values_must_be_positive_and_finite(store, value):
    with store.session(write=True) as session, pytest.raises(BadInputError) as caught:
        steric.set_class_rule(session, "x", value)
    assert caught.value.argument == "steric_factor"


def test_reaction_steric_factor_set_listed_and_cleared(store):
    with store.session(write=True) as session:
        view = steric.set_reaction_steric(session, "ho2-ho2", 0.1, source="analogy")
        assert view.steric_factor == 0.1 and view.source == "analogy"
        assert [r.key for r in steric.list_rules(session)[1]] == ["ho2-ho2"]
        assert steric.set_reaction_steric(session, "ho2-ho2", None) is None
        assert steric.list_rules(session)[1] == []
        assert queries.find_reaction(session, "ho2-ho2").steric_factor is None


def test_removing_a_missing_rule_is_not_found(store):
    with store.session(write=True) as session, pytest.raises(NotFoundError, match="no steric rule"):
        steric.remove_class_rule(session, "nothing")


def _one_reaction_rate(pair, T, model):
    """z and E_z of one pair, with the A + A factor applied here by hand (DESIGN section 4)."""
    half = 0.5 if pair.identical else 1.0
    if model == "lennard-jones":
        z = collision.lennard_jones_collision_rate_constant(
            T, pair.a.diameter, pair.b.diameter, pair.a.molar_mass, pair.b.molar_mass,
            pair.a.well_depth, pair.b.well_depth,
        )  # fmt: skip
        e_z = collision.collision_rate_activation_energy(
            T, model=model, well_depth_a=pair.a.well_depth, well_depth_b=pair.b.well_depth
        )
    else:
        z = collision.collision_rate_constant(
            T, pair.a.diameter, pair.b.diameter, pair.a.molar_mass, pair.b.molar_mass
        )
        e_z = collision.collision_rate_activation_energy(T)
    return half * z, e_z


@pytest.mark.parametrize("model", ["hard-sphere", "lennard-jones"])
def test_derived_steric_factors_equal_the_formula_reaction_by_reaction(tmp_path, model):
    # the vectorized pass must give, for every measured reaction, what the
    # one-reaction formula P = k / (z exp(-(Ea_local - E_z)/(R T))) gives
    from ratebank.services.partners import collision_pairs

    db = tmp_path / "demo.db"
    assert run(str(db), "demo", "--db", str(db), "--out", str(tmp_path / "m.csv")).exit_code == 0
    # and a self-reaction A + A, whose collision rate carries the factor 1/2 (synthetic)
    for command, name, text in (
        (
            "species",
            "s.csv",
            "name,formula,diameter_angstrom,well_depth_K\nXO2,XeO2,3.5,110\nX2O4,Xe2O4,,\n",
        ),
        ("reactions", "r.csv", "key,equation,class\nxo2-self,XO2 + XO2 -> X2O4,x-self\n"),
        (
            "data",
            "p.csv",
            "set,reaction,T_K,k,k_units\n"
            + "".join(
                f"x1,xo2-self,{T},{1e-12 * (T / 300) ** 0.7:.6e},cm3/molecule/s\n"
                for T in (250, 300, 400, 550)
            ),
        ),
    ):
        outcome = run(str(db), command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    assert run(str(db), "fit", "xo2-self").exit_code == 0
    handle = open_store(str(db))
    try:
        with handle.session() as session:
            groups = steric.derived_steric_factors(session, model=model)
            samples = [s for g in groups for s in g.samples]
            assert len(samples) >= 5 and "xo2-self" in {s.key for s in samples}
            for sample in samples:
                expression = queries.expression(session, sample.expression_id)
                reaction = queries.find_reaction(session, sample.key)
                pair = collision_pairs(session, [reaction], model=model)[reaction.id]
                T = sample.temperature
                z, e_z = _one_reaction_rate(pair, T, model)
                expected = collision.derived_steric_factor(
                    modified_arrhenius(T, expression.A, expression.n, expression.Ea),
                    local_activation_energy(T, expression.n, expression.Ea),
                    T,
                    z,
                    e_z,
                )
                assert sample.steric_factor == pytest.approx(float(expected), rel=1e-12)
    finally:
        handle.close()


def test_a_textbook_steric_factor_is_converted_to_the_local_one(store):
    """P_local = e^(-1/2) A / z for hard spheres (Ea = E0 + RT/2; Laidler 1987 ch. 3): a
    textbook 0.1 is stored as 0.0607, and the conversion is noted."""
    with store.session(write=True) as session:
        rule = steric.set_class_rule(session, "ho2-self", 0.1, definition="textbook")
        view = steric.set_reaction_steric(session, "oh-ch4", 0.2, definition="textbook")
        with pytest.raises(BadInputError) as caught:
            steric.set_class_rule(session, "x", 0.1, definition="global")
    assert rule.steric_factor == pytest.approx(0.1 * math.exp(-0.5), rel=1e-12)
    assert "textbook" in rule.note
    assert view.steric_factor == pytest.approx(0.2 * math.exp(-0.5), rel=1e-12)
    assert caught.value.argument == "definition"
