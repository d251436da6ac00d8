"""Measured points read as numpy columns, for fits and plots."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from itertools import chain

import numpy as np
from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_all
from ratebank.store.models import MeasurementSet


@dataclass(frozen=True)
class PointColumns:
    """Measured points as columns (SI units), ordered by reaction, set and point.

    ``relative_uncertainty`` and ``pressure`` hold NaN where none was given.
    """

    reaction_id: np.ndarray
    set_id: np.ndarray
    T: np.ndarray
    k: np.ndarray
    relative_uncertainty: np.ndarray
    pressure: np.ndarray
    #: the systematic (scale) uncertainty of each point's set, NaN where none
    systematic_uncertainty: np.ndarray

    @property
    def size(self) -> int:
        return int(self.T.size)


def points(session: Session, reaction_ids: Sequence[int] | None = None) -> PointColumns:
    """The measured points in use of the reactions (all when ``reaction_ids`` is None) as
    columns: withdrawn points, and those of withdrawn sets and reactions, are left out.

    Two plain reads through the driver: the sets in use (id, reaction, systematic
    uncertainty), then the points in the table's own order, streamed into one float array
    (no tuple list, no join, no sort in the database); each point takes its set's columns
    by bisection and the whole is put in (reaction, set, point) order by one stable sort.
    """
    restrict = ""
    if reaction_ids is not None:
        # ids only (integers): safe to inline
        restrict = f" AND reaction_id IN ({', '.join(str(int(r)) for r in reaction_ids) or 'NULL'})"
    sets = _fetch_floats(session, _SETS_SQL + restrict, 3)
    if reaction_ids is not None:
        set_filter = f" AND set_id IN (SELECT id FROM measurement_set WHERE{restrict[4:]})"
        table = _fetch_floats(session, _POINTS_SQL.format(restrict=set_filter), 5)
    else:
        table = _fetch_floats(session, _POINTS_SQL.format(restrict=""), 5)
    order = np.argsort(sets[:, 0], kind="stable")
    set_ids, set_reaction, set_systematic = (sets[order, j] for j in range(3))
    point_set = table[:, 0]
    where = np.minimum(np.searchsorted(set_ids, point_set), max(set_ids.size - 1, 0))
    known = set_ids[where] == point_set if set_ids.size else np.zeros(point_set.size, bool)
    if not known.all():  # points of a set out of use (or outside the reactions asked)
        table, where = table[known], where[known]
    reaction_id = set_reaction[where].astype(np.int64)
    set_id = table[:, 0].astype(np.int64)
    # ids are exact as floats below 2**53; the read is in point id order, kept within a set
    order = np.lexsort((set_id, reaction_id))
    return PointColumns(
        reaction_id[order],
        set_id[order],
        table[order, 1],
        table[order, 2],
        table[order, 3],
        table[order, 4],
        set_systematic[where][order],
    )


#: The sets in use: not withdrawn, nor of a withdrawn reaction.
_SETS_SQL = (
    "SELECT id, reaction_id, systematic_uncertainty FROM measurement_set "
    "WHERE withdrawn_at IS NULL AND reaction_id NOT IN "
    "(SELECT id FROM reaction WHERE withdrawn_at IS NOT NULL)"
)
#: The points not withdrawn themselves, in id order (their sets are checked against the above).
_POINTS_SQL = (
    "SELECT set_id, temperature, rate_constant, relative_uncertainty, pressure FROM point "
    "WHERE withdrawn_at IS NULL{restrict} ORDER BY id"
)


def _fetch_floats(session: Session, query: str, width: int) -> np.ndarray:
    """The rows of a plain ``query`` (no parameters) as one (rows, width) float array, read
    from the driver's cursor value by value (None becomes NaN)."""
    raw = session.connection().connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    try:
        cursor.execute(query)
        flat = np.fromiter(chain.from_iterable(cursor), dtype=float)
    finally:
        cursor.close()
    return flat.reshape(-1, width)


def set_bath_gases(session: Session, set_ids: Sequence[int]) -> dict[int, str | None]:
    """The bath gas stated for each measurement set, by id (None where none was given)."""
    if not set_ids:
        return {}
    query = select(MeasurementSet.id, MeasurementSet.bath_gas).where(
        MeasurementSet.id.in_(sorted(set(set_ids)))
    )
    return dict(fetch_all(session, query))
