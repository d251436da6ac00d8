"""The one write path for rate expressions.

Fits, estimates, imports and edits all write expressions through here: the
caller hands over :class:`ExpressionRecord` objects (origin, parameters, range,
uncertainty, provenance); this module fills the defaults, encodes the
provenance, writes every record in one bulk insert and records one history
entry per record. Edits and removals of stored expressions go through here
too, so that an expression's columns are written in exactly one place.

A record's ``form`` names its rate law (:data:`FORMS`): ``arrhenius``
(k = A T^n exp(-Ea/RT)), ``sum`` (further terms in ``terms``), ``third-body``
(A, n, Ea are k0 of k = k0 [M]_eff), ``falloff`` and ``activated`` (A, n, Ea are
the high-pressure limit, ``low_pressure`` the low-pressure limit, ``broadening``
the broadening function). The plain form of a reaction (``arrhenius``, or
``third-body`` for one written with M) is stored as an empty form, which is
how every expression stored before the forms existed reads.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy import delete, update
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.store import audit, runs
from ratebank.store.bulk import db_timestamp, insert_returning_ids, insert_rows, json_adapter
from ratebank.store.models import (
    BROADENINGS,
    FORMS,
    ORIGINS,
    Expression,
    ExpressionTerm,
    utc_now,
)

#: Forms with a low- and a high-pressure limit and a broadening function.
LIMIT_FORMS = ("falloff", "activated")

#: Column order of the bulk insert (the model's column names).
_COLUMNS = (
    "reaction_id",
    "origin",
    "A",
    "n",
    "Ea",
    "T_min",
    "T_max",
    "uncertainty_factor",
    "uncertainty_g",
    "reference",
    "provenance",
    "recommended",
    "version",
    "created_at",
    "created_by",
    "form",
    "a_low",
    "n_low",
    "ea_low",
    "broadening",
    "fc",
    "fc_width",
    "troe_alpha",
    "troe_t3",
    "troe_t1",
    "troe_t2",
    "run_id",
)
_TERM_COLUMNS = ("expression_id", "term", "A", "n", "Ea", "T_min", "T_max")


def plain_form(third_body: bool) -> str:
    """The form an expression of a reaction has when it names none: ``third-body`` for a
    reaction written with M, else ``arrhenius``."""
    return "third-body" if third_body else "arrhenius"


def form_of(stored_form: str | None, third_body: bool) -> str:
    """The rate-law form of a stored expression (an empty form is the plain form)."""
    return stored_form or plain_form(third_body)


@dataclass(frozen=True)
class ArrheniusTerm:
    """One modified-Arrhenius term k = A T^n exp(-Ea/RT) (SI units), with its own range."""

    A: float
    n: float
    Ea: float
    T_min: float | None = None
    T_max: float | None = None


@dataclass(frozen=True)
class Broadening:
    """The broadening function F of a ``falloff`` or ``activated`` expression.

    ``kind`` is ``none`` (Lindemann, F = 1), ``troe`` (``alpha`` [-], ``T3`` = T***,
    ``T1`` = T*, ``T2`` = T** [K], T** optional) or ``fixed-fc`` (``Fc`` [-] and the
    width ``N`` [-], empty for N = 0.75 - 1.27 log10 Fc).
    """

    kind: str = "none"
    Fc: float | None = None
    N: float | None = None
    alpha: float | None = None
    T3: float | None = None
    T1: float | None = None
    T2: float | None = None


@dataclass
class ExpressionRecord:
    """A rate expression to be stored (SI units; ``A`` in the SI k unit times K^-n).

    Its uncertainty is f(T) = f(298 K) exp|g (1/T - 1/298 K)|, one standard
    deviation of ln k: ``uncertainty_factor`` is f(298 K), ``uncertainty_g`` is
    g [K] (empty means 0: the same factor at every temperature).

    ``A`` may be None: an activation energy whose pre-exponential factor is
    still to be estimated. ``terms`` holds the further terms of a ``sum``,
    ``low_pressure`` the low-pressure limit k0 of a ``falloff`` or
    ``activated`` expression (whose ``A``, ``n``, ``Ea`` are then k_inf),
    ``broadening`` the broadening function's parameters, and ``reverse`` the
    reverse direction's rule.
    """

    reaction_id: int
    origin: str
    A: float | None
    n: float
    Ea: float
    T_min: float | None = None
    T_max: float | None = None
    uncertainty_factor: float | None = None
    uncertainty_g: float | None = None
    reference: str | None = None
    provenance: dict[str, Any] = field(default_factory=dict)
    form: str = "arrhenius"
    terms: tuple[ArrheniusTerm, ...] = ()
    low_pressure: ArrheniusTerm | None = None
    broadening: Broadening | None = None
    #: True when the reaction is written with M (its plain form is then ``third-body``)
    third_body: bool = False


def _refuse_unstorable(record: ExpressionRecord) -> None:
    if record.origin not in ORIGINS:
        raise BadInputError(
            f"unknown origin {record.origin!r}; expected one of {', '.join(ORIGINS)}",
            argument="origin",
        )
    if record.form not in FORMS:
        raise BadInputError(
            f"unknown form {record.form!r}; expected one of {', '.join(FORMS)}", argument="form"
        )
    limits = record.form in LIMIT_FORMS
    if limits != (record.low_pressure is not None) or (record.terms and record.form != "sum"):
        raise BadInputError(
            f"a {record.form!r} expression "
            + ("needs a low-pressure limit" if limits else "has no low-pressure limit")
            + ("" if record.form == "sum" or not record.terms else " and no further terms"),
            argument="form",
        )
    if record.broadening is not None and record.broadening.kind not in BROADENINGS:
        raise BadInputError(
            f"unknown broadening {record.broadening.kind!r}; expected one of "
            f"{', '.join(BROADENINGS)}",
            argument="broadening",
        )


#: The limit and broadening columns of a form without them.
_NO_LIMITS = (None,) * 10


def _form_columns(record: ExpressionRecord) -> tuple[Any, ...]:
    """The form's own columns of a record (empty for the reaction's plain form)."""
    stored_form = None if record.form == plain_form(record.third_body) else record.form
    low = record.low_pressure
    if low is None and record.broadening is None:
        return (stored_form, *_NO_LIMITS)
    b = record.broadening or (Broadening() if low is not None else None)
    return (
        stored_form,
        low.A if low else None,
        low.n if low else None,
        low.Ea if low else None,
        b.kind if b else None,
        b.Fc if b else None,
        b.N if b else None,
        b.alpha if b else None,
        b.T3 if b else None,
        b.T1 if b else None,
        b.T2 if b else None,
    )


def write_expressions(
    session: Session,
    records: Sequence[ExpressionRecord],
    *,
    action: str,
    history: Sequence[tuple[str | None, dict[str, Any]]] = (),
    run: dict[str, Any] | None = None,
    run_id: int | None = None,
) -> list[int]:
    """Insert ``records`` in one bulk write and return their new ids, in order.

    ``history`` gives, for each record, the history target (a reaction key or
    a file) and the details to record under ``action``; each entry also gets
    the new expression's id. With no ``history``, no entries are written (the
    caller records one for the whole batch).

    ``run`` is the provenance every record has in common: it is stored once
    (:func:`ratebank.store.runs.write_run`) and each record's ``provenance``
    holds only what differs; a reader gets ``{**run, **provenance}``. Each
    history entry then names the run too. ``run_id`` names a run stored before
    instead (a run written a slice at a time).
    """
    if not records:
        return []
    for record in records:
        _refuse_unstorable(record)
    now = db_timestamp(session)
    encode = json_adapter(session)  # each row's own provenance encoded once, by orjson
    author = session.info.get("author")
    if run is not None:
        run_id = runs.write_run(session, action, run)
    # plain tuples straight to the driver's executemany (COPY on PostgreSQL)
    ids = insert_returning_ids(
        session,
        "expression",
        _COLUMNS,
        [
            (
                r.reaction_id,
                r.origin,
                r.A,
                r.n,
                r.Ea,
                r.T_min,
                r.T_max,
                r.uncertainty_factor,
                r.uncertainty_g,
                r.reference,
                encode(r.provenance),
                False,
                1,
                now,
                author,
                *_form_columns(r),
                run_id,
            )
            for r in records
        ],
    )
    terms = [
        (new_id, number, t.A, t.n, t.Ea, t.T_min, t.T_max)
        for r, new_id in zip(records, ids, strict=True)
        for number, t in enumerate(r.terms, start=2)
    ]
    if terms:
        insert_rows(session, "expression_term", _TERM_COLUMNS, terms)
    if history:
        named = {"run": run_id} if run_id is not None else {}
        audit.record_many(
            session,
            action,
            [
                (target, {"expression": new_id, **named, **detail})
                for (target, detail), new_id in zip(history, ids, strict=True)
            ],
        )
    return ids


def remove_expressions(session: Session, expression_ids: Sequence[int]) -> None:
    """Delete these expressions (the caller records why)."""
    ids = list(expression_ids)
    for start in range(0, len(ids), 500):
        chunk = ids[start : start + 500]
        session.execute(delete(ExpressionTerm).where(ExpressionTerm.expression_id.in_(chunk)))
        session.execute(delete(Expression).where(Expression.id.in_(chunk)))
    if ids:
        runs.remove_unused_runs(session)


#: Fields :func:`update_expression` may change, by record name.
UPDATABLE = (
    "A",
    "n",
    "Ea",
    "T_min",
    "T_max",
    "uncertainty_factor",
    "uncertainty_g",
    "reference",
    "provenance",
)


def update_expression(session: Session, expression: Expression, changes: Mapping[str, Any]) -> None:
    """Write ``changes`` (record names, SI units) onto a loaded expression and flush.

    A ``provenance`` among the changes is the whole provenance (read through
    :mod:`ratebank.store.runs`): the row stops naming its run.

    The expression's version rises by one (optimistic locking); a concurrent
    change since it was loaded raises SQLAlchemy's ``StaleDataError``, which
    the caller turns into its own message.
    """
    unknown = sorted(set(changes) - set(UPDATABLE))
    if unknown:
        raise BadInputError(f"expression fields {', '.join(unknown)} cannot be changed")
    for name, value in changes.items():
        setattr(expression, name, value)
    if "provenance" in changes:
        expression.run_id = None  # the provenance written is whole
    expression.updated_at = utc_now()
    expression.updated_by = session.info.get("author")
    session.flush()


def set_recommended(session: Session, reaction_id: int, expression_id: int) -> list[int]:
    """Mark one expression as its reaction's recommended one; return those unmarked.

    Which expression is exported changes; no expression's numbers do, so no
    version rises.
    """
    previous = list(
        session.scalars(
            Expression.__table__.select()
            .with_only_columns(Expression.__table__.c.id)
            .where(
                Expression.__table__.c.reaction_id == reaction_id,
                Expression.__table__.c.recommended.is_(True),
                Expression.__table__.c.id != expression_id,
            )
        )
    )
    now = utc_now()
    author = session.info.get("author")
    if previous:
        session.execute(
            update(Expression.__table__)
            .where(Expression.__table__.c.id.in_(previous))
            .values(recommended=False, updated_at=now, updated_by=author)
        )
    session.execute(
        update(Expression.__table__)
        .where(Expression.__table__.c.id == expression_id)
        .values(recommended=True, updated_at=now, updated_by=author)
    )
    return previous
