"""Evans-Polanyi relations of reaction classes: derived from the store, set by a curator, and
used to give ``estimate`` an activation energy where none was measured.

Within a class, Ea = E0 + α ΔrH°(298.15 K) (:mod:`ratebank.science.evans_polanyi`).
The derived relation of a class is the weighted straight-line fit over its
members: reactions with a measured fit or a literature expression (the
recommended one, else the newest fit, else the newest literature expression)
whose species all have thermochemistry. A member's Ea is its expression's
local activation energy Ea + n R T_ref at the expression's reference
temperature (the fit's, else the middle of its range), and its standard
deviation comes from the fit's covariance; the fit is weighted when every
member has one, unweighted otherwise.

``estimate`` fills a bimolecular reaction that has no expression of its own
(collision estimates aside): Ea from the class's relation (the curator's,
else the derived one), clamped to be at least ΔrH° of an endothermic reaction
and at least 0; then A from collision theory as for any activation energy.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, FitError
from ratebank.science.arrhenius import local_activation_energy
from ratebank.science.constants import GAS_CONSTANT
from ratebank.science.evans_polanyi import (
    EvansPolanyiFit,
    evans_polanyi_activation_energy,
    fit_evans_polanyi,
)
from ratebank.science.thermo import REFERENCE_TEMPERATURE, reaction_thermochemistry
from ratebank.science.units import energy_to_si
from ratebank.services.thermo import (
    ReactionThermoInputs,
    lacking_thermo_message,
    reaction_thermo_inputs,
)
from ratebank.store import audit, queries
from ratebank.store.evans_polanyi import (
    EvansPolanyiRuleRow,
    evans_polanyi_rules,
    remove_evans_polanyi_rule,
    save_evans_polanyi_rule,
)
from ratebank.store.queries import ExpressionRow, ReactionRow
from ratebank.store.thermo import any_thermo

#: The origins a class member's expression may have.
MEMBER_ORIGINS = ("measured-fit", "literature")
#: The origin of an activation energy the relation supplied (never stored as such).
RELATION_ORIGIN = "evans-polanyi"


def delta_H_298(inputs: ReactionThermoInputs) -> tuple[float, float]:
    """(T [K], ΔrH°(T) [J mol-1]) at 298.15 K, or at the lowest temperature of the species'
    polynomials when that lies above 298.15 K."""
    T = max(REFERENCE_TEMPERATURE, inputs.T_low)
    found = reaction_thermochemistry(inputs.nu, inputs.polynomials, T)
    return T, float(found.delta_H)


# --------------------------------------------------------------------------- derived


@dataclass(frozen=True)
class RelationMember:
    """One reaction of a class as the relation sees it (SI units)."""

    key: str
    expression_id: int
    origin: str
    delta_H: float
    Ea: float
    T_ref: float
    sigma_Ea: float | None


@dataclass
class ClassRelation:
    """The Evans-Polanyi relation derived for one class, or why there is none."""

    reaction_class: str
    members: list[RelationMember] = field(default_factory=list)
    fit: EvansPolanyiFit | None = None
    reason: str | None = None

    @property
    def count(self) -> int:
        return len(self.members)


def _member_expression(own: Sequence[ExpressionRow]) -> ExpressionRow | None:
    usable = [e for e in own if e.complete and e.origin in MEMBER_ORIGINS]
    if not usable:
        return None
    recommended = [e for e in usable if e.recommended]
    if recommended:
        return recommended[-1]
    return min(usable, key=lambda e: (MEMBER_ORIGINS.index(e.origin), -e.id))


def _sigma_of_local_Ea(e: ExpressionRow, T: float) -> float | None:
    """Standard deviation of Ea + n R T from a fit's covariance of (ln A, n, Ea)."""
    covariance = e.provenance.get("covariance")
    if e.origin != "measured-fit" or not covariance:
        return None
    c = np.asarray(covariance, dtype=float)
    RT = GAS_CONSTANT * T
    variance = c[2, 2] + RT**2 * c[1, 1] + 2 * RT * c[1, 2]
    return math.sqrt(variance) if variance > 0 and math.isfinite(variance) else None


def _member(reaction: ReactionRow, e: ExpressionRow, inputs: ReactionThermoInputs):  # type: ignore[no-untyped-def]
    given = e.provenance.get("T_ref")
    if given:
        T = float(given)
    elif e.T_min and e.T_max:
        T = math.sqrt(e.T_min * e.T_max)
    else:
        T = REFERENCE_TEMPERATURE
    Ea = float(local_activation_energy(T, e.n, e.Ea))
    _, delta_H = delta_H_298(inputs)
    return RelationMember(reaction.key, e.id, e.origin, delta_H, Ea, T, _sigma_of_local_Ea(e, T))


def derived_relations(
    session: Session, *, reaction_class: str | None = None
) -> list[ClassRelation]:
    """The relation of each class with a member, fitted over its members (by class name)."""
    reactions = [
        r
        for r in queries.reactions(session, reaction_class=reaction_class)
        if r.reaction_class is not None
    ]
    expressions = queries.expressions_of(session, [r.id for r in reactions])
    chosen = {r.id: e for r in reactions if (e := _member_expression(expressions[r.id]))}
    inputs, _ = reaction_thermo_inputs(session, [r for r in reactions if r.id in chosen])
    classes: dict[str, ClassRelation] = {}
    for reaction in reactions:
        if reaction.id in inputs:
            relation = classes.setdefault(
                reaction.reaction_class, ClassRelation(reaction.reaction_class)
            )
            relation.members.append(_member(reaction, chosen[reaction.id], inputs[reaction.id]))
    for relation in classes.values():
        _fit(relation)
    return sorted(classes.values(), key=lambda c: c.reaction_class)


def _fit(relation: ClassRelation) -> None:
    members = relation.members
    sigmas = [m.sigma_Ea for m in members]
    weighted = all(s is not None for s in sigmas)
    try:
        relation.fit = fit_evans_polanyi(
            [m.delta_H for m in members],
            [m.Ea for m in members],
            sigmas if weighted else None,
        )
    except FitError as exc:
        relation.reason = str(exc)


# --------------------------------------------------------------------------- curator's


def set_class_relation(
    session: Session,
    reaction_class: str,
    E0: float,
    alpha: float,
    *,
    E0_units: str = "kJ/mol",
    spread: float | None = None,
    source: str | None = None,
    expected_version: int | None = None,
) -> EvansPolanyiRuleRow:
    """Create or change a class's relation Ea = E0 + alpha ΔrH°(298.15 K); E0 and ``spread``
    (one standard deviation of Ea about the line) in ``E0_units``."""
    if not reaction_class.strip():
        raise BadInputError("reaction class must not be empty", argument="reaction_class")
    for name, value in (("E0", E0), ("alpha", alpha), ("spread", spread)):
        if value is not None and not math.isfinite(value):
            raise BadInputError(f"{name} {value!r} must be a finite number", argument=name)
    if spread is not None and spread < 0:
        raise BadInputError(f"spread {spread!r} must not be negative", argument="spread")
    E0_si = float(energy_to_si(E0, E0_units))
    spread_si = None if spread is None else float(energy_to_si(spread, E0_units))
    rule, before = save_evans_polanyi_rule(
        session,
        reaction_class,
        E0=E0_si,
        alpha=alpha,
        spread=spread_si,
        source=source,
        expected_version=expected_version,
    )
    audit.record(
        session,
        "evans-polanyi.rule.add" if before is None else "evans-polanyi.rule.change",
        reaction_class,
        E0_J_per_mol=E0_si,
        alpha=alpha,
        spread_J_per_mol=spread_si,
        before=list(before) if before else None,
        source=source,
    )
    return rule


def remove_class_relation(session: Session, reaction_class: str) -> None:
    held = remove_evans_polanyi_rule(session, reaction_class)
    audit.record(session, "evans-polanyi.rule.remove", reaction_class, held=list(held))


def list_relations(session: Session) -> list[EvansPolanyiRuleRow]:
    return list(evans_polanyi_rules(session).values())


# --------------------------------------------------------------------------- estimate


@dataclass(frozen=True)
class ChosenRelation:
    """The relation an estimate of a class uses, and where it comes from."""

    E0: float
    alpha: float
    spread: float | None
    rule: str
    detail: dict[str, Any]


def _relations(session: Session) -> dict[str, ChosenRelation]:
    """The relation of every class that has one: the curator's first, else the derived."""
    found: dict[str, ChosenRelation] = {}
    for relation in derived_relations(session):
        fit = relation.fit
        if fit is None:
            continue
        spread = fit.residual_sd if math.isfinite(fit.residual_sd) else None
        members = [{"key": m.key, "expression_id": m.expression_id} for m in relation.members]
        found[relation.reaction_class] = ChosenRelation(
            fit.E0,
            fit.alpha,
            spread,
            f"derived from {fit.count} reaction(s) of class {relation.reaction_class}",
            {"members": members, "weighted": fit.absolute_sigma},
        )
    for rule in evans_polanyi_rules(session).values():
        found[rule.reaction_class] = ChosenRelation(
            rule.E0,
            rule.alpha,
            rule.spread,
            f"relation set for class {rule.reaction_class}",
            {"source": rule.source, "rule_version": rule.version},
        )
    return found


def relation_activation_energies(
    session: Session,
    reactions: Sequence[ReactionRow],
    expressions: dict[int, list[ExpressionRow]],
) -> tuple[dict[int, ExpressionRow], dict[int, str]]:
    """Activation energies from their class's relation for the bimolecular reactions that have
    no expression of their own (collision estimates aside); and why each other reaction of a
    class with a relation could not have one.

    Each is an expression without A (never stored as such) whose provenance
    records the relation; ``estimate`` completes it as any other.
    """
    waiting = [
        r
        for r in reactions
        if r.reaction_class is not None
        and not [e for e in expressions[r.id] if e.origin != "collision-estimate"]
    ]
    if not waiting or not any_thermo(session):
        return {}, {}  # without thermochemistry no relation can be derived or used
    relations = _relations(session)
    waiting = [r for r in waiting if r.reaction_class in relations]
    inputs, missing = reaction_thermo_inputs(session, [r for r in waiting if r.bimolecular])
    filled: dict[int, ExpressionRow] = {}
    refused: dict[int, str] = {}
    for reaction in waiting:
        if not reaction.bimolecular:
            refused[reaction.id] = "not bimolecular; collision theory does not apply"
        elif reaction.id in missing:
            refused[reaction.id] = lacking_thermo_message(reaction, missing[reaction.id]) + (
                ", so its class's Evans-Polanyi relation cannot give an activation energy"
            )
        else:
            relation = relations[reaction.reaction_class]  # type: ignore[index]
            filled[reaction.id] = _relation_Ea(reaction, relation, inputs[reaction.id])
    return filled, refused


def _relation_Ea(
    reaction: ReactionRow, relation: ChosenRelation, inputs: ReactionThermoInputs
) -> ExpressionRow:
    T, delta_H = delta_H_298(inputs)
    found = evans_polanyi_activation_energy(delta_H, relation.E0, relation.alpha)
    record = {
        "rule": relation.rule,
        "E0_J_per_mol": relation.E0,
        "alpha": relation.alpha,
        "spread_J_per_mol": relation.spread,
        "delta_H_J_per_mol": delta_H,
        "delta_H_T_K": T,
        "raw_activation_energy_J_per_mol": relation.E0 + relation.alpha * delta_H,
        "clamped": bool(found.clamped),
        "floor": "max(dH, 0)",
        **relation.detail,
    }
    return ExpressionRow(
        None,
        reaction.id,
        RELATION_ORIGIN,
        None,
        0.0,
        float(found.Ea),
        None,
        None,  # type: ignore[arg-type]
        None,
        None,
        f"Evans-Polanyi: {relation.rule}",
        {"evans_polanyi": record},
        False,
        0,
        None,
        None,
        None,
        None,
    )


def combined_uncertainty_factor(
    steric_factor: float, partial: ExpressionRow, T_ref: float
) -> float:
    """The uncertainty factor of an estimate whose Ea came from a relation with a spread:
    exp(sqrt(ln² f_P + (spread / (R T_ref))²)); ``steric_factor`` itself otherwise."""
    record = partial.provenance.get("evans_polanyi") or {}
    spread = record.get("spread_J_per_mol")
    if not spread:
        return steric_factor
    ln_relation = spread / (GAS_CONSTANT * T_ref)
    return math.exp(math.sqrt(math.log(steric_factor) ** 2 + ln_relation**2))
