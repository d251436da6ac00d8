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
from typing import NamedTuple

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
    from ratebank.services.input_rules import name_problem

    if (problem := name_problem(reaction_class, "reaction class")) is not None:
        raise RatebankError(problem)
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
    _flush_rule(session, reaction_class)
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


def _flush_rule(session: Session, reaction_class: str) -> None:
    """Write the rule; a rule for the same class added meanwhile by someone else is a conflict."""
    from sqlalchemy.exc import IntegrityError

    try:
        session.flush()
    except IntegrityError as exc:
        if "reaction_class" not in str(exc.orig):
            raise
        raise ConflictError(
            f"a steric rule for class {reaction_class!r} was added by someone else at the same "
            "moment; nothing was written; look at it (ratebank steric list) and repeat the "
            "command with --expect-version if you still want to change it"
        ) from None


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


class _FitRow(NamedTuple):
    id: int
    A: float | None
    n: float
    Ea: float
    t_min: float | None
    t_max: float | None
    recommended: bool
    t_mean: float | None  # the T at which the fit's P was computed, from its provenance
    reaction_id: int
    key: str
    reaction_order: int
    third_body: bool
    reaction_class: str | None


class _PairReaction(NamedTuple):
    """What :func:`collision_pairs` reads of a reaction."""

    id: int
    key: str
    reaction_order: int
    third_body: bool


def _implied_steric_factors(usable, model: str) -> list[float]:  # type: ignore[no-untyped-def]
    """P of each (fit, pair, T) at T, in one vectorized pass; NaN where it cannot be had.

    Should one input be out of range for the science functions (they refuse
    whole arrays), the fits are taken one at a time so that only that one is
    left out.
    """
    import numpy as np

    from ratebank.science import collision
    from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius

    if not usable:
        return []

    def steric(fits, pairs, T):  # type: ignore[no-untyped-def]
        A = np.array([f.A for f in fits], dtype=float)
        n = np.array([f.n for f in fits], dtype=float)
        Ea = np.array([f.Ea for f in fits], dtype=float)
        diameters = [np.array([getattr(p, side).diameter for p in pairs]) for side in "ab"]
        masses = [np.array([getattr(p, side).molar_mass for p in pairs]) for side in "ab"]
        # A + A: mu = m/2 comes out of the same formula; the 1/2 is ratebank's rate law
        halves = np.where([p.identical for p in pairs], 0.5, 1.0)
        if model == "lennard-jones":
            wells = [np.array([getattr(p, side).well_depth for p in pairs]) for side in "ab"]
            z = (
                collision.lennard_jones_collision_rate_constant(T, *diameters, *masses, *wells)
                * halves
            )
            e_z = collision.collision_rate_activation_energy(
                T, model="lennard-jones", well_depth_a=wells[0], well_depth_b=wells[1]
            )
        else:
            z = collision.collision_rate_constant(T, *diameters, *masses) * halves
            e_z = collision.collision_rate_activation_energy(T, model="hard-sphere")
        k_mean = modified_arrhenius(T, A, n, Ea)
        ea_local = local_activation_energy(T, n, Ea)
        return np.atleast_1d(collision.derived_steric_factor(k_mean, ea_local, T, z, e_z))

    fits = [f for f, _, _ in usable]
    pairs = [p for _, p, _ in usable]
    T = np.array([t for _, _, t in usable])
    try:
        return steric(fits, pairs, T).tolist()
    except (ValueError, RatebankError):
        found = []
        for i in range(len(usable)):
            try:
                found.append(float(steric(fits[i : i + 1], pairs[i : i + 1], T[i : i + 1])[0]))
            except (ValueError, RatebankError):
                found.append(float("nan"))
        return found


def derived_steric_factors(
    session: Session, *, model: str = "hard-sphere", reaction_class: str | None = None
) -> list[ClassSteric]:
    """Steric factors implied by the measured fits, grouped by reaction class.

    For each bimolecular reaction the fit used is its recommended measured fit
    if any, else its newest measured fit. Reactions whose partners lack the
    data collision theory needs are left out.
    """
    from ratebank.services.partners import collision_pairs

    # plain rows, not ORM objects: a group's archive can hold a fit for every reaction
    query = (
        select(
            Expression.id,
            Expression.A,
            Expression.n,
            Expression.Ea,
            Expression.t_min,
            Expression.t_max,
            Expression.recommended,
            Expression.provenance["steric_factor_T_K"].as_float(),
            Reaction.id,
            Reaction.key,
            Reaction.reaction_order,
            Reaction.third_body,
            Reaction.reaction_class,
        )
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
    fits: dict[int, _FitRow] = {}
    for row in session.connection().execute(query):
        fit = _FitRow(*row)
        current = fits.get(fit.reaction_id)
        if current is None or not current.recommended or fit.recommended:
            fits[fit.reaction_id] = fit
    pairs = collision_pairs(session, [_PairReaction(*f[8:12]) for f in fits.values()], model=model)
    usable = []
    for fit in fits.values():
        pair = pairs.get(fit.reaction_id)
        if pair is None or isinstance(pair, str) or fit.A is None:
            continue
        t_mean = fit.t_mean
        if not t_mean:
            if fit.t_min and fit.t_max:
                t_mean = math.sqrt(fit.t_min * fit.t_max)
            else:
                continue
        usable.append((fit, pair, float(t_mean)))
    classes: dict[str | None, ClassSteric] = {}
    for (fit, pair, t_mean), p in zip(usable, _implied_steric_factors(usable, model), strict=True):
        if not math.isfinite(p) or p <= 0:
            continue
        group = classes.setdefault(fit.reaction_class, ClassSteric(fit.reaction_class))
        group.samples.append(
            StericSample(
                fit.key, fit.reaction_class, p, t_mean, fit.id, pair.uses_estimated_diameter
            )
        )
    for group in classes.values():
        group.samples.sort(key=lambda s: s.key)
    return sorted(
        classes.values(), key=lambda c: (c.reaction_class is None, c.reaction_class or "")
    )
