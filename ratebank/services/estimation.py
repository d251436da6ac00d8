"""Fill missing pre-exponential factors from collision theory times a steric factor.

For a bimolecular reaction with a known activation energy Ea (at T_ref) the
estimate is k(T) = P z(T) exp(-E0/RT) with E0 = Ea - E_z(T_ref)
(:func:`ratebank.science.collision.collision_theory_estimate`, for the
hard-sphere and the Lennard-Jones collision models). The service reads the
candidates, chooses P for each, makes that one science call for all of them,
and writes the estimates through the store's one expression write path.

P comes from the first of: the value given by the caller; the value stored
on the reaction; the rule stored for its class; the geometric mean of the
steric factors derived from measured reactions of the class; a fallback the
caller gives. A reaction with none of these is reported, never guessed.

An association written with M (``H + O2 + M -> HO2 + M``) whose ``falloff``
expression states k0 and the broadening but leaves A empty gets k_inf the same
way: its high-pressure limit is the bimolecular rate of the pair A + B. The
estimate is a new ``falloff`` expression holding the estimated k_inf with the
curated k0 and broadening.

A reaction of a class with an Evans-Polanyi relation that has no expression of
its own gets its activation energy from the relation first
(:func:`ratebank.services.evans_polanyi.relation_activation_energies`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, RefusedEstimateError
from ratebank.science.collision import CollisionEstimate, collision_theory_estimate
from ratebank.services.evans_polanyi import (
    combined_uncertainty_factor,
    relation_activation_energies,
)
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.partners import (
    CollisionPair,
    PairColumns,
    check_model,
    collision_pairs,
    store_estimated_partners,
)
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.steric import (
    MINIMUM_ESTIMATE_FACTOR,
    ClassSteric,
    derived_steric_factors,
)
from ratebank.store import queries
from ratebank.store.expressions import (
    ArrheniusTerm,
    Broadening,
    ExpressionRecord,
    remove_expressions,
    write_expressions,
)
from ratebank.store.queries import ExpressionRow, ReactionRow, StericRuleRow
from ratebank.store.runs import write_run

#: Uncertainty factor of an estimate when nothing better is known (common practice).
DEFAULT_UNCERTAINTY_FACTOR = 10.0


@dataclass(slots=True)
class EstimateRow:
    key: str
    equation: str
    A: float
    n: float
    Ea: float  # the stored Ea (E0 for the hard-sphere n = 1/2 form)
    activation_energy: float  # the Ea the estimate was made from
    T_ref: float
    T_min: float | None
    T_max: float | None
    steric_factor: float
    steric_rule: str
    uncertainty_factor: float
    collision_model: str
    collision_rate_at_T_ref: float
    threshold_energy: float
    collision_activation_energy: float
    estimated_diameters: list[str]
    threshold_shortfall: float = 0.0
    max_fit_deviation: float | None = None
    expression_id: int | None = None
    replaced: list[int] = field(default_factory=list)
    #: the Evans-Polanyi relation that gave the activation energy, if one did
    activation_energy_rule: str | None = None


@dataclass
class Skipped:
    key: str
    reason: str


@dataclass
class EstimateReport:
    rows: list[EstimateRow]
    skipped: list[Skipped]
    written: bool


@dataclass(frozen=True, slots=True)
class StericChoice:
    """The steric factor an estimate uses, the rule that supplied it, and its uncertainty."""

    value: float
    rule: str
    uncertainty_factor: float
    detail: dict[str, Any]


#: The choice of a steric factor given by the user, by (value, uncertainty factor).
_GIVEN: dict[tuple[float, float], StericChoice] = {}


@dataclass(frozen=True)
class StericSources:
    """Where steric factors can come from, in order of precedence."""

    given: float | None
    rules: dict[str, StericRuleRow]
    derived: dict[str | None, ClassSteric]
    fallback: float | None
    uncertainty_factor: float | None

    def _given_choice(self, default: float) -> StericChoice:
        # one choice shared by every reaction of the run
        found = _GIVEN.get((self.given, default))
        if found is None:
            found = _GIVEN[(self.given, default)] = StericChoice(
                self.given, "given by the user", default, {}
            )
        return found

    def choose(self, reaction: ReactionRow) -> StericChoice | str:
        """P for ``reaction``, or why there is none."""
        default = self.uncertainty_factor or DEFAULT_UNCERTAINTY_FACTOR
        if self.given is not None:
            return self._given_choice(default)
        if reaction.steric_factor is not None:
            detail = {"source": reaction.steric_source}
            return StericChoice(reaction.steric_factor, "stored for the reaction", default, detail)
        rule = self.rules.get(reaction.reaction_class or "")
        if rule is not None:
            return StericChoice(
                rule.steric_factor,
                f"rule for class {rule.reaction_class}",
                rule.uncertainty_factor or default,
                {"source": rule.source, "rule_version": rule.version},
            )
        group = self.derived.get(reaction.reaction_class) if reaction.reaction_class else None
        if group is not None and group.count > 0:
            return _derived_choice(group, default)
        if self.fallback is not None:
            return StericChoice(self.fallback, "fallback given by the user", default, {})
        where = f"class {reaction.reaction_class!r}" if reaction.reaction_class else "no class"
        return (
            f"no applicable steric factor ({where}: no value stored for the reaction, no class "
            "rule, no measured reaction of the class); give a steric factor or a fallback, or "
            "store one for the reaction or its class"
        )


def _derived_choice(group: ClassSteric, default: float) -> StericChoice:
    spread = group.spread_factor
    factor = max(spread, MINIMUM_ESTIMATE_FACTOR) if spread is not None else default
    members = [
        {"key": s.key, "steric_factor": s.steric_factor, "expression_id": s.expression_id}
        for s in group.samples
    ]
    return StericChoice(
        group.geometric_mean,
        f"derived from {group.count} measured reaction(s) of class {group.reaction_class}",
        factor,
        {"class_spread_factor": spread, "class_members": members},
    )


def _positive(value: float | None, argument: str, what: str, minimum: float = 0.0) -> None:
    if value is None:
        return
    if not math.isfinite(value) or (value <= minimum and minimum == 0.0) or value < minimum:
        raise BadInputError(f"{argument} {value!r} must be {what}", argument=argument)


def _check_options(
    model: str,
    steric: float | None,
    fallback_steric: float | None,
    T_ref: float | None,
    uncertainty_factor: float | None,
    T_range: tuple[float, float] | None,
) -> None:
    check_model(model)
    _positive(steric, "steric", "a finite number greater than zero")
    _positive(fallback_steric, "fallback_steric", "a finite number greater than zero")
    _positive(T_ref, "T_ref", "a temperature above 0 K")
    _positive(uncertainty_factor, "uncertainty_factor", "a finite number of at least 1", 1.0)
    if T_range is not None and not (0 < T_range[0] < T_range[1]):
        raise BadInputError(
            "T_range needs two temperatures, the lower first, both above 0 K", argument="T_range"
        )


#: The provenance of an expression that states no relation (one dictionary, only read).
_NO_PROVENANCE: dict[str, Any] = {}


class _Slim(NamedTuple):
    """What an estimate uses of a stored expression (the whole row only for a falloff, whose
    k0 and broadening the estimate keeps)."""

    id: int
    origin: str
    recommended: bool
    complete: bool
    Ea: float
    T_min: float | None
    T_max: float | None
    form: str | None
    #: the provenance read (the relation's record only)
    provenance: dict[str, Any]
    full: ExpressionRow | None


def _slim(e: ExpressionRow) -> _Slim:
    return _Slim(
        e.id,
        e.origin,
        e.recommended,
        e.complete,
        e.Ea,
        e.T_min,
        e.T_max,
        e.form,
        e.provenance or _NO_PROVENANCE,
        e if e.form == "falloff" else None,
    )


def _slim_rows(own: list[ExpressionRow]) -> list[_Slim]:
    """One reaction's expressions as the estimate uses them: the complete ones and the
    newest one awaiting A (the one an estimate completes), each as a :class:`_Slim`."""
    waiting = [e for e in own if not e.complete]
    kept = [e for e in own if e.complete or e is waiting[-1]] if waiting else own
    return [_slim(e) for e in kept]


@dataclass(frozen=True, slots=True)
class _Candidate:
    reaction: ReactionRow
    partial: _Slim
    pair: CollisionPair
    choice: StericChoice
    T_ref: float
    T_min: float | None
    T_max: float | None
    T_ref_given: bool


@paused_garbage_collection()
def estimate(
    session: Session,
    keys: list[str] | None = None,
    *,
    steric: float | None = None,
    T_ref: float | None = None,
    collision: str = "hard-sphere",
    reaction_class: str | None = None,
    fallback_steric: float | None = None,
    uncertainty_factor: float | None = None,
    T_range: tuple[float, float] | None = None,
    keep_going: bool = False,
    progress: Progress | None = None,
) -> EstimateReport:
    """Estimate A for bimolecular reactions that have an activation energy but no A.

    Without ``keys``, every such reaction (of ``reaction_class``, if given) is
    a candidate. If any requested reaction cannot be estimated, nothing is
    written and :class:`RefusedEstimateError` lists why, unless ``keep_going``.
    Measured and literature expressions are never touched; an earlier
    collision estimate of the same reaction (not recommended) is replaced.
    """
    _check_options(collision, steric, fallback_steric, T_ref, uncertainty_factor, T_range)
    if keys:
        reactions = queries.find_reactions(session, keys)
    else:
        reactions = queries.reactions(session, reaction_class=reaction_class)
    # of the stored provenance, an estimate reads only a relation's record (Ea and its spread)
    # and of each expression only what it uses (_Slim), kept as the rows stream past
    slim = queries.expressions_reduced(
        session,
        [r.id for r in reactions],
        _slim_rows,
        provenance_keys=("evans_polanyi",),
        lean=True,
    )
    filled, refused = relation_activation_energies(session, reactions, slim)  # type: ignore[arg-type]
    for reaction_id, partial in filled.items():
        slim[reaction_id] = [*slim[reaction_id], _slim(partial)]
    del filled
    sources = StericSources(
        steric,
        queries.steric_rules(session),
        {g.reaction_class: g for g in derived_steric_factors(session, model=collision)},
        fallback_steric,
        uncertainty_factor,
    )
    progress = progress or NoProgress()
    candidates, skipped = _candidates(
        session, reactions, slim, bool(keys), sources, collision, T_ref, T_range
    )
    named = {r.key: refused[r.id] for r in reactions if r.id in refused}
    # of the expressions read, the write needs only the earlier estimates each replaces
    replaced = _earlier_estimates(candidates, slim)
    del reactions, slim
    skipped = [s for s in skipped if s.key not in named] + [Skipped(*i) for i in named.items()]
    progress.start("estimating", len(candidates))
    rows = _estimate_rows(candidates, collision, skipped)
    progress.advance(len(candidates))
    if skipped and not keep_going:
        raise RefusedEstimateError(_refusal(rows, skipped), EstimateReport(rows, skipped, False))
    written = [(c, row) for c, row in zip(candidates, rows, strict=True) if row is not None]
    if written:
        _write(session, written, replaced)
    return EstimateReport([row for _, row in written], skipped, written=bool(written))


#: The earlier estimates of a reaction that has none (one list shared by every such row).
_NONE_REPLACED: list[int] = []


def _earlier_estimates(
    candidates: list[_Candidate], expressions: dict[int, list[_Slim]]
) -> dict[int, list[int]]:
    """The ids of each candidate's earlier collision estimates (not recommended), which its
    new estimate replaces, by reaction id (only reactions that have some)."""
    found: dict[int, list[int]] = {}
    for c in candidates:
        ids = [
            e.id
            for e in expressions[c.reaction.id]
            if e.origin == "collision-estimate" and not e.recommended
        ]
        if ids:
            found[c.reaction.id] = ids
    return found


def _refusal(rows: Sequence[EstimateRow | None], skipped: list[Skipped]) -> str:
    lines = [f"{s.key}: {s.reason}" for s in skipped[:20]]
    more = len(skipped) - len(lines)
    total = len(skipped) + sum(1 for r in rows if r is not None)
    return (
        f"{len(skipped)} of {total} requested reaction(s) cannot be estimated, so nothing was "
        "written (keep going to store the others):\n  "
        + "\n  ".join(lines)
        + (f"\n  ... and {more} more" if more > 0 else "")
    )


def _why_not_candidate(complete: list[_Slim]) -> str:
    if complete:
        return (
            f"already has a complete {complete[-1].origin} expression; estimates never "
            "replace measured or literature values"
        )
    return "no activation energy stored (import one with A left empty)"


def _candidates(
    session: Session,
    reactions: list[ReactionRow],
    expressions: dict[int, list[_Slim]],
    named: bool,
    sources: StericSources,
    model: str,
    T_ref: float | None,
    T_range: tuple[float, float] | None,
) -> tuple[list[_Candidate], list[Skipped]]:
    skipped: list[Skipped] = []
    waiting: list[tuple[ReactionRow, _Slim]] = []
    for reaction in reactions:
        own = expressions[reaction.id]
        complete = [e for e in own if e.complete and e.origin != "collision-estimate"]
        partial = [e for e in own if not e.complete]
        if complete or not partial:
            if named:
                skipped.append(Skipped(reaction.key, _why_not_candidate(complete)))
            continue
        waiting.append((reaction, partial[-1]))
    pairs = collision_pairs(session, [_colliding(r, e) for r, e in waiting], model=model)
    candidates: list[_Candidate] = []
    for reaction, partial in waiting:
        pair = _third_body_refusal(reaction, partial) or pairs[reaction.id]
        choice = sources.choose(reaction)
        reason = pair if isinstance(pair, str) else choice if isinstance(choice, str) else None
        if reason is not None:
            skipped.append(Skipped(reaction.key, reason))
            continue
        assert isinstance(pair, CollisionPair) and isinstance(choice, StericChoice)
        low = partial.T_min if partial.T_min is not None else (T_range[0] if T_range else None)
        high = partial.T_max if partial.T_max is not None else (T_range[1] if T_range else None)
        # no silent defaults: T_ref comes from the caller or the activation energy's range
        reference = T_ref or (math.sqrt(low * high) if low and high else None)
        reason = _missing_temperatures(reference, low, high, model)
        if reason:
            skipped.append(Skipped(reaction.key, reason))
            continue
        assert reference is not None
        candidates.append(
            _Candidate(reaction, partial, pair, choice, reference, low, high, T_ref is not None)
        )
    return candidates, skipped


def _colliding(reaction: ReactionRow, partial: _Slim) -> ReactionRow:
    """The reaction as its colliding pair: an association's k_inf is the rate of A + B."""
    if reaction.third_body and reaction.order == 3 and partial.form == "falloff":
        return reaction._replace(order=2, third_body=False)
    return reaction


def _third_body_refusal(reaction: ReactionRow, partial: _Slim) -> str | None:
    if not reaction.third_body or partial.form == "falloff":
        return None
    return (
        "its expression awaiting A is a third-body k0, which collision theory does not give: "
        "leave A of a falloff expression empty (with k0 stated) for k_inf of an association, "
        "or estimate k0 of a decomposition from Hinshelwood's formula"
    )


def _missing_temperatures(
    T_ref: float | None, low: float | None, high: float | None, model: str
) -> str | None:
    if T_ref is None:
        return (
            "no reference temperature: the activation energy states no valid range; give the "
            "temperature at which it holds, or a range"
        )
    if model == "lennard-jones" and not (low and high):
        return (
            "a lennard-jones estimate is a fit over a temperature range, and the activation "
            "energy states none; give a range"
        )
    return None


def _estimate_rows(
    candidates: list[_Candidate], model: str, skipped: list[Skipped]
) -> list[EstimateRow | None]:
    """One science call for every candidate; a candidate the model refuses is skipped."""
    if not candidates:
        return []
    try:
        estimates = _science(candidates, model)
    except ValueError:
        # one bad input refuses the whole array: find it by estimating one at a time
        rows: list[EstimateRow | None] = []
        for candidate in candidates:
            try:
                rows.extend(_estimate_rows_of([candidate], _science([candidate], model), model))
            except ValueError as exc:
                skipped.append(Skipped(candidate.reaction.key, f"collision model failed: {exc}"))
                rows.append(None)
        return rows
    return list(_estimate_rows_of(candidates, estimates, model))


def _science(candidates: list[_Candidate], model: str) -> CollisionEstimate:
    columns = PairColumns.of([c.pair for c in candidates])
    arguments = columns.rate_arguments(model)
    ranged = model == "lennard-jones"
    return collision_theory_estimate(
        np.array([c.partial.Ea for c in candidates]),
        np.array([c.T_ref for c in candidates]),
        np.array([c.choice.value for c in candidates]),
        T_min=np.array([c.T_min for c in candidates], dtype=float) if ranged else None,
        T_max=np.array([c.T_max for c in candidates], dtype=float) if ranged else None,
        **arguments,
    )


def _estimate_rows_of(
    candidates: list[_Candidate], estimates: CollisionEstimate, model: str
) -> list[EstimateRow]:
    rows = []
    lists = {
        name: _shared_values(np.asarray(getattr(estimates, name)))
        for name in estimates.__dataclass_fields__
    }
    for i, c in enumerate(candidates):
        T_min, T_max, deviation = c.T_min, c.T_max, None
        if model != "hard-sphere":
            assert T_min is not None and T_max is not None
            T_min, T_max = min(T_min, c.T_ref), max(T_max, c.T_ref)
            deviation = lists["max_relative_deviation"][i]
        rows.append(
            EstimateRow(
                key=c.reaction.key,
                equation=c.reaction.equation,
                A=lists["A"][i],
                n=lists["n"][i],
                Ea=lists["Ea"][i],
                activation_energy=float(c.partial.Ea),
                T_ref=float(c.T_ref),
                T_min=T_min,
                T_max=T_max,
                steric_factor=float(c.choice.value),
                steric_rule=c.choice.rule,
                uncertainty_factor=combined_uncertainty_factor(
                    float(c.choice.uncertainty_factor), c.partial, c.T_ref
                ),
                collision_model=model,
                collision_rate_at_T_ref=lists["collision_rate_at_T_ref"][i],
                threshold_energy=lists["threshold_energy"][i],
                collision_activation_energy=lists["collision_activation_energy"][i],
                estimated_diameters=c.pair.estimated_diameters,
                threshold_shortfall=lists["threshold_shortfall"][i],
                max_fit_deviation=deviation,
                replaced=_NONE_REPLACED,
                activation_energy_rule=c.partial.provenance.get("evans_polanyi", {}).get("rule"),
            )
        )
    return rows


def _shared_values(values: np.ndarray) -> list[float]:
    """``values`` as a list of floats; a column of few distinct values (n, a shortfall
    that is mostly 0) shares one float object per value instead of one per row."""
    found = values.tolist()
    distinct = np.unique(values)
    if len(distinct) > 16:
        return found
    one = {v: v for v in distinct.tolist()}
    return [one.get(v, v) for v in found]


def _provenance_columns(
    written: list[tuple[_Candidate, EstimateRow]], partners: dict
) -> dict[str, list[Any]]:
    """Each provenance field of the estimates as a column, in the record's order."""
    pairs = [c for c, _ in written]
    rows = [row for _, row in written]
    model = rows[0].collision_model
    shortfall = [row.threshold_shortfall for row in rows]
    return {
        "method": ["simple collision theory times a steric factor"] * len(rows),
        "collision_model": [row.collision_model for row in rows],
        "steric_factor": [row.steric_factor for row in rows],
        "steric_rule": [c.choice.rule for c in pairs],
        "steric_detail": [c.choice.detail for c in pairs],
        "uncertainty_factor": [row.uncertainty_factor for row in rows],
        "activation_energy_J_per_mol": [row.activation_energy for row in rows],
        "activation_energy_expression_id": [c.partial.id for c in pairs],
        "activation_energy_from_relation": [
            c.partial.provenance.get("evans_polanyi") for c in pairs
        ],
        "threshold_energy_J_per_mol": [row.threshold_energy for row in rows],
        "threshold_energy_held_at_zero": [value > 0 for value in shortfall],
        "activation_energy_below_collision_rate_J_per_mol": shortfall,
        "collision_activation_energy_J_per_mol": [row.collision_activation_energy for row in rows],
        "T_ref": [row.T_ref for row in rows],
        "T_ref_from": [
            "given by the user" if c.T_ref_given else "middle of the valid range" for c in pairs
        ],
        "valid_range_stated": [row.T_min is not None and row.T_max is not None for row in rows],
        "collision_rate_at_T_ref_SI": [row.collision_rate_at_T_ref for row in rows],
        "self_reaction": [c.pair.identical for c in pairs],
        "partners": [c.pair.as_record(cache=partners) for c in pairs],
        "estimated_diameters": [row.estimated_diameters for row in rows],
        "form": ["n = 1/2 exactly" if model == "hard-sphere" else "modified-Arrhenius fit"]
        * len(rows),
        "max_relative_deviation_of_fit": [row.max_fit_deviation for row in rows],
        "estimated_part": [
            f"k_inf of a falloff; k0 and broadening kept from expression {c.partial.id}"
            if c.partial.form == "falloff"
            else None
            for c in pairs
        ],
    }


def _split_run(
    columns: dict[str, list[Any]], common: dict[str, Any] | None = None
) -> tuple[dict[str, Any], list[dict[str, Any]]]:
    """(the fields the estimates of the run share, each estimate's own fields).

    Without ``common``, the shared fields are those equal in every row of ``columns``;
    with it (the run's, from its first slice), a row's own fields are every field that
    differs from it in any row of this slice.
    """
    if common is None:
        common = {k: v[0] for k, v in columns.items() if all(x == v[0] for x in v)}
    varying = [k for k, v in columns.items() if k not in common or any(x != common[k] for x in v)]
    rows = zip(*(columns[k] for k in varying), strict=True)
    own = [dict(zip(varying, values, strict=True)) for values in rows]
    return common, own or [{} for _ in next(iter(columns.values()))]


def _reference(c: _Candidate, row: EstimateRow) -> str:
    what = "k_inf from " if c.partial.form == "falloff" else ""
    return (
        f"{what}collision theory ({row.collision_model}) x steric factor "
        f"{row.steric_factor:.3g} ({row.steric_rule})"
    )


def _form_fields(c: _Candidate) -> dict[str, Any]:
    """A falloff estimate keeps the curated k0 and broadening of the expression it completes."""
    e = c.partial.full
    if e is None or e.form != "falloff":
        return {}
    assert e.A_low is not None
    return {
        "form": "falloff",
        "third_body": c.reaction.third_body,
        "low_pressure": ArrheniusTerm(e.A_low, e.n_low or 0.0, e.Ea_low or 0.0),
        "broadening": Broadening(
            e.broadening or "none", e.Fc, e.N, e.troe_alpha, e.troe_T3, e.troe_T1, e.troe_T2
        ),
    }


def _write(
    session: Session,
    written: list[tuple[_Candidate, EstimateRow]],
    earlier: dict[int, list[int]],
) -> None:
    # store the diameters estimated for the partners actually used, flagged
    store_estimated_partners(session, [c.pair for c, _ in written])
    replaced: list[int] = []
    for c, row in written:
        row.replaced = earlier.get(c.reaction.id, _NONE_REPLACED)
        replaced.extend(row.replaced)
    remove_expressions(session, replaced)
    partners: dict[int, dict[str, object]] = {}
    # the provenance every estimate of this run shares is stored once (the run's, taken
    # from its first slice); the rows are written a slice at a time, so that their records,
    # provenance and history are never all in memory at once
    common: dict[str, Any] | None = None
    run_id = None
    for start in range(0, len(written), _WRITE_SLICE):
        part = written[start : start + _WRITE_SLICE]
        common, own = _split_run(_provenance_columns(part, partners), common)
        if run_id is None:
            run_id = write_run(session, "estimate", common)
        ids = write_expressions(
            session, _records(part, own), action="estimate", history=_history(part), run_id=run_id
        )
        for (_, row), new_id in zip(part, ids, strict=True):
            row.expression_id = new_id


#: Estimates written at a time.
_WRITE_SLICE = 2_000


def _records(
    part: list[tuple[_Candidate, EstimateRow]], own: list[dict[str, Any]]
) -> list[ExpressionRecord]:
    return [
        ExpressionRecord(
            reaction_id=c.reaction.id,
            origin="collision-estimate",
            A=row.A,
            n=row.n,
            Ea=row.Ea,
            T_min=row.T_min,
            T_max=row.T_max,
            uncertainty_factor=row.uncertainty_factor,
            uncertainty_g=0.0,
            reference=_reference(c, row),
            provenance=provenance,
            **_form_fields(c),
        )
        for (c, row), provenance in zip(part, own, strict=True)
    ]


def _history(part: list[tuple[_Candidate, EstimateRow]]) -> list[tuple[str, dict[str, Any]]]:
    """One history entry per estimate (the write path adds its expression and run)."""
    return [
        (
            row.key,
            {
                "model": row.collision_model,
                "steric_factor": row.steric_factor,
                "steric_rule": row.steric_rule,
                "replaced": row.replaced,
            },
        )
        for _, row in part
    ]
