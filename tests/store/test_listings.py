"""The listing and detail reads, at the store level, on the tests' small data set."""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.errors import NotFoundError
from ratebank.services.store_access import open_store
from ratebank.store.listings import (
    expression_summaries,
    history,
    reaction_detail,
    set_sources,
    set_summaries,
    species_detail,
    species_summaries,
)
from ratebank.store.quick_listings import reaction_summaries, store_counts


@pytest.fixture
def session(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    store = open_store(db_url)
    with store.session() as session:
        yield session
    store.close()


def test_species_rows_and_filters(session):
    every = species_summaries(session)
    assert [s.name for s in every] == sorted(s.name for s in every) and len(every) == 10
    assert {s.name for s in species_summaries(session, missing_diameter=True)} == {
        "CH3",
        "H2O2",
        "O3",
        "H",
    }
    assert len(species_summaries(session, missing_diameter=False)) == 6
    assert [s.name for s in species_summaries(session, name_contains="H2")] == ["H2O", "H2O2"]
    o3 = next(s for s in every if s.name == "O3")
    assert o3.critical_pressure == pytest.approx(55.73e5, rel=1e-12)  # bar -> Pa, exact


def test_species_detail(session):
    detail = species_detail(session, "CH4")
    assert detail.species.name == "CH4" and detail.species.well_depth == 148.6
    assert detail.reactions == [("oh-ch4", "CH4 + OH -> CH3 + H2O", "reactant")]
    with pytest.raises(NotFoundError):
        species_detail(session, "XYZ")


def test_reaction_rows_carry_counts_and_status(session):
    rows = {r.key: r for r in reaction_summaries(session)}
    assert list(rows) == sorted(rows)
    assert [(r.sets, r.points, r.expressions, r.status) for r in rows.values()] == [
        (0, 0, 0, "nothing"),  # h-o2-m
        (0, 0, 1, "complete"),  # h2o2-dec
        (0, 0, 1, "ea-only"),  # ho2-ho2
        (2, 5, 1, "measured"),  # oh-ch4
    ]
    # the flag is a bool on every database (SQLite stores 0 and 1)
    assert {key: r.third_body for key, r in rows.items() if key in ("h-o2-m", "oh-ch4")} == {
        "h-o2-m": True,
        "oh-ch4": False,
    }
    assert all(type(r.third_body) is bool for r in rows.values())
    assert [r.key for r in reaction_summaries(session, species="HO2")] == ["h-o2-m", "ho2-ho2"]
    assert [r.key for r in reaction_summaries(session, status="ea-only")] == ["ho2-ho2"]
    assert [r.key for r in reaction_summaries(session, reaction_class="decomposition")] == [
        "h2o2-dec"
    ]


def test_reaction_detail_gathers_everything(session):
    detail = reaction_detail(session, "OH + CH4 -> H2O + CH3", history_limit=1)
    assert (detail.key, detail.order, detail.third_body, detail.reaction_class) == (
        "oh-ch4",
        2,
        False,
        "h-abstraction",
    )
    assert [p.species.name for p in detail.participants] == ["CH4", "OH", "CH3", "H2O"]
    assert [s.name for s in detail.sets] == ["s1", "s2"]
    assert [(e.origin, e.reaction_key, e.reaction_order) for e in detail.expressions] == [
        ("literature", "oh-ch4", 2)
    ]
    assert detail.history == []  # imports are recorded against their files


def test_sets_and_their_sources(session):
    s1, s2 = set_summaries(session)
    assert (s1.name, s1.points, s1.T_min, s1.T_max, s1.k_units) == (
        "s1",
        3,
        300.0,
        400.0,
        "cm3/molecule/s",
    )
    assert set_summaries(session, reaction="h2o2-dec") == []
    assert set_sources(session, [s1.id, s2.id]) == {
        s1.id: ("s1", "test lab A"),
        s2.id: ("s2", "test lab B"),
    }
    assert set_sources(session, []) == {}


def test_expression_rows(session):
    every = expression_summaries(session)
    assert [(e.reaction_key, e.origin) for e in every] == [
        ("h2o2-dec", "literature"),
        ("ho2-ho2", "literature"),
        ("oh-ch4", "literature"),
    ]
    dec = every[0]
    assert (dec.A, dec.n, dec.Ea, dec.T_min, dec.T_max, dec.version) == (
        2.0e13,
        0.0,
        200_000.0,
        800.0,
        1500.0,
        1,
    )
    assert dec.provenance["given_units"] == {"Ea_units": "kJ/mol", "k_units": "s-1"}
    assert expression_summaries(session, origin="manual") == []
    assert [e.reaction_key for e in expression_summaries(session, reaction="ho2-ho2")] == [
        "ho2-ho2"
    ]


def test_history_and_counts(session):
    entries = history(session)
    assert [e.action for e in entries] == [
        "expressions.import",
        "data.import",
        "reactions.add",
        "species.add",
        "store.init",
    ]
    points_file = entries[1].target
    assert points_file.endswith("points.csv")
    assert [e.action for e in history(session, target=points_file)] == ["data.import"]
    assert history(session, author="nobody") == []
    assert history(session, limit=2) == entries[:2]
    assert store_counts(session) == {
        "species": 10,
        "reactions": 4,
        "measurement_sets": 2,
        "points": 5,
        "expressions": 3,
    }
