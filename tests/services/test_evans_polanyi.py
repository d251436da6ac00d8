"""Evans-Polanyi relations through the services: the derived class fit against
numpy.polyfit (weighted) on the same points, ΔrH° against the NIST-JANAF tables' ΔfH°, and
an estimate filled from the relation checked by hand (hard-sphere collision theory,
Laidler 1987 ch. 3). The class and its rate data are synthetic.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from helpers.cli import run, write
from helpers.thermo import janaf_reaction_enthalpy, thermo_store
from scipy import constants

from ratebank.errors import ConflictError, RefusedEstimateError
from ratebank.services import estimation
from ratebank.services.evans_polanyi import (
    derived_relations,
    list_relations,
    remove_class_relation,
    set_class_relation,
)
from ratebank.services.store_access import open_store
from ratebank.store import queries

R = constants.R
REACTIONS = """key,equation,class
oh-h2,OH + H2 -> H2O + H,abstraction
o-h2,O + H2 -> OH + H,abstraction
h-ho2,H + HO2 -> H2 + O2,abstraction
oh-ho2,OH + HO2 -> H2O + O2,abstraction
o-h2o,O + H2O -> OH + OH,abstraction
"""
STOICHIOMETRY = {
    "oh-h2": {"OH": -1, "H2": -1, "H2O": 1, "H": 1},
    "o-h2": {"O": -1, "H2": -1, "OH": 1, "H": 1},
    "h-ho2": {"H": -1, "HO2": -1, "H2": 1, "O2": 1},
    "oh-ho2": {"OH": -1, "HO2": -1, "H2O": 1, "O2": 1},
    "o-h2o": {"O": -1, "H2O": -1, "OH": 2},
}
# Synthetic members: Ea = 40 kJ/mol + 0.3 ΔrH° plus an offset each, A = 1e13 cm3/mol/s.
OFFSETS_KJ = {"oh-h2": 2.0, "o-h2": -3.0, "h-ho2": 1.0, "oh-ho2": -1.5}
NOISE = [0.05, -0.03, 0.02, -0.04, 0.01]  # relative scatter of the synthetic points
TEMPERATURES = [400.0, 600.0, 800.0, 1000.0, 1200.0]


def _member_Ea(key: str) -> float:
    return 40e3 + 0.3 * janaf_reaction_enthalpy(STOICHIOMETRY[key]) + OFFSETS_KJ[key] * 1e3


def _points() -> str:
    lines = ["set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind"]
    for key in OFFSETS_KJ:
        for T, noise in zip(TEMPERATURES, NOISE, strict=True):
            k = 1e10 * math.exp(-_member_Ea(key) / (R * T)) * (1 + noise)  # synthetic
            lines.append(f"s-{key},{key},{T},{k!r},cm3/mol/s,0.1,relative")
    return "\n".join(lines) + "\n"


@pytest.fixture
def db(db_url, tmp_path):
    db = thermo_store(db_url, tmp_path, REACTIONS)
    assert run(db, "data", "import", str(write(tmp_path / "p.csv", _points()))).exit_code == 0
    assert run(db, "fit", "--form", "arrhenius").exit_code == 0
    return db


@pytest.fixture
def store(db):
    handle = open_store(db, author="tester")
    yield handle
    handle.close()


def _polyfit(relation):
    """numpy.polyfit on the relation's own points, weights 1/sigma (numpy's convention)."""
    x = np.array([m.delta_H for m in relation.members])
    y = np.array([m.Ea for m in relation.members])
    sigma = np.array([m.sigma_Ea for m in relation.members])
    alpha, E0 = np.polyfit(x, y, 1, w=1.0 / sigma)
    residuals = y - E0 - alpha * x
    w = sigma**-2
    spread = math.sqrt(np.sum(w * residuals**2) / np.sum(w) * len(x) / (len(x) - 2))
    return E0, alpha, spread


def test_the_class_fit_is_numpy_polyfit_weighted_on_the_same_points(store):
    with store.session() as session:
        (relation,) = derived_relations(session)
        fits = queries.expressions_of(session)
    assert relation.reaction_class == "abstraction" and relation.count == 4
    E0, alpha, spread = _polyfit(relation)
    assert relation.fit.absolute_sigma  # every member is a weighted measured fit
    assert relation.fit.E0 == pytest.approx(E0, rel=1e-9)
    assert relation.fit.alpha == pytest.approx(alpha, rel=1e-9)
    assert relation.fit.residual_sd == pytest.approx(spread, rel=1e-9)
    # the points are what they should be: ΔrH° from the tables' ΔfH°(298.15 K) (the
    # polynomials hold H°(298.15) exactly), Ea the stored fit's (n = 0), sigma its covariance
    by_id = {e.id: e for own in fits.values() for e in own}
    for member in relation.members:
        key = member.key
        assert member.delta_H == pytest.approx(
            janaf_reaction_enthalpy(STOICHIOMETRY[key]), abs=1e-3
        )
        expression = by_id[member.expression_id]
        assert member.Ea == pytest.approx(expression.Ea, rel=1e-12)
        assert member.sigma_Ea == pytest.approx(
            math.sqrt(expression.provenance["covariance"][2][2]), rel=1e-12
        )
        assert member.Ea == pytest.approx(_member_Ea(key), abs=3e3)  # the synthetic line


def _hard_sphere_rate(T: float) -> float:
    """z(T) [m3/mol/s] of O + H2O by hand: pi ((d_O + d_H2O)/2)^2 (8 k_B T/(pi mu))^1/2 N_A,
    diameters of helpers/thermo.py, masses from IUPAC atomic weights (H 1.008, O 15.999)."""
    mu = 15.999 * 18.015 / (15.999 + 18.015) * 1e-3 / constants.N_A
    sigma = math.pi * ((3.050e-10 + 2.641e-10) / 2) ** 2
    return sigma * math.sqrt(8 * constants.k * T / (math.pi * mu)) * constants.N_A


def test_an_estimate_filled_from_the_derived_relation_checked_by_hand(store):
    with store.session() as session:
        (relation,) = derived_relations(session)
    E0, alpha, spread = _polyfit(relation)
    delta_H = janaf_reaction_enthalpy(STOICHIOMETRY["o-h2o"])  # about +71 kJ/mol
    Ea = max(E0 + alpha * delta_H, delta_H, 0.0)
    T_ref, P = 1000.0, 0.1
    with store.session(write=True) as session:
        report = estimation.estimate(session, ["o-h2o"], steric=P, T_ref=T_ref)
        (stored,) = queries.expressions_of(session, [queries.find_reaction(session, "o-h2o").id])[
            queries.find_reaction(session, "o-h2o").id
        ]
    (row,) = report.rows
    assert row.activation_energy == pytest.approx(Ea, abs=1e-3)
    assert row.activation_energy_rule == "derived from 4 reaction(s) of class abstraction"
    # k(T) = P z(T) exp(-(Ea - R T_ref / 2) / (R T)) (README, Estimates and steric factors)
    for T in (T_ref, 1500.0):
        k_hand = P * _hard_sphere_rate(T) * math.exp(-(Ea - R * T_ref / 2) / (R * T))
        k_stored = stored.A * T**stored.n * math.exp(-stored.Ea / (R * T))
        assert k_stored == pytest.approx(k_hand, rel=1e-3)
    # both steps and the relation's spread are recorded, and widen the uncertainty
    record = stored.provenance["activation_energy_from_relation"]
    assert record["E0_J_per_mol"] == pytest.approx(E0, rel=1e-9)
    assert record["alpha"] == pytest.approx(alpha, rel=1e-9)
    assert record["spread_J_per_mol"] == pytest.approx(spread, rel=1e-9)
    assert record["delta_H_J_per_mol"] == pytest.approx(delta_H, abs=1e-3)
    assert stored.provenance["steric_factor"] == P
    f = math.exp(math.sqrt(math.log(10.0) ** 2 + (spread / (R * T_ref)) ** 2))
    assert stored.uncertainty_factor == pytest.approx(f, rel=1e-12)


def test_the_curators_relation_comes_first_and_is_clamped_at_the_reaction_enthalpy(store):
    """E0 = 30 kJ/mol, α = 0.5: 30 + 0.5 × 71 = 65.5 kJ/mol is below ΔrH° = 71 kJ/mol of the
    endothermic O + H2O -> 2 OH, so Ea is ΔrH° itself."""
    delta_H = janaf_reaction_enthalpy(STOICHIOMETRY["o-h2o"])
    assert 30e3 + 0.5 * delta_H < delta_H
    with store.session(write=True) as session:
        rule = set_class_relation(session, "abstraction", 30.0, 0.5, spread=4.0, source="test")
        report = estimation.estimate(session, ["o-h2o"], steric=0.1, T_ref=1000.0)
    assert (rule.E0, rule.spread, rule.version) == (30e3, 4e3, 1)
    (row,) = report.rows
    assert row.activation_energy == pytest.approx(delta_H, abs=1e-3)
    assert row.activation_energy_rule == "relation set for class abstraction"
    with store.session(write=True) as session:
        with pytest.raises(ConflictError, match="you read version 7"):
            set_class_relation(session, "abstraction", 31.0, 0.5, expected_version=7)
        remove_class_relation(session, "abstraction")
        assert list_relations(session) == []


def test_reactions_the_relation_cannot_fill_are_listed_with_the_reason(db, tmp_path):
    more = "key,equation,class\nh-o2-m,H + O2 + M -> HO2 + M,abstraction\n"
    assert run(db, "reactions", "import", str(write(tmp_path / "r2.csv", more))).exit_code == 0
    handle = open_store(db)
    try:
        with handle.session(write=True) as session:
            with pytest.raises(RefusedEstimateError) as caught:
                estimation.estimate(session, steric=0.1, T_ref=1000.0)
            report = estimation.estimate(session, steric=0.1, T_ref=1000.0, keep_going=True)
    finally:
        handle.close()
    assert "h-o2-m: not bimolecular" in str(caught.value)
    assert [r.key for r in report.rows] == ["o-h2o"]
    assert [(s.key, s.reason) for s in report.skipped] == [
        ("h-o2-m", "not bimolecular; collision theory does not apply")
    ]


def test_a_reaction_whose_species_lack_thermochemistry_cannot_be_filled(db_url, tmp_path):
    db = thermo_store(db_url, tmp_path, REACTIONS, species=("H", "OH", "H2", "H2O", "HO2", "O2"))
    assert run(db, "data", "import", str(write(tmp_path / "p.csv", _points()))).exit_code == 0
    assert run(db, "fit", "--form", "arrhenius").exit_code == 0
    handle = open_store(db)
    try:
        with handle.session(write=True) as session:
            report = estimation.estimate(session, ["o-h2o"], steric=0.1, keep_going=True)
            (relation,) = derived_relations(session)
    finally:
        handle.close()
    assert relation.count == 3  # O + H2 has no thermochemistry either
    ((key, reason),) = [(s.key, s.reason) for s in report.skipped]
    assert key == "o-h2o"
    assert reason.startswith("reaction 'o-h2o' has no thermochemistry: species O has none")
