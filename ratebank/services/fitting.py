"""Fit the measured k(T) sets of reactions and store each fit as an expression.

All sets of a reaction are pooled into one weighted least-squares fit in ln k
(``ratebank.science.arrhenius``). Every reaction of the store is fitted in one
vectorized pass. A reaction whose points all carry an uncertainty is fitted
with those weights (absolute covariance); otherwise with unit weights, the
covariance then scaled by the reduced chi-square.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, NamedTuple

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.errors import FitError, RatebankError
from ratebank.services.curate import find_reaction
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.progress import NoProgress, Progress
from ratebank.store import audit
from ratebank.store.bulk import (
    EXPRESSION_COLUMNS,
    db_timestamp,
    fetch_all,
    fetch_in,
    insert_returning_ids,
    json_adapter,
)
from ratebank.store.models import MeasurementSet, Point

FORMS = ("arrhenius", "modified", "auto")


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


def _points(session: Session, reaction_ids: list[int] | None):  # type: ignore[no-untyped-def]
    import numpy as np

    query = (
        select(
            MeasurementSet.reaction_id,
            Point.set_id,
            Point.temperature,
            Point.rate_constant,
            Point.relative_uncertainty,
        )
        .join(MeasurementSet, MeasurementSet.id == Point.set_id)
        .order_by(MeasurementSet.reaction_id, Point.set_id, Point.id)
    )
    if reaction_ids is not None:
        query = query.where(MeasurementSet.reaction_id.in_(reaction_ids))
    rows = fetch_all(session, query)  # ids only: safe to inline
    if not rows:
        empty = np.zeros(0)
        return empty.astype(np.int64), empty.astype(np.int64), empty, empty, empty
    reaction, set_id, T, k, u = zip(*rows, strict=True)
    u_array = np.array(u, dtype=float)  # None becomes NaN
    return (
        np.asarray(reaction, dtype=np.int64),
        np.asarray(set_id, dtype=np.int64),
        np.asarray(T, dtype=float),
        np.asarray(k, dtype=float),
        u_array,
    )


@paused_garbage_collection()
def fit_reactions(
    session: Session,
    keys: list[str] | None = None,
    *,
    form: str = "auto",
    fixed_n: float | None = None,
    significance: float = 0.05,
    progress: Progress | None = None,
) -> FitReport:
    """Fit the measured sets of the named reactions (default: every measured one).

    ``form`` is ``arrhenius`` (n = 0), ``modified`` (A, n, Ea) or ``auto``
    (the three-parameter form only when the data support it, by the F-test of
    :func:`ratebank.science.arrhenius.compare_forms_batch`); ``fixed_n`` fits
    A and Ea with n held at the given value. A fit identical to the reaction's
    newest stored fit is not stored again.
    """
    import numpy as np

    from ratebank.science import arrhenius

    if form not in FORMS:
        raise RatebankError(f"unknown form {form!r}; expected one of {', '.join(FORMS)}")
    if fixed_n is not None and not np.isfinite(fixed_n):
        raise RatebankError("--fixed-n must be a finite number")
    if keys:
        reactions = [find_reaction(session, key) for key in keys]
        ids: list[int] | None = [r.id for r in reactions]
    else:
        ids = None
    progress = progress or NoProgress()
    reaction_ids, set_ids, T, k, u = _points(session, ids)
    if keys:
        by_id = {r.id: r for r in reactions}
    else:
        by_id = _reaction_rows(session, np.unique(reaction_ids).tolist())
    rows: list[FitRow] = []
    if keys:
        for reaction in reactions:
            if reaction.id not in set(reaction_ids.tolist()):
                rows.append(
                    FitRow(
                        reaction.key,
                        reaction.equation,
                        reaction.reaction_order,
                        "failed",
                        "no measured points to fit",
                    )
                )
    if T.size == 0:
        return FitReport(rows)

    # Weighted where every point of the reaction states its uncertainty.
    has_u = ~np.isnan(u)
    _, inverse = np.unique(reaction_ids, return_inverse=True)
    all_u = np.bincount(inverse, weights=~has_u) == 0
    weighted_point = all_u[inverse]

    results: dict[int, dict[str, Any]] = {}
    for weighted in (True, False):
        mask = weighted_point == weighted
        if not mask.any():
            continue
        sigma = u[mask] if weighted else None
        if fixed_n is not None:
            two = three = arrhenius.fit_rate_constants_batch(
                T[mask], k[mask], sigma, reaction_ids[mask], form="fixed-n", fixed_n=fixed_n
            )
            chosen = np.zeros(len(two), dtype=bool)
            reasons = np.full(len(two), f"n fixed at {fixed_n:g} by the user", dtype=object)
        elif form == "auto":
            choice = arrhenius.compare_forms_batch(
                T[mask], k[mask], sigma, reaction_ids[mask], significance=significance
            )
            two, three = choice.two, choice.three
            chosen = choice.supported
            reasons = choice.reason
        else:
            two = three = arrhenius.fit_rate_constants_batch(
                T[mask], k[mask], sigma, reaction_ids[mask], form=form
            )
            chosen = np.zeros(len(two), dtype=bool)
            reasons = np.full(len(two), f"the {form} form was asked for", dtype=object)
        set_lists: dict[int, list[int]] = {}
        for rid, sid in zip(reaction_ids[mask].tolist(), set_ids[mask].tolist(), strict=True):
            lst = set_lists.setdefault(rid, [])
            if not lst or lst[-1] != sid:
                lst.append(sid)
        # geometric-mean temperature of each group's data, in the batch's group order
        log_mean_T = np.bincount(
            two.group_index, weights=np.log(T[mask]), minlength=len(two)
        ) / np.maximum(two.n_points, 1)
        for i, rid in enumerate(two.groups.tolist()):
            batch = three if chosen[i] else two
            results[rid] = {
                "batch": batch,
                "row": i,
                "reason": str(reasons[i]),
                "weighted": weighted,
                "sets": sorted(set(set_lists.get(rid, []))),
                "t_mean": float(np.exp(log_mean_T[i])),
            }

    progress.start("storing fits", len(results))
    newest_fit = _newest_fits(session, list(results))
    from ratebank.services.partners import collision_pairs

    pairs = collision_pairs(session, [by_id[rid] for rid in results])
    steric_of = _implied_steric_factors(results, pairs)
    factors_of = _uncertainty_factor_ranges(results)
    references = _references(session, [sid for info in results.values() for sid in info["sets"]])
    author = session.info.get("author")
    inserts: list[dict[str, Any]] = []
    pending: list[FitRow] = []
    listed: dict[int, dict[str, list[Any]]] = {}
    partner_records: dict[int, dict[str, object]] = {}  # one record per species, shared
    for rid in sorted(results, key=lambda r: by_id[r].key):
        info = results[rid]
        reaction = by_id[rid]
        batch, i = info["batch"], info["row"]
        # the batch's arrays as lists, once: numpy scalar indexing per row is slow
        arrays = listed.get(id(batch))
        if arrays is None:
            arrays = listed[id(batch)] = _listed(batch)
        row = FitRow(reaction.key, reaction.equation, reaction.reaction_order, "failed", "")
        row.n_points = arrays["n_points"][i]
        row.n_sets = len(info["sets"])
        if not arrays["ok"][i]:
            row.message = str(batch.status[i])
            rows.append(row)
            continue
        warnings = batch.fit_warnings(i)
        row.form = batch.form
        row.A, row.n, row.Ea = arrays["A"][i], arrays["n"][i], arrays["Ea"][i]
        row.T_min, row.T_max = arrays["T_min"][i], arrays["T_max"][i]
        row.reduced_chi_square = _finite(arrays["reduced_chi_square"][i])
        row.uncertainty_factor_min, row.uncertainty_factor_max = factors_of.get(rid, (None, None))
        row.warnings = [w.message for w in warnings]
        row.message = info["reason"]
        pair = pairs.get(rid)
        steric, t_mean = steric_of.get(rid, (None, None))
        partners = None
        if isinstance(pair, str):
            row.steric_note = pair
        elif pair is not None:
            row.steric_factor = steric
            if pair.uses_estimated_diameter:
                row.steric_note = "uses an estimated diameter"
            partners = pair.as_record(cache=partner_records)
        provenance = {
            "method": "weighted linear least squares in ln k"
            if info["weighted"]
            else "unweighted least squares in ln k (covariance scaled by reduced chi-square)",
            "form": batch.form,
            "form_reason": info["reason"],
            "fixed_n": fixed_n,
            "T_ref": arrays["T_ref"][i],
            "covariance": arrays["covariance"][i],
            "covariance_parameters": ["ln A", "n", "Ea [J/mol]"],
            "absolute_sigma": bool(batch.absolute_sigma),
            "reduced_chi_square": row.reduced_chi_square,
            "n_points": row.n_points,
            "n_sets": row.n_sets,
            "set_ids": info["sets"],
            "warnings": [w.code for w in warnings],
            "steric_factor": steric,
            "steric_factor_T_K": t_mean if steric is not None else None,
            "steric_factor_model": "hard-sphere" if steric is not None else None,
            "partners": partners,
        }
        progress.advance()
        previous = newest_fit.get(rid)
        if previous is not None and _same_fit(previous, row, provenance):
            row.status = "unchanged"
            row.expression_id = previous.id
            rows.append(row)
            continue
        row.status = "stored"
        inserts.append(
            {
                "reaction_id": rid,
                "origin": "measured-fit",
                "A": row.A,
                "n": row.n,
                "Ea": row.Ea,
                "t_min": row.T_min,
                "t_max": row.T_max,
                "uncertainty_factor": row.uncertainty_factor_max,
                "reference": "; ".join(references[sid] for sid in info["sets"]),
                "provenance": provenance,
                "recommended": False,
                "created_by": author,
            }
        )
        pending.append(row)
        rows.append(row)
    if inserts:
        now = db_timestamp(session)
        encode = json_adapter(session)
        new_ids = insert_returning_ids(
            session,
            "expression",
            EXPRESSION_COLUMNS,
            [
                (
                    e["reaction_id"],
                    e["origin"],
                    e["A"],
                    e["n"],
                    e["Ea"],
                    e["t_min"],
                    e["t_max"],
                    e["uncertainty_factor"],
                    e["reference"],
                    encode(e["provenance"]),
                    False,
                    1,
                    now,
                    e["created_by"],
                )
                for e in inserts
            ],
        )
        for row, new_id in zip(pending, new_ids, strict=True):
            row.expression_id = new_id
        audit.record_many(
            session,
            "fit",
            [
                (
                    row.key,
                    {
                        "expression": row.expression_id,
                        "form": row.form,
                        "points": row.n_points,
                        "sets": row.n_sets,
                    },
                )
                for row in pending
            ],
        )
    rows.sort(key=lambda r: r.key)
    return FitReport(rows)


def _listed(batch: Any) -> dict[str, list[Any]]:
    """The per-group arrays of a batch fit as Python lists (covariance: non-finite as 0)."""
    import numpy as np

    covariance = np.where(np.isfinite(batch.covariance), batch.covariance, 0.0)
    lists = {
        name: getattr(batch, name).tolist()
        for name in ("ok", "n_points", "A", "n", "Ea", "T_min", "T_max", "reduced_chi_square")
    }
    lists["T_ref"] = np.broadcast_to(batch.T_ref, batch.A.shape).tolist()
    lists["covariance"] = covariance.tolist()
    return lists


def _finite(value: float) -> float | None:
    import math

    return float(value) if math.isfinite(value) else None


class ReactionRow(NamedTuple):
    id: int
    key: str
    equation: str
    reaction_order: int
    third_body: bool


def _reaction_rows(session: Session, reaction_ids: list[int]) -> dict[int, ReactionRow]:
    """The reactions of ``reaction_ids`` as light rows, by id (no ORM objects)."""
    query = (
        "SELECT id, key, equation, reaction_order, third_body FROM reaction WHERE id IN ({marks})"
    )
    return {row[0]: ReactionRow(*row) for row in fetch_in(session, query, reaction_ids)}


class StoredFit(NamedTuple):
    id: int
    reaction_id: int
    A: float | None
    Ea: float
    provenance: dict[str, Any]


def _newest_fits(session: Session, reaction_ids: list[int]) -> dict[int, StoredFit]:
    """The newest measured fit of each reaction."""
    from ratebank.store.json_codec import loads

    query = (
        "SELECT id, reaction_id, pre_exponential, activation_energy, provenance FROM expression "
        "WHERE id IN (SELECT MAX(id) FROM expression WHERE origin = 'measured-fit' "
        "AND reaction_id IN ({marks}) GROUP BY reaction_id)"
    )
    newest = {}
    for eid, rid, A, Ea, provenance in fetch_in(session, query, reaction_ids):
        # PostgreSQL's driver has decoded the JSON already; SQLite hands over text
        record = loads(provenance) if isinstance(provenance, (str, bytes)) else provenance
        newest[rid] = StoredFit(eid, rid, A, Ea, record or {})
    return newest


def _same_fit(previous: Any, row: FitRow, provenance: dict[str, Any]) -> bool:
    old = previous.provenance or {}
    return (
        old.get("set_ids") == provenance["set_ids"]
        and old.get("form") == provenance["form"]
        and old.get("fixed_n") == provenance["fixed_n"]
        and old.get("n_points") == provenance["n_points"]
        and previous.A is not None
        and abs(previous.A - (row.A or 0.0)) <= 1e-12 * abs(previous.A)
        and abs(previous.Ea - (row.Ea or 0.0)) <= 1e-9 * max(1.0, abs(previous.Ea))
    )


def _references(session: Session, set_ids: list[int]) -> dict[int, str]:
    """'set name: reference' of each set, by id."""
    query = "SELECT id, name, reference FROM measurement_set WHERE id IN ({marks})"
    return {
        set_id: f"{name}: {reference}" if reference else name
        for set_id, name, reference in fetch_in(session, query, sorted(set(set_ids)))
    }


def _implied_steric_factors(results, pairs):  # type: ignore[no-untyped-def]
    """P implied by each fit at the geometric-mean T of its data (hard spheres), vectorized."""
    import numpy as np

    from ratebank.science import collision
    from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius
    from ratebank.services.partners import CollisionPair

    rids = [
        rid
        for rid, info in results.items()
        if isinstance(pairs.get(rid), CollisionPair) and info["batch"].ok[info["row"]]
    ]
    if not rids:
        return {}
    A = np.array([results[r]["batch"].A[results[r]["row"]] for r in rids])
    n = np.array([results[r]["batch"].n[results[r]["row"]] for r in rids])
    Ea = np.array([results[r]["batch"].Ea[results[r]["row"]] for r in rids])
    t_mean = np.array([results[r]["t_mean"] for r in rids])
    chosen = [pairs[r] for r in rids]
    z = collision.collision_rate_constant(
        t_mean,
        np.array([p.a.diameter for p in chosen]),
        np.array([p.b.diameter for p in chosen]),
        np.array([p.a.molar_mass for p in chosen]),
        np.array([p.b.molar_mass for p in chosen]),
    ) * np.where([p.identical for p in chosen], 0.5, 1.0)
    k_mean = modified_arrhenius(t_mean, A, n, Ea)
    ea_local = local_activation_energy(t_mean, n, Ea)
    steric = collision.derived_steric_factor(k_mean, ea_local, t_mean, z)
    return {rid: (float(p), float(t)) for rid, p, t in zip(rids, steric, t_mean, strict=True)}


def _uncertainty_factor_ranges(results):  # type: ignore[no-untyped-def]
    """(smallest, largest) f(T) over each fit's range, from its covariance, vectorized."""
    import numpy as np

    from ratebank.science.constants import GAS_CONSTANT

    rids = [rid for rid, info in results.items() if info["batch"].ok[info["row"]]]
    if not rids:
        return {}
    rows = [(results[r]["batch"], results[r]["row"]) for r in rids]
    low = np.array([b.T_min[i] for b, i in rows])
    high = np.array([b.T_max[i] for b, i in rows])
    cov = np.stack([b.covariance[i] for b, i in rows])
    grid = np.exp(np.linspace(np.log(low), np.log(high), 25, axis=1))  # (m, 25)
    g = np.stack([np.ones_like(grid), np.log(grid), -1.0 / (GAS_CONSTANT * grid)], axis=-1)
    variance = np.einsum("mti,mij,mtj->mt", g, cov, g)
    with np.errstate(invalid="ignore"):
        factor = np.exp(np.sqrt(np.maximum(variance, 0.0)))
    finite = np.isfinite(factor).all(axis=1).tolist()
    smallest, largest = factor.min(axis=1).tolist(), factor.max(axis=1).tolist()
    return {
        rid: (lo, hi) for rid, ok, lo, hi in zip(rids, finite, smallest, largest, strict=True) if ok
    }


def single_fit(session: Session, key: str, *, form: str = "auto", fixed_n: float | None = None):  # type: ignore[no-untyped-def]
    """The fit of one reaction as an ArrheniusFit, without storing it (for plots and checks)."""
    import numpy as np

    from ratebank.science import arrhenius

    reaction = find_reaction(session, key)
    _, _, T, k, u = _points(session, [reaction.id])
    if T.size == 0:
        raise FitError(f"reaction {reaction.key!r} has no measured points")
    sigma = None if np.isnan(u).any() else u
    if fixed_n is not None:
        return arrhenius.fit_rate_constants(T, k, sigma, form="fixed-n", fixed_n=fixed_n)
    if form == "auto":
        comparison = arrhenius.compare_forms(T, k, sigma)
        return comparison.modified_fit if comparison.supported else comparison.arrhenius_fit
    return arrhenius.fit_rate_constants(T, k, sigma, form=form)
