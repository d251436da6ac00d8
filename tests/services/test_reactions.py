"""Reaction services, called directly: import, add, list with status, show."""

from __future__ import annotations

import csv
import io

import pytest
from helpers.data import REACTIONS_CSV, SPECIES_CSV

from ratebank.errors import BadInputError, ImportValidationError, NotFoundError
from ratebank.services.quick_listings import STATUSES, list_reactions
from ratebank.services.reactions import add_reaction, import_reactions, show_reaction
from ratebank.services.species import import_species
from ratebank.services.store_access import init_store
from ratebank.store.listings import history


def _rows(text: str) -> list[tuple[int, dict[str, str]]]:
    return list(enumerate(csv.DictReader(io.StringIO(text)), start=2))


@pytest.fixture
def with_species(db_url):
    store, _ = init_store(db_url, author="tester")
    with store.session(write=True) as session:
        import_species(session, _rows(SPECIES_CSV), source="species.csv")
    yield store
    store.close()


def test_import_stores_canonical_equations_and_participants(with_species):
    with with_species.session(write=True) as session:
        summary = import_reactions(session, _rows(REACTIONS_CSV), source="reactions.csv")
        entry = history(session, limit=1)[0]
    assert (summary.kind, summary.added) == ("reactions", 4)
    assert (entry.action, entry.detail["keys"]) == (
        "reactions.add",
        ["oh-ch4", "ho2-ho2", "h-o2-m", "h2o2-dec"],
    )
    with with_species.session() as session:
        detail = show_reaction(session, "OH + CH4 -> H2O + CH3")  # any spelling finds it
        ho2 = show_reaction(session, "ho2-ho2")
    assert (detail.key, detail.equation, detail.order) == ("oh-ch4", "CH4 + OH -> CH3 + H2O", 2)
    assert [(p.role, p.species.name, p.coefficient) for p in detail.participants] == [
        ("reactant", "CH4", 1),  # in the order of the canonical equation
        ("reactant", "OH", 1),
        ("product", "CH3", 1),
        ("product", "H2O", 1),
    ]
    assert [(p.role, p.species.name, p.coefficient) for p in ho2.participants] == [
        ("reactant", "HO2", 2),
        ("product", "H2O2", 1),
        ("product", "O2", 1),
    ]
    assert (detail.sets, detail.expressions) == ([], [])
    assert detail.history == []  # the import is recorded against the file, not the key


def test_add_checks_balance_and_writes_nothing_when_it_fails(with_species):
    with with_species.session(write=True) as session:
        with pytest.raises(ImportValidationError) as raised:
            add_reaction(session, "bad", "OH + OH -> H2O")
        assert list_reactions(session) == []
    assert "does not balance" in raised.value.problems[0]
    with with_species.session(write=True) as session:
        add_reaction(session, "oh-oh", "2 OH -> H2O2", reaction_class="recombination")
        (added,) = list_reactions(session)
    assert (added.key, added.equation, added.reaction_class) == (
        "oh-oh",
        "OH + OH -> H2O2",
        "recombination",
    )


def test_listing_filters_by_species_class_and_status(store):
    with store.session() as session:

        def keys(**filters):
            return {r.key for r in list_reactions(session, **filters)}

        assert keys(species="OH") == {"oh-ch4", "h2o2-dec"}
        assert keys(reaction_class="ho2-self") == {"ho2-ho2"}
        assert {s: keys(status=s) for s in STATUSES} == {
            "measured": {"oh-ch4"},
            "complete": {"h2o2-dec"},
            "ea-only": {"ho2-ho2"},
            "nothing": {"h-o2-m"},
        }
        by_key = {r.key: r for r in list_reactions(session)}
        with pytest.raises(BadInputError) as raised:
            list_reactions(session, status="done")
        with pytest.raises(NotFoundError, match="no species 'XY' in the store"):
            list_reactions(session, species="XY")
    assert (by_key["oh-ch4"].sets, by_key["oh-ch4"].points, by_key["oh-ch4"].expressions) == (
        2,
        5,
        1,
    )
    assert str(raised.value).startswith("unknown status 'done'; expected one of measured")
    assert raised.value.argument == "status"


def test_show_has_sets_expressions_and_recent_history(store):
    with store.session() as session:
        detail = show_reaction(session, "oh-ch4")
        with pytest.raises(NotFoundError, match="no reaction 'CH3 \\+ H2O -> CH4 \\+ OH'"):
            show_reaction(session, "H2O + CH3 -> OH + CH4")  # the reverse is another reaction
    assert [s.name for s in detail.sets] == ["s1", "s2"]
    assert [e.origin for e in detail.expressions] == ["literature"]
    assert detail.reaction_class == "h-abstraction"
    assert len(detail.history) <= 10
