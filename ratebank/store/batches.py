"""Whole-store reads a batch at a time, for the commands that check every reaction.

A check of a whole mechanism needs every reaction once, but never all of them
at the same time: reading them a batch at a time keeps its memory the size of a
batch, however large the store.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.store import queries
from ratebank.store.bulk import fetch_in
from ratebank.store.in_use import EXPRESSION_IN_USE_SQL, reaction_in_use
from ratebank.store.models import Reaction
from ratebank.store.queries import ExpressionRow, ReactionRow

_COLUMNS = tuple(
    getattr(Reaction, "reaction_order" if name == "order" else name) for name in ReactionRow._fields
)


def reactions_in_batches(session: Session, size: int) -> Iterator[list[ReactionRow]]:
    """Every reaction in use, by key, ``size`` at a time (one pass through the driver)."""
    query = select(*_COLUMNS).where(reaction_in_use()).order_by(Reaction.key)
    connection = session.connection()
    # only constants in the query: its values may be written inline
    compiled = query.compile(dialect=connection.dialect, compile_kwargs={"literal_binds": True})
    raw = connection.connection.dbapi_connection
    assert raw is not None
    # PostgreSQL: a cursor on the server, which sends a batch when asked (a plain one would
    # send every row at once)
    postgres = connection.dialect.name == "postgresql"
    cursor = raw.cursor(name="ratebank_reaction_batches") if postgres else raw.cursor()
    try:
        cursor.execute(str(compiled))
        while batch := cursor.fetchmany(size):
            yield [ReactionRow(*row) for row in batch]
    finally:
        cursor.close()


def expressions_of_batch(
    session: Session, reaction_ids: Sequence[int]
) -> dict[int, list[ExpressionRow]]:
    """Every expression in use of each reaction of a batch, oldest first, as
    :func:`ratebank.store.queries.expressions_of` gives them, through the driver.

    The ids go to the database as ``IN`` lists, so the reaction-id index finds the
    rows: a read per batch costs the batch's rows, not the store's.
    """
    columns = ", ".join(queries._sql_column(c) for c in queries._EXPRESSION_COLUMNS)
    query = (
        f"SELECT {columns} FROM expression "
        f"WHERE reaction_id IN ({{marks}}) AND {EXPRESSION_IN_USE_SQL}"
    )
    found: dict[int, list[ExpressionRow]] = {i: [] for i in reaction_ids}
    rows = fetch_in(session, query, list(reaction_ids))
    rows.sort(key=lambda row: row[0])  # oldest first
    expressions = queries._Rows(session).all(rows)
    del rows  # the stored text, decoded now
    if any(e.form == "sum" for e in expressions):
        expressions = queries.with_terms(session, expressions)
    for e in expressions:
        found[e.reaction_id].append(e)
    return found
