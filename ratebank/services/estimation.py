"""Fill missing pre-exponential factors from collision theory times a steric factor.

For a bimolecular reaction with a known activation energy Ea (at T_ref):

- hard spheres: E0 = Ea - R T_ref/2 and k(T) = P z(T) exp(-E0/RT). Since
  z(T) is proportional to T^(1/2) this is exactly a modified-Arrhenius
  expression with n = 1/2, A = P z(T_ref)/T_ref^(1/2) and Ea = E0, and it is
  stored that way.
- Lennard-Jones: z_LJ = z Omega(2,2)*(T/eps_AB), E0 = Ea - E_z(T_ref) with the
  model's own E_z = -R d ln z/d(1/T), and the stored expression is a
  modified-Arrhenius fit to P z_LJ(T) exp(-E0/RT) over the temperature range,
  its largest deviation recorded.

P comes from the first of: the command line; the value stored on the
reaction; the rule stored for its class; the geometric mean of the steric
factors derived from measured reactions of the class; a fallback the user
gives. A reaction with none of these is reported, never guessed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, NamedTuple

from sqlalchemy import delete, select
from sqlalchemy.orm import Session

from ratebank.errors import RatebankError
from ratebank.services.curate import find_reaction
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.partners import (
    COLLISION_MODELS,
    CollisionPair,
    collision_pairs,
    store_estimated_partners,
)
from ratebank.services.progress import NoProgress, Progress, chunks
from ratebank.services.steric import MINIMUM_ESTIMATE_FACTOR, derived_steric_factors
from ratebank.store import audit
from ratebank.store.bulk import (
    EXPRESSION_COLUMNS,
    db_timestamp,
    fetch_all,
    insert_returning_ids,
    json_adapter,
)
from ratebank.store.models import Expression, Reaction, StericRule

#: Uncertainty factor of an estimate when nothing better is known (common practice).
DEFAULT_UNCERTAINTY_FACTOR = 10.0
#: Reference temperature when neither the user nor the activation energy gives one [K].
DEFAULT_T_REF = 298.15
#: Temperature grid of the Lennard-Jones fit when no range is known [K].
DEFAULT_LJ_RANGE = (200.0, 2500.0)


class EstimateIncomplete(RatebankError):
    """Some requested reactions could not be estimated; nothing was written."""

    def __init__(self, report: EstimateReport):
        self.report = report
        lines = [f"{s.key}: {s.reason}" for s in report.skipped[:20]]
        more = len(report.skipped) - len(lines)
        super().__init__(
            f"{len(report.skipped)} of {len(report.skipped) + len(report.rows)} requested "
            "reaction(s) cannot be estimated, so nothing was written (use --keep-going to "
            "store the others):\n  "
            + "\n  ".join(lines)
            + (f"\n  ... and {more} more" if more > 0 else "")
        )


@dataclass(slots=True)
class EstimateRow:
    key: str
    equation: str
    A: float
    n: float
    Ea: float  # the stored Ea (E0 for the hard-sphere n = 1/2 form)
    activation_energy: float  # the Ea the estimate was made from
    T_ref: float
    t_min: float | None
    t_max: float | None
    steric_factor: float
    steric_rule: str
    uncertainty_factor: float
    collision_model: str
    collision_rate_at_t_ref: float
    estimated_diameters: list[str]
    max_fit_deviation: float | None = None
    expression_id: int | None = None
    replaced: list[int] = field(default_factory=list)


@dataclass
class Skipped:
    key: str
    reason: str


@dataclass
class EstimateReport:
    rows: list[EstimateRow]
    skipped: list[Skipped]
    written: bool

    @property
    def all_estimated(self) -> bool:
        return not self.skipped


@dataclass(frozen=True)
class _StericChoice:
    value: float
    rule: str
    uncertainty_factor: float
    detail: dict[str, Any]


def _steric_for(
    reaction: _ReactionRow,
    *,
    given: float | None,
    rules: dict[str, StericRule],
    derived: dict[str | None, Any],
    fallback: float | None,
    user_factor: float | None,
) -> _StericChoice | str:
    default_factor = user_factor if user_factor is not None else DEFAULT_UNCERTAINTY_FACTOR
    if given is not None:
        return _StericChoice(given, "given on the command line", default_factor, {})
    if reaction.steric_factor is not None:
        return _StericChoice(
            reaction.steric_factor,
            "stored for the reaction",
            default_factor,
            {"source": reaction.steric_source},
        )
    rule = rules.get(reaction.reaction_class or "")
    if rule is not None:
        return _StericChoice(
            rule.steric_factor,
            f"rule for class {rule.reaction_class}",
            rule.uncertainty_factor or default_factor,
            {"source": rule.source, "rule_version": rule.version},
        )
    group = derived.get(reaction.reaction_class) if reaction.reaction_class else None
    if group is not None and group.count > 0:
        spread = group.spread_factor
        factor = max(spread, MINIMUM_ESTIMATE_FACTOR) if spread is not None else default_factor
        return _StericChoice(
            group.geometric_mean,
            f"derived from {group.count} measured reaction(s) of class {reaction.reaction_class}",
            factor,
            {
                "class_spread_factor": spread,
                "class_members": [
                    {
                        "key": s.key,
                        "steric_factor": s.steric_factor,
                        "expression_id": s.expression_id,
                    }
                    for s in group.samples
                ],
            },
        )
    if fallback is not None:
        return _StericChoice(fallback, "fallback given on the command line", default_factor, {})
    where = f"class {reaction.reaction_class!r}" if reaction.reaction_class else "no class"
    return (
        f"no applicable steric factor ({where}: no value stored for the reaction, no class "
        "rule, no measured reaction of the class); give --steric, store one with "
        "`ratebank steric`, or give --fallback-steric"
    )


@paused_garbage_collection()
def estimate(
    session: Session,
    keys: list[str] | None = None,
    *,
    steric: float | None = None,
    t_ref: float | None = None,
    collision: str = "hard-sphere",
    reaction_class: str | None = None,
    fallback_steric: float | None = None,
    uncertainty_factor: float | None = None,
    t_range: tuple[float, float] | None = None,
    keep_going: bool = False,
    progress: Progress | None = None,
) -> EstimateReport:
    """Estimate A for bimolecular reactions that have an activation energy but no A.

    Without ``keys``, every such reaction (of ``reaction_class``, if given) is
    a candidate. If any requested reaction cannot be estimated, nothing is
    written and :class:`EstimateIncomplete` lists why, unless ``keep_going``.
    Measured and literature expressions are never touched; an earlier
    collision estimate of the same reaction (not recommended) is replaced.
    """
    import numpy as np

    from ratebank.science import collision as sct
    from ratebank.science.arrhenius import approximate_with_modified_arrhenius

    if collision not in COLLISION_MODELS:
        raise RatebankError(
            f"unknown collision model {collision!r}; expected one of {', '.join(COLLISION_MODELS)}"
        )
    for name, value in (("--steric", steric), ("--fallback-steric", fallback_steric)):
        if value is not None and (not math.isfinite(value) or value <= 0):
            raise RatebankError(f"{name} {value!r} must be a finite number greater than zero")
    if t_ref is not None and (not math.isfinite(t_ref) or t_ref <= 0):
        raise RatebankError(f"--t-ref {t_ref!r} must be a temperature above 0 K")
    if uncertainty_factor is not None and (
        not math.isfinite(uncertainty_factor) or uncertainty_factor < 1
    ):
        raise RatebankError("--uncertainty-factor must be a number of at least 1")
    if t_range is not None and not (0 < t_range[0] < t_range[1]):
        raise RatebankError("--t-range needs two temperatures, the lower first, both above 0 K")

    reactions = _reactions(session, keys, reaction_class)
    expressions = _expressions(session, [r.id for r in reactions])

    skipped: list[Skipped] = []
    candidates: list[tuple[_ReactionRow, _ExpressionRow]] = []
    for reaction in reactions:
        own = expressions[reaction.id]
        complete = [e for e in own if e.A is not None and e.origin != "collision-estimate"]
        partial = [e for e in own if e.A is None]
        if complete or not partial:
            if keys:
                skipped.append(Skipped(reaction.key, _why_not_candidate(complete)))
            continue
        candidates.append((reaction, partial[-1]))

    pairs = collision_pairs(session, [r for r, _ in candidates], model=collision)
    rules = {r.reaction_class: r for r in session.scalars(select(StericRule))}
    derived = {g.reaction_class: g for g in derived_steric_factors(session, model=collision)}

    rows: list[EstimateRow] = []
    plans: list[tuple[_ReactionRow, EstimateRow, dict[str, Any]]] = []
    progress = progress or NoProgress()
    progress.start("estimating", len(candidates))
    ready: list[
        tuple[_ReactionRow, _ExpressionRow, CollisionPair, _StericChoice, float, Any, Any]
    ] = []
    # a P given on the command line is the same choice for every reaction
    given_choice = (
        _steric_for(
            candidates[0][0],
            given=steric,
            rules=rules,
            derived=derived,
            fallback=fallback_steric,
            user_factor=uncertainty_factor,
        )
        if steric is not None and candidates
        else None
    )
    for reaction, partial in candidates:
        progress.advance()
        pair = pairs[reaction.id]
        if isinstance(pair, str):
            skipped.append(Skipped(reaction.key, pair))
            continue
        choice = given_choice or _steric_for(
            reaction,
            given=steric,
            rules=rules,
            derived=derived,
            fallback=fallback_steric,
            user_factor=uncertainty_factor,
        )
        if isinstance(choice, str):
            skipped.append(Skipped(reaction.key, choice))
            continue
        t_min = partial.t_min if partial.t_min is not None else (t_range[0] if t_range else None)
        t_max = partial.t_max if partial.t_max is not None else (t_range[1] if t_range else None)
        reference_t = t_ref
        if reference_t is None:
            reference_t = math.sqrt(t_min * t_max) if t_min and t_max else DEFAULT_T_REF
        ready.append((reaction, partial, pair, choice, reference_t, t_min, t_max))

    # the collision rate of every candidate at its T_ref in one vectorized call
    z_ref = np.zeros(len(ready))
    e_z = np.zeros(len(ready))
    if ready and collision == "hard-sphere":
        pairs_ready = [item[2] for item in ready]
        T_ref = np.array([item[4] for item in ready])
        distinct = sct.collision_rate_constant(
            T_ref,
            np.array([p.a.diameter for p in pairs_ready]),
            np.array([p.b.diameter for p in pairs_ready]),
            np.array([p.a.molar_mass for p in pairs_ready]),
            np.array([p.b.molar_mass for p in pairs_ready]),
        )
        # A + A: mu = m/2 comes out of the same formula; the 1/2 is ratebank's rate law
        z_ref = np.where([p.identical for p in pairs_ready], 0.5, 1.0) * distinct
        e_z = np.asarray(sct.collision_rate_activation_energy(T_ref, model="hard-sphere"))
    z_ref_list = np.broadcast_to(z_ref, (len(ready),)).tolist()
    e_z_list = np.broadcast_to(e_z, (len(ready),)).tolist()
    partner_records: dict[int, dict[str, object]] = {}  # one record per species, shared
    for i, (reaction, partial, pair, choice, reference_t, t_min, t_max) in enumerate(ready):
        try:
            row, detail = _estimate_one(
                reaction,
                partial,
                pair,
                choice,
                reference_t,
                t_min,
                t_max,
                collision,
                sct,
                approximate_with_modified_arrhenius,
                np,
                z_ref=z_ref_list[i] if collision == "hard-sphere" else None,
                e_z=e_z_list[i] if collision == "hard-sphere" else None,
                partner_records=partner_records,
            )
        except (ValueError, RatebankError) as exc:
            skipped.append(Skipped(reaction.key, f"collision model failed: {exc}"))
            continue
        rows.append(row)
        plans.append((reaction, row, detail))

    if skipped and not keep_going:
        raise EstimateIncomplete(EstimateReport(rows, skipped, written=False))
    if plans:
        # store the diameters estimated for the partners actually used, flagged
        store_estimated_partners(session, [pairs[r.id] for r, _, _ in plans])
        author = session.info.get("author")
        replaced: list[int] = []
        for reaction, row, _detail in plans:
            row.replaced = [
                e.id
                for e in expressions[reaction.id]
                if e.origin == "collision-estimate" and not e.recommended
            ]
            replaced.extend(row.replaced)
        for start, stop in chunks(len(replaced), 500):
            session.execute(delete(Expression).where(Expression.id.in_(replaced[start:stop])))
        now = db_timestamp(session)
        encode = json_adapter(session)
        new_ids = insert_returning_ids(
            session,
            "expression",
            EXPRESSION_COLUMNS,
            [
                (
                    reaction.id,
                    "collision-estimate",
                    row.A,
                    row.n,
                    row.Ea,
                    row.t_min,
                    row.t_max,
                    row.uncertainty_factor,
                    f"collision theory ({row.collision_model}) x steric factor "
                    f"{row.steric_factor:.3g} ({row.steric_rule})",
                    encode(detail),
                    False,
                    1,
                    now,
                    author,
                )
                for reaction, row, detail in plans
            ],
        )
        for (_, row, _), new_id in zip(plans, new_ids, strict=True):
            row.expression_id = new_id
        audit.record_many(
            session,
            "estimate",
            [
                (
                    row.key,
                    {
                        "expression": row.expression_id,
                        "model": row.collision_model,
                        "steric_factor": row.steric_factor,
                        "steric_rule": row.steric_rule,
                        "replaced": row.replaced,
                    },
                )
                for _, row, _ in plans
            ],
        )
    return EstimateReport(rows, skipped, written=bool(plans))


class _ReactionRow(NamedTuple):
    """The reaction columns estimation reads (a plain row, not an ORM object)."""

    id: int
    key: str
    equation: str
    reaction_order: int
    third_body: bool
    reaction_class: str | None
    steric_factor: float | None
    steric_source: str | None


class _ExpressionRow(NamedTuple):
    id: int
    reaction_id: int
    origin: str
    A: float | None
    Ea: float
    t_min: float | None
    t_max: float | None
    recommended: bool


_REACTION_COLUMNS = (
    Reaction.id,
    Reaction.key,
    Reaction.equation,
    Reaction.reaction_order,
    Reaction.third_body,
    Reaction.reaction_class,
    Reaction.steric_factor,
    Reaction.steric_source,
)


def _reactions(
    session: Session, keys: list[str] | None, reaction_class: str | None
) -> list[_ReactionRow]:
    if keys:
        ids = [find_reaction(session, key).id for key in keys]
        found = {
            row[0]: _ReactionRow(*row)
            for row in session.execute(select(*_REACTION_COLUMNS).where(Reaction.id.in_(ids)))
        }
        return [found[i] for i in ids]
    query = select(*_REACTION_COLUMNS).order_by(Reaction.key)
    if reaction_class is not None:
        query = query.where(Reaction.reaction_class == reaction_class)
        return [_ReactionRow(*row) for row in session.execute(query)]
    # the whole store: plain rows through the driver
    return [_ReactionRow(*row) for row in fetch_all(session, query)]


def _expressions(session: Session, reaction_ids: list[int]) -> dict[int, list[_ExpressionRow]]:
    columns = (
        Expression.id,
        Expression.reaction_id,
        Expression.origin,
        Expression.A,
        Expression.Ea,
        Expression.t_min,
        Expression.t_max,
        Expression.recommended,
    )
    found: dict[int, list[_ExpressionRow]] = {i: [] for i in reaction_ids}
    query = select(*columns).order_by(Expression.id)
    if len(reaction_ids) <= 5000:
        for start in range(0, len(reaction_ids), 500):
            chunk = reaction_ids[start : start + 500]
            for row in session.execute(query.where(Expression.reaction_id.in_(chunk))):
                found[row[1]].append(_ExpressionRow(*row))
    else:  # most of the store: one pass through the driver beats thousands of IN lists
        for row in fetch_all(session, query):
            if row[1] in found:
                found[row[1]].append(_ExpressionRow(*row))
    return found


def _why_not_candidate(complete: list[_ExpressionRow]) -> str:
    if complete:
        return (
            f"already has a complete {complete[-1].origin} expression; estimates never "
            "replace measured or literature values"
        )
    return "no activation energy stored (import one with A left empty)"


def _estimate_one(
    reaction: _ReactionRow,
    partial: _ExpressionRow,
    pair: CollisionPair,
    choice: _StericChoice,
    t_ref: float,
    t_min: float | None,
    t_max: float | None,
    model: str,
    sct: Any,
    approximate: Any,
    np: Any,
    *,
    z_ref: float | None = None,
    e_z: float | None = None,
    partner_records: dict[int, dict[str, object]] | None = None,
) -> tuple[EstimateRow, dict[str, Any]]:
    ea = partial.Ea
    if z_ref is None:
        z_ref = float(pair.collision_rate(t_ref, model))
    if e_z is None:
        e_z = float(pair.collision_activation_energy(t_ref, model))
    # E0 = Ea - E_z(T_ref) (plain arithmetic: E_z is already the model's own)
    e0 = ea - e_z
    max_deviation = None
    if model == "hard-sphere":
        A = choice.value * z_ref / math.sqrt(t_ref)
        n = 0.5
        stored_ea = e0
    else:
        low, high = (t_min, t_max) if t_min and t_max else DEFAULT_LJ_RANGE
        low, high = min(low, t_ref), max(high, t_ref)
        grid = np.geomspace(low, high, 60)
        k_model = sct.collision_theory_rate_constant(
            grid, choice.value, pair.collision_rate(grid, model), e0
        )
        fit = approximate(grid, k_model)
        A, n, stored_ea = float(fit.A), float(fit.n), float(fit.Ea)
        max_deviation = float(fit.max_relative_deviation)
        t_min, t_max = t_min or low, t_max or high
    estimated = pair.estimated_diameters
    row = EstimateRow(
        key=reaction.key,
        equation=reaction.equation,
        A=float(A),
        n=float(n),
        Ea=float(stored_ea),
        activation_energy=float(ea),
        T_ref=float(t_ref),
        t_min=t_min,
        t_max=t_max,
        steric_factor=float(choice.value),
        steric_rule=choice.rule,
        uncertainty_factor=float(choice.uncertainty_factor),
        collision_model=model,
        collision_rate_at_t_ref=z_ref,
        estimated_diameters=estimated,
        max_fit_deviation=max_deviation,
    )
    detail = {
        "method": "simple collision theory times a steric factor",
        "collision_model": model,
        "steric_factor": row.steric_factor,
        "steric_rule": choice.rule,
        "steric_detail": choice.detail,
        "uncertainty_factor": row.uncertainty_factor,
        "activation_energy_J_per_mol": row.activation_energy,
        "activation_energy_expression_id": partial.id,
        "threshold_energy_J_per_mol": e0,
        "collision_activation_energy_J_per_mol": e_z,
        "T_ref": row.T_ref,
        "collision_rate_at_T_ref_SI": z_ref,
        "self_reaction": pair.identical,
        "partners": pair.as_record(cache=partner_records),
        "estimated_diameters": row.estimated_diameters,
        "form": "n = 1/2 exactly" if model == "hard-sphere" else "modified-Arrhenius fit",
        "max_relative_deviation_of_fit": max_deviation,
    }
    return row, detail
