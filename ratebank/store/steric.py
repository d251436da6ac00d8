"""Steric-factor rules of reaction classes and per-reaction steric factors, read and written."""

from __future__ import annotations

from typing import NamedTuple

from sqlalchemy import select, update
from sqlalchemy.exc import IntegrityError
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError, NotFoundError
from ratebank.store.models import Reaction, StericRule, utc_now
from ratebank.store.queries import StericRuleRow


class ReactionStericRow(NamedTuple):
    key: str
    reaction_class: str | None
    steric_factor: float
    source: str | None


def _row(rule: StericRule) -> StericRuleRow:
    return StericRuleRow(*(getattr(rule, name) for name in StericRuleRow._fields))


def save_rule(
    session: Session,
    reaction_class: str,
    *,
    steric_factor: float,
    uncertainty_factor: float | None,
    source: str | None,
    note: str | None,
    expected_version: int | None,
) -> tuple[StericRuleRow, float | None]:
    """Create or change a class rule; return it and the steric factor it had before.

    A rule whose version is not ``expected_version`` (someone changed it since
    it was read) is refused, naming who and when.
    """
    author = session.info.get("author")
    rule = session.scalar(select(StericRule).where(StericRule.reaction_class == reaction_class))
    if rule is None:
        if expected_version not in (None, 0):
            raise ConflictError(
                f"there is no steric rule for class {reaction_class!r} (version "
                f"{expected_version} was expected); it may have been removed"
            )
        rule = StericRule(reaction_class=reaction_class, steric_factor=steric_factor)
        session.add(rule)
        before = None
    else:
        if expected_version is not None and rule.version != expected_version:
            raise ConflictError(
                f"the steric rule for {reaction_class!r} was changed by {rule.updated_by} at "
                f"{rule.updated_at:%Y-%m-%d %H:%M:%S} UTC (now version {rule.version}, you read "
                f"version {expected_version}); read it again before changing it"
            )
        before = rule.steric_factor
    rule.steric_factor = steric_factor
    rule.uncertainty_factor = uncertainty_factor
    rule.source = source
    rule.note = note
    rule.updated_at = utc_now()
    rule.updated_by = author
    try:
        session.flush()
    except IntegrityError:
        raise ConflictError(
            f"a steric rule for class {reaction_class!r} was added by someone else at the same "
            "moment; nothing was written; read the rules again and repeat the change with the "
            "version you read if you still want it"
        ) from None
    return _row(rule), before


def remove_rule(session: Session, reaction_class: str) -> float:
    """Delete a class rule; return the steric factor it held."""
    rule = session.scalar(select(StericRule).where(StericRule.reaction_class == reaction_class))
    if rule is None:
        raise NotFoundError(f"no steric rule for class {reaction_class!r}")
    value = rule.steric_factor
    session.delete(rule)
    session.flush()
    return value


def set_reaction_steric(
    session: Session, reaction_id: int, steric_factor: float | None, source: str | None
) -> None:
    session.execute(
        update(Reaction)
        .where(Reaction.id == reaction_id)
        .values(steric_factor=steric_factor, steric_source=source)
    )


def reactions_with_steric(session: Session) -> list[ReactionStericRow]:
    query = (
        select(
            Reaction.key, Reaction.reaction_class, Reaction.steric_factor, Reaction.steric_source
        )
        .where(Reaction.steric_factor.is_not(None))
        .order_by(Reaction.key)
    )
    return [ReactionStericRow(*row) for row in session.execute(query)]
