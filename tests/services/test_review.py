"""``gather_book``: what the review book shows, read from a store (SQLite and PostgreSQL).

The store is the tests' own (helpers.data); its rate numbers are invented.
"""

from __future__ import annotations

import os
import stat

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.errors import NotFoundError, OutputError, RatebankError
from ratebank.report.book import BOOK_MARK, render_book
from ratebank.services.mechanism import export_units, mechanism_table
from ratebank.services.reactions import show_reaction
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
    assert run(db_url, "estimate", "ho2-ho2", "--steric", "0.1", "--t-ref", "298").exit_code == 0
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


def test_each_expression_shows_its_f298_and_g(store, tmp_path):
    with store.session() as session:
        book = gather_book(session)
        stored = {
            e.id: (e.uncertainty_factor, e.uncertainty_g)
            for r in book.reactions
            for e in show_reaction(session, r.key).expressions
        }
    shown = {
        e.id: (e.uncertainty_factor, e.uncertainty_g) for r in book.reactions for e in r.expressions
    }
    assert shown.keys() == stored.keys()
    for expression_id, (f298, g) in stored.items():
        assert shown[expression_id][0] == f298
        assert shown[expression_id][1] == (g if f298 else None)
    fit = next(e for r in book.reactions for e in r.expressions if e.origin == "measured-fit")
    assert fit.uncertainty_factor > 1 and fit.uncertainty_g is not None  # fits state both
    files = render_book(book, tmp_path / "book")
    page = (files.folder / "reactions" / "oh-ch4.html").read_text(encoding="utf-8")
    assert '<th class="num">f(298)</th><th class="num">g (K)</th>' in page


def test_a_reactions_uncertainty_is_the_exports_largest_factor_over_its_range(store):
    """The book and the mechanism table state the same f for each exported expression."""
    with store.session() as session:
        book = gather_book(session)
        table = mechanism_table(session, units=export_units("combustion"), leave_out_gaps=True)
    exported = {row.key: row.uncertainty_factor for row in table.rows}
    shown = {r.key: r.uncertainty_factor for r in book.reactions if r.status != "gap"}
    assert shown.keys() == exported.keys()
    for key, factor in shown.items():
        assert factor == pytest.approx(exported[key], rel=1e-12), key


def test_an_estimate_held_at_zero_says_so(store, tmp_path):
    """ho2-ho2's Ea (-4.9 kJ/mol) is below the collision rate's own: E0 is held at 0."""
    with store.session() as session:
        book = gather_book(session, keys=["ho2-ho2"])
    (estimate,) = [e for e in book.reactions[0].expressions if e.origin == "collision-estimate"]
    (note,) = [w for w in estimate.provenance if w.startswith("E0 held at 0")]
    assert "kJ/mol below the collision rate's own" in note
    files = render_book(book, tmp_path / "book")
    page = (files.folder / "reactions" / "ho2-ho2.html").read_text(encoding="utf-8")
    assert "E0 held at 0" in page
    assert not any(
        w.startswith("E0 held")
        for w in provenance_words(
            "collision-estimate", {"threshold_energy_held_at_zero": False}, None
        )
    )


def test_what_check_could_not_check_is_in_the_book(store, db_url, tmp_path):
    """CH3 has no diameter and nothing to estimate one from: ch3-ho2 is unchecked."""
    assert run(db_url, "reactions", "add", "ch3-ho2", "CH3 + HO2 -> CH4 + O2").exit_code == 0
    expressions = "reaction,A,n,Ea,Ea_units,k_units\nch3-ho2,1e-11,0,0,K,cm3/molecule/s\n"
    imported = run(db_url, "expressions", "import", str(write(tmp_path / "e.csv", expressions)))
    assert imported.exit_code == 0, imported.stderr
    with store.session() as session:
        book = gather_book(session, keys=["ch3-ho2"])
    assert book.check.flags == [] and not book.check.clean
    (unchecked,) = book.reactions[0].unchecked
    assert "CH3 has no collision diameter" in unchecked.reason
    files = render_book(book, tmp_path / "book")
    index = files.index.read_text(encoding="utf-8")
    assert 'id="unchecked"' in index and "CH3 has no collision diameter" in index
    assert "Clean:" not in index
    page = (files.folder / "reactions" / "ch3-ho2.html").read_text(encoding="utf-8")
    assert "Not checked (1)" in page


@pytest.mark.parametrize("mask", [0o022, 0o077])
def test_the_book_honours_the_umask(store, tmp_path, mask):
    with store.session() as session:
        book = gather_book(session, keys=["oh-ch4"])
    old = os.umask(mask)
    try:
        files = render_book(book, tmp_path / "book")
    finally:
        os.umask(old)
    for path in [files.folder, *files.folder.rglob("*")]:
        expected = 0o777 if path.is_dir() else 0o666
        assert stat.S_IMODE(path.stat().st_mode) == expected & ~mask, path


def test_an_earlier_book_is_replaced_whole_and_a_planted_link_stops_the_write(store, tmp_path):
    with store.session() as session:
        everything = gather_book(session)
        one = gather_book(session, keys=["oh-ch4"])
    out = tmp_path / "out"
    out.mkdir()
    target = out / "book"
    render_book(everything, target)
    assert (target / "classes").is_dir()
    render_book(one, target)  # fewer pages: the earlier book's others go with it
    assert sorted(p.name for p in (target / "reactions").iterdir()) == ["oh-ch4.html"]
    assert (target / BOOK_MARK).is_file()
    outside = out / "notes.txt"
    outside.write_text("mine")
    (target / "species" / "link.html").symlink_to(outside)
    with pytest.raises(OutputError, match="did not write"):
        render_book(everything, target)
    assert outside.read_text() == "mine"
    assert sorted(p.name for p in (target / "reactions").iterdir()) == ["oh-ch4.html"]
    assert sorted(p.name for p in out.iterdir()) == ["book", "notes.txt"]
