"""Which expression of a reaction is used, and recommending one."""

from __future__ import annotations

import numpy as np
import pytest

from ratebank.errors import ConflictError
from ratebank.services import fitting, selection
from ratebank.store import queries


def _expressions(session, key):
    reaction = queries.find_reaction(session, key)
    return queries.expressions_of(session, [reaction.id])[reaction.id]


def test_export_choice_precedence(store):
    with store.session(write=True) as session:
        choice = selection.choose(_expressions(session, "oh-ch4"))
        assert choice is not None and choice[1] == "newest literature"
        report = fitting.fit_reactions(session, ["oh-ch4"], form="arrhenius")
        assert report.rows[0].status == "stored"
        choice = selection.choose(_expressions(session, "oh-ch4"))
        assert choice[0].origin == "measured-fit" and choice[1] == "newest measured fit"
        literature = next(e for e in _expressions(session, "oh-ch4") if e.origin == "literature")
        selection.recommend(session, "oh-ch4", literature.id)
        choice = selection.choose(_expressions(session, "oh-ch4"))
        assert choice[0].id == literature.id and choice[1] == "recommended"


def test_recommend_refuses_incomplete_or_foreign_expressions(store):
    with store.session(write=True) as session:
        ea_only = next(e for e in _expressions(session, "ho2-ho2") if e.A is None)
        with pytest.raises(ConflictError, match="no pre-exponential factor yet"):
            selection.recommend(session, "ho2-ho2", ea_only.id)
        with pytest.raises(ConflictError, match="belongs to reaction 'ho2-ho2'"):
            selection.recommend(session, "oh-ch4", ea_only.id)


def test_recommend_changes_the_choice_not_the_numbers(store):
    """Recommending moves the star; the expression's version and numbers stay as they were."""
    with store.session(write=True) as session:
        literature = next(e for e in _expressions(session, "oh-ch4") if e.origin == "literature")
        marked = selection.recommend(session, "oh-ch4", literature.id)
    assert marked.recommended and marked.version == literature.version
    assert (marked.A, marked.n, marked.Ea) == (literature.A, literature.n, literature.Ea)


def test_uncertainty_factor_of_a_fit_covers_its_covariance_band(store):
    """A fit's f(T) is the panels' f(298) exp|g (1/T - 1/298)|, and inside the fitted range it
    covers exp(sqrt(g' C g)), g = (1, ln T, -1/RT) (first-order propagation, Bevington &
    Robinson 2003 ch. 3), computed here by hand from the stored covariance."""
    with store.session(write=True) as session:
        fitting.fit_reactions(session, ["oh-ch4"], form="arrhenius")
        fit = next(e for e in _expressions(session, "oh-ch4") if e.origin == "measured-fit")
    T = np.geomspace(fit.T_min, fit.T_max, 30)
    covariance = np.array(fit.provenance["covariance"])
    R = 8.31446261815324
    band = np.array(
        [
            np.exp(np.sqrt(g @ covariance @ g))
            for g in (np.array([1, np.log(t), -1 / (R * t)]) for t in T)
        ]
    )
    panel = fit.uncertainty_factor * np.exp(np.abs(fit.uncertainty_g * (1 / T - 1 / 298.0)))
    assert selection.uncertainty_factor(fit, T) == pytest.approx(panel, rel=1e-12)
    assert np.all(panel >= band * (1 - 1e-9))
