"""Literature and hand-entered rate expressions: import them, list them, edit one.

Imports write through :func:`ratebank.store.expressions.write_expressions`,
the one write path of expressions, and edits through its
``update_expression``; both check the numbers with
:func:`ratebank.services.validate.check_expression_values`.

Only literature and hand-entered (manual) expressions are edited: a measured
fit is regenerated from its data by a new fit, and a collision estimate from
its inputs by a new estimate, so an edited copy would disagree with its own
provenance.

Every edit names the version of the expression the curator read
(``expected_version``); each successful edit adds one. An edit of an
expression that someone changed since it was read is refused, naming who and
when; so is one whose row changes between our read and our write, which can
happen on PostgreSQL even though the row is read ``FOR UPDATE``, for example
when another program writes it.

>>> from ratebank.services.store_access import open_store          # doctest: +SKIP
>>> with open_store("group.db").session(write=True) as session:     # doctest: +SKIP
...     edit_expression(session, 12, expected_version=1, Ea=42.0, Ea_units="kJ/mol")
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, RefusedError
from ratebank.services.expression_updates import expression_plan, write_expression_updates
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.updates import record_changes
from ratebank.services.validate import (
    ImportSummary,
    LazyReactionResolver,
    Problems,
    Row,
    ValidExpression,
    check_expression_values,
    validate_expressions,
)
from ratebank.store import audit
from ratebank.store.expressions import ExpressionRecord, write_expressions
from ratebank.store.listings import ExpressionSummary, expression_summaries
from ratebank.store.models import ORIGINS, utc_now
from ratebank.store.records import (
    EditableExpression,
    expression_for_edit,
    stale_edit_error,
    write_expression_edit,
)
from ratebank.store.runs import take_common

#: Origins a curator may edit by hand.
EDITABLE_ORIGINS = ("literature", "manual")
#: The fields an edit may change, in the order messages list them.
EDITABLE_FIELDS = ("A", "n", "Ea", "T_min", "T_max", "uncertainty_factor", "reference")


# --------------------------------------------------------------------------- import


def import_expressions(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    update: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add literature or hand-entered expressions; all or nothing.

    A row matches the stored literature or manual expression of its reaction, reference,
    origin and form. Without ``update`` such a row is refused as already in the store; with
    it, a changed one is updated (its version rises, the history keeps before and after in
    the file's units) and an identical one left alone.
    """
    progress = progress or NoProgress()
    progress.start("validating expressions", len(rows))
    problems = Problems()
    valid = validate_expressions(rows, LazyReactionResolver(session), problems)
    progress.advance(len(rows))
    problems.raise_if_any(source)
    records = [_record(e, source) for e in valid]
    plan = expression_plan(session, valid, records, problems, update=update)
    problems.raise_if_any(source)
    new = [records[i] for i in plan.new]
    if not dry_run and new:
        # what the rows of one file share (the file, the units it gives) is stored once
        run = take_common([r.provenance for r in new], _RUN_FIELDS)
        write_expressions(session, new, action="expressions.import", run=run)
        audit.record(session, "expressions.import", source, count=len(new))
    if not dry_run and plan.writes:
        write_expression_updates(session, plan, source)
        record_changes(session, "expression.update", source, plan.changes)
    complete = sum(1 for e in new if e.A is not None)
    return ImportSummary(
        "expressions",
        source,
        len(rows),
        len(new),
        dry_run,
        {"complete": complete, "activation_energy_only": len(new) - complete},
        update=update,
        changed=plan.changed,
        unchanged=plan.unchanged,
    )


#: Provenance fields an import's rows usually share, stored once in the run when they do.
_RUN_FIELDS = ("source_file", "given_units")


def _record(expression: ValidExpression, source: str) -> ExpressionRecord:
    return ExpressionRecord(
        reaction_id=expression.reaction.id,
        origin=expression.origin,
        A=expression.A,
        n=expression.n,
        Ea=expression.Ea,
        T_min=expression.T_min,
        T_max=expression.T_max,
        uncertainty_factor=expression.uncertainty_factor,
        uncertainty_g=expression.uncertainty_g,
        reference=expression.reference,
        provenance={
            "source_file": source,
            "line": expression.line,
            "given_units": expression.given_units,
            # an exported fit or estimate of another store comes in as literature
            **(
                {"exported_origin": expression.exported_origin}
                if expression.exported_origin
                else {}
            ),
        },
        form=expression.form,
        terms=expression.terms,
        low_pressure=expression.low_pressure,
        broadening=expression.broadening,
        third_body=expression.reaction.third_body,
    )


# --------------------------------------------------------------------------- list


def list_expressions(
    session: Session,
    *,
    reaction: str | None = None,
    origin: str | None = None,
    include_withdrawn: bool = False,
) -> list[ExpressionSummary]:
    """Stored expressions by reaction key and id; only those of ``reaction`` (a key or any
    spelling of the equation) or of ``origin``, when given."""
    if origin is not None and origin not in ORIGINS:
        raise BadInputError(
            f"unknown origin {origin!r}; expected one of {', '.join(ORIGINS)}", argument="origin"
        )
    return expression_summaries(
        session, reaction=reaction, origin=origin, include_withdrawn=include_withdrawn
    )


# --------------------------------------------------------------------------- edit


@dataclass(frozen=True)
class ExpressionEdit:
    """What an edit changed (values in SI-molar units: A in the SI k unit times K^-n, Ea in
    J/mol, T in K)."""

    id: int
    reaction_key: str
    origin: str
    version: int
    changed: dict[str, tuple[Any, Any]] = field(default_factory=dict)


def edit_expression(
    session: Session,
    expression_id: int,
    *,
    expected_version: int,
    A: float | None = None,
    n: float | None = None,
    Ea: float | None = None,
    Ea_units: str | None = None,
    k_units: str | None = None,
    T_min: float | None = None,
    T_max: float | None = None,
    uncertainty_factor: float | None = None,
    reference: str | None = None,
) -> ExpressionEdit:
    """Change fields of a literature or manual expression; ``None`` leaves a field as it is.

    Parameters
    ----------
    session : Session
        An open session; the caller commits (``store.session(write=True)``).
    expression_id : int
        The expression's id (as :func:`list_expressions` gives it).
    expected_version : int
        The expression's version as the curator read it.
    A : float, optional
        Pre-exponential factor in ``k_units`` times K^-n; needs ``k_units``.
    n : float, optional
        Temperature exponent [-].
    Ea : float, optional
        Activation energy in ``Ea_units``; needs ``Ea_units``.
    Ea_units, k_units : str, optional
        Units of the new ``Ea`` and ``A``, e.g. ``kJ/mol`` and ``cm3/molecule/s``.
    T_min, T_max : float, optional
        Valid temperature range [K].
    uncertainty_factor : float, optional
        Factor (at least 1) by which k is uncertain.
    reference : str, optional
        Where the numbers come from.

    Returns
    -------
    ExpressionEdit
        The new version and each changed field's (before, after), in SI units.

    Raises
    ------
    NotFoundError
        No expression with this id.
    RefusedError
        The expression is a measured fit or a collision estimate.
    StaleEditError
        The expression's version is not ``expected_version`` (someone changed it).
    BadInputError
        Nothing to change, a new value out of range, or a number without its unit.
    """
    given = {
        "A": A,
        "n": n,
        "Ea": Ea,
        "Ea_units": Ea_units,
        "k_units": k_units,
        "T_min": T_min,
        "T_max": T_max,
        "uncertainty_factor": uncertainty_factor,
        "reference": reference,
    }
    expression = expression_for_edit(session, expression_id)
    _refuse_regenerated(expression)
    if expression.version != expected_version:
        raise stale_edit_error(expression_id, expected_version, expression)
    changed = _changes(expression, _checked_changes(expression, given))
    # the same values again change nothing: no write, no new version
    version = _write_edit(session, expression, given, changed) if changed else expression.version
    return ExpressionEdit(
        expression.id, expression.reaction_key, expression.origin, version, changed
    )


def _changes(expression: EditableExpression, new: dict[str, Any]) -> dict[str, tuple[Any, Any]]:
    """(stored, new) of each field whose new value differs from the stored one."""
    return {
        name: (_stored(expression, name), value)
        for name, value in new.items()
        if _stored(expression, name) != value
    }


def _write_edit(
    session: Session,
    expression: EditableExpression,
    given: dict[str, Any],
    changed: dict[str, tuple[Any, Any]],
) -> int:
    """Write the changes and the edit's provenance, record the edit; the new version."""
    record = {name: after for name, (_, after) in changed.items()}
    if "uncertainty_factor" in changed and expression.uncertainty_g is None:
        record["uncertainty_g"] = 0.0  # a factor without a g, as the write path stores it
    record["provenance"] = _edited_provenance(session, expression, given, changed)
    version = write_expression_edit(session, expression, record)
    audit.record(
        session,
        "expression.edit",
        expression.reaction_key,
        expression=expression.id,
        version=version,
        changed={
            name: _as_given(expression, given, name, before, after)
            for name, (before, after) in changed.items()
        },
    )
    return version


def _as_given(
    expression: EditableExpression, given: dict[str, Any], name: str, before: Any, after: Any
) -> dict[str, Any]:
    """A change as the history keeps it: before and after in the units the curator typed."""
    from ratebank.numbers import round_significant
    from ratebank.science.units import parse_energy_unit, parse_rate_unit

    unit, to_si = {"T_min": ("K", 1.0), "T_max": ("K", 1.0)}.get(name, ("", None))
    if name == "A" and given["k_units"]:
        unit = given["k_units"]
        to_si = parse_rate_unit(unit, expression.A_order).to_si
    elif name == "Ea" and given["Ea_units"]:
        unit = given["Ea_units"]
        to_si = parse_energy_unit(unit).to_si
    if to_si is not None:
        before, after = (
            None if v is None else round_significant(v / to_si) for v in (before, after)
        )
    return {"before": before, "after": after, "unit": unit}


def _stored(expression: EditableExpression, name: str) -> Any:
    return getattr(expression, name)


def _refuse_regenerated(expression: EditableExpression) -> None:
    if expression.origin in EDITABLE_ORIGINS:
        return
    regenerated_by = (
        "a new fit of its measurements"
        if expression.origin == "measured-fit"
        else "a new estimate from its inputs"
    )
    raise RefusedError(
        f"expression {expression.id} of {expression.reaction_key} is a {expression.origin}: it "
        f"is regenerated by {regenerated_by}, not edited; only literature and manual "
        "expressions can be edited (import a manual one to override it)"
    )


def _checked_changes(expression: EditableExpression, given: dict[str, Any]) -> dict[str, Any]:
    """The new field values in SI units (edit names); every problem is reported at once."""
    if all(value is None for value in given.values()):
        raise BadInputError(
            f"nothing to change in expression {expression.id}: give at least one of "
            f"{', '.join(EDITABLE_FIELDS)}"
        )
    checked = check_expression_values(
        expression.A_order,
        A=given["A"],
        k_units=given["k_units"],
        n=given["n"],
        Ea=given["Ea"],
        Ea_units=given["Ea_units"],
        T_min=given["T_min"],
        T_max=given["T_max"],
        uncertainty_factor=given["uncertainty_factor"],
        stored={
            "A": expression.A,
            "n": expression.n,
            "T_min": expression.T_min,
            "T_max": expression.T_max,
        },
    )
    if checked.problems:
        raise BadInputError(
            f"expression {expression.id}: "
            + "; ".join(f"{name}: {message}" for name, message in checked.problems)
            + "; nothing was written",
            argument=checked.problems[0][0],
        )
    values = dict(checked.values)
    if given["reference"] is not None:
        values["reference"] = given["reference"].strip() or None
    return {name: values[name] for name in EDITABLE_FIELDS if name in values}


def _edited_provenance(
    session: Session,
    expression: EditableExpression,
    given: dict[str, Any],
    changed: dict[str, tuple[Any, Any]],
) -> dict[str, Any]:
    """The expression's provenance with the units of the new numbers and the edit recorded."""
    provenance = dict(expression.provenance)
    units = dict(provenance.get("given_units") or {})
    if given["Ea"] is not None and given["Ea_units"]:
        units["Ea_units"] = given["Ea_units"]
    if given["A"] is not None and given["k_units"]:
        units["k_units"] = given["k_units"]
    provenance["given_units"] = units
    provenance["edited"] = {
        "at": utc_now().isoformat(),
        "by": session.info.get("author"),
        "from_version": expression.version,
        "fields": sorted(changed),
    }
    return provenance
