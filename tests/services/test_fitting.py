"""Fitting measured sets and storing the fits."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import constants

from ratebank.errors import BadInputError
from ratebank.services import fitting
from ratebank.store import queries


def test_refit_of_unchanged_data_is_not_stored_twice(store):
    with store.session(write=True) as session:
        first = fitting.fit_reactions(session, form="arrhenius")
        second = fitting.fit_reactions(session, form="arrhenius")
    assert [r.status for r in first.rows] == ["stored"]
    assert [r.status for r in second.rows] == ["unchanged"]
    assert second.rows[0].expression_id == first.rows[0].expression_id


def test_store_fit_equals_a_one_at_a_time_fit(store):
    """The batch path of `fit` gives the parameters of a direct fit of the same points, with
    the same weights: the stated ones widened by the two sets' between-set variance."""
    from ratebank.science.arrhenius import fit_rate_constants
    from ratebank.science.uncertainty import between_set_variance, random_effects_sigma_ln_k

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
    sets = np.array([1, 1, 1, 2, 2])
    tau2 = between_set_variance(T, np.log(k), sigma, sets).tau_squared
    widened = random_effects_sigma_ln_k(sigma, sets, tau2)
    direct = fit_rate_constants(T, k, widened, form="arrhenius")
    assert row.A == pytest.approx(direct.A, rel=1e-10)
    assert row.Ea == pytest.approx(direct.Ea, rel=1e-10)
    assert row.n_sets == 2 and row.n_points == 5


def test_fit_of_a_reaction_without_points_fails_cleanly(store):
    with store.session(write=True) as session:
        report = fitting.fit_reactions(session, ["ho2-ho2"])
    assert report.rows[0].status == "failed"
    assert report.rows[0].message == "no measured points to fit"


def test_stored_fit_carries_its_provenance_and_history(store):
    with store.session(write=True) as session:
        report = fitting.fit_reactions(session, form="arrhenius")
        fit = queries.expression(session, report.rows[0].expression_id)
    assert fit.origin == "measured-fit"
    assert fit.provenance["n_sets"] == 2 and len(fit.provenance["set_ids"]) == 2
    assert np.array(fit.provenance["covariance"]).shape == (3, 3)
    assert fit.uncertainty_factor == pytest.approx(report.rows[0].uncertainty_f298)
    assert fit.uncertainty_g == pytest.approx(report.rows[0].uncertainty_g)


@pytest.mark.parametrize(
    ("options", "argument"),
    [({"form": "cubic"}, "form"), ({"fixed_n": float("nan")}, "fixed_n")],
)
def test_bad_options_name_the_argument(store, options, argument):
    with store.session(write=True) as session, pytest.raises(BadInputError) as caught:
        fitting.fit_reactions(session, **options)
    assert caught.value.argument == argument
    assert "--" not in str(caught.value)
