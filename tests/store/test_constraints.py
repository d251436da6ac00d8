"""Every constraint the store enforces is told as a sentence about the record, on both backends."""

from __future__ import annotations

import pytest
from sqlalchemy import text
from sqlalchemy.exc import IntegrityError

from ratebank.store.constraints import explain_integrity_error
from ratebank.store.engine import create_store_engine, database_url
from ratebank.store.schema import initialise_store

SPECIES = (
    "INSERT INTO species (name, formula, molar_mass, molar_mass_source, created_at) "
    "VALUES ('OH', 'HO', {mass}, 'formula', CURRENT_TIMESTAMP)"
)
# (statement violating one constraint, the sentence's words about the record)
VIOLATIONS = [
    (SPECIES.format(mass=0.017), "a species with this name is already in the store"),
    (
        SPECIES.replace("'OH'", "'H'").format(mass=-1),
        "the store refused a species: its molar mass must be greater than zero",
    ),
    (
        "INSERT INTO measurement_set (name, reaction_id, original_k_units, created_at) "
        "VALUES ('s', 999, 's-1', CURRENT_TIMESTAMP)",
        "refers to a species, reaction or measurement set that is not there",
    ),
    (
        "INSERT INTO steric_rule (reaction_class, steric_factor, version, updated_at) "
        "VALUES ('c', 0.1, 1, CURRENT_TIMESTAMP)",
        "a steric rule for this reaction class is already in the store",
    ),
]


@pytest.fixture
def engine(db_url):
    engine = create_store_engine(database_url(db_url))
    initialise_store(engine, author="test")
    with engine.begin() as connection:
        connection.execute(text(SPECIES.format(mass=0.017)))
        connection.execute(text(VIOLATIONS[3][0]))
    yield engine
    engine.dispose()


@pytest.mark.parametrize(("statement", "words"), VIOLATIONS)
def test_violations_are_sentences_about_the_record(engine, statement, words):
    with pytest.raises(IntegrityError) as caught, engine.begin() as connection:
        connection.execute(text(statement))
    message = explain_integrity_error(caught.value)
    assert words in message
    assert message.endswith(("is still needed", "nothing was written"))
    # never the database's own words or the constraint's name
    for raw in ("UNIQUE", "constraint", "uq_", "ck_", "fk_", "violates", "duplicate key"):
        assert raw not in message


def test_an_unknown_refusal_is_still_a_sentence():
    message = explain_integrity_error(Exception("something the driver said"))
    assert message.startswith("the store refused a record that would contradict its rules")
