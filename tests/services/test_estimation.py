"""Estimating A from collision theory times a steric factor."""

from __future__ import annotations

import json
import math

import pytest
from helpers.cli import run, write
from helpers.data import SPECIES_CSV
from scipy import constants

from ratebank.errors import BadInputError, RefusedEstimateError
from ratebank.science.collision import collision_rate_constant
from ratebank.services import estimation, steric
from ratebank.store import queries


def test_steric_precedence_in_estimates(store):
    """given > stored on the reaction > class rule > fallback; none -> reported."""

    def estimate_p(**kwargs):
        with store.session(write=True) as session:
            report = estimation.estimate(session, ["ho2-ho2"], T_ref=300.0, **kwargs)
            session.rollback()
        return report.rows[0].steric_factor, report.rows[0].steric_rule

    with (
        store.session(write=True) as session,
        pytest.raises(RefusedEstimateError, match="no applicable steric factor"),
    ):
        estimation.estimate(session, ["ho2-ho2"], T_ref=300.0)
    assert estimate_p(fallback_steric=0.3) == (0.3, "fallback given by the user")
    with store.session(write=True) as session:
        steric.set_class_rule(session, "ho2-self", 0.2, source="test rule")
    assert estimate_p(fallback_steric=0.3) == (0.2, "rule for class ho2-self")
    with store.session(write=True) as session:
        steric.set_reaction_steric(session, "ho2-ho2", 0.1, source="test value")
    assert estimate_p() == (0.1, "stored for the reaction")
    assert estimate_p(steric=0.05) == (0.05, "given by the user")


def test_estimate_never_touches_measured_or_literature(store):
    with store.session(write=True) as session:
        with pytest.raises(RefusedEstimateError, match="already has a complete"):
            estimation.estimate(session, ["oh-ch4"], steric=0.1)
        report = estimation.estimate(session, ["oh-ch4"], steric=0.1, keep_going=True)
    assert report.rows == [] and not report.written


def test_hard_sphere_estimate_of_a_self_reaction_by_hand(store):
    """HO2 + HO2 with P = 0.05: A = P z(T_ref)/sqrt(T_ref), z halved for A + A, n = 1/2,
    Ea = E0 = max(0, Ea_given - R T_ref/2) (DESIGN section 4; Laidler 1987 ch. 3); the given
    Ea (-4.9 kJ/mol) is below R T_ref/2, so E0 = 0 and the shortfall is recorded."""
    with store.session(write=True) as session:
        report = estimation.estimate(session, ["ho2-ho2"], steric=0.05, T_ref=500.0)
        reaction = queries.find_reaction(session, "ho2-ho2")
        stored = queries.expressions_of(session, [reaction.id])[reaction.id]
        ho2 = queries.find_species(session, "HO2")
    row = report.rows[0]
    z = 0.5 * collision_rate_constant(500.0, ho2.diameter, ho2.diameter, ho2.molar_mass,
                                      ho2.molar_mass)  # fmt: skip
    assert row.A == pytest.approx(0.05 * z / math.sqrt(500.0), rel=1e-12)
    assert row.n == 0.5
    assert row.Ea == 0.0
    assert row.threshold_shortfall == pytest.approx(
        constants.R * 500.0 / 2 - row.activation_energy, rel=1e-12
    )
    estimate = next(e for e in stored if e.origin == "collision-estimate")
    assert estimate.id == row.expression_id and estimate.provenance["self_reaction"] is True


def test_lennard_jones_estimate_records_its_fit_deviation(store):
    with store.session(write=True) as session:
        report = estimation.estimate(
            session, ["ho2-ho2"], steric=0.05, collision="lennard-jones", T_range=(300.0, 1500.0)
        )
    row = report.rows[0]
    assert row.collision_model == "lennard-jones"
    assert 0 <= row.max_fit_deviation < 0.05
    assert (row.T_min, row.T_max) == (300.0, 1500.0)


@pytest.mark.parametrize(
    ("options", "argument"),
    [
        ({"steric": -1.0}, "steric"),
        ({"T_ref": 0.0}, "T_ref"),
        ({"uncertainty_factor": 0.5}, "uncertainty_factor"),
        ({"collision": "soft"}, "collision"),
        ({"T_range": (500.0, 300.0)}, "T_range"),
    ],
)
def test_bad_options_name_the_argument(store, options, argument):
    with store.session(write=True) as session, pytest.raises(BadInputError) as caught:
        estimation.estimate(session, ["ho2-ho2"], **options)
    assert caught.value.argument == argument
    assert "--" not in str(caught.value)


def test_estimated_diameter_is_stored_and_flagged(db_url, tmp_path):
    """O3 has only critical constants: its diameter is estimated (Tee-Gotoh-Stewart) and marked."""
    assert run(db_url, "init").exit_code == 0
    run(db_url, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)))
    run(db_url, "reactions", "add", "h-o3", "H + O3 -> OH + O2")
    run(db_url, "species", "add", "Hx", "H", "--diameter", "2.708")
    run(db_url, "reactions", "add", "hx-o3", "Hx + O3 -> OH + O2")
    expressions = "reaction,Ea,Ea_units\nhx-o3,4.0,kJ/mol\n"
    run(db_url, "expressions", "import", str(write(tmp_path / "e.csv", expressions)))
    outcome = run(db_url, "estimate", "hx-o3", "--steric", "0.1", "--t-ref", "298")
    assert outcome.exit_code == 0, outcome.stderr
    o3 = json.loads(run(db_url, "species", "show", "O3", "--json").stdout)
    assert o3["diameter_estimated"] is True
    assert o3["diameter_method"] == "tee-gotoh-stewart"
    # TGS without omega: 2.3647 (Tc/Pc[atm])^(1/3) Å (Tee, Gotoh & Stewart 1966)
    expected = 2.3647 * (261.0 / (55.73e5 / constants.atm)) ** (1 / 3)
    assert o3["diameter_angstrom"] == pytest.approx(expected, rel=1e-12)
    flags = json.loads(run(db_url, "check", "hx-o3", "--json").stdout)["flags"]
    assert [f["code"] for f in flags] == ["estimated-diameter"]
    assert "O3" in flags[0]["message"]


def test_an_estimate_never_exceeds_p_z(store):
    """Ea = -500 K (E/R) for HO2 + HO2: E0 is held at 0, so k <= P z over 50-5000 K everywhere
    (collision theory's bound, Laidler 1987 ch. 3); the shortfall is recorded."""
    import numpy as np

    from ratebank.science.arrhenius import modified_arrhenius

    with store.session(write=True) as session:
        reaction = queries.find_reaction(session, "ho2-ho2")
        report = estimation.estimate(session, ["ho2-ho2"], steric=0.3, T_ref=300.0)
        ho2 = queries.find_species(session, "HO2")
        stored = queries.expression(session, report.rows[0].expression_id)
    row = report.rows[0]
    assert row.threshold_shortfall > 0 and stored.provenance["threshold_energy_held_at_zero"]
    T = np.geomspace(50.0, 5000.0, 200)
    z = 0.5 * collision_rate_constant(T, ho2.diameter, ho2.diameter, ho2.molar_mass, ho2.molar_mass)
    k = modified_arrhenius(T, row.A, row.n, row.Ea)
    assert np.all(k <= 0.3 * z * (1 + 1e-12))
    assert reaction.key == "ho2-ho2"


def test_no_silent_reference_temperature_or_range(store):
    """An Ea with no range and no T_ref is not estimated at 298.15 K by default; a
    Lennard-Jones estimate is not fitted over an invented range."""
    with store.session(write=True) as session:
        with pytest.raises(RefusedEstimateError, match="no reference temperature"):
            estimation.estimate(session, ["ho2-ho2"], steric=0.1)
        with pytest.raises(RefusedEstimateError, match="give a range"):
            estimation.estimate(
                session, ["ho2-ho2"], steric=0.1, T_ref=300.0, collision="lennard-jones"
            )
        report = estimation.estimate(session, ["ho2-ho2"], steric=0.1, T_ref=300.0)
        stored = queries.expression(session, report.rows[0].expression_id)
    assert stored.provenance["T_ref_from"] == "given by the user"
    assert stored.provenance["valid_range_stated"] is False
    assert (report.rows[0].T_min, report.rows[0].T_max) == (None, None)
