"""Measurement sets an import that updates finds stored: compared as a whole, replaced when
changed.

A set's points are compared as a whole with the stored ones, in order, after
the conversion to SI (floats exactly as stored: the same text read again
gives the same float), together with its metadata (reaction, reference,
method, bath gas, k unit, systematic uncertainty). A changed set keeps its id
and name; its metadata are rewritten and its points replaced.

Fits of a changed set stay as they are: their provenance names the set ids
and point count they used, the history entry of the change names them, and
the next ``fit`` refits the reaction from the new points (a fit is stored
again whenever its data give other numbers).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.numbers import round_significant
from ratebank.services.measurement_validation import MeasurementChunk, MeasurementSetRecord
from ratebank.services.updates import (
    UpdatePlan,
    change_text,
    differs,
    record_changes,
    short_number,
)
from ratebank.services.validate import BAR_PA, Problems
from ratebank.store.set_updates import (
    SetPoints,
    StoredSet,
    fits_using_sets,
    points_of_sets,
    replace_set_points,
    update_set,
)
from ratebank.store.set_view import set_withdrawal

#: Changed points named one by one in the history, at most.
_POINTS_SHOWN = 10


@dataclass
class StoredSetPoints:
    """The points a file gives for its stored sets, gathered chunk by chunk (SI units)."""

    parts: dict[int, list[np.ndarray]] = field(default_factory=dict)

    def add(self, chunk: MeasurementChunk, stored_index: np.ndarray) -> None:
        """Keep the chunk's points of stored sets (``stored_index``: the validator's indices
        of the stored sets)."""
        if stored_index.size == 0:
            return
        rows = np.flatnonzero(np.isin(chunk.set_index, stored_index))
        if rows.size == 0:
            return
        columns = np.stack(
            (
                chunk.temperature[rows],
                chunk.rate_constant[rows],
                chunk.relative_uncertainty[rows],
                chunk.pressure[rows],
            )
        )
        owners = chunk.set_index[rows]
        order = np.argsort(owners, kind="stable")
        owners, columns = owners[order], columns[:, order]
        bounds = np.flatnonzero(np.diff(owners)) + 1
        for part, owner in zip(
            np.split(columns, bounds, axis=1), owners[np.append(0, bounds)].tolist(), strict=True
        ):
            self.parts.setdefault(owner, []).append(part)

    def of(self, index: int) -> SetPoints:
        columns = np.concatenate(self.parts.get(index, [np.zeros((4, 0))]), axis=1)
        return SetPoints(*columns)


@dataclass
class SetPlan(UpdatePlan):
    """What an update does to the stored sets of a file."""

    writes: list[tuple[StoredSet, dict[str, object], SetPoints]] = field(default_factory=list)


def set_plan(
    records: list[MeasurementSetRecord],
    stored: dict[str, StoredSet],
    given: StoredSetPoints,
    session: Session,
    problems: Problems,
) -> SetPlan:
    """Compare each stored set of the file (``records``, with their validator index in
    ``given``) with the stored one. A changed set with withdrawn points is a problem: new
    points would replace them, and a withdrawal is never lost."""
    plan = SetPlan()
    stored_points = points_of_sets(session, [s.id for s in stored.values()])
    for index, record in enumerate(records):
        if not record.stored:
            continue
        before = stored[record.name]
        new_points = given.of(index)
        values, texts = _metadata_changes(record, before)
        old_points = stored_points[before.id]
        texts.extend(_point_changes(old_points, new_points, record))
        withdrawn = set_withdrawal(session, before.id)[1] if texts else 0
        if withdrawn:
            problems.add(
                record.first_line,
                "set",
                f"measurement set {record.name!r} has {withdrawn} withdrawn points, which new "
                "points would replace; reinstate them or edit the points one by one",
            )
        elif texts:
            plan.changes.append((record.name, texts))
            plan.writes.append((before, values, new_points))
        else:
            plan.unchanged += 1
    return plan


def _metadata_changes(
    record: MeasurementSetRecord, before: StoredSet
) -> tuple[dict[str, object], list[str]]:
    after = {
        "reaction_id": record.reaction.id,
        "reference": record.reference,
        "method": record.method,
        "bath_gas": record.bath_gas,
        "original_k_units": record.k_units,
        "systematic_uncertainty": record.systematic_uncertainty,
    }
    shown = {
        "reference": "reference",
        "method": "method",
        "bath_gas": "bath_gas",
        "original_k_units": "k_units",
        "systematic_uncertainty": "systematic_uncertainty",
    }
    values: dict[str, object] = {}
    texts: list[str] = []
    for name, value in after.items():
        old = getattr(before, name)
        if not differs(old, value):
            continue
        values[name] = value
        if name == "reaction_id":
            texts.append(f"reaction: now {record.reaction.key!r}")
        else:
            factor = 1.0 if name == "systematic_uncertainty" else None
            texts.append(change_text(shown[name], old, value, factor, ""))
    return values, texts


def _same(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return (a == b) | (np.isnan(a) & np.isnan(b))


def _point_changes(old: SetPoints, new: SetPoints, record: MeasurementSetRecord) -> list[str]:
    """The history's text of the points' changes, in the file's units (none: identical)."""
    if old.size == new.size and np.array_equal(old.temperature, new.temperature):
        columns = [
            ("k", old.rate_constant, new.rate_constant, record.factor, record.k_units),
            ("k_uncertainty", old.relative_uncertainty, new.relative_uncertainty, 1.0, "relative"),
            ("pressure_bar", old.pressure, new.pressure, BAR_PA, "bar"),
        ]
        if record.effective:  # stored as k / [M]: shown in SI
            columns[0] = ("k", old.rate_constant, new.rate_constant, 1.0, "SI")
        texts = []
        for label, before, after, factor, unit in columns:
            for i in np.flatnonzero(~_same(before, after)).tolist():
                T = short_number(round_significant(float(old.temperature[i])))
                texts.append(change_text(f"{label} at {T} K", before[i], after[i], factor, unit))
        if len(texts) > _POINTS_SHOWN:
            return [*texts[:_POINTS_SHOWN], f"and {len(texts) - _POINTS_SHOWN} more point changes"]
        return texts
    return [f"points: {_described(old)} -> {_described(new)}"]


def _described(points: SetPoints) -> str:
    if points.size == 0:
        return "none"
    low = round_significant(float(points.temperature.min()))
    high = round_significant(float(points.temperature.max()))
    return f"{points.size} ({short_number(low)}-{short_number(high)} K)"


def write_set_updates(session: Session, plan: SetPlan, source: str) -> None:
    """Rewrite each changed set and its points, and record the change with the fits that
    used the set (they stay; the next fit refits)."""
    for before, values, points in plan.writes:
        update_set(session, before.id, values)
        replace_set_points(session, before.id, points)
    fits = fits_using_sets(session, [before.id for before, _, _ in plan.writes])
    extra = {
        before.name: {"set": before.id, "fits_using_it": fits.get(before.id, [])}
        for before, _, _ in plan.writes
    }
    record_changes(session, "set.update", source, plan.changes, extra)
