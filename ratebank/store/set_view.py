"""One measurement set as ``data show`` reads it: its metadata, its points and the fits that
used it.

Kept apart from the listings so that the curation listings start without numpy;
``data show`` reads the points as numpy columns.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ratebank.errors import NotFoundError
from ratebank.store.models import Expression, MeasurementSet, Point, Reaction
from ratebank.store.runs import RunCache
from ratebank.store.set_updates import SetPoints, fits_using_sets, set_points


@dataclass(frozen=True)
class FitUse:
    """An expression whose provenance names the set (a fit that used it)."""

    id: int
    origin: str
    form: str | None
    version: int
    recommended: bool
    created_at: dt.datetime | None
    #: the points of the reaction the fit used (from its provenance; None if not recorded)
    n_points: int | None


@dataclass(frozen=True)
class StoredSetView:
    """A stored measurement set with its points (SI units) and the fits that used it."""

    id: int
    name: str
    reaction_key: str
    equation: str
    order: int
    third_body: bool
    reference: str | None
    method: str | None
    bath_gas: str | None
    original_k_units: str
    systematic_uncertainty: float | None
    source_file: str | None
    created_at: dt.datetime | None
    points: SetPoints
    #: the id of each point, in the order of ``points``
    point_ids: list[int]
    fits: list[FitUse]
    #: withdrawal: the set itself, and how many of its points
    withdrawn: bool
    withdrawn_points: int


def set_view(session: Session, name: str) -> StoredSetView:
    """The stored set ``name``; NotFoundError naming the set when there is none."""
    row = session.execute(
        select(
            MeasurementSet.id,
            MeasurementSet.name,
            Reaction.key,
            Reaction.equation,
            Reaction.reaction_order,
            Reaction.third_body,
            MeasurementSet.reference,
            MeasurementSet.method,
            MeasurementSet.bath_gas,
            MeasurementSet.original_k_units,
            MeasurementSet.systematic_uncertainty,
            MeasurementSet.source_file,
            MeasurementSet.created_at,
        )
        .join(Reaction, Reaction.id == MeasurementSet.reaction_id)
        .where(MeasurementSet.name == name)
    ).first()
    if row is None:
        raise NotFoundError(f"no measurement set {name!r} in the store")
    set_id = row[0]
    fit_ids = fits_using_sets(session, [set_id]).get(set_id, [])
    withdrawn, withdrawn_points = set_withdrawal(session, set_id)
    return StoredSetView(
        *row,
        points=set_points(session, set_id),
        point_ids=list(
            session.scalars(select(Point.id).where(Point.set_id == set_id).order_by(Point.id))
        ),
        fits=_fits(session, fit_ids),
        withdrawn=withdrawn,
        withdrawn_points=withdrawn_points,
    )


def _fits(session: Session, ids: list[int]) -> list[FitUse]:
    if not ids:
        return []
    query = (
        select(
            Expression.id,
            Expression.origin,
            Expression.form,
            Expression.version,
            Expression.recommended,
            Expression.created_at,
            Expression.provenance,
            Expression.run_id,
        )
        .where(Expression.id.in_(ids))
        .order_by(Expression.id)
    )
    provenances = RunCache(session)
    return [
        FitUse(*row[:6], n_points=provenances.full(row[6], row[7]).get("n_points"))
        for row in session.execute(query)
    ]


def set_withdrawal(session: Session, set_id: int) -> tuple[bool, int]:
    """Whether the set is withdrawn and how many of its points are: the hook for the
    withdrawal columns (``withdrawn_at`` on sets and points). Where the store has no such
    columns, nothing is withdrawn: (False, 0)."""
    set_column = getattr(MeasurementSet, "withdrawn_at", None)
    point_column = getattr(Point, "withdrawn_at", None)
    withdrawn = False
    points = 0
    if set_column is not None:
        withdrawn = (
            session.scalar(select(set_column).where(MeasurementSet.id == set_id)) is not None
        )
    if point_column is not None:
        points = (
            session.scalar(
                select(func.count(Point.id)).where(
                    Point.set_id == set_id, point_column.is_not(None)
                )
            )
            or 0
        )
    return withdrawn, points
