"""Whole-store reads a batch at a time, for the commands that check every reaction.

A check of a whole mechanism needs every reaction once, but never all of them
at the same time: reading them a batch at a time keeps its memory the size of a
batch, however large the store.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

from sqlalchemy.orm import Session

from ratebank.store import queries
from ratebank.store.bulk import fetch_in
from ratebank.store.in_use import EXPRESSION_IN_USE_SQL, REACTION_IN_USE_SQL
from ratebank.store.models import Reaction
from ratebank.store.queries import ExpressionRow, ReactionRow

_COLUMNS = tuple(
    getattr(Reaction, "reaction_order" if name == "order" else name) for name in ReactionRow._fields
)


def reactions_in_batches(session: Session, size: int) -> Iterator[list[ReactionRow]]:
    """Every reaction in use, by id (the order rows are stored in), ``size`` at a time.

    Each batch is one query that starts after the last id of the one before (``WHERE id >
    last ORDER BY id LIMIT size``): the table is read along its primary key, each page
    where the last one ended, never through the key's index (which on a large store would
    visit the table's pages in random order), and no cursor stays open between batches. A
    reader that shows what it finds by key sorts it itself.
    """
    columns = ", ".join(queries._sql_column(c) for c in _COLUMNS)
    first = f"SELECT {columns} FROM reaction WHERE {REACTION_IN_USE_SQL}"
    page = f" ORDER BY id LIMIT {max(int(size), 1)}"
    connection = session.connection()
    raw = connection.connection.dbapi_connection
    assert raw is not None
    query = first + page
    while True:
        cursor = raw.cursor()
        try:
            cursor.execute(query)
            batch = cursor.fetchall()
        finally:
            cursor.close()
        if batch:
            yield [ReactionRow(*row) for row in batch]
        if len(batch) < max(size, 1):
            return
        query = f"{first} AND id > {int(batch[-1][0])}{page}"  # the next page, after the last id


def expressions_of_batch(
    session: Session, reaction_ids: Sequence[int]
) -> dict[int, list[ExpressionRow]]:
    """Every expression in use of each reaction of a batch, oldest first, as
    :func:`ratebank.store.queries.expressions_of` gives them, through the driver.

    The ids go to the database as ``IN`` lists, so the reaction-id index finds the
    rows: a read per batch costs the batch's rows, not the store's.
    """
    columns = ", ".join(queries._sql_column(c) for c in queries.EXPRESSION_COLUMNS)
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
