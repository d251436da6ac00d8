"""Steric factors: the curator's rules, per-reaction values, and those implied by measurements.

The steric factor P of a measured reaction is derived from its fit (README, Estimates
and steric factors): P = k_fit(T_m) / (z(T_m) exp(-E0/RT_m)) at the geometric-mean
temperature T_m of its data, with E0 = Ea_local(T_m) - E_z(T_m)
(:func:`ratebank.science.collision.steric_factor_of_expression`). Grouped by
reaction class, their geometric mean and spread supply P for estimates of the
class's unmeasured reactions.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.science.collision import (
    collision_rate,
    collision_rate_activation_energy,
    local_steric_factor,
    steric_factor_of_expression,
)
from ratebank.services.input_rules import name_problem
from ratebank.services.partners import CollisionPair, PairColumns, collision_pairs
from ratebank.store import audit, queries
from ratebank.store import steric as steric_store
from ratebank.store.queries import ExpressionRow, StericRuleRow
from ratebank.store.steric import ReactionStericRow

#: Never claim an estimate is better than this factor, however tight the class
#: spread (common practice: collision-theory estimates are order-of-magnitude).
MINIMUM_ESTIMATE_FACTOR = 2.0

#: A class rule as the listings show it.
RuleView = StericRuleRow
#: A per-reaction steric factor as the listings show it.
ReactionStericView = ReactionStericRow


def _check_steric(value: float) -> None:
    if not math.isfinite(value) or value <= 0:
        raise BadInputError(
            f"steric factor {value!r} must be a finite number greater than zero",
            argument="steric_factor",
        )


def _check_factor(value: float | None) -> None:
    if value is not None and (not math.isfinite(value) or value < 1):
        raise BadInputError(
            f"uncertainty factor {value!r} must be a finite number of at least 1",
            argument="uncertainty_factor",
        )


# --------------------------------------------------------------------------- rules


def set_class_rule(
    session: Session,
    reaction_class: str,
    steric_factor: float,
    *,
    uncertainty_factor: float | None = None,
    source: str | None = None,
    note: str | None = None,
    expected_version: int | None = None,
    definition: str = "local",
) -> RuleView:
    """Create or change the steric factor of a reaction class.

    ``expected_version`` is the rule's version as the curator last read it; a
    rule changed by someone else since is refused, naming who and when.
    ``definition`` says how ``steric_factor`` is defined: ``local`` (ratebank's
    P, stored as given) or ``textbook`` (A / z, converted to the local P by
    :func:`ratebank.science.collision.local_steric_factor` and noted).
    """
    _check_steric(steric_factor)
    steric_factor, note = _as_local(steric_factor, definition, note)
    _check_factor(uncertainty_factor)
    if not reaction_class.strip():
        raise BadInputError("reaction class must not be empty", argument="reaction_class")
    if (problem := name_problem(reaction_class, "reaction class")) is not None:
        raise BadInputError(problem, argument="reaction_class")
    rule, before = steric_store.save_rule(
        session,
        reaction_class,
        steric_factor=steric_factor,
        uncertainty_factor=uncertainty_factor,
        source=source,
        note=note,
        expected_version=expected_version,
    )
    audit.record(
        session,
        "steric.rule.add" if before is None else "steric.rule.change",
        reaction_class,
        steric_factor=steric_factor,
        before=before,
        uncertainty_factor=uncertainty_factor,
        source=source,
    )
    return rule


def remove_class_rule(session: Session, reaction_class: str) -> None:
    value = steric_store.remove_rule(session, reaction_class)
    audit.record(session, "steric.rule.remove", reaction_class, steric_factor=value)


def _as_local(value: float, definition: str, note: str | None) -> tuple[float, str | None]:
    """The local P of a value quoted under ``definition``, and a note of the conversion."""
    if definition not in ("local", "textbook"):
        raise BadInputError(
            f"unknown steric-factor definition {definition!r}; expected local or textbook",
            argument="definition",
        )
    if definition == "local":
        return value, note
    local = float(local_steric_factor(value, definition))
    converted = f"converted from a textbook P (A / z) of {value:g}"
    return local, f"{note}; {converted}" if note else converted


def set_reaction_steric(
    session: Session,
    key: str,
    steric_factor: float | None,
    *,
    source: str | None = None,
    definition: str = "local",
) -> ReactionStericView | None:
    """Store (or with None, clear) the (local) steric factor of one reaction."""
    reaction = queries.find_reaction(session, key)
    if steric_factor is not None:
        _check_steric(steric_factor)
        steric_factor, source = _as_local(steric_factor, definition, source)
    source = source if steric_factor is not None else None
    steric_store.set_reaction_steric(session, reaction.id, steric_factor, source)
    audit.record(
        session,
        "steric.reaction",
        reaction.key,
        steric_factor=steric_factor,
        before=reaction.steric_factor,
        source=source,
    )
    if steric_factor is None:
        return None
    return ReactionStericView(reaction.key, reaction.reaction_class, steric_factor, source)


def list_rules(session: Session) -> tuple[list[RuleView], list[ReactionStericView]]:
    rules = list(queries.steric_rules(session).values())
    return rules, steric_store.reactions_with_steric(session)


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


def _fit_temperature(fit: ExpressionRow) -> float | None:
    """The T at which a fit's P is taken: the one its provenance names, else mid-range."""
    t_mean = fit.provenance.get("steric_factor_T_K")
    if t_mean:
        return float(t_mean)
    if fit.T_min and fit.T_max:
        return math.sqrt(fit.T_min * fit.T_max)
    return None


def _implied(fits: list[ExpressionRow], pairs: list[CollisionPair], T: np.ndarray, model: str):  # type: ignore[no-untyped-def]
    columns = PairColumns.of(pairs)
    z = collision_rate(T, **columns.rate_arguments(model))
    wells = (
        {"well_depth_a": columns.well_depth_a, "well_depth_b": columns.well_depth_b}
        if model == "lennard-jones"
        else {}
    )
    e_z = collision_rate_activation_energy(T, model=model, **wells)
    A, n, Ea = (
        np.array([getattr(f, name) for f in fits], dtype=float) for name in ["A", "n", "Ea"]
    )
    return np.atleast_1d(steric_factor_of_expression(T, A, n, Ea, z, e_z))


def implied_steric_factors(
    fits: list[ExpressionRow], pairs: list[CollisionPair], T: np.ndarray, model: str
) -> list[float]:
    """P of each (fit, pair) at T, in one vectorized pass; NaN where it cannot be had.

    Should one input be out of range for the science functions (they refuse
    whole arrays), the fits are taken one at a time so that only that one is
    left out.
    """
    if not fits:
        return []
    try:
        return _implied(fits, pairs, T, model).tolist()
    except ValueError:
        found = []
        for i in range(len(fits)):
            try:
                found.append(
                    float(_implied(fits[i : i + 1], pairs[i : i + 1], T[i : i + 1], model)[0])
                )
            except ValueError:
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
    fits: dict[int, ExpressionRow] = {}
    for fit in queries.measured_fits(session, reaction_class=reaction_class):
        current = fits.get(fit.reaction_id)
        if current is None or not current.recommended or fit.recommended:
            fits[fit.reaction_id] = fit
    reactions = {r.id: r for r in queries.reactions(session, ids=list(fits))}
    pairs = collision_pairs(session, list(reactions.values()), model=model)
    usable = [
        (fit, pairs[rid], T)
        for rid, fit in fits.items()
        if isinstance(pairs.get(rid), CollisionPair)
        and fit.A is not None
        and (T := _fit_temperature(fit)) is not None
    ]
    implied = implied_steric_factors(
        [f for f, _, _ in usable],
        [p for _, p, _ in usable],
        np.array([t for *_, t in usable]),
        model,
    )
    classes: dict[str | None, ClassSteric] = {}
    for (fit, pair, T), p in zip(usable, implied, strict=True):
        if not math.isfinite(p) or p <= 0:
            continue
        reaction = reactions[fit.reaction_id]
        group = classes.setdefault(reaction.reaction_class, ClassSteric(reaction.reaction_class))
        group.samples.append(
            StericSample(
                reaction.key, reaction.reaction_class, p, T, fit.id, pair.uses_estimated_diameter
            )
        )
    for group in classes.values():
        group.samples.sort(key=lambda s: s.key)
    return sorted(
        classes.values(), key=lambda c: (c.reaction_class is None, c.reaction_class or "")
    )
