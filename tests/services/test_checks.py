"""Checking every expression against physical limits, called directly."""

from __future__ import annotations

import pytest

from ratebank.errors import BadInputError
from ratebank.services import checks, estimation
from ratebank.services.store_access import open_store


def test_clean_store_but_for_gaps(store):
    with store.session() as session:
        report = checks.check_store(session)
    assert {f.code for f in report.flags} == {"nothing-usable"}
    assert sorted(f.key for f in report.flags) == ["h-o2-m", "ho2-ho2"]
    assert not report.clean and report.reactions == 4


def test_a_steric_factor_above_one_is_flagged(store):
    with store.session(write=True) as session:
        estimation.estimate(session, ["ho2-ho2"], steric=3.0, T_ref=300.0)
        report = checks.check_store(session, keys=["ho2-ho2"], ignore=["above-collision-limit"])
    assert {f.code for f in report.flags} == {"steric-above-one"}
    assert report.flags[0].value == pytest.approx(3.0)


def test_a_rate_above_the_collision_limit_is_flagged(store):
    """P = 50 with Ea = -4.9 kJ/mol gives k far above z(T) (Laidler 1987 ch. 3: z is the bound)."""
    with store.session(write=True) as session:
        estimation.estimate(session, ["ho2-ho2"], steric=50.0, T_ref=300.0)
        report = checks.check_store(session, keys=["ho2-ho2"], ignore=["steric-above-one"])
    (flag,) = report.flags
    assert flag.code == "above-collision-limit" and flag.value > 1.0


def test_extrapolation_beyond_the_valid_range(store):
    with store.session() as session:
        report = checks.check_store(session, keys=["oh-ch4"], T_range=(300.0, 3000.0))
    (flag,) = report.flags
    assert flag.code == "extrapolation" and "200-2000 K" in flag.message


@pytest.mark.parametrize(
    ("options", "argument"),
    [({"ignore": ["no-such-check"]}, "ignore"), ({"T_range": (800.0, 300.0)}, "T_range")],
)
def test_bad_options_name_the_argument(store, options, argument):
    with store.session() as session, pytest.raises(BadInputError) as caught:
        checks.check_store(session, **options)
    assert caught.value.argument == argument


def test_a_lennard_jones_estimate_at_p_one_passes_its_own_limit(store):
    """An estimate with P = 1 is the collision rate itself: held to its own (Lennard-Jones)
    model it is not above the limit (issue: check always used the hard-sphere rate)."""
    with store.session(write=True) as session:
        estimation.estimate(
            session, ["ho2-ho2"], steric=1.0, collision="lennard-jones", T_range=(300.0, 1500.0)
        )
    with store.session() as session:
        own = checks.check_store(session, keys=["ho2-ho2"])
    assert "above-collision-limit" not in {f.code for f in own.flags}


def test_a_pair_without_a_diameter_is_listed_as_unchecked(filled, tmp_path):
    """CH3 has no diameter and nothing to estimate one from: its reaction is unchecked, and
    the report is not clean although nothing is flagged."""
    from helpers.cli import run, write

    assert run(filled, "reactions", "add", "ch3-ho2", "CH3 + HO2 -> CH4 + O2").exit_code == 0
    expressions = "reaction,A,n,Ea,Ea_units,k_units\nch3-ho2,1e-11,0,0,K,cm3/molecule/s\n"
    path = write(tmp_path / "e.csv", expressions)
    assert run(filled, "expressions", "import", str(path)).exit_code == 0
    store = open_store(filled)
    try:
        with store.session() as session:
            report = checks.check_store(session, keys=["ch3-ho2"])
    finally:
        store.close()
    assert report.flags == [] and not report.clean
    (unchecked,) = report.unchecked
    assert unchecked.key == "ch3-ho2" and "CH3 has no collision diameter" in unchecked.reason


def test_two_sets_a_factor_two_apart_are_flagged_and_honest(db_url, tmp_path):
    """Two synthetic sets a factor 2 apart, each stated at 5 %: the pooled fit exports
    f(298) >= 1.4 and check flags it (DerSimonian-Laird between-set variance)."""
    from helpers.cli import run, write
    from helpers.data import REACTIONS_CSV, SPECIES_CSV

    assert run(db_url, "init").exit_code == 0
    run(db_url, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV)))
    run(db_url, "reactions", "import", str(write(tmp_path / "r.csv", REACTIONS_CSV)))
    lines = ["set,reaction,T_K,k,k_units,k_uncertainty"]
    for name, factor in (("lab-a", 1.0), ("lab-b", 2.0)):
        for T in (250, 280, 298, 320, 350, 400):
            k = factor * 3.0e-11 * 2.718281828 ** (-1100.0 / T)
            lines.append(f"{name},oh-ch4,{T},{k:.6e},cm3/molecule/s,0.05")
    path = write(tmp_path / "p.csv", "\n".join(lines) + "\n")
    assert run(db_url, "data", "import", str(path)).exit_code == 0
    assert run(db_url, "fit", "oh-ch4", "--form", "arrhenius").exit_code == 0
    store = open_store(db_url)
    try:
        with store.session() as session:
            report = checks.check_store(session, keys=["oh-ch4"])
            from ratebank.store import queries

            reaction = queries.find_reaction(session, "oh-ch4")
            fit = next(
                e
                for e in queries.expressions_of(session, [reaction.id])[reaction.id]
                if e.origin == "measured-fit"
            )
    finally:
        store.close()
    assert fit.uncertainty_factor >= 1.4
    (flag,) = [f for f in report.flags if f.code == "fit-scatter"]
    assert "pooled sets disagree" in flag.message
    # between-set factor exp(tau), tau^2 = (ln 2)^2/2 - v (DerSimonian & Laird 1986, by hand)
    assert flag.value == pytest.approx(
        2.718281828 ** ((0.6931471805599453**2 / 2) ** 0.5), rel=1e-3
    )


def test_the_dispersion_capture_rate_raises_the_limit_where_it_is_larger(store):
    """HO2 + HO2 estimated at P = 3 sits above the hard-sphere rate; with polarizabilities and
    ionization energies stored (invented, synthetic values large enough for the London
    capture rate to exceed it, Georgievskii & Klippenstein 2005 form) it is within the limit."""
    from sqlalchemy import update

    from ratebank.science.capture import london_capture_rate_constant
    from ratebank.store.models import Species

    with store.session(write=True) as session:
        estimation.estimate(session, ["ho2-ho2"], steric=3.0, T_ref=300.0)
    with store.session() as session:
        before = checks.check_store(session, keys=["ho2-ho2"], ignore=["steric-above-one"])
    assert [f.code for f in before.flags] == ["above-collision-limit"]
    with store.session(write=True) as session:
        session.execute(
            update(Species)
            .where(Species.name == "HO2")
            .values(polarizability=4.0e-29, ionization_energy=1.1e6)
        )
    with store.session() as session:
        after = checks.check_store(session, keys=["ho2-ho2"], ignore=["steric-above-one"])
        ho2 = queries_species(session)
    capture = london_capture_rate_constant(
        300.0, 4.0e-29, 4.0e-29, 1.1e6, 1.1e6, ho2.molar_mass, ho2.molar_mass, identical=True
    )
    assert capture > 0 and after.flags == []


def queries_species(session):
    from ratebank.store import queries

    return queries.find_species(session, "HO2")
