"""The writes and reads that edits of reactions, sets and points need beyond a row's own
columns (those go through :func:`ratebank.store.lifecycle.write_changes`)."""

from __future__ import annotations

from typing import Any

from sqlalchemy import delete, func, select, update
from sqlalchemy.orm import Session

from ratebank.store.models import (
    Expression,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
    ThirdBodyEfficiency,
)
from ratebank.store.records import NewReaction


def dependants_of_reaction(session: Session, reaction_id: int) -> list[str]:
    """What depends on a reaction's equation, in words ("2 measurement sets", ...)."""
    found = []
    for what, model, column in (
        ("measurement sets", MeasurementSet, MeasurementSet.reaction_id),
        ("expressions", Expression, Expression.reaction_id),
        ("third-body efficiencies", ThirdBodyEfficiency, ThirdBodyEfficiency.reaction_id),
    ):
        n = session.scalar(select(func.count()).select_from(model).where(column == reaction_id))
        if n:
            found.append(f"{n} {what}")
    return found


def replace_participants(session: Session, reaction_id: int, reaction: NewReaction) -> None:
    """The participants of a reaction whose equation changed, as ``reaction`` counts them."""
    session.execute(delete(Participant).where(Participant.reaction_id == reaction_id))
    ids = dict(session.execute(select(Species.name, Species.id)).all())
    rows = [
        {"reaction_id": reaction_id, "species_id": ids[name], "role": role, "coefficient": n}
        for role, counts in (
            ("reactant", reaction.reactant_counts),
            ("product", reaction.product_counts),
        )
        for name, n in counts.items()
    ]
    if rows:
        session.execute(Participant.__table__.insert(), rows)


def set_point_pressures(session: Session, set_id: int, pressure: float) -> list[Any]:
    """Give every point of a set the pressure [Pa]; the distinct pressures before."""
    before = sorted(
        set(session.scalars(select(Point.pressure).where(Point.set_id == set_id))),
        key=lambda p: (p is not None, p or 0.0),
    )
    if before != [pressure]:
        session.execute(
            update(Point)
            .where(Point.set_id == set_id)
            .values(pressure=pressure, version=Point.version + 1)
        )
    return before


def point_for_edit(session: Session, point_id: int) -> tuple[dict[str, Any], int, str]:
    """A point's stored values (SI), its reaction's order and the k unit its set was given
    in."""
    row = session.execute(
        select(
            Point.temperature,
            Point.rate_constant,
            Point.relative_uncertainty,
            Point.pressure,
            Reaction.reaction_order,
            MeasurementSet.original_k_units,
        )
        .join(MeasurementSet, MeasurementSet.id == Point.set_id)
        .join(Reaction, Reaction.id == MeasurementSet.reaction_id)
        .where(Point.id == point_id)
    ).one()
    names = ("temperature", "rate_constant", "relative_uncertainty", "pressure")
    return dict(zip(names, row[:4], strict=True)), row[4], row[5]
