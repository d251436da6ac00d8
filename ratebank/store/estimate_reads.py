"""Reads of a whole-mechanism estimate: the store's columns as plain arrays, without an
object per row."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from typing import Any

import numpy as np
from sqlalchemy import null, select
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_batches
from ratebank.store.in_use import expression_in_use
from ratebank.store.models import ORIGINS, Expression, ProvenanceRun
from ratebank.store.queries import EXPRESSION_COLUMNS, ExpressionRow, reactant_columns
from ratebank.store.runs import RunCache

#: From this many reactions on, the reactants are read in one pass over the table (tens
#: of IN lists of ids cost more than reading the few reactions not asked for).
WHOLE_TABLE_FROM = 20_000

#: Rows fetched from the driver at a time.
_FETCH = 10_000


def reactant_table(
    session: Session, reaction_ids: Sequence[int] | np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """(reaction ids, species ids) of the reactants of ``reaction_ids``, one entry per
    reactant row, by reaction id and then in the order written, as two int64 arrays (what
    :func:`ratebank.store.queries.reactant_columns` gives); most of the store is read in
    one pass and the reactions not asked for left out."""
    if len(reaction_ids) < WHOLE_TABLE_FROM:
        reactions, species = reactant_columns(session, np.asarray(reaction_ids).tolist())
        return np.frombuffer(reactions, dtype=np.int64), np.frombuffer(species, dtype=np.int64)
    chunks = [np.empty((0, 3), dtype=np.int64)]
    raw = session.connection().connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    try:
        cursor.execute(
            "SELECT reaction_id, id, species_id FROM participant WHERE role = 'reactant'"
        )
        while batch := cursor.fetchmany(_FETCH):
            chunks.append(np.array(batch, dtype=np.int64).reshape(-1, 3))
    finally:
        cursor.close()
    table = np.concatenate(chunks)
    # by reaction id, then in the order written (the row id), sorted here
    table = table[np.isin(table[:, 0], np.asarray(reaction_ids, dtype=np.int64))]
    order = np.lexsort((table[:, 1], table[:, 0]))
    return table[order, 0], table[order, 2]


#: The columns of an expression an estimate reads, in :class:`ExpressionRow` order (who made
#: and changed it, and when, left out).
_BOOKKEEPING = {"created_at", "created_by", "updated_at", "updated_by"}
_EXPRESSION_COLUMNS = tuple(
    null().label(column.key) if column.key in _BOOKKEEPING else column
    for column in EXPRESSION_COLUMNS
)
_PROVENANCE = ExpressionRow._fields.index("provenance")
_RUN = ExpressionRow._fields.index("run_id")
_ORIGIN = ExpressionRow._fields.index("origin")
_ORIGINS = {origin: origin for origin in ORIGINS}

#: From this many reactions on, the expressions are read in one pass over the table.
EXPRESSIONS_WHOLE_FROM = 5_000


def expressions_with_key(
    session: Session,
    reaction_ids: Sequence[int],
    key: str,
    reduce: Callable[[list[ExpressionRow]], list[Any]],
) -> dict[int, list[Any]]:
    """The expressions in use of each of ``reaction_ids`` (by reaction, in the order stored)
    passed through ``reduce`` as soon as a reaction's are read; of each one's whole
    provenance (its run's part completed by its own) only ``key``, and none of who made it
    and when (what :func:`ratebank.store.queries.expressions_reduced` gives with
    ``provenance_keys=(key,)`` and ``lean``, without the further terms of a sum). Only a
    provenance that holds ``key`` is decoded."""
    runs = RunCache(session)
    runs.load(session.scalars(select(ProvenanceRun.id)))
    in_runs = {run_id for run_id in runs.ids() if key in runs.common(run_id)}
    quoted = f'"{key}"'
    wanted = list(dict.fromkeys(reaction_ids))
    found: dict[int, list[Any]] = dict.fromkeys(wanted)  # type: ignore[arg-type]
    query = select(*_EXPRESSION_COLUMNS).where(expression_in_use())
    batches: Iterable[Sequence[Sequence[Any]]]
    if len(wanted) >= EXPRESSIONS_WHOLE_FROM:
        batches = fetch_batches(session, query.order_by(Expression.reaction_id, Expression.id))
    else:
        batches = (
            session.execute(
                query.where(Expression.reaction_id.in_(wanted[start : start + 500])).order_by(
                    Expression.reaction_id, Expression.id
                )
            ).all()
            for start in range(0, len(wanted), 500)
        )
    group: list[ExpressionRow] = []
    for batch in batches:
        for row in batch:
            values = list(row)
            values[_ORIGIN] = _ORIGINS.get(values[_ORIGIN], values[_ORIGIN])
            own, run_id = values[_PROVENANCE], values[_RUN]
            if isinstance(own, str):
                named = quoted in own
            elif isinstance(own, bytes):
                named = quoted.encode() in own
            else:
                named = bool(own) and key in own
            if named or run_id in in_runs:
                whole = runs.full(own, run_id)
                values[_PROVENANCE] = {key: whole[key]} if key in whole else {}
            else:
                values[_PROVENANCE] = {}
            expression = ExpressionRow(*values)
            if group and group[0].reaction_id != expression.reaction_id:
                if group[0].reaction_id in found:
                    found[group[0].reaction_id] = reduce(group)
                group = []
            group.append(expression)
    if group and group[0].reaction_id in found:
        found[group[0].reaction_id] = reduce(group)
    for reaction_id, value in found.items():
        if value is None:
            found[reaction_id] = reduce([])
    return found
