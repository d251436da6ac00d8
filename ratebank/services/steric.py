"""Steric factors: the curator's rules, per-reaction values, and those implied by measurements.

The steric factor P of a measured reaction is derived from its fit (README, Estimates
and steric factors): P = k_fit(T_m) / (z(T_m) exp(-E0/RT_m)) at the geometric-mean
temperature T_m of its data, with E0 = Ea_local(T_m) - E_z(T_m). Grouped by
reaction class, their geometric mean and spread supply P for estimates of the
class's unmeasured reactions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError, NotFoundError, RatebankError
from ratebank.services.curate import find_reaction
from ratebank.store import audit
from ratebank.store.models import Expression, Reaction, StericRule, utc_now

#: Never claim an estimate is better than this factor, however tight the class
#: spread (common practice: collision-theory estimates are order-of-magnitude).
MINIMUM_ESTIMATE_FACTOR = 2.0


def _check_steric(value: float) -> None:
    if not math.isfinite(value) or value <= 0:
        raise RatebankError(f"steric factor {value!r} must be a finite number greater than zero")


def _check_factor(value: float | None) -> None:
    if value is not None and (not math.isfinite(value) or value < 1):
        raise RatebankError(f"uncertainty factor {value!r} must be a finite number of at least 1")


# --------------------------------------------------------------------------- rules


@dataclass(frozen=True)
class RuleView:
    reaction_class: str
    steric_factor: float
    uncertainty_factor: float | None
    source: str | None
    note: str | None
    version: int
    updated_at: object
    updated_by: str | None


@dataclass(frozen=True)
class ReactionStericView:
    key: str
    reaction_class: str | None
    steric_factor: float
    source: str | None


def _rule_view(rule: StericRule) -> RuleView:
    return RuleView(
        rule.reaction_class,
        rule.steric_factor,
        rule.uncertainty_factor,
        rule.source,
        rule.note,
        rule.version,
        rule.updated_at,
        rule.updated_by,
    )


def set_class_rule(
    session: Session,
    reaction_class: str,
    steric_factor: float,
    *,
    uncertainty_factor: float | None = None,
    source: str | None = None,
    note: str | None = None,
    expected_version: int | None = None,
) -> RuleView:
    """Create or change the steric factor of a reaction class.

    ``expected_version`` is the rule's version as the curator last read it; a
    rule changed by someone else since is refused, naming who and when.
    """
    _check_steric(steric_factor)
    _check_factor(uncertainty_factor)
    if not reaction_class.strip():
        raise RatebankError("reaction class must not be empty")
    author = session.info.get("author")
    rule = session.scalar(select(StericRule).where(StericRule.reaction_class == reaction_class))
    if rule is None:
        if expected_version not in (None, 0):
            raise ConflictError(
                f"there is no steric rule for class {reaction_class!r} (version "
                f"{expected_version} was expected); it may have been removed"
            )
        rule = StericRule(
            reaction_class=reaction_class,
            steric_factor=steric_factor,
            uncertainty_factor=uncertainty_factor,
            source=source,
            note=note,
            updated_at=utc_now(),
            updated_by=author,
        )
        session.add(rule)
        action = "steric.rule.add"
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
        action = "steric.rule.change"
    session.flush()
    audit.record(
        session,
        action,
        reaction_class,
        steric_factor=steric_factor,
        before=before,
        uncertainty_factor=uncertainty_factor,
        source=source,
    )
    return _rule_view(rule)


def remove_class_rule(session: Session, reaction_class: str) -> None:
    rule = session.scalar(select(StericRule).where(StericRule.reaction_class == reaction_class))
    if rule is None:
        raise NotFoundError(f"no steric rule for class {reaction_class!r}")
    session.delete(rule)
    session.flush()
    audit.record(session, "steric.rule.remove", reaction_class, steric_factor=rule.steric_factor)


def set_reaction_steric(
    session: Session, key: str, steric_factor: float | None, *, source: str | None = None
) -> ReactionStericView | None:
    """Store (or with None, clear) the steric factor of one reaction."""
    reaction = find_reaction(session, key)
    if steric_factor is not None:
        _check_steric(steric_factor)
    before = reaction.steric_factor
    reaction.steric_factor = steric_factor
    reaction.steric_source = source if steric_factor is not None else None
    session.flush()
    audit.record(
        session,
        "steric.reaction",
        reaction.key,
        steric_factor=steric_factor,
        before=before,
        source=source,
    )
    if steric_factor is None:
        return None
    return ReactionStericView(reaction.key, reaction.reaction_class, steric_factor, source)


def list_rules(session: Session) -> tuple[list[RuleView], list[ReactionStericView]]:
    rules = [
        _rule_view(r)
        for r in session.scalars(select(StericRule).order_by(StericRule.reaction_class))
    ]
    reactions = [
        ReactionStericView(r.key, r.reaction_class, r.steric_factor, r.steric_source)
        for r in session.scalars(
            select(Reaction).where(Reaction.steric_factor.is_not(None)).order_by(Reaction.key)
        )
    ]
    return rules, reactions


# --------------------------------------------------------------------------- derived


@dataclass(frozen=True)
class StericSample:
    """The steric factor implied by one measured reaction's fit."""

    key: str
    reaction_class: str | None
    steric_factor: float
    temperature: float
    expression_id: int
    uses_estimated_diameter: bool


@dataclass
class ClassSteric:
    """Derived steric factors of one reaction class."""

    reaction_class: str | None
    samples: list[StericSample] = field(default_factory=list)

    @property
    def count(self) -> int:
        return len(self.samples)

    @property
    def geometric_mean(self) -> float:
        logs = [math.log(s.steric_factor) for s in self.samples]
        return math.exp(sum(logs) / len(logs))

    @property
    def spread_factor(self) -> float | None:
        """exp(standard deviation of ln P); None with fewer than two reactions."""
        if self.count < 2:
            return None
        logs = [math.log(s.steric_factor) for s in self.samples]
        mean = sum(logs) / len(logs)
        variance = sum((x - mean) ** 2 for x in logs) / (len(logs) - 1)
        return math.exp(math.sqrt(variance))

    @property
    def minimum(self) -> float:
        return min(s.steric_factor for s in self.samples)

    @property
    def maximum(self) -> float:
        return max(s.steric_factor for s in self.samples)


def derived_steric_factors(
    session: Session, *, model: str = "hard-sphere", reaction_class: str | None = None
) -> list[ClassSteric]:
    """Steric factors implied by the measured fits, grouped by reaction class.

    For each bimolecular reaction the fit used is its recommended measured fit
    if any, else its newest measured fit. Reactions whose partners lack the
    data collision theory needs are left out.
    """
    import numpy as np

    from ratebank.science import collision
    from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius
    from ratebank.services.partners import collision_pairs

    query = (
        select(Expression, Reaction)
        .join(Reaction, Reaction.id == Expression.reaction_id)
        .where(
            Expression.origin == "measured-fit",
            Reaction.reaction_order == 2,
            Reaction.third_body.is_(False),
        )
        .order_by(Expression.id)
    )
    if reaction_class is not None:
        query = query.where(Reaction.reaction_class == reaction_class)
    fits: dict[int, tuple[Expression, Reaction]] = {}
    for expression, reaction in session.execute(query).all():
        current = fits.get(reaction.id)
        if current is None or not current[0].recommended or expression.recommended:
            fits[reaction.id] = (expression, reaction)
    pairs = collision_pairs(session, [r for _, r in fits.values()], model=model)
    classes: dict[str | None, ClassSteric] = {}
    for reaction_id, (expression, reaction) in fits.items():
        pair = pairs.get(reaction_id)
        if pair is None or isinstance(pair, str) or expression.A is None:
            continue
        provenance = expression.provenance or {}
        t_mean = provenance.get("steric_factor_T_K")
        if not t_mean:
            if expression.t_min and expression.t_max:
                t_mean = math.sqrt(expression.t_min * expression.t_max)
            else:
                continue
        try:
            k_mean = modified_arrhenius(t_mean, expression.A, expression.n, expression.Ea)
            ea_local = local_activation_energy(t_mean, expression.n, expression.Ea)
            z = pair.collision_rate(t_mean, model)
            e_z = pair.collision_activation_energy(t_mean, model)
            p = float(collision.derived_steric_factor(k_mean, ea_local, t_mean, z, e_z))
        except (ValueError, RatebankError):
            continue
        if not np.isfinite(p) or p <= 0:
            continue
        group = classes.setdefault(reaction.reaction_class, ClassSteric(reaction.reaction_class))
        group.samples.append(
            StericSample(
                reaction.key,
                reaction.reaction_class,
                p,
                float(t_mean),
                expression.id,
                pair.uses_estimated_diameter,
            )
        )
    for group in classes.values():
        group.samples.sort(key=lambda s: s.key)
    return sorted(
        classes.values(), key=lambda c: (c.reaction_class is None, c.reaction_class or "")
    )
