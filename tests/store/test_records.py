"""Writing curated records and the lookups validation makes, at the store level."""

from __future__ import annotations

import pytest
from sqlalchemy import select

from ratebank.errors import NotFoundError, StaleEditError
from ratebank.services.store_access import init_store
from ratebank.store.expressions import ExpressionRecord, write_expressions
from ratebank.store.models import MeasurementSet, Participant, Point, Species
from ratebank.store.records import (
    NewReaction,
    NewSet,
    NewSpecies,
    existing_species_names,
    expression_for_edit,
    insert_points,
    insert_reactions,
    insert_sets,
    insert_species,
    measurement_set_names,
    reaction_equations,
    reaction_keys,
    reactions_by_key_or_equation,
    species_formulas,
    stale_edit_error,
    suspend_point_index,
    write_expression_edit,
)

SPECIES = [
    NewSpecies("OH", "HO", 17.007e-3, "formula", diameter=3.147e-10, diameter_kind="lennard-jones"),
    NewSpecies("CH4", "CH4", 16.043e-3, "formula", well_depth=148.6),
    NewSpecies("CH3", "CH3", 15.035e-3, "formula"),
    NewSpecies("H2O", "H2O", 18.015e-3, "given"),
]
OH_CH4 = NewReaction(
    "oh-ch4", "CH4 + OH -> CH3 + H2O", 2, False, {"CH4": 1, "OH": 1}, {"CH3": 1, "H2O": 1}
)


@pytest.fixture
def store(db_url):
    handle, _ = init_store(db_url, author="tester")
    yield handle
    handle.close()


def test_species_go_in_with_their_given_values_marked(store):
    with store.session(write=True) as session:
        insert_species(session, SPECIES)
        insert_species(session, [])  # nothing to do
    with store.session() as session:
        rows = {s.name: s for s in session.scalars(select(Species))}
        assert species_formulas(session) == {"OH": "HO", "CH4": "CH4", "CH3": "CH3", "H2O": "H2O"}
        # more names than one IN list holds
        asked = [f"X{i}" for i in range(1200)] + ["OH", "H2O"]
        assert existing_species_names(session, asked) == {"OH", "H2O"}
        assert existing_species_names(session) == set(rows)
    assert (rows["OH"].diameter_method, rows["OH"].well_depth_method) == ("given", None)
    assert (rows["CH4"].diameter_method, rows["CH4"].well_depth_method) == (None, "given")
    assert rows["H2O"].molar_mass_source == "given"


def test_reactions_go_in_with_their_participants(store):
    with store.session(write=True) as session:
        insert_species(session, SPECIES)
        insert_reactions(session, [OH_CH4])
    with store.session() as session:
        assert reaction_keys(session) == {"oh-ch4"}
        assert reaction_equations(session) == {"CH4 + OH -> CH3 + H2O": "oh-ch4"}
        found = reactions_by_key_or_equation(
            session, keys=["oh-ch4", "nope"], equations=["CH4 + OH -> CH3 + H2O"]
        )
        roles = session.execute(
            select(Participant.role, Species.name, Participant.coefficient)
            .join(Species)
            .order_by(Participant.id)
        ).all()
    assert [(r.key, r.equation, r.order) for r in found] == [
        ("oh-ch4", "CH4 + OH -> CH3 + H2O", 2)
    ] * 2
    assert [tuple(r) for r in roles] == [
        ("reactant", "CH4", 1),
        ("reactant", "OH", 1),
        ("product", "CH3", 1),
        ("product", "H2O", 1),
    ]


def test_sets_return_their_ids_in_order_and_points_leave_missing_columns_null(store):
    with store.session(write=True) as session:
        insert_species(session, SPECIES)
        insert_reactions(session, [OH_CH4])
        (reaction,) = reactions_by_key_or_equation(session, keys=["oh-ch4"])
        ids = insert_sets(
            session,
            [
                NewSet("a", reaction.id, "lab A", None, "He", "cm3/molecule/s"),
                NewSet("b", reaction.id, None, "shock tube", None, "cm3/mol/s"),
            ],
            source="p.csv",
        )
        index = suspend_point_index(session, expected_rows=3)  # small: kept up to date
        insert_points(
            session,
            {"set_id": [ids[0], ids[0], ids[1]], "temperature": [300.0, 350.0, 800.0],
             "rate_constant": [3.9, 8.4, 1.1e6], "relative_uncertainty": [0.1, None, 0.09]},
        )  # fmt: skip
        index.restore()
        with pytest.raises(ValueError, match="unknown point columns"):
            insert_points(session, {"set_id": [1], "colour": ["red"]})
    with store.session() as session:
        sets = session.execute(
            select(MeasurementSet.id, MeasurementSet.name, MeasurementSet.source_file)
        ).all()
        points = session.execute(
            select(Point.set_id, Point.relative_uncertainty, Point.pressure).order_by(Point.id)
        ).all()
        assert measurement_set_names(session) == {"a", "b"}
    assert ids == sorted(ids) and [tuple(s) for s in sets] == [
        (ids[0], "a", "p.csv"),
        (ids[1], "b", "p.csv"),
    ]
    assert [tuple(p) for p in points] == [
        (ids[0], 0.1, None),
        (ids[0], None, None),
        (ids[1], 0.09, None),
    ]


def _literature(session) -> int:
    insert_species(session, SPECIES)
    insert_reactions(session, [OH_CH4])
    (reaction,) = reactions_by_key_or_equation(session, keys=["oh-ch4"])
    (expression_id,) = write_expressions(
        session,
        [ExpressionRecord(reaction.id, "literature", 1e7, 1.5, 2000.0, reference="review")],
        action="test",
    )
    return expression_id


def test_an_edit_reads_locks_and_writes_a_new_version(store):
    with store.session(write=True) as session:
        expression_id = _literature(session)
    with store.session(write=True) as session:
        editable = expression_for_edit(session, expression_id)
        assert (editable.reaction_key, editable.reaction_order, editable.version) == (
            "oh-ch4",
            2,
            1,
        )
        assert (editable.A, editable.n, editable.Ea, editable.reference) == (
            1e7,
            1.5,
            2000.0,
            "review",
        )
        version = write_expression_edit(session, editable, {"n": 2.0, "T_max": 1500.0})
        with pytest.raises(NotFoundError, match="no expression 999 in the store"):
            expression_for_edit(session, 999)
    assert version == 2
    with store.session() as session:
        again = expression_for_edit(session, expression_id)
    assert (again.n, again.T_max, again.version, again.updated_by) == (2.0, 1500.0, 2, "tester")


def test_stale_edits_say_who_changed_the_row_or_that_it_is_gone(store):
    with store.session(write=True) as session:
        expression_id = _literature(session)
    with store.session(write=True) as session:
        current = expression_for_edit(session, expression_id)
    behind = stale_edit_error(expression_id, 7, current)
    assert isinstance(behind, StaleEditError)
    assert str(behind) == (
        f"version 7 never existed; expression {expression_id} is at version 1; nothing was written"
    )
    ahead = str(stale_edit_error(expression_id, 0, current))
    assert ahead.startswith(f"expression {expression_id} was changed by tester at ")
    assert "(now version 1, you read version 0)" in ahead
    assert str(stale_edit_error(expression_id, 1, None)) == (
        f"expression {expression_id} was removed by someone else since you read it; nothing was "
        "written"
    )
