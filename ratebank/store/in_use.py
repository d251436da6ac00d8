"""Which records are in use: the conditions every read of the store applies (revision 0009).

A record is withdrawn while its ``withdrawn_at`` holds a time. A set, point or
expression of a withdrawn reaction, and a point of a withdrawn set, are out of
use with it (see :mod:`ratebank.store.lifecycle` for the rules).
"""

from __future__ import annotations

from typing import Any

from sqlalchemy import and_, select

from ratebank.store.models import Expression, MeasurementSet, Point, Reaction, Species

#: Reactions withdrawn (a subquery of ids).
_WITHDRAWN_REACTIONS = select(Reaction.id).where(Reaction.withdrawn_at.is_not(None))
#: Sets withdrawn, or of a withdrawn reaction.
_WITHDRAWN_SETS = select(MeasurementSet.id).where(
    (MeasurementSet.withdrawn_at.is_not(None))
    | MeasurementSet.reaction_id.in_(_WITHDRAWN_REACTIONS)
)
#: The same conditions as SQL text, for the reads that go through the raw driver.
REACTION_IN_USE_SQL = "withdrawn_at IS NULL"
EXPRESSION_IN_USE_SQL = (
    "withdrawn_at IS NULL AND reaction_id NOT IN "
    "(SELECT id FROM reaction WHERE withdrawn_at IS NOT NULL)"
)


def reaction_in_use() -> Any:
    """The condition on :class:`Reaction` of a reaction in use."""
    return Reaction.withdrawn_at.is_(None)


def expression_in_use() -> Any:
    """The condition on :class:`Expression` of an expression in use (its reaction too)."""
    return and_(
        Expression.withdrawn_at.is_(None), Expression.reaction_id.not_in(_WITHDRAWN_REACTIONS)
    )


def set_in_use() -> Any:
    """The condition on :class:`MeasurementSet` of a set in use (its reaction too)."""
    return MeasurementSet.id.not_in(_WITHDRAWN_SETS)


def point_in_use() -> Any:
    """The condition on :class:`Point` of a point in use (its set and reaction too)."""
    return and_(Point.withdrawn_at.is_(None), Point.set_id.not_in(_WITHDRAWN_SETS))


def species_in_use() -> Any:
    """The condition on :class:`Species` of a species in use."""
    return Species.withdrawn_at.is_(None)
