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
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.partners import (
    CollisionPair,
    PairColumns,
    PairTable,
    PartnerData,
    check_model,
    collision_pair_table,
    store_estimated_partners,
)
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.steric import (
    MINIMUM_ESTIMATE_FACTOR,
    ClassSteric,
    derived_steric_factors,
)
from ratebank.store import queries
from ratebank.store.estimate_reads import expressions_with_key
from ratebank.store.expressions import (
    ArrheniusTerm,
    Broadening,
    ExpressionRecord,
    remove_expressions,
    write_expressions,
)
from ratebank.store.queries import ExpressionRow, ReactionRow, StericRuleRow
from ratebank.store.runs import PARTNERS, write_run

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
    rows: Sequence[EstimateRow]
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

    def given_choice(self) -> StericChoice | None:
        """The choice every reaction gets when the caller gives P (else None)."""
        if self.given is None:
            return None
        return self._given_choice(self.uncertainty_factor or DEFAULT_UNCERTAINTY_FACTOR)

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


class _Candidates:
    """The reactions an estimate completes, as columns by position (no object per
    reaction): what the science call, the report's rows and the write need of each."""

    def __init__(self, model: str, T_ref_given: bool) -> None:
        self.model = model
        self.T_ref_given = T_ref_given
        self.ids: list[int] = []
        self.keys: list[str] = []
        self.equations: list[str] = []
        self.third_body: list[bool] = []
        self.partial_ids: list[int | None] = []
        self.forms: list[str | None] = []
        #: the partials that state a relation or keep a falloff's k0 (the whole _Slim), by
        #: position; the others need only their id, form and Ea
        self.special: dict[int, _Slim] = {}
        self.a: list[PartnerData] = []
        self.b: list[PartnerData] = []
        self.identical: list[bool] = []
        self.choices: list[StericChoice] = []
        self.Ea = self.T_ref = self.T_min = self.T_max = np.empty(0)

    @classmethod
    def of(
        cls,
        model: str,
        T_ref_given: bool,
        reactions: list[ReactionRow],
        partials: list[_Slim],
        pairs: PairTable,
        kept: list[int],
        columns: tuple[list[StericChoice], list[float], list[float | None], list[float | None]],
    ) -> _Candidates:
        """The candidates at the positions ``kept`` of ``reactions`` (with their
        ``partials`` and ``pairs``), whose steric choices, T_ref, T_min and T_max are
        ``columns``."""
        found = cls(model, T_ref_given)
        chosen = [reactions[i] for i in kept]
        completed = [partials[i] for i in kept]
        found.ids = [r.id for r in chosen]
        found.keys = [r.key for r in chosen]
        found.equations = [r.equation for r in chosen]
        found.third_body = [r.third_body for r in chosen]
        found.partial_ids = [p.id for p in completed]
        found.forms = [p.form for p in completed]
        found.special = {
            j: p for j, p in enumerate(completed) if p.full is not None or p.provenance
        }
        found.a = [pairs.a[i] for i in kept]  # type: ignore[misc]
        found.b = [pairs.b[i] for i in kept]  # type: ignore[misc]
        found.identical = [pairs.identical[i] for i in kept]
        found.choices, T_ref, T_min, T_max = columns
        found.Ea = np.array([p.Ea for p in completed], dtype=float)
        found.T_ref = np.array(T_ref, dtype=float)
        found.T_min = np.array(T_min, dtype=float)
        found.T_max = np.array(T_max, dtype=float)
        return found

    def __len__(self) -> int:
        return len(self.ids)

    def partial(self, i: int) -> _Slim:
        """The expression candidate ``i`` completes, as far as the estimate reads it."""
        return self.special.get(i) or _PLAIN

    def take(self, keep: Sequence[int]) -> _Candidates:
        """The candidates at the positions ``keep``, in that order."""
        taken = _Candidates(self.model, self.T_ref_given)
        for name in (
            "ids", "keys", "equations", "third_body", "partial_ids", "forms", "a", "b",
            "identical", "choices",
        ):  # fmt: skip
            column = getattr(self, name)
            setattr(taken, name, [column[i] for i in keep])
        index = np.asarray(keep, dtype=np.intp)
        for name in ("Ea", "T_ref", "T_min", "T_max"):
            setattr(taken, name, getattr(self, name)[index])
        taken.special = {
            new: self.special[old] for new, old in enumerate(keep) if old in self.special
        }
        return taken


#: What the estimate reads of an ordinary expression awaiting A beyond its id, form and Ea.
_PLAIN = _Slim(0, "", False, False, 0.0, None, None, None, _NO_PROVENANCE, None)


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
    slim = expressions_with_key(session, [r.id for r in reactions], "evans_polanyi", _slim_rows)
    filled, refused = _relation_energies(session, reactions, slim)
    for reaction_id, partial in filled.items():
        slim[reaction_id] = [*slim[reaction_id], _slim(partial)]
    del filled
    sources = StericSources(
        steric,
        queries.steric_rules(session),
        # a steric factor given by the caller is every reaction's: nothing is derived
        {}
        if steric is not None
        else {g.reaction_class: g for g in derived_steric_factors(session, model=collision)},
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
    if len(rows):
        _write(session, rows, replaced)
    return EstimateReport(rows, skipped, written=bool(len(rows)))


def _relation_energies(
    session: Session, reactions: list[ReactionRow], slim: dict[int, list[_Slim]]
) -> tuple[dict[int, ExpressionRow], dict[int, str]]:
    """:func:`ratebank.services.evans_polanyi.relation_activation_energies`, whose module
    (and the thermochemistry it reads) is loaded only when a reaction of a class has no
    expression of its own, the only reactions a relation can give an Ea."""
    if not any(
        r.reaction_class is not None and all(e.origin == "collision-estimate" for e in slim[r.id])
        for r in reactions
    ):
        return {}, {}
    from ratebank.services.evans_polanyi import relation_activation_energies

    return relation_activation_energies(session, reactions, slim)  # type: ignore[arg-type]


#: The earlier estimates of a reaction that has none (one list shared by every such row).
_NONE_REPLACED: list[int] = []


def _earlier_estimates(
    candidates: _Candidates, expressions: dict[int, list[_Slim]]
) -> dict[int, list[int]]:
    """The ids of each candidate's earlier collision estimates (not recommended), which its
    new estimate replaces, by reaction id (only reactions that have some)."""
    found: dict[int, list[int]] = {}
    for reaction_id in candidates.ids:
        ids = [
            e.id
            for e in expressions[reaction_id]
            if e.origin == "collision-estimate" and not e.recommended
        ]
        if ids:
            found[reaction_id] = ids
    return found


def _refusal(rows: Sequence[EstimateRow], skipped: list[Skipped]) -> str:
    lines = [f"{s.key}: {s.reason}" for s in skipped[:20]]
    more = len(skipped) - len(lines)
    total = len(skipped) + len(rows)
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
) -> tuple[_Candidates, list[Skipped]]:
    skipped: list[Skipped] = []
    waiting: list[ReactionRow] = []
    partials: list[_Slim] = []
    for reaction in reactions:
        own = expressions[reaction.id]
        last, completed = None, False
        for e in own:
            if not e.complete:
                last = e
            elif e.origin != "collision-estimate":
                completed = True
        if completed or last is None:
            if named:
                complete = [e for e in own if e.complete and e.origin != "collision-estimate"]
                skipped.append(Skipped(reaction.key, _why_not_candidate(complete)))
            continue
        waiting.append(reaction)
        partials.append(last)
    pairs = collision_pair_table(
        session, [_colliding(r, e) for r, e in zip(waiting, partials, strict=True)], model=model
    )
    kept: list[int] = []
    choices: list[StericChoice] = []
    references: list[float] = []
    lows: list[float | None] = []
    highs: list[float | None] = []
    # a steric factor given by the caller is every reaction's one choice
    given = sources.given_choice()
    reasons = pairs.reasons
    sqrt = math.sqrt
    for i, reaction in enumerate(waiting):
        partial = partials[i]
        pair = (
            _third_body_refusal(reaction, partial) if reaction.third_body else None
        ) or reasons.get(i)
        choice = given or sources.choose(reaction)
        reason = pair if pair is not None else choice if isinstance(choice, str) else None
        if reason is not None:
            skipped.append(Skipped(reaction.key, reason))
            continue
        assert isinstance(choice, StericChoice)
        low = partial.T_min if partial.T_min is not None else (T_range[0] if T_range else None)
        high = partial.T_max if partial.T_max is not None else (T_range[1] if T_range else None)
        # no silent defaults: T_ref comes from the caller or the activation energy's range
        reference = T_ref or (sqrt(low * high) if low and high else None)
        if reference is None or model == "lennard-jones":
            reason = _missing_temperatures(reference, low, high, model)
            if reason:
                skipped.append(Skipped(reaction.key, reason))
                continue
        assert reference is not None
        kept.append(i)
        choices.append(choice)
        references.append(reference)
        lows.append(low)
        highs.append(high)
    columns = (choices, references, lows, highs)
    candidates = _Candidates.of(model, T_ref is not None, waiting, partials, pairs, kept, columns)
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


def _estimate_rows(candidates: _Candidates, model: str, skipped: list[Skipped]) -> EstimateRows:
    """One science call for every candidate; a candidate the model refuses is skipped."""
    if not len(candidates):
        return EstimateRows(candidates, None)
    try:
        estimates = _science(candidates, model)
    except ValueError:
        # one bad input refuses the whole array: find it by estimating one at a time
        keep: list[int] = []
        for i in range(len(candidates)):
            try:
                _science(candidates.take([i]), model)
            except ValueError as exc:
                skipped.append(Skipped(candidates.keys[i], f"collision model failed: {exc}"))
            else:
                keep.append(i)
        candidates = candidates.take(keep)
        if not keep:
            return EstimateRows(candidates, None)
        estimates = _science(candidates, model)
    return EstimateRows(candidates, estimates)


def _science(candidates: _Candidates, model: str) -> CollisionEstimate:
    columns = PairColumns.of_partners(candidates.a, candidates.b, candidates.identical)
    arguments = columns.rate_arguments(model)
    ranged = model == "lennard-jones"
    return collision_theory_estimate(
        candidates.Ea,
        candidates.T_ref,
        np.array([c.value for c in candidates.choices], dtype=float),
        T_min=candidates.T_min if ranged else None,
        T_max=candidates.T_max if ranged else None,
        **arguments,
    )


def _number(value: float) -> float | None:
    """A column's number as the report gives it (NaN: none)."""
    return None if math.isnan(value) else value


def _numbers(values: np.ndarray) -> list[float | None]:
    """A column's numbers as the report gives them (NaN: none)."""
    return [None if x != x else x for x in values.tolist()]


#: The estimated diameters of a pair with none (one list shared by the rows of a slice).
_NO_ESTIMATED: list[str] = []


class _SliceColumns(NamedTuple):
    """The derived numbers of a slice of the estimates, made once for its records and
    provenance."""

    T_min: list[float | None]
    T_max: list[float | None]
    uncertainty_factor: list[float]
    estimated_diameters: list[list[str]]


class EstimateRows(Sequence[EstimateRow]):
    """The report's rows, kept as the estimate's columns: each :class:`EstimateRow` is made
    when it is asked for (a mechanism's estimate holds no object per reaction)."""

    def __init__(self, candidates: _Candidates, estimates: CollisionEstimate | None) -> None:
        self._c = candidates
        self._e = estimates
        #: the new expressions' ids, once written
        self.expression_ids: list[int] | None = None
        #: the earlier estimates each reaction's new one replaced, once written
        self.replaced: dict[int, list[int]] = {}

    def __len__(self) -> int:
        return len(self._c) if self._e is not None else 0

    def __getitem__(self, index):  # type: ignore[no-untyped-def,override]
        if isinstance(index, slice):
            return [self.row(i) for i in range(*index.indices(len(self)))]
        n = len(self)
        if index < 0:
            index += n
        if not 0 <= index < n:
            raise IndexError("estimate row index out of range")
        return self.row(index)

    def __iter__(self):  # type: ignore[no-untyped-def]
        return (self.row(i) for i in range(len(self)))

    def __eq__(self, other: object) -> bool:
        if isinstance(other, EstimateRows | list | tuple):
            return list(self) == list(other)
        return NotImplemented

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"EstimateRows({len(self)} rows)"

    def uncertainty_factor(self, i: int) -> float:
        """The steric factor's uncertainty, widened by a relation's spread when the Ea came
        from one (only such a partial is kept whole)."""
        c = self._c
        factor = float(c.choices[i].uncertainty_factor)
        if i not in c.special:
            return factor
        from ratebank.services.evans_polanyi import combined_uncertainty_factor

        return combined_uncertainty_factor(factor, c.special[i], float(c.T_ref[i]))

    def estimated_diameters(self, i: int) -> list[str]:
        c = self._c
        pair = CollisionPair(c.ids[i], c.keys[i], c.a[i], c.b[i], c.identical[i])
        return pair.estimated_diameters

    def range(self, i: int) -> tuple[float | None, float | None]:
        """The estimate's T_min and T_max (a fitted form's range holds T_ref)."""
        c = self._c
        T_min, T_max = _number(float(c.T_min[i])), _number(float(c.T_max[i]))
        if c.model != "hard-sphere":
            assert T_min is not None and T_max is not None
            T_ref = float(c.T_ref[i])
            return min(T_min, T_ref), max(T_max, T_ref)
        return T_min, T_max

    def columns(self, part: range) -> _SliceColumns:
        """The derived numbers of the rows at ``part`` (a slice being written) as lists."""
        c = self._c
        at = slice(part.start, part.stop)
        T_min, T_max = c.T_min[at], c.T_max[at]
        if c.model != "hard-sphere":
            T_min, T_max = np.minimum(T_min, c.T_ref[at]), np.maximum(T_max, c.T_ref[at])
        factors = [float(choice.uncertainty_factor) for choice in c.choices[at]]
        for i in part:
            if i in c.special:
                factors[i - part.start] = self.uncertainty_factor(i)
        diameters: dict[tuple[int, int], list[str]] = {}
        estimated = []
        for a, b, identical in zip(c.a[at], c.b[at], c.identical[at], strict=True):
            if not (a.diameter_estimated or b.diameter_estimated):
                estimated.append(_NO_ESTIMATED)
                continue
            found = diameters.get((id(a), id(b)))
            if found is None:
                pair = CollisionPair(0, "", a, b, identical)
                found = diameters[(id(a), id(b))] = pair.estimated_diameters
            estimated.append(found)
        return _SliceColumns(_numbers(T_min), _numbers(T_max), factors, estimated)

    def row(self, i: int) -> EstimateRow:
        c, e = self._c, self._e
        assert e is not None
        T_min, T_max = self.range(i)
        ids = self.expression_ids
        choice = c.choices[i]
        return EstimateRow(
            key=c.keys[i],
            equation=c.equations[i],
            A=float(e.A[i]),
            n=float(e.n[i]),
            Ea=float(e.Ea[i]),
            activation_energy=float(c.Ea[i]),
            T_ref=float(c.T_ref[i]),
            T_min=T_min,
            T_max=T_max,
            steric_factor=float(choice.value),
            steric_rule=choice.rule,
            uncertainty_factor=self.uncertainty_factor(i),
            collision_model=c.model,
            collision_rate_at_T_ref=float(e.collision_rate_at_T_ref[i]),
            threshold_energy=float(e.threshold_energy[i]),
            collision_activation_energy=float(e.collision_activation_energy[i]),
            estimated_diameters=self.estimated_diameters(i),
            threshold_shortfall=float(e.threshold_shortfall[i]),
            max_fit_deviation=(
                float(e.max_relative_deviation[i]) if c.model != "hard-sphere" else None
            ),
            expression_id=ids[i] if ids is not None else None,
            replaced=self.replaced.get(c.ids[i], _NONE_REPLACED),
            activation_energy_rule=c.partial(i).provenance.get("evans_polanyi", {}).get("rule"),
        )


def _distinct(*columns: list[PartnerData]) -> list[PartnerData]:
    """The partner objects of ``columns``, each once, in order of appearance (by identity:
    the pairs share one object per species)."""
    found: dict[int, PartnerData] = {}
    for column in columns:
        for partner in column:
            found.setdefault(id(partner), partner)
    return list(found.values())


class _Partners:
    """The partners of a run's estimates, each one's record kept once by species name in the
    run (:data:`ratebank.store.runs.PARTNERS`); a row names its partners."""

    def __init__(self, candidates: _Candidates) -> None:
        self.records: dict[str, dict[str, object]] = {}
        seen: dict[str, PartnerData] = {}
        #: names under which different records were met (a row then keeps its records whole)
        self.ambiguous: set[str] = set()
        self._pairs: dict[tuple[int, int, bool], dict[str, object]] = {}
        for partner in _distinct(candidates.a, candidates.b):
            known = seen.get(partner.name)
            if known is None:
                seen[partner.name] = partner
                self.records[partner.name] = partner.as_record()
            elif self.records[partner.name] != partner.as_record():
                self.ambiguous.add(partner.name)

    def pair(self, a: PartnerData, b: PartnerData, identical: bool) -> dict[str, object]:
        """The pair's record as a row keeps it (one, read only, per pair of partners)."""
        found = self._pairs.get((id(a), id(b), identical))
        if found is not None:
            return found
        if a.name in self.ambiguous or b.name in self.ambiguous:
            found = {"identical": identical, "a": a.as_record(), "b": b.as_record()}
        else:
            found = {"identical": identical, "a": a.name, "b": b.name}
        self._pairs[(id(a), id(b), identical)] = found
        return found


def _provenance_columns(
    rows: EstimateRows, part: range, partners: _Partners, derived: _SliceColumns
) -> dict[str, list[Any]]:
    """Each provenance field of the estimates at ``part`` as a column, in the record's
    order."""
    c, e = rows._c, rows._e
    assert e is not None
    model = c.model
    size = len(part)
    at = slice(part.start, part.stop)
    shortfall = e.threshold_shortfall[at].tolist()
    choices = c.choices[at]
    special = c.special
    relations = [special[i].provenance.get("evans_polanyi") if i in special else None for i in part]
    return {
        "method": ["simple collision theory times a steric factor"] * size,
        "collision_model": [model] * size,
        "steric_factor": [float(choice.value) for choice in choices],
        "steric_rule": [choice.rule for choice in choices],
        "steric_detail": [choice.detail for choice in choices],
        "uncertainty_factor": derived.uncertainty_factor,
        "activation_energy_J_per_mol": c.Ea[at].tolist(),
        "activation_energy_expression_id": c.partial_ids[at],
        "activation_energy_from_relation": relations,
        "threshold_energy_J_per_mol": e.threshold_energy[at].tolist(),
        "threshold_energy_held_at_zero": [value > 0 for value in shortfall],
        "activation_energy_below_collision_rate_J_per_mol": shortfall,
        "collision_activation_energy_J_per_mol": e.collision_activation_energy[at].tolist(),
        "T_ref": c.T_ref[at].tolist(),
        "T_ref_from": ["given by the user" if c.T_ref_given else "middle of the valid range"]
        * size,
        "valid_range_stated": [
            low is not None and high is not None
            for low, high in zip(derived.T_min, derived.T_max, strict=True)
        ],
        "collision_rate_at_T_ref_SI": e.collision_rate_at_T_ref[at].tolist(),
        "self_reaction": c.identical[at],
        "partners": [
            partners.pair(a, b, identical)
            for a, b, identical in zip(c.a[at], c.b[at], c.identical[at], strict=True)
        ],
        "estimated_diameters": derived.estimated_diameters,
        "form": ["n = 1/2 exactly" if model == "hard-sphere" else "modified-Arrhenius fit"] * size,
        "max_relative_deviation_of_fit": (
            e.max_relative_deviation[at].tolist() if model != "hard-sphere" else [None] * size
        ),
        "estimated_part": [
            f"k_inf of a falloff; k0 and broadening kept from expression {c.partial_ids[i]}"
            if c.forms[i] == "falloff"
            else None
            for i in part
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
        common = {k: v[0] for k, v in columns.items() if v.count(v[0]) == len(v)}
    varying = [k for k, v in columns.items() if k not in common or v.count(common[k]) != len(v)]
    rows = zip(*(columns[k] for k in varying), strict=True)
    own = [dict(zip(varying, values, strict=True)) for values in rows]
    return common, own or [{} for _ in next(iter(columns.values()))]


def _reference(form: str | None, model: str, choice: StericChoice) -> str:
    what = "k_inf from " if form == "falloff" else ""
    return (
        f"{what}collision theory ({model}) x steric factor "
        f"{float(choice.value):.3g} ({choice.rule})"
    )


def _form_fields(partial: _Slim, third_body: bool) -> dict[str, Any]:
    """A falloff estimate keeps the curated k0 and broadening of the expression it completes."""
    e = partial.full
    if e is None or e.form != "falloff":
        return {}
    assert e.A_low is not None
    return {
        "form": "falloff",
        "third_body": third_body,
        "low_pressure": ArrheniusTerm(e.A_low, e.n_low or 0.0, e.Ea_low or 0.0),
        "broadening": Broadening(
            e.broadening or "none", e.Fc, e.N, e.troe_alpha, e.troe_T3, e.troe_T1, e.troe_T2
        ),
    }


def _write(session: Session, rows: EstimateRows, earlier: dict[int, list[int]]) -> None:
    c = rows._c
    # store the diameters estimated for the partners actually used, flagged
    store_estimated_partners(session, [], used=_distinct(c.a, c.b))
    rows.replaced = {i: earlier[i] for i in c.ids if i in earlier}
    remove_expressions(session, [e for i in c.ids for e in earlier.get(i, ())])
    # the provenance every estimate of this run shares is stored once (the run's, taken
    # from its first slice, with each partner's record by name); the rows are written a
    # slice at a time, so that their records, provenance and history are never all in
    # memory at once
    partners = _Partners(c)
    common: dict[str, Any] | None = None
    run_id = None
    ids: list[int] = []
    for start in range(0, len(rows), _WRITE_SLICE):
        part = range(start, min(start + _WRITE_SLICE, len(rows)))
        derived = rows.columns(part)
        common, own = _split_run(_provenance_columns(rows, part, partners, derived), common)
        if run_id is None:
            stored = {**common, PARTNERS: partners.records} if partners.records else common
            run_id = write_run(session, "estimate", stored)
        ids.extend(
            write_expressions(
                session,
                _records(rows, part, own, derived),
                action="estimate",
                history=_history(rows, part),
                run_id=run_id,
            )
        )
    rows.expression_ids = ids


#: Estimates written at a time.
_WRITE_SLICE = 2_000


def _records(
    rows: EstimateRows, part: range, own: list[dict[str, Any]], derived: _SliceColumns
) -> list[ExpressionRecord]:
    c, e = rows._c, rows._e
    assert e is not None
    at = slice(part.start, part.stop)
    A, n, Ea = e.A[at].tolist(), e.n[at].tolist(), e.Ea[at].tolist()
    special = c.special
    references: dict[tuple[int, str | None], str] = {}
    records = []
    for j, (i, provenance) in enumerate(zip(part, own, strict=True)):
        choice, form = c.choices[i], c.forms[i]
        reference = references.get((id(choice), form))
        if reference is None:
            reference = references[(id(choice), form)] = _reference(form, c.model, choice)
        records.append(
            ExpressionRecord(
                reaction_id=c.ids[i],
                origin="collision-estimate",
                A=A[j],
                n=n[j],
                Ea=Ea[j],
                T_min=derived.T_min[j],
                T_max=derived.T_max[j],
                uncertainty_factor=derived.uncertainty_factor[j],
                uncertainty_g=0.0,
                reference=reference,
                provenance=provenance,
                **(_form_fields(special[i], c.third_body[i]) if i in special else {}),
            )
        )
    return records


def _history(rows: EstimateRows, part: range) -> list[tuple[str, dict[str, Any]]]:
    """One history entry per estimate (the write path adds its expression and run)."""
    c = rows._c
    return [
        (
            c.keys[i],
            {
                "model": c.model,
                "steric_factor": float(c.choices[i].value),
                "steric_rule": c.choices[i].rule,
                "replaced": rows.replaced.get(c.ids[i], _NONE_REPLACED),
            },
        )
        for i in part
    ]
