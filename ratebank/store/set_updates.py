"""Reads and writes of an import that updates measurement sets: the stored sets a file
names, their points as numpy columns, and the rewrite of a changed set.

Apart from :mod:`ratebank.store.updates` because it needs numpy, which a
listing must not import.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from sqlalchemy import delete, select, update
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_all, fetch_in
from ratebank.store.models import Expression, MeasurementSet, Point
from ratebank.store.records import insert_points
from ratebank.store.runs import RunCache

#: Rows per ``IN (...)`` list.
_CHUNK = 500


def _chunks(values: Sequence[Any]) -> Iterable[Sequence[Any]]:
    for start in range(0, len(values), _CHUNK):
        yield values[start : start + _CHUNK]


# --------------------------------------------------------------------------- measurement sets


@dataclass(frozen=True)
class StoredSet:
    """A stored measurement set as an update compares it (SI units)."""

    id: int
    name: str
    reaction_id: int
    reference: str | None
    method: str | None
    bath_gas: str | None
    original_k_units: str
    systematic_uncertainty: float | None


#: The set fields an update compares and writes.
SET_FIELDS = (
    "reaction_id",
    "reference",
    "method",
    "bath_gas",
    "original_k_units",
    "systematic_uncertainty",
)


def stored_sets(session: Session, names: Iterable[str]) -> dict[str, StoredSet]:
    """The stored measurement sets among ``names``, by name."""
    found: dict[str, StoredSet] = {}
    columns = [getattr(MeasurementSet, name) for name in SET_FIELDS]
    for chunk in _chunks(sorted(set(names))):
        query = select(MeasurementSet.id, MeasurementSet.name, *columns).where(
            MeasurementSet.name.in_(chunk)
        )
        for row in session.execute(query):
            found[row[1]] = StoredSet(*row)
    return found


@dataclass(frozen=True)
class SetPoints:
    """The points of one set, in stored order, as columns (SI; NaN where not given)."""

    temperature: np.ndarray
    rate_constant: np.ndarray
    relative_uncertainty: np.ndarray
    pressure: np.ndarray

    @property
    def size(self) -> int:
        return int(self.temperature.size)


def set_points(session: Session, set_id: int) -> SetPoints:
    """The points of a set in the order they were stored."""
    rows = fetch_all(
        session,
        select(Point.temperature, Point.rate_constant, Point.relative_uncertainty, Point.pressure)
        .where(Point.set_id == set_id)
        .order_by(Point.id),
    )
    if not rows:
        empty = np.zeros(0)
        return SetPoints(empty, empty, empty, empty)
    T, k, u, p = zip(*rows, strict=True)
    return SetPoints(
        np.asarray(T, dtype=float),
        np.asarray(k, dtype=float),
        np.array(u, dtype=float),
        np.array(p, dtype=float),
    )


def points_of_sets(session: Session, set_ids: Sequence[int]) -> dict[int, SetPoints]:
    """The points of these sets in the order they were stored, in one batched read."""
    rows = fetch_in(
        session,
        "SELECT set_id, temperature, rate_constant, relative_uncertainty, pressure FROM point "
        "WHERE set_id IN ({marks}) ORDER BY set_id, id",
        sorted(set(set_ids)),
    )
    found: dict[int, SetPoints] = {}
    if rows:
        columns = np.array(rows, dtype=float).T  # None becomes NaN
        owners = columns[0].astype(np.int64)
        bounds = np.flatnonzero(np.diff(owners)) + 1
        for part, owner in zip(
            np.split(columns[1:], bounds, axis=1),
            owners[np.append(0, bounds)].tolist(),
            strict=True,
        ):
            found[owner] = SetPoints(*part)
    empty = np.zeros(0)
    return {i: found.get(i, SetPoints(empty, empty, empty, empty)) for i in set_ids}


def update_set(session: Session, set_id: int, values: Mapping[str, Any]) -> None:
    """Write ``values`` (:data:`SET_FIELDS`) onto a measurement set."""
    # a change of its metadata or its points is a new version of the set
    session.execute(
        update(MeasurementSet)
        .where(MeasurementSet.id == set_id)
        .values(**values, version=MeasurementSet.version + 1)
    )


def replace_set_points(session: Session, set_id: int, points: SetPoints) -> None:
    """Replace every point of a set by ``points`` (the set keeps its id; its points get new
    ones)."""
    session.execute(delete(Point).where(Point.set_id == set_id))
    columns: dict[str, list[object]] = {
        "set_id": [set_id] * points.size,
        "temperature": points.temperature.tolist(),
        "rate_constant": points.rate_constant.tolist(),
    }
    for name in ("relative_uncertainty", "pressure"):
        values = getattr(points, name)
        if not np.isnan(values).all():
            columns[name] = [None if x != x else x for x in values.tolist()]
    insert_points(session, columns)


# --------------------------------------------------------------------------- fits of sets


def fits_using_sets(session: Session, set_ids: Sequence[int]) -> dict[int, list[int]]:
    """The expressions whose provenance names each of these sets (the fits that used it), by
    set id, ids ascending."""
    if not set_ids:
        return {}
    wanted = set(set_ids)
    reactions = select(MeasurementSet.reaction_id).where(MeasurementSet.id.in_(sorted(wanted)))
    query = (
        select(Expression.id, Expression.provenance, Expression.run_id)
        .where(Expression.reaction_id.in_(reactions))
        .order_by(Expression.id)
    )
    found: dict[int, list[int]] = {}
    provenances = RunCache(session)
    for expression_id, provenance, run_id in session.execute(query):
        for set_id in provenances.full(provenance, run_id).get("set_ids") or ():
            if set_id in wanted:
                found.setdefault(set_id, []).append(expression_id)
    return found
