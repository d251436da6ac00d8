"""Species services, called directly: import, add, list and show."""

from __future__ import annotations

import csv
import io

import pytest
from helpers.data import REACTIONS_CSV, SPECIES_CSV

from ratebank.errors import ImportValidationError, NotFoundError
from ratebank.services.reactions import import_reactions
from ratebank.services.species import add_species, import_species, list_species, show_species
from ratebank.services.store_access import init_store, store_counts
from ratebank.store.listings import history


def _rows(text: str) -> list[tuple[int, dict[str, str]]]:
    return list(enumerate(csv.DictReader(io.StringIO(text)), start=2))


@pytest.fixture
def empty(db_url):
    store, _ = init_store(db_url, author="tester")
    yield store
    store.close()


def test_import_adds_every_row_and_records_it(empty):
    with empty.session(write=True) as session:
        summary = import_species(session, _rows(SPECIES_CSV), source="species.csv")
    assert (summary.kind, summary.rows, summary.added, summary.dry_run) == (
        "species",
        10,
        10,
        False,
    )
    with empty.session() as session:
        assert store_counts(session)["species"] == 10
        entry = history(session, limit=1)[0]
    assert (entry.action, entry.target, entry.author) == ("species.add", "species.csv", "tester")
    assert entry.detail["count"] == 10 and entry.detail["names"][:2] == ["OH", "CH4"]


def test_a_dry_run_validates_and_writes_nothing(empty):
    with empty.session(write=True) as session:
        summary = import_species(session, _rows(SPECIES_CSV), source="s.csv", dry_run=True)
        assert summary.added == 10 and summary.dry_run
        assert store_counts(session)["species"] == 0


def test_an_import_with_a_problem_writes_nothing(empty):
    rows = [*_rows(SPECIES_CSV), (12, {"name": "Bad", "formula": "Qq"})]
    with empty.session(write=True) as session:
        with pytest.raises(ImportValidationError) as raised:
            import_species(session, rows, source="s.csv")
        assert store_counts(session)["species"] == 0
    assert raised.value.problems[0].startswith("s.csv:12: formula: ")


def test_add_one_species_then_refuse_it_again(empty):
    with empty.session(write=True) as session:
        added = add_species(session, name="CH3OH", formula="CH3OH", critical_temperature_K="512.6")
    assert (added.source, added.added) == ("command line", 1)
    with empty.session(write=True) as session, pytest.raises(ImportValidationError) as raised:
        add_species(session, name="CH3OH", formula="CH4O")
    assert raised.value.problems == ["command line: name: species 'CH3OH' is already in the store"]


def test_listing_filters(empty):
    with empty.session(write=True) as session:
        import_species(session, _rows(SPECIES_CSV), source="s.csv")
        add_species(session, name="X_sure_", formula="CH4")
    with empty.session() as session:
        everything = list_species(session)
        missing = list_species(session, missing_diameter=True)
        given = list_species(session, missing_diameter=False)
        literal = list_species(session, name_contains="%")
        underscore = list_species(session, name_contains="_")
    assert [s.name for s in everything] == sorted(s.name for s in everything)
    assert {s.name for s in missing} == {"CH3", "H2O2", "O3", "H", "X_sure_"}
    assert {s.name for s in given} | {s.name for s in missing} == {s.name for s in everything}
    # LIKE wildcards are taken literally: '%' matches no name (none may hold it), '_' one
    assert literal == [] and [s.name for s in underscore] == ["X_sure_"]
    o2 = next(s for s in everything if s.name == "O2")
    # Poling et al. App. B, as in tests/helpers/data.py: 3.467 Å, given
    assert o2.diameter == pytest.approx(3.467e-10, rel=1e-12)
    assert (o2.diameter_method, o2.diameter_is_estimated) == ("given", False)


def test_show_names_the_reactions_and_roles(empty):
    with empty.session(write=True) as session:
        import_species(session, _rows(SPECIES_CSV), source="s.csv")
        import_reactions(session, _rows(REACTIONS_CSV), source="r.csv")
    with empty.session() as session:
        detail = show_species(session, "OH")
        with pytest.raises(NotFoundError, match="no species 'XYZ' in the store"):
            show_species(session, "XYZ")
    assert detail.species.formula == "HO"
    assert detail.reactions == [
        ("h2o2-dec", "H2O2 -> OH + OH", "product"),
        ("oh-ch4", "CH4 + OH -> CH3 + H2O", "reactant"),
    ]
