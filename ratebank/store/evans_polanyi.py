"""Evans-Polanyi relations the curator set for reaction classes, read and written."""

from __future__ import annotations

from typing import Any, NamedTuple

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError, NotFoundError
from ratebank.store.models import EvansPolanyiRule, utc_now


class EvansPolanyiRuleRow(NamedTuple):
    """Ea = E0 + alpha ΔrH°(298.15 K) for a reaction class (E0 and spread in J mol^-1)."""

    id: int
    reaction_class: str
    E0: float
    alpha: float
    spread: float | None
    source: str | None
    version: int
    updated_at: Any
    updated_by: str | None


def _row(rule: EvansPolanyiRule) -> EvansPolanyiRuleRow:
    return EvansPolanyiRuleRow(*(getattr(rule, name) for name in EvansPolanyiRuleRow._fields))


def evans_polanyi_rules(session: Session) -> dict[str, EvansPolanyiRuleRow]:
    """Every class relation, by class."""
    columns = tuple(getattr(EvansPolanyiRule, name) for name in EvansPolanyiRuleRow._fields)
    query = select(*columns).order_by(EvansPolanyiRule.reaction_class)
    return {row[1]: EvansPolanyiRuleRow(*row) for row in session.execute(query)}


def save_evans_polanyi_rule(
    session: Session,
    reaction_class: str,
    *,
    E0: float,
    alpha: float,
    spread: float | None,
    source: str | None,
    expected_version: int | None,
) -> tuple[EvansPolanyiRuleRow, tuple[float, float] | None]:
    """Create or change a class relation; return it and the (E0, alpha) it had before.

    A relation whose version is not ``expected_version`` (someone changed it
    since it was read) is refused, naming who and when.
    """
    rule = session.scalar(
        select(EvansPolanyiRule).where(EvansPolanyiRule.reaction_class == reaction_class)
    )
    if rule is None:
        if expected_version not in (None, 0):
            raise ConflictError(
                f"there is no Evans-Polanyi relation for class {reaction_class!r} (version "
                f"{expected_version} was expected); it may have been removed"
            )
        rule = EvansPolanyiRule(reaction_class=reaction_class, E0=E0, alpha=alpha)
        session.add(rule)
        before = None
    else:
        if expected_version is not None and rule.version != expected_version:
            raise ConflictError(
                f"the Evans-Polanyi relation of {reaction_class!r} was changed by "
                f"{rule.updated_by} at {rule.updated_at:%Y-%m-%d %H:%M:%S} UTC (now version "
                f"{rule.version}, you read version {expected_version}); read it again before "
                "changing it"
            )
        before = (rule.E0, rule.alpha)
    rule.E0 = E0
    rule.alpha = alpha
    rule.spread = spread
    rule.source = source
    rule.updated_at = utc_now()
    rule.updated_by = session.info.get("author")
    session.flush()
    return _row(rule), before


def remove_evans_polanyi_rule(session: Session, reaction_class: str) -> tuple[float, float]:
    """Delete a class relation; return the (E0, alpha) it held."""
    rule = session.scalar(
        select(EvansPolanyiRule).where(EvansPolanyiRule.reaction_class == reaction_class)
    )
    if rule is None:
        raise NotFoundError(f"no Evans-Polanyi relation for class {reaction_class!r}")
    held = (rule.E0, rule.alpha)
    session.delete(rule)
    session.flush()
    return held
