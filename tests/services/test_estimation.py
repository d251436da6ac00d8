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


# --------------------------------------------------------------------------- rate-law forms

FORMS_HEADER = (
    "reaction,form,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,Fc,"
    "T_min_K,T_max_K,reference\n"
)


def _add(db_url, tmp_path, reactions: str, expressions: str, species: str = "") -> None:
    if species:
        path = write(tmp_path / "more-species.csv", species)
        assert run(db_url, "species", "import", str(path)).exit_code == 0
    path = write(tmp_path / "more-reactions.csv", "key,equation\n" + reactions)
    assert run(db_url, "reactions", "import", str(path)).exit_code == 0
    if expressions:
        path = write(tmp_path / "more-expressions.csv", FORMS_HEADER + expressions)
        outcome = run(db_url, "expressions", "import", str(path))
        assert outcome.exit_code == 0, outcome.stderr


def _expressions(store, key):
    with store.session() as session:
        reaction = queries.find_reaction(session, key)
        return queries.expressions_of(session, [reaction.id])[reaction.id]


def test_k_inf_of_an_association_is_the_bimolecular_estimate_of_its_pair(filled, store, tmp_path):
    """HO2 + HO2 + M (synthetic) with a falloff awaiting k_inf: the estimate is exactly the
    one collision theory gives the pair HO2 + HO2 (ho2-ho2, the same Ea), and keeps the
    curated k0 and fixed-Fc broadening."""
    _add(
        filled,
        tmp_path,
        "ho2-ho2-m,HO2 + HO2 + M -> H2O2 + O2 + M\n",
        "ho2-ho2-m,falloff,,,-4.9,kJ/mol,cm3/molecule/s,2e-30,-2,0,,fixed-fc,0.6,,,synthetic\n",
    )
    with store.session(write=True) as session:
        report = estimation.estimate(session, ["ho2-ho2", "ho2-ho2-m"], steric=0.4, T_ref=300.0)
    pair, association = sorted(report.rows, key=lambda r: r.key)
    assert (association.A, association.n, association.Ea) == (pair.A, pair.n, pair.Ea)
    (estimate,) = [e for e in _expressions(store, "ho2-ho2-m") if e.complete]
    assert estimate.form == "falloff" and estimate.origin == "collision-estimate"
    per_molecule2 = (1e-6) ** 2 * constants.N_A**2  # cm6 molecule-2 -> m6 mol-2
    assert estimate.A_low == pytest.approx(2e-30 * per_molecule2, rel=1e-12)
    assert (estimate.n_low, estimate.broadening, estimate.Fc) == (-2.0, "fixed-fc", 0.6)
    assert estimate.reference.startswith("k_inf from collision theory")
    assert "k0 and broadening kept" in estimate.provenance["estimated_part"]


def test_a_third_body_k0_awaiting_a_is_not_given_by_collision_theory(filled, store, tmp_path):
    _add(
        filled,
        tmp_path,
        "ho2-ho2-m,HO2 + HO2 + M -> H2O2 + O2 + M\n",
        "ho2-ho2-m,,,,-4.9,kJ/mol,,,,,,,,,,synthetic\n",
    )
    with (
        store.session(write=True) as session,
        pytest.raises(RefusedEstimateError, match="third-body k0, which collision theory"),
    ):
        estimation.estimate(session, ["ho2-ho2-m"], steric=0.4, T_ref=300.0)


# C2H5 and C2H4: synthetic Lennard-Jones values for the tests (C2H4 near Poling's ethylene).
DECOMPOSITION_SPECIES = (
    "name,formula,diameter_angstrom,diameter_kind,well_depth_K,source\n"
    "C2H5,C2H5,4.302,lennard-jones,252.3,synthetic\n"
    "C2H4,C2H4,4.163,lennard-jones,224.7,synthetic\n"
)
DECOMPOSITION = "c2h5-m,C2H5 + M -> C2H4 + H + M\n"
DECOMPOSITION_EA = "c2h5-m,,,,160,kJ/mol,,,,,,,,600,1200,synthetic\n"


def _low_pressure(store, keys=("c2h5-m",), **options):
    from ratebank.services.low_pressure import estimate_low_pressure

    arguments = {"oscillators": 6, "collision_efficiency": 0.3, "bath": "N2"} | options
    with store.session(write=True) as session:
        return estimate_low_pressure(session, list(keys), **arguments)


def test_hinshelwood_k0_of_a_decomposition_is_stored_with_its_inputs(filled, store, tmp_path):
    """k0 = beta Z_LJ (E0/RT)^(s-1)/(s-1)! exp(-E0/RT) (Hinshelwood 1927; Laidler 1987
    ch. 5), with Z_LJ computed here from chemicals' Neufeld-Janzen-Aziz Omega(2,2)*."""
    import chemicals.lennard_jones as lj

    _add(filled, tmp_path, DECOMPOSITION, DECOMPOSITION_EA, DECOMPOSITION_SPECIES)
    (row,) = _low_pressure(store).rows
    T = row.T_middle
    assert (row.T_min, row.T_max, T) == (600.0, 1200.0, pytest.approx(math.sqrt(600 * 1200)))
    with store.session() as session:
        c2h5 = queries.find_species(session, "C2H5")
        n2 = queries.find_species(session, "N2")
    mu = c2h5.molar_mass * n2.molar_mass / (c2h5.molar_mass + n2.molar_mass) / constants.N_A
    z = (
        math.pi
        * ((4.302e-10 + 3.798e-10) / 2) ** 2
        * math.sqrt(8 * constants.k * T / (math.pi * mu))
        * constants.N_A
        * lj.collision_integral_Neufeld_Janzen_Aziz(T / math.sqrt(252.3 * 71.4), 2, 2)
    )
    x = 160e3 / (constants.R * T)
    expected = 0.3 * z * x**5 / math.factorial(5) * math.exp(-x)
    assert row.k0_at_middle == pytest.approx(expected, rel=1e-6)
    (stored,) = [e for e in _expressions(store, "c2h5-m") if e.complete]
    assert stored.form is None  # the plain form of a reaction with M: k = k0 [M]_eff
    fitted = stored.A * T**stored.n * math.exp(-stored.Ea / (constants.R * T))
    assert fitted == pytest.approx(expected, rel=2e-3)
    assert stored.uncertainty_factor == 10.0 and stored.origin == "collision-estimate"
    recorded = stored.provenance
    assert (recorded["oscillators"], recorded["collision_efficiency"], recorded["bath_gas"]) == (
        6,
        0.3,
        "N2",
    )
    assert recorded["guidance"] == "order of magnitude"
    assert recorded["threshold_energy_from"].startswith("the activation energy of expression")
    assert "order-of-magnitude guidance" in stored.reference


def test_a_given_threshold_and_factor_replace_the_earlier_estimate(filled, store, tmp_path):
    _add(filled, tmp_path, DECOMPOSITION, DECOMPOSITION_EA, DECOMPOSITION_SPECIES)
    first = _low_pressure(store).rows[0]
    second = _low_pressure(
        store, threshold_energy=40.0, threshold_units="kcal/mol", uncertainty_factor=30.0
    ).rows[0]
    assert second.replaced == [first.expression_id]
    assert second.threshold_energy == pytest.approx(40.0 * 4184.0)
    assert second.threshold_from == "given by the user" and second.uncertainty_factor == 30.0
    assert len([e for e in _expressions(store, "c2h5-m") if e.complete]) == 1


@pytest.mark.parametrize(
    ("keys", "options", "error", "match"),
    [
        (("h-o2-m",), {}, BadInputError, "not a unimolecular decomposition written with M"),
        (("oh-ch4",), {}, BadInputError, "not a unimolecular decomposition written with M"),
        (("c2h5-m",), {"oscillators": 0.5}, BadInputError, "oscillators 0.5 must be"),
        (("c2h5-m",), {"collision_efficiency": 0.0}, BadInputError, r"in \(0, 1\]"),
        (("c2h5-m",), {"bath": None}, BadInputError, "needs bath"),
        (("c2h5-m",), {"T_range": (900.0, 700.0)}, BadInputError, "lower first"),
        (("c2h5-m",), {"threshold_energy": -5.0}, BadInputError, "an energy above 0"),
    ],
)
def test_bad_low_pressure_requests_write_nothing(
    filled, store, tmp_path, keys, options, error, match
):
    from helpers.cli import snapshot

    _add(filled, tmp_path, DECOMPOSITION, DECOMPOSITION_EA, DECOMPOSITION_SPECIES)
    before = snapshot(filled)
    with pytest.raises(error, match=match):
        _low_pressure(store, keys, **options)
    assert snapshot(filled) == before


def test_no_threshold_stored_or_given_is_refused(filled, store, tmp_path):
    _add(filled, tmp_path, DECOMPOSITION, "", DECOMPOSITION_SPECIES)
    with pytest.raises(BadInputError, match="no positive activation energy stored") as caught:
        _low_pressure(store, T_range=(600.0, 1200.0))
    assert caught.value.argument == "threshold_energy"


def test_a_literature_k0_is_never_replaced_by_an_estimate(filled, store, tmp_path):
    literature = "c2h5-m,,1e-9,0,160,kJ/mol,cm3/molecule/s,,,,,,,600,1200,synthetic\n"
    _add(filled, tmp_path, DECOMPOSITION, literature, DECOMPOSITION_SPECIES)
    with pytest.raises(RefusedEstimateError, match="estimates never replace"):
        _low_pressure(store)
