"""The numbers behind the Arrhenius and steric plots, checked without pixels.

The store is the tests' own: every species diameter and mass, every measured
point and every expression below is invented for these tests (round numbers,
roughly the size of real ones). Independent references are computed here from
``scipy.constants`` and the stored parameters, not with ratebank's science code.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from helpers.cli import run, write
from scipy import constants

from ratebank.errors import BadInputError, NotFoundError, RatebankError, UnitError
from ratebank.services.plot_data import (
    GRID_POINTS,
    SPAN_MARGIN,
    arrhenius_plot_data,
    display_rate_unit,
    steric_plot_data,
)
from ratebank.services.steric import derived_steric_factors
from ratebank.services.store_access import open_store

# Invented for the tests: diameters [Å] and molar masses [g/mol] given explicitly,
# so the independent collision rate below uses exactly what the store holds.
PARTNERS = {
    "OH": (3.15, 17.007),
    "CH4": (3.76, 16.043),
    "HO2": (3.46, 33.006),
    "C2H6": (4.44, 30.069),
}
SPECIES_CSV = """name,formula,molar_mass_g_per_mol,diameter_angstrom,diameter_kind,source
OH,HO,17.007,3.15,hard-sphere,invented for the tests
CH4,CH4,16.043,3.76,hard-sphere,invented for the tests
CH3,CH3,15.035,3.80,hard-sphere,invented for the tests
H2O,H2O,18.015,2.64,hard-sphere,invented for the tests
HO2,HO2,33.006,3.46,hard-sphere,invented for the tests
H2O2,H2O2,34.014,3.50,hard-sphere,invented for the tests
O2,O2,31.998,3.47,hard-sphere,invented for the tests
C2H6,C2H6,30.069,4.44,hard-sphere,invented for the tests
C2H5,C2H5,29.061,4.35,hard-sphere,invented for the tests
"""
REACTIONS_CSV = """key,equation,class,notes
oh-ch4,OH + CH4 -> CH3 + H2O,h-abstraction,
oh-c2h6,OH + C2H6 -> C2H5 + H2O,h-abstraction,
ho2-ho2,HO2 + HO2 -> H2O2 + O2,ho2-self,
h2o2-dec,H2O2 -> OH + OH,decomposition,
ch3-ch3,CH3 + CH3 -> C2H6,recombination,nothing stored for it
"""
# Two sets of oh-ch4 in different units (per molecule, relative uncertainty; per mol,
# absolute uncertainty); one set of oh-c2h6. Invented values.
LAB_A = [(300.0, 6.67e-15), (350.0, 1.67e-14), (400.0, 3.37e-14), (450.0, 5.98e-14)]
LAB_B = [(800.0, 4.87e11, 5e10), (1000.0, 1.14e12, 1.2e11), (1200.0, 2.37e12, 2.4e11)]
POINTS_CSV = (
    "set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference,method\n"
    + "".join(
        f"lab-a,oh-ch4,{T},{k},cm3/molecule/s,0.1,relative,invented lab A,flash photolysis\n"
        for T, k in LAB_A
    )
    + "".join(
        f"lab-b,oh-ch4,{T},{k},cm3/mol/s,{u},absolute,invented lab B,shock tube\n"
        for T, k, u in LAB_B
    )
    + "".join(
        f"lab-c,oh-c2h6,{T},{k},cm3/molecule/s,0.15,relative,invented lab C,discharge flow\n"
        for T, k in ((280, 1.51e-13), (330, 3.21e-13), (400, 7.63e-13), (500, 1.95e-12))
    )
)
EXPRESSIONS_CSV = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
oh-ch4,2.0e-20,2.8,980,K,cm3/molecule/s,250,1500,1.5,invented review
ho2-ho2,,,-4.9,kJ/mol,,250,1000,,invented review
h2o2-dec,2.0e13,0,200,kJ/mol,s-1,800,1500,3,invented review
"""


def build_store(db: str, folder) -> None:
    """Import the invented data, fit every measured reaction, estimate ho2-ho2 with P = 0.1."""
    assert run(db, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", POINTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db, command, "import", str(write(folder / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    assert run(db, "fit").exit_code == 0
    outcome = run(db, "estimate", "ho2-ho2", "--steric", "0.1")
    assert outcome.exit_code == 0, outcome.stderr


@pytest.fixture
def db(db_url, tmp_path):
    build_store(db_url, tmp_path)
    return db_url


@pytest.fixture
def session(db):
    store = open_store(db)
    with store.session() as session:
        yield session
    store.close()


def stored_expressions(db: str, key: str) -> list[dict]:
    """The reaction's expressions as the listing prints them, in SI units."""
    outcome = run(db, "expressions", "list", "--reaction", key, "--units", "si", "--json")
    assert outcome.exit_code == 0, outcome.stderr
    return json.loads(outcome.stdout)


def modified_arrhenius_si(record: dict, T: np.ndarray) -> np.ndarray:
    """k = A T^n exp(-Ea/RT) from a listing record in SI units."""
    return record["A"] * T ** record["n"] * np.exp(-record["Ea"] / (constants.R * T))


def hard_sphere_z(T: np.ndarray, a: str, b: str) -> np.ndarray:
    """z = pi d_AB^2 sqrt(8 k_B T / (pi mu)) N_A [m3/mol/s], halved for A + A."""
    (d_a, m_a), (d_b, m_b) = PARTNERS[a], PARTNERS[b]
    d_ab = (d_a + d_b) / 2 * constants.angstrom
    mass_a = m_a * 1e-3 / constants.N_A
    mass_b = m_b * 1e-3 / constants.N_A
    mu = mass_a * mass_b / (mass_a + mass_b)
    z = math.pi * d_ab**2 * np.sqrt(8 * constants.k * T / (math.pi * mu)) * constants.N_A
    return z / 2 if a == b else z


# --------------------------------------------------------------------------- points


# factor from the unit each set was given in to the display unit of the preset
PER_MOLECULE_TO = {"combustion": constants.N_A, "atmospheric": 1.0, "si": constants.N_A * 1e-6}
PER_MOL_TO = {"combustion": 1.0, "atmospheric": 1 / constants.N_A, "si": 1e-6}


@pytest.mark.parametrize("preset", ["combustion", "atmospheric", "si"])
def test_points_are_the_stored_points_in_the_display_unit(session, preset):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], preset=preset)
    assert [s.name for s in data.sets] == ["lab-a", "lab-b"]
    assert [s.reference for s in data.sets] == ["invented lab A", "invented lab B"]
    assert [s.label for s in data.sets] == ["lab-a (invented lab A)", "lab-b (invented lab B)"]
    lab_a, lab_b = data.sets

    np.testing.assert_array_equal(lab_a.T, [T for T, _ in LAB_A])
    k_a = np.array([k for _, k in LAB_A]) * PER_MOLECULE_TO[preset]
    np.testing.assert_allclose(lab_a.k, k_a, rtol=1e-12)
    # error bars: one standard uncertainty of ln k, u = 0.1 as stated
    np.testing.assert_allclose(lab_a.k_low, k_a * math.exp(-0.1), rtol=1e-12)
    np.testing.assert_allclose(lab_a.k_high, k_a * math.exp(0.1), rtol=1e-12)

    np.testing.assert_array_equal(lab_b.T, [T for T, _, _ in LAB_B])
    k_b = np.array([k for _, k, _ in LAB_B]) * PER_MOL_TO[preset]
    u_b = np.array([u / k for _, k, u in LAB_B])
    np.testing.assert_allclose(lab_b.k, k_b, rtol=1e-12)
    np.testing.assert_allclose(lab_b.k_low, k_b * np.exp(-u_b), rtol=1e-12)
    np.testing.assert_allclose(lab_b.k_high, k_b * np.exp(u_b), rtol=1e-12)
    assert data.measured_range == (300.0, 1200.0)


@pytest.mark.parametrize(
    ("preset", "unit", "label"),
    [
        ("combustion", "cm3/mol/s", "log10(k / cm³ mol⁻¹ s⁻¹)"),
        ("atmospheric", "cm3/molecule/s", "log10(k / cm³ molecule⁻¹ s⁻¹)"),
        ("si", "m3/mol/s", "log10(k / m³ mol⁻¹ s⁻¹)"),
    ],
)
def test_axis_label_names_the_display_unit(session, preset, unit, label):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], preset=preset)
    assert data.k_unit == unit
    assert data.k_axis_label == label


def test_explicit_k_units_win_over_the_preset(session):
    oh_ch4, dec = arrhenius_plot_data(
        session, ["oh-ch4", "h2o2-dec"], preset="combustion", k_units="cm3/molecule/s"
    )
    assert oh_ch4.k_unit == "cm3/molecule/s"
    k_b = np.array([k for _, k, _ in LAB_B]) / constants.N_A
    np.testing.assert_allclose(oh_ch4.sets[1].k, k_b, rtol=1e-12)
    # a unimolecular reaction keeps s-1: the volume and amount say nothing about it
    assert dec.k_unit == "s-1"
    assert display_rate_unit(3, k_units="cm3/molecule/s") == "cm6/molecule2/s"
    assert display_rate_unit(1, k_units="min-1") == "min-1"


# --------------------------------------------------------------------------- curves


def test_fit_line_is_the_stored_measured_fit(db, session):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], preset="combustion")
    fit = next(e for e in stored_expressions(db, "oh-ch4") if e["origin"] == "measured-fit")
    chosen = data.chosen
    assert chosen.origin == "measured-fit"
    assert chosen.expression_id == fit["id"]
    assert chosen.label == f"measured-fit #{fit['id']}, exported (newest measured fit)"
    expected = modified_arrhenius_si(fit, chosen.T) * 1e6  # m3/mol/s -> cm3/mol/s
    np.testing.assert_allclose(chosen.k, expected, rtol=1e-10)
    # solid inside the fit's range (the measured range), dotted outside
    assert chosen.valid_range == (300.0, 1200.0)
    np.testing.assert_array_equal(chosen.inside, (chosen.T >= 300.0) & (chosen.T <= 1200.0))
    assert chosen.inside.any() and not chosen.inside.all()


def test_band_is_the_panels_factor_and_covers_the_fit(db, session):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], preset="combustion")
    chosen = data.chosen
    assert np.all(chosen.k_low < chosen.k) and np.all(chosen.k < chosen.k_high)
    ratio = chosen.k_high / chosen.k
    np.testing.assert_allclose(chosen.k / chosen.k_low, ratio, rtol=1e-12)
    assert np.all(np.diff(ratio[chosen.T >= 298.0]) >= -1e-12)  # never narrows above 298 K
    assert data.t_span[0] < 300.0 and data.t_span[1] > 1200.0

    # the band is f(T) = f298 exp|g (1/T - 1/298)| (the evaluation panels' form) ...
    fit = next(e for e in stored_expressions(db, "oh-ch4") if e["origin"] == "measured-fit")
    T = chosen.T
    panel = fit["uncertainty_factor"] * np.exp(
        np.abs((fit["uncertainty_g_K"] or 0.0) * (1 / T - 1 / 298.0))
    )
    np.testing.assert_allclose(ratio, panel, rtol=1e-9)
    # ... which covers f = exp(sqrt(g C g)), g = (1, ln T, -1/RT), over the fitted range
    covariance = np.array(fit["provenance"]["covariance"])
    inside = (T >= 300.0) & (T <= 1200.0)
    gradient = np.stack([np.ones_like(T), np.log(T), -1 / (constants.R * T)], axis=1)
    f = np.exp(np.sqrt(np.einsum("ti,ij,tj->t", gradient, covariance, gradient)))
    assert np.all(ratio[inside] >= f[inside] * (1 - 1e-9))


def test_other_expressions_are_listed_with_their_own_range(session):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], preset="atmospheric")
    (literature,) = data.others
    assert literature.origin == "literature"
    assert literature.chosen_by is None
    assert literature.label.startswith("literature #")
    T = literature.T
    # the imported numbers, in cm3/molecule/s with Ea given as E/R = 980 K
    np.testing.assert_allclose(literature.k, 2.0e-20 * T**2.8 * np.exp(-980 / T), rtol=1e-10)
    np.testing.assert_allclose(literature.k_high / literature.k, 1.5, rtol=1e-12)
    assert literature.valid_range == (250.0, 1500.0)
    np.testing.assert_array_equal(literature.inside, (T >= 250.0) & (T <= 1500.0))


def test_estimate_is_drawn_with_its_stored_uncertainty_factor(db, session):
    oh_ch4, ho2 = arrhenius_plot_data(session, ["oh-ch4", "ho2-ho2"], preset="combustion")
    assert oh_ch4.t_span == ho2.t_span  # plotted together, one span
    assert ho2.sets == [] and ho2.measured_range is None
    estimate = next(
        e for e in stored_expressions(db, "ho2-ho2") if e["origin"] == "collision-estimate"
    )
    chosen = ho2.chosen
    assert chosen.origin == "collision-estimate" and chosen.expression_id == estimate["id"]
    assert "newest collision estimate" in chosen.label
    np.testing.assert_allclose(
        chosen.k, modified_arrhenius_si(estimate, chosen.T) * 1e6, rtol=1e-10
    )
    # P given on the command line: the default factor of 10 (common practice)
    np.testing.assert_allclose(chosen.k_high / chosen.k, 10.0, rtol=1e-12)
    np.testing.assert_allclose(chosen.k / chosen.k_low, 10.0, rtol=1e-12)
    assert chosen.valid_range == (250.0, 1000.0)
    # the activation-energy-only expression it came from has no A, so it is not drawn
    assert ho2.others == []


@pytest.mark.parametrize(("key", "a", "b"), [("oh-ch4", "OH", "CH4"), ("ho2-ho2", "HO2", "HO2")])
def test_collision_limit_is_the_hard_sphere_rate(session, key, a, b):
    (data,) = arrhenius_plot_data(session, [key], preset="combustion")
    limit = data.collision_limit
    assert limit is not None and data.collision_note is None
    assert limit.label == "collision limit z(T), hard spheres"
    assert not limit.uses_estimated_diameter
    expected = hard_sphere_z(limit.T, a, b) * 1e6  # m3/mol/s -> cm3/mol/s
    np.testing.assert_allclose(limit.k, expected, rtol=1e-10)


def test_unimolecular_reaction_has_no_collision_limit_and_says_why(session):
    (data,) = arrhenius_plot_data(session, ["h2o2-dec"], preset="combustion")
    assert data.collision_limit is None
    assert "not bimolecular" in data.collision_note
    assert data.k_unit == "s-1"
    T = data.chosen.T
    expected = 2.0e13 * np.exp(-200e3 / (constants.R * T))
    np.testing.assert_allclose(data.chosen.k, expected, rtol=1e-10)


# --------------------------------------------------------------------------- span


def test_default_span_covers_data_and_expression_ranges_with_a_margin(session):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"])
    # lowest: the literature range starts at 250 K; highest: it ends at 1500 K
    assert data.t_span == pytest.approx((250.0 / SPAN_MARGIN, 1500.0 * SPAN_MARGIN))
    T = data.chosen.T
    assert len(T) == GRID_POINTS
    assert T[0] == data.t_span[0] and T[-1] == data.t_span[1]
    assert np.all(np.diff(T) > 0)
    # uniform in 1/T, the abscissa of the plot
    np.testing.assert_allclose(np.diff(1 / T), np.diff(1 / T)[0], rtol=1e-9)


def test_explicit_t_range_sets_the_grid(session):
    (data,) = arrhenius_plot_data(session, ["oh-ch4"], t_range=(200.0, 3000.0))
    assert data.t_span == (200.0, 3000.0)
    for curve in (data.chosen, *data.others, data.collision_limit):
        assert curve.T[0] == 200.0 and curve.T[-1] == 3000.0


def test_a_reaction_named_twice_is_plotted_once(session):
    data = arrhenius_plot_data(session, ["oh-ch4", "CH4 + OH -> H2O + CH3", "ho2-ho2"])
    assert [d.key for d in data] == ["oh-ch4", "ho2-ho2"]


# --------------------------------------------------------------------------- errors


def test_unknown_reaction(session):
    with pytest.raises(NotFoundError, match="no reaction with key 'nope' in the store"):
        arrhenius_plot_data(session, ["oh-ch4", "nope"])


def test_reaction_with_nothing_to_plot(session):
    with pytest.raises(RatebankError) as raised:
        arrhenius_plot_data(session, ["oh-ch4", "ch3-ch3"])
    assert str(raised.value) == (
        "nothing to plot for 'ch3-ch3': no measured points and no complete expression "
        "(import data, fit, estimate or import an expression first)"
    )


@pytest.mark.parametrize("t_range", [(1000.0, 300.0), (0.0, 300.0), (300.0, math.inf)])
def test_bad_t_range(session, t_range):
    with pytest.raises(RatebankError, match="must be two temperatures above 0 K"):
        arrhenius_plot_data(session, ["oh-ch4"], t_range=t_range)


def test_bad_units(session):
    with pytest.raises(UnitError, match="unknown unit preset 'cgs'"):
        arrhenius_plot_data(session, ["oh-ch4"], preset="cgs")
    with pytest.raises(UnitError):
        arrhenius_plot_data(session, ["oh-ch4"], k_units="furlongs")


def test_no_keys(session):
    with pytest.raises(RatebankError, match="name at least one reaction"):
        arrhenius_plot_data(session, [])


# --------------------------------------------------------------------------- steric


def test_steric_data_are_the_derived_factors_by_class(db, session):
    data = steric_plot_data(session, "hard-sphere")
    groups = derived_steric_factors(session, model="hard-sphere")
    assert data.model == "hard-sphere"
    assert [c.reaction_class for c in data.classes] == ["h-abstraction"]
    (abstraction,) = data.classes
    assert abstraction.keys == ["oh-c2h6", "oh-ch4"]
    assert data.count == 2
    (group,) = groups
    np.testing.assert_array_equal(
        abstraction.steric_factor, [s.steric_factor for s in group.samples]
    )
    logs = np.log(abstraction.steric_factor)
    assert abstraction.geometric_mean == pytest.approx(math.exp(logs.mean()), rel=1e-12)
    assert abstraction.spread_factor == pytest.approx(math.exp(logs.std(ddof=1)), rel=1e-12)
    assert not abstraction.uses_estimated_diameter.any()

    # independent: P = k(T_m) / (z(T_m) exp(-E0/RT_m)), E0 = Ea + n R T_m - R T_m/2
    fit = next(e for e in stored_expressions(db, "oh-ch4") if e["origin"] == "measured-fit")
    T_m = float(abstraction.temperature[1])
    assert T_m == pytest.approx(math.exp(np.mean(np.log([p[0] for p in LAB_A + LAB_B]))))
    k_m = modified_arrhenius_si(fit, np.array(T_m))
    e0 = fit["Ea"] + fit["n"] * constants.R * T_m - constants.R * T_m / 2
    z = hard_sphere_z(np.array(T_m), "OH", "CH4")
    expected = k_m / (z * math.exp(-e0 / (constants.R * T_m)))
    assert abstraction.steric_factor[1] == pytest.approx(float(expected), rel=1e-9)


def test_steric_data_refuse_when_nothing_was_derived(session):
    with pytest.raises(RatebankError) as raised:
        steric_plot_data(session, "hard-sphere", reaction_class="ho2-self")
    assert str(raised.value) == (
        "no steric factors to plot: no bimolecular reaction of class 'ho2-self' has a "
        "measured fit and collision data (import measurements and diameters, then fit them)"
    )


def test_bad_input_names_its_argument(session):
    with pytest.raises(BadInputError) as no_keys:
        arrhenius_plot_data(session, [])
    with pytest.raises(BadInputError) as backwards:
        arrhenius_plot_data(session, ["oh-ch4"], t_range=(1000.0, 300.0))
    assert (no_keys.value.argument, backwards.value.argument) == ("keys", "t_range")
    assert str(backwards.value) == (
        "t_range 1000 300 must be two temperatures above 0 K, the lower first"
    )
