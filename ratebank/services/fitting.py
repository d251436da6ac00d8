"""Fit the measured k(T) sets of reactions and store each fit as an expression.

All sets of a reaction are pooled into one weighted least-squares fit in ln k,
every reaction of the store in one vectorized pass
(:func:`ratebank.science.arrhenius.fit_groups`). The service reads the points,
makes that one science call, and writes the fits through the store's one
expression write path.

Pressures. The points of a reaction are "at different pressures" when their
stated pressures differ by more than :data:`PRESSURE_FACTOR`. An Arrhenius fit
treats k as independent of pressure, so such points are never pooled silently:

- a reaction written with M (its k depends on pressure by what it is) is refused,
  naming the pressures, unless ``pool_pressures`` is given; fit it with the
  fall-off form instead (:mod:`ratebank.services.falloff_fit`);
- any other reaction is fitted, and the fit's warnings and its stored provenance
  (``pressures``) say that points at different pressures were pooled.

Points without a pressure take no part in the rule.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import pairwise
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank.science.arrhenius import GroupFits, fit_groups
from ratebank.science.collision import collision_rate, steric_factor_of_expression
from ratebank.science.uncertainty import (
    panel_factor_from_covariance,
    uncertainty_factor_from_covariance,
)
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.partners import CollisionPair, PairColumns, collision_pairs
from ratebank.services.progress import NoProgress, Progress
from ratebank.store import queries, runs
from ratebank.store.expressions import ExpressionRecord, write_expressions
from ratebank.store.points import PointColumns
from ratebank.store.points import points as points_of
from ratebank.store.queries import ExpressionRow, ReactionRow

FORMS = ("arrhenius", "modified", "auto")
#: Temperatures per fit at which f(T) is evaluated for its smallest and largest value.
_FACTOR_GRID = 25
#: Pressures of one reaction's points that differ by more than this factor are different.
PRESSURE_FACTOR = 2.0
_BAR = 1.0e5


@dataclass
class FitRow:
    """One reaction's fit (SI units)."""

    key: str
    equation: str
    order: int
    status: str  # "stored", "unchanged" or "failed"
    message: str
    form: str | None = None
    A: float | None = None
    n: float | None = None
    Ea: float | None = None
    T_min: float | None = None
    T_max: float | None = None
    n_points: int = 0
    n_sets: int = 0
    reduced_chi_square: float | None = None
    uncertainty_factor_min: float | None = None
    uncertainty_factor_max: float | None = None
    #: f(298 K) and g [K] of the panels' form covering the fit's band over its range
    uncertainty_f298: float | None = None
    uncertainty_g: float | None = None
    steric_factor: float | None = None
    steric_note: str | None = None
    warnings: list[str] = field(default_factory=list)
    expression_id: int | None = None


@dataclass
class FitReport:
    rows: list[FitRow]

    @property
    def stored(self) -> int:
        return sum(1 for r in self.rows if r.status == "stored")

    @property
    def failed(self) -> int:
        return sum(1 for r in self.rows if r.status == "failed")


@paused_garbage_collection()
def fit_reactions(
    session: Session,
    keys: list[str] | None = None,
    *,
    form: str = "auto",
    fixed_n: float | None = None,
    significance: float = 0.05,
    pool_pressures: bool = False,
    progress: Progress | None = None,
) -> FitReport:
    """Fit the measured sets of the named reactions (default: every measured one).

    ``form`` is ``arrhenius`` (n = 0), ``modified`` (A, n, Ea) or ``auto``
    (the three-parameter form only when the data support it); ``fixed_n``
    fits A and Ea with n held at the given value. A fit identical to the
    reaction's newest stored fit is not stored again. Points at different
    pressures follow the rule of the module docstring; ``pool_pressures`` fits a
    reaction written with M across them too (said in its warnings and provenance).
    """
    asked = queries.find_reactions(session, keys) if keys else None
    points = points_of(session, [r.id for r in asked] if asked else None)
    spreads = _pressure_spreads(points)
    refused = [] if pool_pressures else _refused_for_pressure(session, spreads)
    if refused:
        points = _without_reactions(points, [r.id for r, _ in refused])
    fits = fit_groups(
        points.T,
        points.k,
        points.relative_uncertainty,
        points.reaction_id,
        sets=points.set_id,
        systematic=points.systematic_uncertainty,
        form=form,
        fixed_n=fixed_n,
        significance=significance,
    )
    reactions = {r.id: r for r in asked or queries.reactions(session, ids=fits.groups.tolist())}
    skipped = {r.id for r, _ in refused}
    fitted = set(fits.groups.tolist())
    rows = [_without_points(r) for r in asked or () if r.id not in fitted and r.id not in skipped]
    rows += [_pressure_refusal(r, spreads[r.id]) for r, _ in refused]
    if len(fits):
        rows += _store_fits(
            session, reactions, points, fits, fixed_n, spreads, progress or NoProgress()
        )
    rows.sort(key=lambda r: r.key)
    return FitReport(rows)


@dataclass(frozen=True)
class PressureSpread:
    """The stated pressures of one reaction's points [Pa]."""

    low: float
    high: float
    count: int  # distinct pressures

    @property
    def different(self) -> bool:
        return self.high > PRESSURE_FACTOR * self.low

    def describe(self) -> str:
        return f"{self.count} pressures from {self.low / _BAR:.3g} to {self.high / _BAR:.3g} bar"

    def as_record(self, pooled: bool) -> dict[str, Any]:
        return {
            "min_Pa": self.low,
            "max_Pa": self.high,
            "distinct": self.count,
            "different_above_factor": PRESSURE_FACTOR,
            "pooled": pooled,
        }


def _pressure_spreads(points: PointColumns) -> dict[int, PressureSpread]:
    """The pressures stated for each reaction's points (reactions with none are left out)."""
    known = np.isfinite(points.pressure)
    if not known.any():
        return {}
    rid, p = points.reaction_id[known], points.pressure[known]
    order = np.lexsort((p, rid))
    rid, p = rid[order], p[order]
    starts = np.flatnonzero(np.concatenate(([True], rid[1:] != rid[:-1])))
    low, high = np.minimum.reduceat(p, starts), np.maximum.reduceat(p, starts)
    new_value = np.concatenate(([True], (rid[1:] != rid[:-1]) | (p[1:] != p[:-1])))
    counts = np.add.reduceat(new_value.astype(np.int64), starts)
    return {
        r: PressureSpread(lo, hi, n)
        for r, lo, hi, n in zip(
            rid[starts].tolist(), low.tolist(), high.tolist(), counts.tolist(), strict=True
        )
    }


def _refused_for_pressure(
    session: Session, spreads: dict[int, PressureSpread]
) -> list[tuple[ReactionRow, PressureSpread]]:
    """Reactions written with M whose points lie at different pressures."""
    different = [rid for rid, spread in spreads.items() if spread.different]
    if not different:
        return []
    return [(r, spreads[r.id]) for r in queries.reactions(session, ids=different) if r.third_body]


def _without_reactions(points: PointColumns, reaction_ids: list[int]) -> PointColumns:
    keep = ~np.isin(points.reaction_id, reaction_ids)
    return PointColumns(
        *(getattr(points, name)[keep] for name in PointColumns.__dataclass_fields__)
    )


def _pressure_refusal(reaction: ReactionRow, spread: PressureSpread) -> FitRow:
    return FitRow(
        reaction.key,
        reaction.equation,
        reaction.order,
        "failed",
        f"points at {spread.describe()}; a reaction written with M depends on pressure: fit "
        "the falloff form, or pool the pressures in an Arrhenius fit on purpose",
    )


def _without_points(reaction: ReactionRow) -> FitRow:
    return FitRow(
        reaction.key, reaction.equation, reaction.order, "failed", "no measured points to fit"
    )


def _store_fits(
    session: Session,
    reactions: dict[int, ReactionRow],
    points: PointColumns,
    fits: GroupFits,
    fixed_n: float | None,
    spreads: dict[int, PressureSpread],
    progress: Progress,
) -> list[FitRow]:
    rids = fits.groups.tolist()
    set_ids = _set_ids(points)
    pairs = collision_pairs(session, [reactions[r] for r in rids])
    derived = _Derived(fits, pairs)
    previous = queries.newest_fits(session, rids)
    labels = queries.set_labels(session, [s for sets in set_ids.values() for s in sets])
    progress.start("storing fits", len(rids))
    rows: list[FitRow] = []
    records: list[ExpressionRecord] = []
    history: list[tuple[str, dict[str, Any]]] = []
    stored: list[FitRow] = []
    run = _Run(fixed_n)
    columns = _FitColumns(fits)
    chosen = [reactions[rid] for rid in rids]
    advance = progress.advance
    for i in sorted(range(len(rids)), key=[r.key for r in chosen].__getitem__):
        advance()
        rid = rids[i]
        sets = set_ids[rid]
        pair = pairs.get(rid)
        row = _fit_row(chosen[i], columns, i, derived, len(sets), pair)
        rows.append(row)
        if row.status == "failed":
            continue
        provenance = run.own(columns, i, row, sets, pair)
        spread = spreads.get(rid)
        if spread is not None:
            _note_pressures(row, provenance, spread)
        old = previous.get(rid)
        if old is not None and _same_fit(old, row, fixed_n, provenance):
            row.status, row.expression_id = "unchanged", old.id
            continue
        row.status = "stored"
        records.append(_record(rid, row, provenance, [labels[s] for s in sets]))
        history.append((row.key, {"form": row.form, "points": row.n_points, "sets": row.n_sets}))
        stored.append(row)
    ids = write_expressions(session, records, action="fit", history=history, run=run.common())
    for row, new_id in zip(stored, ids, strict=True):
        row.expression_id = new_id
    return rows


def _set_ids(points: PointColumns) -> dict[int, list[int]]:
    """The sorted ids of the sets behind each reaction's points."""
    # a set belongs to one reaction, so the distinct set ids give the pairs
    sets, first = np.unique(points.set_id, return_index=True)
    owners = points.reaction_id[first]
    order = np.lexsort((sets, owners))
    owners, sets = owners[order].tolist(), sets[order].tolist()
    bounds = [0, *(np.flatnonzero(np.diff(owners)) + 1).tolist(), len(owners)]
    return {owners[a]: sets[a:b] for a, b in pairwise(bounds) if b > a}


class _Derived:
    """What each fit implies, computed for all fits at once: f(T) range and steric factor."""

    def __init__(self, fits: GroupFits, pairs: dict[int, CollisionPair | str]):
        self.pairs = pairs
        self.factor_range = self._factor_ranges(fits)
        self.panel = self._panel_factors(fits)
        self.steric = self._steric_factors(fits)

    @staticmethod
    def _factor_ranges(fits: GroupFits) -> list[tuple[float | None, float | None]]:
        """(smallest, largest) f(T) over each fit's range, from its covariance."""
        ok = fits.ok
        ranges: list[tuple[float | None, float | None]] = [(None, None)] * len(fits)
        if not ok.any():
            return ranges
        fraction = np.linspace(0.0, 1.0, _FACTOR_GRID)
        low, high = fits.T_min[ok], fits.T_max[ok]
        grid = np.exp(np.log(low)[:, None] + np.log(high / low)[:, None] * fraction)
        factor = uncertainty_factor_from_covariance(grid, fits.covariance[ok])
        finite = np.isfinite(factor).all(axis=1)
        for row, good, lo, hi in zip(
            np.flatnonzero(ok).tolist(),
            finite.tolist(),
            factor.min(axis=1).tolist(),
            factor.max(axis=1).tolist(),
            strict=True,
        ):
            if good:
                ranges[row] = (lo, hi)
        return ranges

    @staticmethod
    def _panel_factors(fits: GroupFits) -> list[tuple[float | None, float | None]]:
        """(f(298), g) of each fit: the panels' form covering its band over its range."""
        panel: list[tuple[float | None, float | None]] = [(None, None)] * len(fits)
        ok = np.flatnonzero(fits.ok & np.isfinite(fits.covariance).all(axis=(1, 2)))
        if not ok.size:
            return panel
        found = panel_factor_from_covariance(fits.covariance[ok], fits.T_min[ok], fits.T_max[ok])
        f298 = np.atleast_1d(found.f298).tolist()
        g = np.atleast_1d(found.g).tolist()
        for row, factor, slope in zip(ok.tolist(), f298, g, strict=True):
            panel[row] = (factor, slope)
        return panel

    def _steric_factors(self, fits: GroupFits) -> list[float | None]:
        """P implied by each fit at the geometric-mean T of its data (hard spheres)."""
        implied: list[float | None] = [None] * len(fits)
        pairs = [self.pairs.get(rid) for rid in fits.groups.tolist()]
        rows = [
            i
            for i, (fitted, pair) in enumerate(zip(fits.ok.tolist(), pairs, strict=True))
            if fitted and isinstance(pair, CollisionPair)
        ]
        if not rows:
            return implied
        columns = PairColumns.of([pairs[i] for i in rows])
        T = fits.mean_T[rows]
        z = collision_rate(T, **columns.rate_arguments("hard-sphere"))
        steric = steric_factor_of_expression(T, fits.A[rows], fits.n[rows], fits.Ea[rows], z)
        for i, p in zip(rows, np.atleast_1d(steric).tolist(), strict=True):
            implied[i] = p
        return implied


class _FitColumns:
    """The fits' columns as plain Python lists, made once: the per-fit rows and provenance
    records below read them instead of indexing numpy arrays value by value."""

    A: list[float]
    n: list[float]
    Ea: list[float]
    T_min: list[float]
    T_max: list[float]
    T_ref: list[float]
    mean_T: list[float]

    def __init__(self, fits: GroupFits):
        self.groups = fits.groups.tolist()
        self.ok = fits.ok.tolist()
        self.status = [str(s) for s in fits.status.tolist()]
        self.reason = [str(s) for s in fits.reason.tolist()]
        self.form = [str(s) for s in fits.form.tolist()]
        self.weighted = fits.weighted.tolist()
        self.n_points = fits.n_points.tolist()
        for name in ("A", "n", "Ea", "T_min", "T_max", "T_ref", "mean_T"):
            setattr(self, name, getattr(fits, name).tolist())
        self.covariance_scale = fits.covariance_scale.tolist()
        self.between_set_variance = fits.between_set_variance.tolist()
        chi = fits.reduced_chi_square
        #: the reduced chi-square where finite, else None
        self.reduced_chi_square = np.where(np.isfinite(chi), chi, None).tolist()
        covariance = fits.covariance
        self.covariance = np.where(np.isfinite(covariance), covariance, 0.0).tolist()
        self.warnings = fits.warnings.tolist()


def _fit_row(
    reaction: ReactionRow,
    fits: _FitColumns,
    i: int,
    derived: _Derived,
    n_sets: int,
    pair: CollisionPair | str | None,
) -> FitRow:
    """The report row of one fit (``pair``: the reaction's collision pair or why none)."""
    if not fits.ok[i]:
        return FitRow(
            reaction.key,
            reaction.equation,
            reaction.order,
            "failed",
            fits.status[i],
            n_points=fits.n_points[i],
            n_sets=n_sets,
        )
    steric = note = None
    if isinstance(pair, str):
        note = pair
    elif pair is not None:
        steric = derived.steric[i]
        if pair.uses_estimated_diameter:
            note = "uses an estimated diameter"
    low, high = derived.factor_range[i]
    f298, g = derived.panel[i]
    return FitRow(
        reaction.key,
        reaction.equation,
        reaction.order,
        "fitted",
        fits.reason[i],
        fits.form[i],
        fits.A[i],
        fits.n[i],
        fits.Ea[i],
        fits.T_min[i],
        fits.T_max[i],
        fits.n_points[i],
        n_sets,
        fits.reduced_chi_square[i],
        low,
        high,
        f298,
        g,
        steric,
        note,
        [w.message for w in fits.warnings[i]],
    )


_WEIGHTED_METHOD = (
    "weighted linear least squares in ln k; sets pooled with a random offset each "
    "(DerSimonian-Laird between-set variance); covariance scaled by max(1, reduced chi-square)"
)
_UNWEIGHTED_METHOD = "unweighted least squares in ln k (covariance scaled by reduced chi-square)"


#: The provenance fields that describe the run rather than one reaction's fit.
_RUN_FIELDS = (
    "method",
    "form",
    "form_reason",
    "fixed_n",
    "covariance_parameters",
    "absolute_sigma",
    "steric_factor_model",
)
_COVARIANCE_PARAMETERS = ["ln A", "n", "Ea [J/mol]"]


class _Run:
    """The provenance of one fit run, split into the part its fits share and each fit's own.

    The run's part (:data:`_RUN_FIELDS`, with the first fit's values, and the record of
    each collision partner by species name) is stored once, in the run
    (:mod:`ratebank.store.runs`); each fit keeps what is its own (its sets, covariance,
    chi-square, steric factor, the names of its partners) and any run field whose value
    differs from the run's (an unweighted fit, a form chosen by ``auto``). The run's part
    updated by a fit's own is the whole provenance the readers see.
    """

    def __init__(self, fixed_n: float | None):
        self.fixed_n = fixed_n
        self.shared: dict[str, Any] | None = None
        self._shared_values: tuple[Any, ...] = ()
        self.partners: dict[str, dict[str, object]] = {}
        self._partner_of: dict[str, object] = {}
        #: each partner object's verdict: may it be named (its record is the run's)?
        self._named: dict[int, bool] = {}

    def own(
        self,
        fits: _FitColumns,
        i: int,
        row: FitRow,
        set_ids: list[int],
        pair: CollisionPair | str | None,
    ) -> dict[str, Any]:
        """The fit's own provenance (the run's part is taken from the first fit)."""
        steric = row.steric_factor
        weighted = fits.weighted[i]
        shared = (
            _WEIGHTED_METHOD if weighted else _UNWEIGHTED_METHOD,
            row.form,
            row.message,
            self.fixed_n,
            _COVARIANCE_PARAMETERS,
            weighted,
            "hard-sphere" if steric is not None else None,
        )
        if self.shared is None:
            self.shared = dict(zip(_RUN_FIELDS, shared, strict=True))
            self._shared_values = shared
        own = {
            "T_ref": fits.T_ref[i],
            "covariance": fits.covariance[i],
            "reduced_chi_square": row.reduced_chi_square,
            "covariance_scale": fits.covariance_scale[i],
            "between_set_variance_ln_k": fits.between_set_variance[i],
            "n_points": row.n_points,
            "n_sets": row.n_sets,
            "set_ids": set_ids,
            "warnings": [w.code for w in fits.warnings[i]],
            "steric_factor": steric,
            "steric_factor_T_K": fits.mean_T[i] if steric is not None else None,
            "partners": self._pair(pair) if isinstance(pair, CollisionPair) else None,
        }
        if shared == self._shared_values:
            return own
        differing = {
            name: value
            for name, value in zip(_RUN_FIELDS, shared, strict=True)
            if self.shared[name] != value
        }
        return {**differing, **own}

    def _pair(self, pair: CollisionPair) -> dict[str, object]:
        """The pair naming its partners, whose records the run keeps once by name."""
        names: list[object] = []
        for partner in (pair.a, pair.b):
            # a partner object is judged once (the partner objects are shared by every
            # reaction of their species and stay alive in the run's pairs)
            named = self._named.get(id(partner))
            if named is None:
                named = self._named[id(partner)] = self._judge(partner)
            if not named:
                return pair.as_record()  # a different record under one name: kept whole
            names.append(partner.name)
        return {"identical": pair.identical, "a": names[0], "b": names[1]}

    def _judge(self, partner: Any) -> bool:
        """Whether the run's record under the partner's name is its own (kept if new)."""
        name = partner.name
        known = self._partner_of.get(name)
        if known is None:
            self._partner_of[name] = partner
            self.partners[name] = partner.as_record()
            return True
        return known is partner or self.partners[name] == partner.as_record()

    def common(self) -> dict[str, Any] | None:
        """What the run's fits share, as the run stores it (None before any fit)."""
        if self.shared is None:
            return None
        return {**self.shared, runs.PARTNERS: self.partners} if self.partners else self.shared


def _note_pressures(row: FitRow, provenance: dict[str, Any], spread: PressureSpread | None) -> None:
    """Record the pressures of the points; say so when different ones were pooled."""
    if spread is None:
        return
    provenance["pressures"] = spread.as_record(pooled=spread.different)
    if spread.different:
        row.warnings.append(
            f"points at {spread.describe()} pooled as if k did not depend on pressure"
        )
        provenance["warnings"] = [*provenance["warnings"], "pressures-pooled"]


def _same_fit(
    previous: ExpressionRow, row: FitRow, fixed_n: float | None, provenance: dict[str, Any]
) -> bool:
    old = previous.provenance
    return (
        old.get("set_ids") == provenance["set_ids"]
        and old.get("form") == row.form
        and old.get("fixed_n") == fixed_n
        and old.get("n_points") == provenance["n_points"]
        and previous.A is not None
        and abs(previous.A - (row.A or 0.0)) <= 1e-12 * abs(previous.A)
        and abs(previous.Ea - (row.Ea or 0.0)) <= 1e-9 * max(1.0, abs(previous.Ea))
    )


def _record(
    reaction_id: int, row: FitRow, provenance: dict[str, Any], references: list[str]
) -> ExpressionRecord:
    return ExpressionRecord(
        reaction_id=reaction_id,
        origin="measured-fit",
        A=row.A,
        n=row.n or 0.0,
        Ea=row.Ea or 0.0,
        T_min=row.T_min,
        T_max=row.T_max,
        uncertainty_factor=row.uncertainty_f298,
        uncertainty_g=row.uncertainty_g,
        reference="; ".join(references),
        provenance=provenance,
    )
