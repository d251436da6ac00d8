"""Measured points read as numpy columns, for fits and plots."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_all
from ratebank.store.in_use import point_in_use
from ratebank.store.models import MeasurementSet, Point


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
    columns: withdrawn points, and those of withdrawn sets and reactions, are left out."""
    query = (
        select(
            MeasurementSet.reaction_id,
            Point.set_id,
            Point.temperature,
            Point.rate_constant,
            Point.relative_uncertainty,
            Point.pressure,
            MeasurementSet.systematic_uncertainty,
        )
        .join(MeasurementSet, MeasurementSet.id == Point.set_id)
        .where(point_in_use())
        .order_by(MeasurementSet.reaction_id, Point.set_id, Point.id)
    )
    if reaction_ids is not None:
        query = query.where(MeasurementSet.reaction_id.in_(list(reaction_ids)))
    rows = fetch_all(session, query)  # ids only: safe to inline
    if not rows:
        empty = np.zeros(0)
        ids = empty.astype(np.int64)
        return PointColumns(ids, ids, empty, empty, empty, empty, empty)
    # one conversion of the whole result (None becomes NaN); ids are exact as floats below 2**53
    table = np.array(rows, dtype=float)
    reaction_id, set_id, T, k, u, p, systematic = (table[:, j].copy() for j in range(7))
    return PointColumns(
        reaction_id.astype(np.int64), set_id.astype(np.int64), T, k, u, p, systematic
    )


def set_bath_gases(session: Session, set_ids: Sequence[int]) -> dict[int, str | None]:
    """The bath gas stated for each measurement set, by id (None where none was given)."""
    if not set_ids:
        return {}
    query = select(MeasurementSet.id, MeasurementSet.bath_gas).where(
        MeasurementSet.id.in_(sorted(set(set_ids)))
    )
    return dict(fetch_all(session, query))
