"""Service-level behaviour: precedence rules, refits, steric rules, fingerprints, the demo."""

from __future__ import annotations

import math
import os

import numpy as np
import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

from ratebank.errors import ConflictError, RatebankError
from ratebank.services import estimation, fitting, selection, steric
from ratebank.services.store_access import open_store


@pytest.fixture
def filled(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    return db_url


@pytest.fixture
def store(filled):
    handle = open_store(filled, author="tester")
    yield handle
    handle.close()


# --------------------------------------------------------------------------- selection


def test_export_choice_precedence(store):
    with store.session(write=True) as session:
        from ratebank.services.curate import find_reaction

        reaction = find_reaction(session, "oh-ch4")
        choice = selection.choose(reaction.expressions)
        assert choice is not None and choice[1] == "newest literature"
        report = fitting.fit_reactions(session, ["oh-ch4"], form="arrhenius")
        assert report.rows[0].status == "stored"
        session.expire_all()
        choice = selection.choose(find_reaction(session, "oh-ch4").expressions)
        assert choice[0].origin == "measured-fit" and choice[1] == "newest measured fit"
        literature = next(e for e in reaction.expressions if e.origin == "literature")
        selection.recommend(session, "oh-ch4", literature.id)
        session.expire_all()
        choice = selection.choose(find_reaction(session, "oh-ch4").expressions)
        assert choice[0].id == literature.id and choice[1] == "recommended"


def test_recommend_refuses_incomplete_or_foreign_expressions(store):
    with store.session(write=True) as session:
        from ratebank.services.curate import find_reaction

        ea_only = next(e for e in find_reaction(session, "ho2-ho2").expressions if e.A is None)
        with pytest.raises(ConflictError, match="no pre-exponential factor yet"):
            selection.recommend(session, "ho2-ho2", ea_only.id)
        with pytest.raises(ConflictError, match="belongs to reaction 'ho2-ho2'"):
            selection.recommend(session, "oh-ch4", ea_only.id)


# --------------------------------------------------------------------------- fitting


def test_refit_of_unchanged_data_is_not_stored_twice(store):
    with store.session(write=True) as session:
        first = fitting.fit_reactions(session, form="arrhenius")
        second = fitting.fit_reactions(session, form="arrhenius")
    assert [r.status for r in first.rows] == ["stored"]
    assert [r.status for r in second.rows] == ["unchanged"]
    assert second.rows[0].expression_id == first.rows[0].expression_id


def test_store_fit_equals_a_one_at_a_time_fit(store):
    """The batch path of `fit` gives the parameters of a direct fit of the same points."""
    from ratebank.science.arrhenius import fit_rate_constants

    with store.session(write=True) as session:
        report = fitting.fit_reactions(session, form="arrhenius")
    row = report.rows[0]
    # the five points of tests/helpers/data.py, converted by hand: cm3/molecule/s * N_A * 1e-6
    T = np.array([300.0, 350.0, 400.0, 800.0, 1000.0])
    k = np.array(
        [
            6.4e-15 * constants.N_A * 1e-6,
            1.4e-14 * constants.N_A * 1e-6,
            2.6e-14 * constants.N_A * 1e-6,
            1.1e12 * 1e-6,
            2.2e12 * 1e-6,
        ]
    )
    sigma = np.array([0.1, 0.1, 0.1, 1e11 / 1.1e12, 2e11 / 2.2e12])
    direct = fit_rate_constants(T, k, sigma, form="arrhenius")
    assert row.A == pytest.approx(direct.A, rel=1e-10)
    assert row.Ea == pytest.approx(direct.Ea, rel=1e-10)
    assert row.n_sets == 2 and row.n_points == 5


def test_fit_of_a_reaction_without_points_fails_cleanly(store):
    with store.session(write=True) as session:
        report = fitting.fit_reactions(session, ["ho2-ho2"])
    assert report.rows[0].status == "failed"
    assert report.rows[0].message == "no measured points to fit"


# --------------------------------------------------------------------------- steric


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
    with store.session(write=True) as session, pytest.raises(RatebankError):
        steric.set_class_rule(session, "x", value)


def test_steric_precedence_in_estimates(store):
    """command line > stored on the reaction > class rule > fallback; none -> reported."""

    def estimate_p(**kwargs):
        with store.session(write=True) as session:
            report = estimation.estimate(session, ["ho2-ho2"], **kwargs)
            session.rollback()
        return report.rows[0].steric_factor, report.rows[0].steric_rule

    with (
        store.session(write=True) as session,
        pytest.raises(estimation.EstimateIncomplete, match="no applicable steric factor"),
    ):
        estimation.estimate(session, ["ho2-ho2"])
    assert estimate_p(fallback_steric=0.3) == (0.3, "fallback given on the command line")
    with store.session(write=True) as session:
        steric.set_class_rule(session, "ho2-self", 0.2, source="test rule")
    assert estimate_p(fallback_steric=0.3) == (0.2, "rule for class ho2-self")
    with store.session(write=True) as session:
        steric.set_reaction_steric(session, "ho2-ho2", 0.1, source="test value")
    assert estimate_p() == (0.1, "stored for the reaction")
    assert estimate_p(steric=0.05) == (0.05, "given on the command line")


def test_estimate_never_touches_measured_or_literature(store):
    with store.session(write=True) as session:
        with pytest.raises(estimation.EstimateIncomplete, match="already has a complete"):
            estimation.estimate(session, ["oh-ch4"], steric=0.1)
        report = estimation.estimate(session, ["oh-ch4"], steric=0.1, keep_going=True)
    assert report.rows == [] and not report.written


def test_estimated_diameter_is_stored_and_flagged(db_url, tmp_path):
    """O3 has only critical constants: its diameter is estimated (Tee-Gotoh-Stewart) and marked."""
    assert run(db_url, "init").exit_code == 0
    run(db_url, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)))
    run(db_url, "reactions", "add", "h-o3", "H + O3 -> OH + O2")
    run(db_url, "species", "add", "Hx", "H", "--diameter", "2.708")
    run(db_url, "reactions", "add", "hx-o3", "Hx + O3 -> OH + O2")
    expressions = "reaction,Ea,Ea_units\nhx-o3,4.0,kJ/mol\n"
    run(db_url, "expressions", "import", str(write(tmp_path / "e.csv", expressions)))
    outcome = run(db_url, "estimate", "hx-o3", "--steric", "0.1")
    assert outcome.exit_code == 0, outcome.stderr
    import json

    o3 = json.loads(run(db_url, "species", "show", "O3", "--json").stdout)
    assert o3["diameter_estimated"] is True
    assert o3["diameter_method"] == "tee-gotoh-stewart"
    # TGS without omega: 2.3647 (Tc/Pc[atm])^(1/3) Å (Tee, Gotoh & Stewart 1966)
    expected = 2.3647 * (261.0 / (55.73e5 / constants.atm)) ** (1 / 3)
    assert o3["diameter_angstrom"] == pytest.approx(expected, rel=1e-12)
    flags = json.loads(run(db_url, "check", "hx-o3", "--json").stdout)["flags"]
    assert [f["code"] for f in flags] == ["estimated-diameter"]
    assert "O3" in flags[0]["message"]


# --------------------------------------------------------------------------- fingerprint


def test_fingerprint_follows_content_not_reads(store):
    from ratebank.store.fingerprint import store_fingerprint

    with store.session() as session:
        first = store_fingerprint(session)
        again = store_fingerprint(session)
    assert first == again and first.startswith("sha256:")
    with store.session(write=True) as session:
        steric.set_class_rule(session, "x", 0.1)
    with store.session() as session:
        assert store_fingerprint(session) != first


# --------------------------------------------------------------------------- demo


def test_demo_builds_fits_estimates_and_exports(tmp_path):
    db = tmp_path / "demo.db"
    out = tmp_path / "out"
    outcome = run(str(tmp_path / "unused.db"), "demo", "--db", str(db), "--out", str(out))
    assert outcome.exit_code == 0, outcome.stderr
    assert "every rate number in it is synthetic" in outcome.stdout
    assert "Caution:" in outcome.stdout
    for preset in ("combustion", "atmospheric"):
        assert (out / f"mechanism-{preset}.csv").is_file()
        assert (out / f"mechanism-{preset}.resource.json").is_file()
    import csv

    with (out / "mechanism-atmospheric.csv").open(encoding="utf-8") as handle:
        rows = {r["key"]: r for r in csv.DictReader(handle)}
    origins = {r["origin"] for r in rows.values()}
    assert origins == {"measured-fit", "literature", "collision-estimate"}
    assert rows["ho2-ho2"]["origin"] == "collision-estimate"
    assert rows["ho2-ho2"]["steric_factor"] == "0.02"
    # a second run replaces its own store
    again = run(str(tmp_path / "unused.db"), "demo", "--db", str(db), "--out", str(out))
    assert again.exit_code == 0


def test_demo_refuses_to_overwrite_a_store_it_did_not_build(tmp_path):
    db = tmp_path / "precious.db"
    assert run(str(db), "init").exit_code == 0
    outcome = run(str(db), "demo", "--db", str(db), "--out", str(tmp_path / "o"))
    assert outcome.exit_code == 1
    assert "is not a ratebank demo store" in outcome.stderr
    assert db.exists()


# --------------------------------------------------------------------------- export units


@pytest.mark.parametrize(
    ("given", "expected"),
    [
        ("cm3/molecule/s", {1: "s-1", 2: "cm3/molecule/s", 3: "cm6/molecule2/s"}),
        ("L/mol/s", {1: "s-1", 2: "L/mol/s", 3: "L2/mol2/s"}),
        ("cm6/mol2/s", {1: "s-1", 2: "cm3/mol/s", 3: "cm6/mol2/s"}),
        ("m3 mol-1 s-1", {1: "s-1", 2: "m3 mol-1 s-1", 3: "m6/mol2/s"}),
    ],
)
def test_explicit_k_units_follow_for_every_order(given, expected):
    from ratebank.services.mechanism import export_units

    assert export_units("combustion", given, None).k_units == expected


def test_first_order_unit_cannot_define_the_others():
    from ratebank.errors import UnitError
    from ratebank.services.mechanism import export_units

    with pytest.raises(UnitError, match="first-order unit"):
        export_units(None, "s-1", None)


def test_linearise_only_with_two_parameter_form(store):
    from ratebank.services.mechanism import export_units, mechanism_table

    with store.session() as session, pytest.raises(RatebankError, match="only to --form arrhenius"):
        mechanism_table(
            session,
            units=export_units(),
            form="modified",
            linearise_at=300.0,
            leave_out_gaps=True,
        )


@pytest.mark.skipif(not os.environ.get("RATEBANK_TEST_PG_URL"), reason="needs PostgreSQL")
def test_fingerprint_is_the_same_on_sqlite_and_postgresql(tmp_path):
    """The same imports into both dialects give the same content fingerprint."""
    from helpers.pg import scratch_schema

    from ratebank.store.fingerprint import store_fingerprint

    prints = []
    with scratch_schema() as pg_url:
        for url in (str(tmp_path / "fp.db"), pg_url):
            assert run(url, "init").exit_code == 0
            for command, name, content in (
                ("species", "s.csv", SPECIES_CSV),
                ("reactions", "r.csv", REACTIONS_CSV),
                ("data", "m.csv", MEASUREMENTS_CSV),
                ("expressions", "e.csv", EXPRESSIONS_CSV),
            ):
                path = write(tmp_path / name, content)
                assert run(url, command, "import", str(path)).exit_code == 0
            handle = open_store(url)
            with handle.session() as session:
                prints.append(store_fingerprint(session))
            handle.close()
    assert prints[0] == prints[1]


# --------------------------------------------------------------------------- derived P


@pytest.mark.parametrize("model", ["hard-sphere", "lennard-jones"])
def test_derived_steric_factors_equal_the_formula_reaction_by_reaction(tmp_path, model):
    # the vectorized pass must give, for every measured reaction, what the
    # one-reaction formula P = k / (z exp(-(Ea_local - E_z)/(R T))) gives
    from ratebank.science import collision
    from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius
    from ratebank.services.partners import collision_pairs
    from ratebank.store.models import Expression, Reaction

    db = tmp_path / "demo.db"
    assert run(str(db), "demo", "--db", str(db), "--out", str(tmp_path / "m.csv")).exit_code == 0
    # and a self-reaction A + A, whose collision rate carries the factor 1/2 (made up)
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
                expression = session.get(Expression, sample.expression_id)
                reaction = session.get(Reaction, expression.reaction_id)
                pair = collision_pairs(session, [reaction], model=model)[reaction.id]
                T = sample.temperature
                expected = collision.derived_steric_factor(
                    modified_arrhenius(T, expression.A, expression.n, expression.Ea),
                    local_activation_energy(T, expression.n, expression.Ea),
                    T,
                    pair.collision_rate(T, model),
                    pair.collision_activation_energy(T, model),
                )
                assert sample.steric_factor == pytest.approx(float(expected), rel=1e-12)
    finally:
        handle.close()
