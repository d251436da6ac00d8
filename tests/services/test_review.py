"""``gather_book``: what the review book shows, read from a store (SQLite and PostgreSQL).

The store is the tests' own (helpers.data); its rate numbers are invented.
"""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.errors import NotFoundError, RatebankError
from ratebank.report.book import render_book
from ratebank.services.review import gather_book, provenance_words
from ratebank.services.store_access import open_store


@pytest.fixture
def store(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", SPECIES_CSV),
        ("reactions", "r.csv", REACTIONS_CSV),
        ("data", "m.csv", MEASUREMENTS_CSV),
        ("expressions", "e.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    assert run(db_url, "fit").exit_code == 0
    assert run(db_url, "estimate", "ho2-ho2", "--steric", "0.1").exit_code == 0
    handle = open_store(db_url)
    yield handle
    handle.close()


def test_statuses_follow_the_exported_expression(store):
    with store.session() as session:
        book = gather_book(session)
    status = {r.key: r.status for r in book.reactions}
    # oh-ch4: a fit (newest measured fit beats the literature one); h2o2-dec: literature;
    # ho2-ho2: the estimate just made; h-o2-m: nothing usable
    assert status == {
        "oh-ch4": "measured",
        "h2o2-dec": "literature",
        "ho2-ho2": "estimated",
        "h-o2-m": "gap",
    }
    assert book.status_counts == {"measured": 1, "literature": 1, "estimated": 1, "gap": 1}
    assert [g.key for g in book.gaps] == ["h-o2-m", "ho2-ho2"]  # no estimate at all first
    assert book.releases == []
    oh = next(r for r in book.reactions if r.key == "oh-ch4")
    assert oh.plot is not None and sum(len(s.T) for s in oh.plot.sets) == oh.points == 5
    assert [e.exported for e in oh.expressions].count(True) == 1
    gap = next(r for r in book.reactions if r.key == "h-o2-m")
    assert gap.plot is None and "nothing to plot" in gap.plot_note


def test_species_and_classes_of_the_selection(store):
    with store.session() as session:
        book = gather_book(session, keys=["oh-ch4"])
    assert [r.key for r in book.reactions] == ["oh-ch4"]
    assert [s.species.name for s in book.species] == ["CH3", "CH4", "H2O", "OH"]
    assert [c.name for c in book.classes] == ["h-abstraction"]
    assert book.classes[0].derived is not None  # the fit implies a steric factor
    with store.session() as session:
        o3 = gather_book(session, species="H2O2")
    assert sorted(r.key for r in o3.reactions) == ["h2o2-dec", "ho2-ho2"]


def test_a_species_without_diameter_shows_what_would_be_estimated(store, db_url, tmp_path):
    assert run(db_url, "reactions", "add", "oh-o3", "OH + O3 -> HO2 + O2").exit_code == 0
    with store.session() as session:
        book = gather_book(session, keys=["oh-o3"])
    o3 = next(s for s in book.species if s.species.name == "O3")
    assert o3.species.diameter is None
    assert o3.estimated_diameter is not None
    assert o3.estimated_diameter.method == "tee-gotoh-stewart"
    files = render_book(book, tmp_path / "book")
    page = (files.folder / "species" / "O3.html").read_text(encoding="utf-8")
    assert "not stored: the estimate collision theory would use" in page
    assert 'class="badge estimated"' in page


def test_a_selection_that_matches_nothing_is_refused(store):
    with store.session() as session:
        with pytest.raises(RatebankError, match="no reaction matches"):
            gather_book(session, reaction_class="no-such-class")
        with pytest.raises(NotFoundError):
            gather_book(session, keys=["no-such-key"])


def test_provenance_in_words():
    fit = provenance_words(
        "measured-fit",
        {
            "method": "weighted linear least squares in ln k",
            "form": "arrhenius",
            "n_points": 5,
            "n_sets": 2,
            "reduced_chi_square": 0.8,
            "absolute_sigma": True,
        },
        None,
    )
    assert fit[0] == (
        "Fitted (weighted linear least squares in ln k, arrhenius form) to 5 measured "
        "point(s) in 2 set(s)."
    )
    assert "weighted by the stated uncertainties" in fit[1]
    estimate = provenance_words(
        "collision-estimate",
        {
            "collision_model": "hard-sphere",
            "steric_factor": 0.1,
            "steric_rule": "given on the command line",
            "partners": {
                "a": {"species": "HO2", "diameter_m": 3.458e-10, "diameter_method": "given"},
            },
        },
        None,
    )
    assert estimate[0] == (
        "Estimated from hard-sphere collision theory times a steric factor P = 0.1."
    )
    assert "HO2: diameter 3.458 Å from given." in estimate
    assert provenance_words("manual", {}, None) == ["No provenance was recorded."]
