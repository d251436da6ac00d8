"""Reads of a whole-mechanism estimate: the store's columns as plain arrays, without an
object per row."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from sqlalchemy.orm import Session

from ratebank.store.queries import reactant_columns

#: From this many reactions on, the reactants are read in one pass over the table (tens
#: of IN lists of ids cost more than reading the few reactions not asked for).
WHOLE_TABLE_FROM = 20_000

#: Rows fetched from the driver at a time.
_FETCH = 50_000


def reactant_table(session: Session, reaction_ids: Sequence[int]) -> tuple[np.ndarray, np.ndarray]:
    """(reaction ids, species ids) of the reactants of ``reaction_ids``, one entry per
    reactant row, by reaction id and then in the order written, as two int64 arrays (what
    :func:`ratebank.store.queries.reactant_columns` gives); most of the store is read in
    one pass and the reactions not asked for left out."""
    if len(reaction_ids) < WHOLE_TABLE_FROM:
        reactions, species = reactant_columns(session, reaction_ids)
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
