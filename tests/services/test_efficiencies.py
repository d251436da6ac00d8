"""Third-body efficiencies: imported all or nothing, replaced with history, listed, shown."""

from __future__ import annotations

import pytest
from helpers.cli import csv_rows
from helpers.data import FORMS_EFFICIENCIES_CSV

from ratebank.errors import ImportValidationError, NotFoundError
from ratebank.services.efficiencies import import_efficiencies, list_efficiencies
from ratebank.services.reactions import show_reaction
from ratebank.store.listings import history


def test_efficiencies_are_stored_listed_and_shown_with_the_reaction(forms_store):
    with forms_store.session(write=True) as session:
        summary = import_efficiencies(session, csv_rows(FORMS_EFFICIENCIES_CSV), source="e.csv")
    assert (summary.added, summary.details["replaced"]) == (3, 0)
    with forms_store.session() as session:
        listed = [(r.reaction_key, r.species, r.efficiency) for r in list_efficiencies(session)]
        shown = show_reaction(session, "H + O2 + M -> HO2 + M").efficiencies
        only = list_efficiencies(session, reaction="oh-oh-m")
    assert listed == [("h-o2-m", "Ar", 0.5), ("h-o2-m", "H2O", 12.0), ("oh-oh-m", "H2O", 6.0)]
    assert shown == [("Ar", 0.5, "synthetic"), ("H2O", 12.0, "synthetic")]
    assert [r.species for r in only] == ["H2O"]


def test_a_pair_given_again_replaces_its_value_and_the_history_keeps_the_old_one(forms_store):
    with forms_store.session(write=True) as session:
        import_efficiencies(session, csv_rows(FORMS_EFFICIENCIES_CSV), source="e.csv")
    again = "reaction,species,efficiency\nh-o2-m,H2O,10\n"
    with forms_store.session(write=True) as session:
        summary = import_efficiencies(session, csv_rows(again), source="e2.csv")
    assert summary.details["replaced"] == 1
    with forms_store.session() as session:
        values = {(r.reaction_key, r.species): r.efficiency for r in list_efficiencies(session)}
        entry = history(session, target="e2.csv")[0]
    assert values[("h-o2-m", "H2O")] == 10.0
    assert entry.action == "efficiencies.import"
    assert entry.detail["changes"][0]["before"] == 12.0


@pytest.mark.parametrize(
    ("row", "column", "message"),
    [
        ("h-o2-m,H2O,-1", "efficiency", "-1 is below 0"),
        ("h-o2-m,H2O,inf", "efficiency", "not a finite number"),
        ("h-o2-m,Xe,1", "species", "species 'Xe' is not in the store"),
        ("no-such,H2O,1", "reaction", "no reaction with key 'no-such'"),
        ("h-o2-m,,1", "species", "is empty"),
        ("h-o2-m,H2O,", "efficiency", "is empty"),
    ],
)
def test_bad_rows_are_refused_with_their_line_and_nothing_is_written(
    forms_store, row, column, message
):
    text = f"reaction,species,efficiency\nh-o2-m,N2,1.4\n{row}\n"
    with forms_store.session(write=True) as session, pytest.raises(ImportValidationError) as e:
        import_efficiencies(session, csv_rows(text), source="bad.csv")
    assert f"bad.csv:3: {column}: " in str(e.value.problems[0])
    assert message in str(e.value.problems[0])
    with forms_store.session() as session:
        assert list_efficiencies(session) == []


def test_a_pair_twice_in_one_file_is_refused(forms_store):
    text = "reaction,species,efficiency\nh-o2-m,N2,1.4\nH + O2 + M -> HO2 + M,N2,1.5\n"
    with forms_store.session(write=True) as session, pytest.raises(ImportValidationError) as e:
        import_efficiencies(session, csv_rows(text), source="dup.csv")
    assert "already given on line 2" in e.value.problems[0]


def test_listing_an_unknown_reaction_says_so(forms_store):
    with forms_store.session() as session, pytest.raises(NotFoundError, match="no-such"):
        list_efficiencies(session, reaction="no-such")
