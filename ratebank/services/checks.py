"""Check every expression against physical limits and the curator's conventions.

Flags (each with a stable code):

- ``above-collision-limit``: a bimolecular k(T) above the collision limit
  somewhere in its temperature range (ratio and T given): the plain k, the
  total of a ``sum``, k0 of an ``activated`` channel, and k_inf of a
  ``falloff`` association A + B + M (a bimolecular k at high pressure). The limit is the
  collision rate z(T) of the model the caller chooses (else the one the
  expression's own estimate used, else hard spheres) or, where both partners
  carry a polarizability and an ionization energy, the dispersion-limited
  capture rate if that is larger (long-range attraction lets radicals react
  faster than hard spheres collide).
- ``steric-above-one``: a steric factor above 1, used by an estimate or
  implied by a measured fit (it happens; it needs a reason).
- ``collinear-fit``: a three-parameter fit whose n and Ea are nearly collinear.
- ``fit-scatter``: a weighted fit whose reduced chi-square is improbably far
  above 1 (inconsistent sets or a wrong form) or below it (uncertainties
  overstated).
- ``extrapolation``: the expression that would be exported does not cover the
  temperature range the mechanism will be used over (``t_range``).
- ``estimated-diameter``: the exported estimate rests on an estimated diameter.
- ``nothing-usable``: a reaction with no complete expression.
- ``falloff-not-monotonic``, ``fc-out-of-range``, ``troe-temperature-not-positive``,
  ``sum-ranges-inconsistent``, ``efficiency-unknown-species``, ``efficiency-unused``
  and the note ``no-efficiencies``: what the rate-law forms make checkable
  (:mod:`ratebank.services.form_checks`).
- ``ea-below-reaction-enthalpy``, ``reverse-above-collision-limit``,
  ``directions-disagree``, ``reverse-without-thermochemistry``,
  ``thermo-midpoint-jump``: what species thermochemistry makes checkable
  (:mod:`ratebank.services.thermo_checks`).

A bimolecular expression whose partners lack what the collision model needs
is listed as unchecked, with the reason; a report is clean only when nothing
is flagged and nothing was left unchecked.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.science.arrhenius import modified_arrhenius
from ratebank.science.capture import london_capture_rate_constant
from ratebank.science.collision import collision_limit_ratio, collision_rate
from ratebank.services.form_checks import (
    FORM_CODES,
    NOTE_CODES,
    Finding,
    broadening_findings,
    efficiency_findings,
    monotonic_findings,
    sum_range_findings,
)
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.partners import (
    CollisionPair,
    PairColumns,
    PartnerData,
    check_model,
    collision_pairs,
)
from ratebank.services.selection import Chosen, choose, evaluate
from ratebank.services.thermo import reaction_thermo_inputs
from ratebank.services.thermo_checks import (
    THERMO_CODES,
    direction_findings,
    endothermic_findings,
    midpoint_findings,
    missing_thermo_findings,
    reverse_limit_findings,
)
from ratebank.store import queries
from ratebank.store.batches import expressions_of_batch, reactions_in_batches
from ratebank.store.efficiency_species import stated_efficiencies
from ratebank.store.queries import ExpressionRow, ReactionRow
from ratebank.store.thermo import any_thermo, reverse_rules, stoichiometry, thermo_of

CHECK_CODES = (
    "above-collision-limit",
    "steric-above-one",
    "collinear-fit",
    "fit-scatter",
    "extrapolation",
    "estimated-diameter",
    "nothing-usable",
    *FORM_CODES,
    *NOTE_CODES,
    *THERMO_CODES,
)
#: Range checked for the collision limit when an expression states none [K].
DEFAULT_LIMIT_RANGE = (200.0, 3000.0)


@dataclass(frozen=True)
class Flag:
    key: str
    code: str
    message: str
    expression_id: int | None = None
    value: float | None = None
    temperature: float | None = None


@dataclass(frozen=True)
class Unchecked:
    """An expression the collision limit could not be checked for, and why."""

    key: str
    expression_id: int
    reason: str


@dataclass
class CheckReport:
    flags: list[Flag]
    reactions: int
    expressions: int
    t_range: tuple[float, float] | None
    ignored: list[str] = field(default_factory=list)
    unchecked: list[Unchecked] = field(default_factory=list)
    collision: str | None = None
    #: findings that inform without failing (``no-efficiencies``)
    notes: list[Flag] = field(default_factory=list)

    @property
    def clean(self) -> bool:
        """Nothing flagged, and everything checked."""
        return not self.flags and not self.unchecked


#: Reactions checked at a time when the whole store is checked: the memory of a check is
#: that of a batch, and only the flags are kept.
BATCH = 10_000


@dataclass
class _Found:
    """What the batches of one check have found so far."""

    flags: list[Flag] = field(default_factory=list)
    notes: list[Flag] = field(default_factory=list)
    #: collision limits not checked, and reverse limits not checked (reported in this order)
    unchecked: list[Unchecked] = field(default_factory=list)
    reverse_unchecked: list[Unchecked] = field(default_factory=list)
    reactions: int = 0
    expressions: int = 0
    #: species whose thermochemistry is checked once, at the end
    species: set[int] = field(default_factory=set)


def check_store(
    session: Session,
    *,
    T_range: tuple[float, float] | None = None,
    ignore: list[str] | None = None,
    keys: list[str] | None = None,
    collision: str | None = None,
) -> CheckReport:
    """Run every check; ``ignore`` names codes not to report.

    ``collision`` chooses the collision model of the limit for every
    expression; by default each collision estimate is held to its own model
    and everything else to hard spheres. The whole store is checked
    :data:`BATCH` reactions at a time, in the order they are stored (by id), keeping only
    what is found; what is reported comes by key.
    """
    ignore = list(ignore or [])
    unknown = [c for c in ignore if c not in CHECK_CODES]
    if unknown:
        raise BadInputError(
            f"unknown check {', '.join(unknown)}; the checks are {', '.join(CHECK_CODES)}",
            argument="ignore",
        )
    if T_range is not None and not (0 < T_range[0] < T_range[1]):
        raise BadInputError(
            "T_range needs two temperatures, the lower first, both above 0 K", argument="T_range"
        )
    if collision is not None:
        check_model(collision)
    batches: Iterable[list[ReactionRow]] = (
        [queries.find_reactions(session, keys)] if keys else reactions_in_batches(session, BATCH)
    )
    declared = reverse_rules(session)
    thermo = bool(declared) or any_thermo(session)
    found = _Found()
    for reactions in batches:
        with paused_garbage_collection():  # a batch's rows form no cycles; freed as it ends
            _check_batch(
                session,
                reactions,
                found,
                T_range=T_range,
                collision=collision,
                declared=declared,
                thermo=thermo,
                whole_store=not keys,
            )
    flags = found.flags
    if thermo:
        midpoint = midpoint_findings(list(thermo_of(session, found.species).values()))
        flags.extend(Flag(*f) for f in midpoint)
    flags = [f for f in flags if f.code not in ignore]
    flags.sort(key=lambda f: (f.key, CHECK_CODES.index(f.code), f.expression_id or 0))
    unchecked = sorted(found.unchecked, key=lambda u: u.expression_id)
    reverse_unchecked, notes = found.reverse_unchecked, found.notes
    if not keys:
        # the batches come by id: what is reported by reaction is put by key (a stable
        # sort keeps each reaction's own order)
        reverse_unchecked = sorted(reverse_unchecked, key=_by_key)
        notes = sorted(notes, key=_by_key)
    return CheckReport(
        flags,
        found.reactions,
        found.expressions,
        T_range,
        ignore,
        [*unchecked, *reverse_unchecked],
        collision,
        [n for n in notes if n.code not in ignore],
    )


def _by_key(found: Flag | Unchecked) -> str:
    return found.key


def _check_batch(
    session: Session,
    reactions: list[ReactionRow],
    found: _Found,
    *,
    T_range: tuple[float, float] | None,
    collision: str | None,
    declared: dict[int, str],
    thermo: bool,
    whole_store: bool,
) -> None:
    """Check one batch of reactions and add what is found to ``found``."""
    by_id = {r.id: r for r in reactions}
    ids = list(by_id)
    by_reaction = expressions_of_batch(session, ids)
    expressions = sorted((e for own in by_reaction.values() for e in own), key=lambda e: e.id)
    found.reactions += len(reactions)
    found.expressions += len(expressions)
    chosen, gaps = _chosen(reactions, by_reaction)
    limit_flags, unchecked = _collision_limit_flags(session, expressions, by_id, collision)
    found.unchecked.extend(unchecked)
    found.flags.extend(
        [
            *limit_flags,
            *_expression_flags(expressions, by_id),
            *_gap_flags(gaps),
            *_chosen_flags(chosen, T_range),
            *_form_flags(expressions, by_id),
        ]
    )
    if thermo:
        found.flags.extend(
            _thermochemistry_flags(
                session,
                reactions,
                by_reaction,
                chosen,
                collision,
                found,
                {i: rule for i, rule in declared.items() if i in by_id},
                whole_store,
            )
        )
    efficiency_flags, notes = efficiency_findings(
        reactions, by_reaction, stated_efficiencies(session, ids)
    )
    found.flags.extend(Flag(*f) for f in efficiency_flags)
    found.notes.extend(Flag(*n) for n in notes)


def _chosen(
    reactions: list[ReactionRow], by_reaction: dict[int, list[ExpressionRow]]
) -> tuple[list[Chosen], list[ReactionRow]]:
    """(the exported expression of each reaction that has one, reactions without one), as
    :func:`ratebank.services.selection.chosen_expressions` gives them, from rows read."""
    chosen: list[Chosen] = []
    gaps: list[ReactionRow] = []
    for reaction in reactions:
        choice = choose(by_reaction.get(reaction.id, ()))
        if choice is None:
            gaps.append(reaction)
        else:
            chosen.append(Chosen(reaction, *choice))
    return chosen, gaps


def _association(reaction: ReactionRow) -> bool:
    """A + B + M -> AB + M: written with M, two reactant molecules besides it."""
    return reaction.third_body and reaction.order == 3


def _as_pair(reaction: ReactionRow) -> ReactionRow:
    """The reaction as its colliding pair (an association without its M)."""
    return reaction._replace(order=2, third_body=False) if reaction.third_body else reaction


def _form_flags(expressions: list[ExpressionRow], by_id: dict[int, ReactionRow]) -> list[Flag]:
    """The checks of the rate-law forms (:mod:`.form_checks`)."""
    findings: list[Finding] = [
        *monotonic_findings(expressions, by_id),
        *broadening_findings(expressions, by_id),
        *sum_range_findings(expressions, by_id),
    ]
    return [Flag(*f) for f in findings]


def _thermochemistry_flags(
    session: Session,
    reactions: list[ReactionRow],
    by_reaction: dict[int, list[ExpressionRow]],
    chosen: list[Chosen],
    collision: str | None,
    found: _Found,
    declared: dict[int, str],
    whole_store: bool,
) -> list[Flag]:
    """The checks species thermochemistry makes possible (:mod:`.thermo_checks`), but the
    species' own (:func:`.thermo_checks.midpoint_findings`), made once for the whole check."""
    participants = stoichiometry(session, [r.id for r in reactions])
    found.species.update(p.species_id for ps in participants.values() for p in ps)
    inputs, missing = reaction_thermo_inputs(session, reactions)
    reversible = [c for c in chosen if c.reaction.id in declared]
    limit, not_checked = reverse_limit_findings(
        session, reversible, inputs, collision or "hard-sphere"
    )
    found.reverse_unchecked.extend(Unchecked(*u) for u in not_checked)
    findings = [
        *endothermic_findings(inputs, by_reaction),
        *limit,
        *direction_findings(session, chosen, inputs, set(declared), whole_store=whole_store),
        *missing_thermo_findings([r for r in reactions if r.id in declared], missing),
    ]
    return [Flag(*finding) for finding in findings]


def _model_of(expression: ExpressionRow, chosen: str | None) -> str:
    """The collision model an expression is held to."""
    if chosen is not None:
        return chosen
    own = expression.provenance.get("collision_model")
    return own if expression.origin == "collision-estimate" and own else "hard-sphere"


def _collision_limit_flags(
    session: Session,
    expressions: list[ExpressionRow],
    by_id: dict[int, ReactionRow],
    collision: str | None,
) -> tuple[list[Flag], list[Unchecked]]:
    """k(T) above the collision rate, every complete bimolecular expression at once per model."""
    flags: list[Flag] = []
    unchecked: list[Unchecked] = []
    # an association A + B + M is checked as the pair A + B (its k_inf is bimolecular)
    limited = {r.id: _as_pair(r) for r in by_id.values() if r.bimolecular or _association(r)}
    candidates: dict[str, list[ExpressionRow]] = {}
    for e in expressions:
        if not e.complete or e.reaction_id not in limited:
            continue
        if by_id[e.reaction_id].third_body and e.form != "falloff":
            continue  # a third-body coefficient has no collision limit; k_inf of a fall-off has
        candidates.setdefault(_model_of(e, collision), []).append(e)
    for model, own in candidates.items():
        wanted = {e.reaction_id: limited[e.reaction_id] for e in own}
        pairs = collision_pairs(session, list(wanted.values()), model=model)
        rows = []
        for e in own:
            pair = pairs[e.reaction_id]
            if isinstance(pair, str):
                key = by_id[e.reaction_id].key
                unchecked.append(Unchecked(key, e.id, f"{model} collision limit: {pair}"))
            else:
                rows.append((e, pair))
        if rows:
            flags.extend(_limit_flags(rows, by_id, model))
    return flags, unchecked


def _limit_flags(
    rows: list[tuple[ExpressionRow, CollisionPair]], by_id: dict[int, ReactionRow], model: str
) -> list[Flag]:
    grid_unit = np.geomspace(1.0, 2.0, 40) - 1.0  # 0..1, denser at the low end
    low_default, high_default = DEFAULT_LIMIT_RANGE
    values = np.array(
        [(e.T_min or low_default, e.T_max or high_default, e.A, e.n, e.Ea) for e, _ in rows],
        dtype=float,
    ).reshape(len(rows), 5, 1)
    low, high, A, n, Ea = (values[:, i] for i in range(5))
    T = low + (high - low) * grid_unit
    k = modified_arrhenius(T, A, n, Ea)
    for i, (e, _pair) in enumerate(rows):
        if e.form is not None or e.terms:
            k[i] = evaluate(e, T[i])  # a sum's total, k_inf of a fall-off, k0 of activated
    columns = _pair_columns([pair for _, pair in rows])
    arguments = columns.rate_arguments(model)
    z = collision_rate(T, **{name: _column(v) for name, v in arguments.items()})
    z = np.maximum(z, _capture_rate(T, columns))
    ratio, where = collision_limit_ratio(T, k, z)
    ratio, where = np.atleast_1d(ratio), np.atleast_1d(where)
    # where k/z is flat (an estimate's own model times P), its largest value is a matter of
    # rounding, which the shape of the batch's arrays changes: the lowest temperature
    # within 1e-9 of it is reported, whatever the batch
    ratios = k / z
    near = ratios >= ratio[:, None] * (1.0 - 1e-9)
    where = np.take_along_axis(T, np.argmax(near, axis=1)[:, None], axis=1)[:, 0]
    # an estimate made with P = 1 is the limit itself: within rounding, and within the
    # deviation its modified-Arrhenius fit recorded, it is not a violation
    deviation = np.array(
        [e.provenance.get("max_relative_deviation_of_fit") or 0.0 for e, _ in rows], dtype=float
    )
    flags = []
    for i in np.flatnonzero(ratio > 1.0 + 1e-9 + deviation).tolist():
        e, r, t = rows[i][0], ratio[i], where[i]
        flags.append(
            Flag(
                by_id[e.reaction_id].key,
                "above-collision-limit",
                f"{_limited_part(e)}expression {e.id} ({e.origin}) is {r:.3g} times the "
                "collision limit "
                f"({model}, or dispersion capture where larger) at {t:.4g} K",
                e.id,
                float(r),
                float(t),
            )
        )
    return flags


def _pair_columns(pairs: list[CollisionPair]) -> PairColumns:
    """:meth:`PairColumns.of` the pairs, read once per partner: the pairs of a batch share
    their partners' objects (:func:`ratebank.services.partners.collision_pairs`), so each
    partner's values are taken once and spread to its pairs by index."""
    index: dict[int, int] = {}
    partners: list[PartnerData] = []

    def at(partner: PartnerData) -> int:
        i = index.get(id(partner))
        if i is None:
            i = index[id(partner)] = len(partners)
            partners.append(partner)
        return i

    a = np.array([at(pair.a) for pair in pairs], dtype=np.intp)
    b = np.array([at(pair.b) for pair in pairs], dtype=np.intp)
    one = PairColumns.of([CollisionPair(0, "", p, p, False) for p in partners])
    return PairColumns(
        one.diameter_a[a],
        one.diameter_a[b],
        one.molar_mass_a[a],
        one.molar_mass_a[b],
        one.well_depth_a[a],
        one.well_depth_a[b],
        np.array([pair.identical for pair in pairs], dtype=bool),
        one.polarizability_a[a],
        one.polarizability_a[b],
        one.ionization_energy_a[a],
        one.ionization_energy_a[b],
    )


def _limited_part(e: ExpressionRow) -> str:
    """Which k of an expression is held to the collision limit, as a message prefix."""
    return {"falloff": "k_inf of ", "activated": "k0 of ", "sum": "the summed k of "}.get(
        e.form or "", ""
    )


def _capture_rate(T: np.ndarray, columns: PairColumns) -> np.ndarray:
    """The dispersion-limited capture rate on each row's grid (0 where data are missing)."""
    capture = np.zeros_like(T)
    rows = columns.has_capture_data
    if rows.any():
        capture[rows] = london_capture_rate_constant(
            T[rows],
            columns.polarizability_a[rows, None],
            columns.polarizability_b[rows, None],
            columns.ionization_energy_a[rows, None],
            columns.ionization_energy_b[rows, None],
            columns.molar_mass_a[rows, None],
            columns.molar_mass_b[rows, None],
            identical=columns.identical[rows, None],
        )
    return capture


def _column(value: object) -> object:
    """A per-reaction array as a column that broadcasts against a (reactions, grid) array."""
    return value[:, None] if isinstance(value, np.ndarray) else value


def _expression_flags(
    expressions: list[ExpressionRow], by_id: dict[int, ReactionRow]
) -> list[Flag]:
    flags = []
    for e in expressions:
        key = by_id[e.reaction_id].key
        steric = e.provenance.get("steric_factor")
        if steric is not None and steric > 1.0:
            what = "is estimated with" if e.origin == "collision-estimate" else "implies"
            flags.append(
                Flag(
                    key,
                    "steric-above-one",
                    f"expression {e.id} ({e.origin}) {what} a steric factor of {steric:.3g} > 1",
                    e.id,
                    float(steric),
                )
            )
        warnings = e.provenance.get("warnings") or [] if e.origin == "measured-fit" else []
        if not warnings:
            continue
        flags.extend(_scatter_flags(key, e, warnings))
        if "collinear-n-ea" in warnings:
            flags.append(
                Flag(
                    key,
                    "collinear-fit",
                    f"fit {e.id}: n and Ea are nearly collinear over {e.T_min:.4g}-{e.T_max:.4g} K;"
                    " refit with the two-parameter arrhenius form",
                    e.id,
                )
            )
    return flags


_SCATTER_FINDINGS = {
    "sets-disagree": "its pooled sets disagree beyond their stated uncertainties "
    "(between-set factor {between:.3g}, included in its uncertainty)",
    "scatter-above-stated": "reduced chi-square {chi:.3g} is improbably far above 1: the sets "
    "disagree or the form is wrong",
    "scatter-below-stated": "reduced chi-square {chi:.3g} is improbably far below 1: the "
    "stated uncertainties look overstated",
}


def _scatter_flags(key: str, e: ExpressionRow, warnings: list[str]) -> list[Flag]:
    chi = e.provenance.get("reduced_chi_square") or float("nan")
    between = math.exp(math.sqrt(e.provenance.get("between_set_variance_ln_k") or 0.0))
    return [
        Flag(
            key,
            "fit-scatter",
            f"fit {e.id}: " + finding.format(chi=chi, between=between),
            e.id,
            between if code == "sets-disagree" else chi,
        )
        for code, finding in _SCATTER_FINDINGS.items()
        if code in warnings
    ]


def _gap_flags(gaps: list[ReactionRow]) -> list[Flag]:
    return [
        Flag(
            reaction.key,
            "nothing-usable",
            "no complete expression (no fit, no literature A, no estimate)",
        )
        for reaction in gaps
    ]


def _chosen_flags(chosen: list[Chosen], T_range: tuple[float, float] | None) -> list[Flag]:
    flags = []
    for choice in chosen:
        e = choice.expression
        key = choice.reaction.key
        estimated = e.provenance.get("estimated_diameters") or []
        if e.origin == "collision-estimate" and estimated:
            flags.append(
                Flag(
                    key,
                    "estimated-diameter",
                    f"the exported estimate {e.id} uses estimated diameters of "
                    f"{', '.join(estimated)}",
                    e.id,
                )
            )
        if T_range is not None:
            flag = _extrapolation_flag(key, e, T_range)
            if flag is not None:
                flags.append(flag)
    return flags


def _extrapolation_flag(key: str, e: ExpressionRow, T_range: tuple[float, float]) -> Flag | None:
    low, high = T_range
    if e.T_min is None or e.T_max is None:
        return Flag(
            key,
            "extrapolation",
            f"the exported expression {e.id} ({e.origin}) states no valid range; "
            f"it would be used over {low:g}-{high:g} K",
            e.id,
        )
    if e.T_min > low * (1 + 1e-9) or e.T_max < high * (1 - 1e-9):
        return Flag(
            key,
            "extrapolation",
            f"the exported expression {e.id} ({e.origin}) holds over "
            f"{e.T_min:.4g}-{e.T_max:.4g} K, but would be used over {low:g}-{high:g} K",
            e.id,
        )
    return None
