"""Fall-off and activated fits of a reaction's points across temperatures and pressures.

The data are SYNTHETIC: generated here from known k0, k_inf and Fc with 5 % log-normal
noise (seeded), imported through the measurements file as a curator would.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from helpers.cli import run, snapshot, write
from scipy import constants

from ratebank.errors import BadInputError, FitError
from ratebank.services import falloff_fit, fitting
from ratebank.store import queries
from ratebank.store.efficiencies import NewEfficiency, write_efficiencies

# Known law of the synthetic data (SI): k0 = A0 T^n0 (m6 mol-2 s-1), k_inf = A_inf
# (m3 mol-1 s-1), fixed-centre broadening with Fc = 0.6 and N = 0.75 - 1.27 log10 Fc.
TRUE = {"A0": 3.3e9, "n0": -1.6, "A_inf": 3.0e7, "n_inf": 0.0, "Fc": 0.6}
TEMPERATURES = (250.0, 300.0, 350.0, 400.0)
PRESSURES_BAR = (0.001, 0.01, 0.1, 1.0, 10.0, 100.0)
NOISE = 0.05
PER_MOLECULE = constants.N_A * 1e-6  # cm3/molecule/s -> m3/mol/s


def _panel_falloff_k(T: float, M: float) -> float:
    """k = k0 M / (1 + Pr) Fc^(1 / (1 + (log10 Pr / N)^2)), written out from the
    evaluation panels' form (Burkholder et al., JPL Publication 19-5, section 2), independent
    of ratebank's science module."""
    k0 = TRUE["A0"] * T ** TRUE["n0"]
    k_inf = TRUE["A_inf"] * T ** TRUE["n_inf"]
    Pr = k0 * M / k_inf
    N = 0.75 - 1.27 * math.log10(TRUE["Fc"])
    return k0 * M / (1.0 + Pr) * TRUE["Fc"] ** (1.0 / (1.0 + (math.log10(Pr) / N) ** 2))


def _synthetic_rows(seed: int, pressures=PRESSURES_BAR) -> list[list[object]]:
    rng = np.random.default_rng(seed)
    rows = []
    for j, p in enumerate(pressures):
        for T in TEMPERATURES:
            M = p * 1e5 / (constants.R * T)
            k = _panel_falloff_k(T, M) * math.exp(rng.normal(0.0, NOISE))
            # the effective k, as a bimolecular coefficient (one order below the equation)
            rows.append([f"syn-p{j}", "h-o2-m", T, repr(k / PER_MOLECULE), p])
    return rows


def _import(db: str, tmp_path, rows, *, units="cm3/molecule/s", bath="N2") -> None:
    header = "set,reaction,T_K,k,k_units,k_uncertainty,pressure_bar,bath_gas"
    lines = [header] + [f"{s},{r},{T},{k},{units},{NOISE},{p},{bath}" for s, r, T, k, p in rows]
    path = write(tmp_path / "synthetic.csv", "\n".join(lines) + "\n")
    outcome = run(db, "data", "import", str(path))
    assert outcome.exit_code == 0, outcome.stderr


def test_a_falloff_fit_of_synthetic_data_recovers_the_parameters(store, filled, tmp_path):
    """4 temperatures x 6 pressures, 5 % noise: every fitted parameter lies within 3 of its
    stated standard deviations of the value the data were made from (common practice)."""
    _import(filled, tmp_path, _synthetic_rows(seed=14))
    with store.session(write=True) as session:
        report = falloff_fit.fit_pressure_dependence(
            session, "h-o2-m", broadening="fixed-fc", fixed={"Ea0": 0.0, "Ea_inf": 0.0}
        )
    assert report.n_points == 24 and report.n_temperatures == 4 and report.n_pressures == 6
    assert report.free == ("A0", "n0", "A_inf", "n_inf", "Fc")
    for name, sigma_name in (
        ("A0", "ln_A0"),
        ("n0", "n0"),
        ("A_inf", "ln_A_inf"),
        ("n_inf", "n_inf"),
        ("Fc", "Fc"),
    ):
        sigma = report.sigmas[sigma_name]
        fitted, true = report.parameters[name], TRUE[name]
        deviation = math.log(fitted / true) if sigma_name.startswith("ln_") else fitted - true
        assert abs(deviation) <= 3.0 * sigma, (name, fitted, true, sigma)
    assert 0.0 < report.sigmas["Fc"] < 0.1  # the stated uncertainty means something
    assert report.reduced_chi_square is not None and report.reduced_chi_square < 3.0
    assert report.uncertainty_f298 is not None and report.uncertainty_f298 >= 1.0


def test_the_fit_is_stored_through_the_one_write_path(store, filled, tmp_path):
    _import(filled, tmp_path, _synthetic_rows(seed=3))
    with store.session(write=True) as session:
        report = falloff_fit.fit_pressure_dependence(
            session, "h-o2-m", broadening="fixed-fc", fixed={"Ea0": 0.0, "Ea_inf": 0.0}
        )
    with store.session() as session:
        stored = queries.expression(session, report.expression_id)
    assert stored.origin == "measured-fit" and stored.form == "falloff"
    assert stored.broadening == "fixed-fc" and stored.Fc == pytest.approx(report.parameters["Fc"])
    assert stored.A == pytest.approx(report.parameters["A_inf"])
    assert stored.A_low == pytest.approx(report.parameters["A0"])
    assert stored.n_low == pytest.approx(report.parameters["n0"])
    assert stored.uncertainty_factor == pytest.approx(report.uncertainty_f298)
    provenance = stored.provenance
    assert provenance["covariance_parameters"] == ["ln_A0", "n0", "ln_A_inf", "n_inf", "Fc"]
    assert np.array(provenance["covariance"]).shape == (5, 5)
    assert provenance["reduced_chi_square"] == pytest.approx(report.reduced_chi_square)
    assert provenance["pressures"]["distinct"] == 6
    assert provenance["bath_gas_efficiencies"] == {"N2": 1.0}


def test_a_refit_of_unchanged_data_is_not_stored_twice(store, filled, tmp_path):
    _import(filled, tmp_path, _synthetic_rows(seed=4))
    fixed = {"Ea0": 0.0, "Ea_inf": 0.0}
    with store.session(write=True) as session:
        first = falloff_fit.fit_pressure_dependence(session, "h-o2-m", fixed=fixed)
        second = falloff_fit.fit_pressure_dependence(session, "h-o2-m", fixed=fixed)
        other = falloff_fit.fit_pressure_dependence(
            session, "h-o2-m", broadening="fixed-fc", fixed=fixed
        )
    assert (first.status, second.status, other.status) == ("stored", "unchanged", "stored")
    assert second.expression_id == first.expression_id != other.expression_id


def test_a_single_pressure_is_refused_saying_what_is_missing(store, filled, tmp_path):
    _import(filled, tmp_path, _synthetic_rows(seed=1, pressures=(1.0,)))
    with store.session(write=True) as session:
        with pytest.raises(FitError, match="single pressure cannot separate"):
            falloff_fit.fit_pressure_dependence(
                session, "h-o2-m", fixed={"Ea0": 0.0, "Ea_inf": 0.0, "n_inf": 0.0}
            )
        reaction = queries.find_reaction(session, "h-o2-m")
        assert not queries.expressions_of(session, [reaction.id]).get(reaction.id)


def test_points_without_a_pressure_are_refused(store, filled, tmp_path):
    rows = [*_synthetic_rows(seed=2)]
    _import(filled, tmp_path, rows)
    extra = "set,reaction,T_K,k,k_units\nnop,h-o2-m,300,1e-32,cm6/molecule2/s\n"
    assert run(filled, "data", "import", str(write(tmp_path / "nop.csv", extra))).exit_code == 0
    missing = r"1 of 25 points have no pressure \(sets nop\)"
    with store.session(write=True) as session, pytest.raises(FitError, match=missing):
        falloff_fit.fit_pressure_dependence(session, "h-o2-m")


def test_the_bath_gas_efficiency_scales_the_concentration(store, filled, tmp_path):
    """With every point in a bath gas of efficiency 2, [M]_eff doubles: the fitted k0 halves
    and k_inf is unchanged (k depends on k0 [M]_eff and k_inf only)."""
    _import(filled, tmp_path, _synthetic_rows(seed=5))
    fixed = {"Ea0": 0.0, "Ea_inf": 0.0}
    with store.session(write=True) as session:
        plain = falloff_fit.fit_pressure_dependence(session, "h-o2-m", fixed=fixed)
        reaction = queries.find_reaction(session, "h-o2-m")
        n2 = queries.find_species(session, "N2")
        write_efficiencies(session, [NewEfficiency(reaction.id, n2.id, 2.0, "test")])
        doubled = falloff_fit.fit_pressure_dependence(session, "h-o2-m", fixed=fixed)
    assert doubled.parameters["A0"] == pytest.approx(plain.parameters["A0"] / 2.0, rel=1e-5)
    assert doubled.parameters["A_inf"] == pytest.approx(plain.parameters["A_inf"], rel=1e-5)


@pytest.mark.parametrize(
    ("key", "form", "broadening", "free", "argument"),
    [
        ("oh-ch4", "falloff", "none", (), "form"),
        ("h-o2-m", "activated", "none", (), "form"),
        ("h-o2-m", "falloff", "twisted", (), "broadening"),
        ("h-o2-m", "falloff", "none", ("Fc",), "free"),
        ("h-o2-m", "sum", "none", (), "form"),
    ],
)
def test_what_cannot_be_fitted_is_refused(store, key, form, broadening, free, argument):
    with store.session(write=True) as session, pytest.raises(BadInputError) as caught:
        falloff_fit.fit_pressure_dependence(
            session, key, form=form, broadening=broadening, free=free
        )
    assert caught.value.argument == argument


# --------------------------------------------------------------------------- pooling rule


def test_a_reaction_with_m_at_different_pressures_is_refused_unless_pooled(store, filled, tmp_path):
    _import(filled, tmp_path, _synthetic_rows(seed=7, pressures=(0.01, 1.0)))
    before = snapshot(filled)
    with store.session(write=True) as session:
        refused = fitting.fit_reactions(session, ["h-o2-m"], form="arrhenius")
    assert snapshot(filled) == before
    (row,) = refused.rows
    assert row.status == "failed"
    assert "2 pressures from 0.01 to 1 bar" in row.message
    with store.session(write=True) as session:
        pooled = fitting.fit_reactions(session, ["h-o2-m"], form="arrhenius", pool_pressures=True)
        (row,) = pooled.rows
        stored = queries.expression(session, row.expression_id)
    assert row.status == "stored"
    assert any("pooled as if k did not depend on pressure" in w for w in row.warnings)
    assert stored.provenance["pressures"]["pooled"] is True
    assert "pressures-pooled" in stored.provenance["warnings"]


def test_one_pressure_fits_as_before(store, filled, tmp_path):
    _import(filled, tmp_path, _synthetic_rows(seed=8, pressures=(1.0,)))
    with store.session(write=True) as session:
        (row,) = fitting.fit_reactions(session, ["h-o2-m"], form="arrhenius").rows
        stored = queries.expression(session, row.expression_id)
    assert row.status == "stored" and not any("pressure" in w for w in row.warnings)
    assert stored.provenance["pressures"]["pooled"] is False


def test_a_reaction_without_m_is_pooled_and_says_so(store):
    """oh-ch4 of tests/helpers/data.py: sets at 0.1 bar (He) and 1.5 bar (Ar)."""
    with store.session(write=True) as session:
        (row,) = fitting.fit_reactions(session, ["oh-ch4"], form="arrhenius").rows
        stored = queries.expression(session, row.expression_id)
    assert row.status == "stored"
    assert "points at 2 pressures from 0.1 to 1.5 bar pooled" in " ".join(row.warnings)
    assert stored.provenance["pressures"] == {
        "min_Pa": pytest.approx(1.0e4),
        "max_Pa": pytest.approx(1.5e5),
        "distinct": 2,
        "different_above_factor": 2.0,
        "pooled": True,
    }
