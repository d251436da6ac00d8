"""Checking every expression against physical limits, called directly."""

from __future__ import annotations

import math

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


# --------------------------------------------------------------------------- rate-law forms

FORMS_REACTIONS = """key,equation
oh-oh-m,OH + OH + M -> H2O2 + M
oh-h2o2,OH + H2O2 -> H2O + HO2
"""
FORMS_HEADER = (
    "reaction,form,term,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,"
    "Fc,N,troe_alpha,troe_T3_K,troe_T1_K,troe_T2_K,T_min_K,T_max_K,reference\n"
)


def _with_forms(filled, tmp_path, rows: str) -> None:
    """Add an association and a bimolecular reaction to the filled store, and these
    expression rows (synthetic numbers)."""
    from helpers.cli import run, write

    reactions = write(tmp_path / "forms-reactions.csv", FORMS_REACTIONS)
    assert run(filled, "reactions", "import", str(reactions)).exit_code == 0
    path = write(tmp_path / "forms.csv", FORMS_HEADER + rows)
    outcome = run(filled, "expressions", "import", str(path))
    assert outcome.exit_code == 0, outcome.stderr


def _check(db_url, **options):
    store = open_store(db_url)
    try:
        with store.session() as session:
            return checks.check_store(session, **options)
    finally:
        store.close()


def _sql(db_url, statement: str, **values) -> None:
    """Write a row the importers refuse, as a store written by hand would hold it."""
    from sqlalchemy import text

    store = open_store(db_url)
    try:
        with store.session(write=True) as session:
            session.execute(text(statement), values)
    finally:
        store.close()


def _codes(report, key: str) -> set[str]:
    return {f.code for f in report.flags if f.key == key}


# k_inf of OH + OH: the hard-sphere collision rate of OH + OH at 300 K, with Svehla's
# 3.147 angstrom, is about 1.4e-10 cm3 molecule-1 s-1 (by hand, pi d^2 <v_rel>, halved for
# the identical pair: Laidler 1987 ch. 3); 1e-8 is far above it, 1e-12 well below.
TROE_ROW = (
    "oh-oh-m,falloff,,{k_inf},0,0,K,cm3/molecule/s,6.9e-31,-0.8,0,,troe,,,0.5,100,2000,,"
    "300,1500,synthetic\n"
)


@pytest.mark.parametrize(("k_inf", "flagged"), [("1e-8", True), ("1e-12", False)])
def test_k_inf_of_an_association_is_held_to_the_collision_limit(filled, tmp_path, k_inf, flagged):
    _with_forms(filled, tmp_path, TROE_ROW.format(k_inf=k_inf))
    report = _check(filled, keys=["oh-oh-m"])
    limit = [f for f in report.flags if f.code == "above-collision-limit"]
    assert bool(limit) is flagged
    if flagged:
        assert limit[0].message.startswith("k_inf of expression")
        assert limit[0].value == pytest.approx(1e-8 / 1.4e-10, rel=0.5)
    assert report.unchecked == []


def test_a_third_body_coefficient_is_not_held_to_the_collision_limit(filled, tmp_path):
    """k0 of k = k0 [M] has the order of the equation (3): not a collision rate."""
    row = "oh-oh-m,,,1e-25,0,0,K,cm6/molecule2/s,,,,,,,,,,,,300,1500,synthetic\n"
    _with_forms(filled, tmp_path, row)
    report = _check(filled, keys=["oh-oh-m"])
    assert "above-collision-limit" not in _codes(report, "oh-oh-m") and not report.unchecked


def test_a_sound_troe_falloff_raises_no_form_flag(filled, tmp_path):
    _with_forms(filled, tmp_path, TROE_ROW.format(k_inf="1e-12"))
    report = _check(filled, keys=["oh-oh-m"])
    assert _codes(report, "oh-oh-m") == set()


def test_a_centre_above_one_bends_the_falloff_curve_back(filled, tmp_path):
    """Troe's Fcent = (1-a) e^(-T/T***) + a e^(-T/T*) + e^(-T**/T) (Gilbert, Luther & Troe
    1983) with T***, T* huge and T** = 1 K is about 2: F peaks near Pr = 1 and k then falls
    as the pressure rises (k_inf Pr/(1+Pr) gains at most 2 there, F loses its factor 2)."""
    _with_forms(filled, tmp_path, TROE_ROW.format(k_inf="1e-12"))
    _sql(
        filled,
        "UPDATE expression SET troe_t3 = 1e30, troe_t1 = 1e30, troe_t2 = 1.0 WHERE form = 'falloff'",
    )
    report = _check(filled, keys=["oh-oh-m"])
    assert _codes(report, "oh-oh-m") == {"falloff-not-monotonic", "fc-out-of-range"}
    centre = next(f for f in report.flags if f.code == "fc-out-of-range")
    assert centre.value == pytest.approx(2.0 * 0.5 + math.exp(-1.0 / 300.0), rel=1e-9)
    bend = next(f for f in report.flags if f.code == "falloff-not-monotonic")
    assert "falls as the pressure rises" in bend.message


@pytest.mark.parametrize("Fc", [0.0, -0.2, 1.5])
def test_a_fixed_centre_outside_zero_one_is_flagged(filled, tmp_path, Fc):
    row = (
        "oh-oh-m,falloff,,1e-12,0,0,K,cm3/molecule/s,6.9e-31,-0.8,0,,fixed-fc,0.6,,,,,,300,1500,x\n"
    )
    _with_forms(filled, tmp_path, row)
    _sql(filled, "UPDATE expression SET fc = :fc WHERE form = 'falloff'", fc=Fc)
    report = _check(filled, keys=["oh-oh-m"])
    assert _codes(report, "oh-oh-m") == {"fc-out-of-range"}
    (flag,) = report.flags
    assert flag.value == Fc and "outside (0, 1]" in flag.message


@pytest.mark.parametrize(("column", "name"), [("troe_t3", "T***"), ("troe_t1", "T*")])
@pytest.mark.parametrize("value", [0.0, -50.0])
def test_a_troe_temperature_not_above_zero_is_flagged(filled, tmp_path, column, name, value):
    _with_forms(filled, tmp_path, TROE_ROW.format(k_inf="1e-12"))
    _sql(filled, f"UPDATE expression SET {column} = :v WHERE form = 'falloff'", v=value)
    report = _check(filled, keys=["oh-oh-m"])
    assert _codes(report, "oh-oh-m") == {"troe-temperature-not-positive"}
    assert f"Troe's {name} = {value:.4g} K must be above 0 K" in report.flags[0].message


SUM_ROWS = (
    "oh-h2o2,sum,1,1e-12,0,0,K,cm3/molecule/s,,,,,,,,,,,,{r1},x\n"
    "oh-h2o2,sum,2,2e-12,0,1000,K,cm3/molecule/s,,,,,,,,,,,,{r2},x\n"
)


@pytest.mark.parametrize(
    ("r1", "r2", "finding"),
    [
        ("300,1000", "300,1000", None),
        ("300,600", "800,2000", "are disjoint: they never hold together"),
        ("300,1000", "500,2000", "the sum holds only over 500-1000 K"),
        ("300,1000", ",", "term(s) 2 state no range while the others do"),
        (",", ",", None),
    ],
)
def test_a_sum_whose_terms_ranges_disagree_is_flagged(filled, tmp_path, r1, r2, finding):
    _with_forms(filled, tmp_path, SUM_ROWS.format(r1=r1, r2=r2))
    report = _check(filled, keys=["oh-h2o2"])
    flags = [f for f in report.flags if f.code == "sum-ranges-inconsistent"]
    if finding is None:
        assert flags == []
    else:
        (flag,) = flags
        assert finding in flag.message


def test_a_reaction_with_m_and_no_efficiency_gets_a_note_not_a_flag(store):
    with store.session() as session:
        report = checks.check_store(session, keys=["h-o2-m"])
    (note,) = report.notes
    assert note.code == "no-efficiencies" and "every collider counts 1" in note.message
    assert [f.code for f in report.flags] == ["nothing-usable"]
    with store.session() as session:
        quiet = checks.check_store(session, keys=["h-o2-m"], ignore=["no-efficiencies"])
    assert quiet.notes == []


def _efficiency(db_url, key: str, species: str, efficiency: float) -> None:
    _sql(
        db_url,
        "INSERT INTO third_body_efficiency (reaction_id, species_id, efficiency, updated_at) "
        "SELECT r.id, s.id, :e, CURRENT_TIMESTAMP FROM reaction r, species s "
        "WHERE r.key = :key AND s.name = :species",
        e=efficiency,
        key=key,
        species=species,
    )


def test_stated_efficiencies_silence_the_note(filled):
    _efficiency(filled, "h-o2-m", "H2O", 12.0)
    report = _check(filled, keys=["h-o2-m"])
    assert report.notes == [] and "efficiency-unused" not in _codes(report, "h-o2-m")


def test_efficiencies_of_a_reaction_without_m_are_flagged_unused(filled):
    _efficiency(filled, "oh-ch4", "N2", 1.0)
    report = _check(filled, keys=["oh-ch4"])
    (flag,) = [f for f in report.flags if f.code == "efficiency-unused"]
    assert "stated for N2" in flag.message


def test_efficiencies_of_an_activated_channel_are_used(filled, tmp_path):
    """An activated channel is written without M but its k depends on [M]_eff."""
    row = "oh-h2o2,activated,,1e2,0,0,K,s-1,1e-13,0,0,cm3/molecule/s,none,,,,,,,300,1500,x\n"
    _with_forms(filled, tmp_path, row)
    _efficiency(filled, "oh-h2o2", "N2", 1.0)
    report = _check(filled, keys=["oh-h2o2"])
    assert "efficiency-unused" not in _codes(report, "oh-h2o2")


def test_an_efficiency_for_a_species_not_in_the_store_is_flagged():
    """The store's foreign key keeps such a row out; the check still names one found in a
    store written without it (a crafted row, checked by the function itself)."""
    from ratebank.services.form_checks import efficiency_findings
    from ratebank.store.efficiency_species import StatedEfficiency
    from ratebank.store.queries import ReactionRow

    reaction = ReactionRow(7, "h-o2-m", "H + O2 + M -> HO2 + M", 3, True, None, None, None, None)
    stated = [StatedEfficiency(7, 99, None, 2.5), StatedEfficiency(7, 3, "N2", 1.0)]
    flags, notes = efficiency_findings([reaction], {7: []}, stated)
    (flag,) = flags
    assert flag.code == "efficiency-unknown-species" and "species id 99" in flag.message
    assert flag.value == 2.5 and notes == []


def test_an_activated_channel_that_rises_with_pressure_is_flagged():
    """k = k0/(1+Pr) F must fall with pressure; a centre of 2 (crafted row) bends it up."""
    from ratebank.services.form_checks import monotonic_findings
    from ratebank.store.queries import ExpressionRow, ReactionRow

    reaction = ReactionRow(1, "oh-co", "OH + CO -> H + CO2", 2, False, None, None, None, None)
    expression = ExpressionRow(
        *(5, 1, "literature", 1e2, 0.0, 0.0, 300.0, 1500.0, None, None, None, {}, False, 1),
        *(None, None, None, None),
        form="activated",
        A_low=10.0,
        n_low=0.0,
        Ea_low=0.0,
        broadening="troe",
        troe_alpha=0.5,
        troe_T3=1e30,
        troe_T1=1e30,
        troe_T2=1.0,
    )
    (finding,) = monotonic_findings([expression], {1: reaction})
    assert (
        finding.code == "falloff-not-monotonic" and "rises as the pressure rises" in finding.message
    )


def test_an_efficiency_left_by_a_deleted_species_is_read_and_flagged(filled):
    """A SQLite store written with foreign keys off keeps an efficiency whose species row is
    gone; the check reads it (the plain join would hide it) and names the species id."""
    import sqlite3
    from pathlib import Path

    if not Path(filled).exists():
        pytest.skip("written by hand with SQLite's foreign keys off")
    connection = sqlite3.connect(filled)
    try:
        connection.execute("PRAGMA foreign_keys = OFF")
        connection.execute(
            "INSERT INTO third_body_efficiency (reaction_id, species_id, efficiency, updated_at) "
            "SELECT id, 9999, 3.0, CURRENT_TIMESTAMP FROM reaction WHERE key = 'h-o2-m'"
        )
        connection.commit()
    finally:
        connection.close()
    report = _check(filled, keys=["h-o2-m"])
    (flag,) = [f for f in report.flags if f.code == "efficiency-unknown-species"]
    assert "species id 9999" in flag.message and flag.value == 3.0
    assert report.notes == []  # an efficiency is stated, so no note


@pytest.mark.parametrize("batch", [1, 2, 3])
def test_a_store_checked_in_batches_gives_what_one_batch_gives(
    filled, tmp_path, monkeypatch, batch
):
    """Flags of every kind (a limit passed, a steric factor above 1, a sum's ranges, unused
    efficiencies, reactions without an expression, extrapolation), the unchecked and the
    notes come out the same, in the same order, however many reactions a batch holds."""
    _with_forms(filled, tmp_path, SUM_ROWS.format(r1="300,1000", r2="1500,2000"))
    _efficiency(filled, "oh-ch4", "N2", 1.0)
    store = open_store(filled, author="tester")
    try:
        with store.session(write=True) as session:
            estimation.estimate(session, ["ho2-ho2"], steric=50.0, T_ref=300.0)
    finally:
        store.close()
    options = {"T_range": (250.0, 2500.0)}
    whole = _check(filled, **options)
    codes = {f.code for f in whole.flags}
    assert {"above-collision-limit", "steric-above-one", "sum-ranges-inconsistent"} <= codes
    assert {"efficiency-unused", "nothing-usable", "extrapolation"} <= codes
    assert whole.notes and whole.reactions > batch
    monkeypatch.setattr(checks, "BATCH", batch)
    assert _check(filled, **options) == whole
