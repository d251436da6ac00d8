"""Which stored expressions the rows of an expressions file match, and what changed.

A row matches the stored literature or manual expression of the same
reaction, reference, origin and form (the rows of a ``sum`` together match
one). An import that adds refuses a matching row as already in the store; an
import that updates compares the two in SI units, writes the changed numbers
(the expression's version rises, as for every change of its numbers) and
records each change in the units of the file.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank.science.units import parse_energy_unit, parse_rate_unit
from ratebank.services.form_validation import high_pressure_order
from ratebank.services.updates import Shown, UpdatePlan, change_text, changed_fields
from ratebank.services.validate import Problems, ValidExpression
from ratebank.store.expressions import ExpressionRecord
from ratebank.store.models import utc_now
from ratebank.store.updates import (
    StoredExpression,
    TermValues,
    record_values,
    stored_expressions,
    update_expression_numbers,
)

#: The origins an import writes, and so the stored expressions its rows may match.
IMPORTED_ORIGINS = ("literature", "manual")


@dataclass
class ExpressionPlan(UpdatePlan):
    """An update plan with, for each changed expression, what to write onto it."""

    #: (stored expression, changed columns, new further terms or None, new provenance)
    writes: list[Any] = field(default_factory=list)
    #: the rows that match no stored expression (to be added)
    new: list[int] = field(default_factory=list)


def _key(reaction_id: int, reference: str | None, origin: str, form: Any) -> tuple[Any, ...]:
    return (reaction_id, reference, origin, form)


def expression_plan(
    session: Session,
    valid: Sequence[ValidExpression],
    records: Sequence[ExpressionRecord],
    problems: Problems,
    *,
    update: bool,
) -> ExpressionPlan:
    """Sort the file's expressions into new, changed and unchanged ones (problems for a row
    matching a stored one when not updating, or matching more than one)."""
    by_key: dict[tuple[Any, ...], list[StoredExpression]] = {}
    for stored in stored_expressions(session, {e.reaction.id for e in valid}, IMPORTED_ORIGINS):
        key = _key(stored.reaction_id, stored.reference, stored.origin, stored.values["form"])
        by_key.setdefault(key, []).append(stored)
    plan = ExpressionPlan()
    seen: dict[tuple[Any, ...], int | None] = {}
    for i, (expression, record) in enumerate(zip(valid, records, strict=True)):
        values, terms = record_values(record)
        key = _key(record.reaction_id, record.reference, record.origin, values["form"])
        matches = by_key.get(key, [])
        what = _described(expression)
        if not matches:
            plan.new.append(i)
        elif not update:
            problems.add(
                expression.line,
                "reaction",
                f"{what} is already in the store (expression {matches[0].id}); an import that "
                "updates changes it",
            )
        elif len(matches) > 1:
            ids = ", ".join(str(m.id) for m in matches)
            problems.add(
                expression.line,
                "reference",
                f"{what} matches {len(matches)} stored expressions ({ids}); cannot tell which "
                "to update",
            )
        elif key in seen:
            problems.add(
                expression.line, "reference", f"{what} appears twice (first on line {seen[key]})"
            )
        else:
            seen[key] = expression.line
            _compare(plan, expression, matches[0], values, terms)
            if plan.writes and plan.writes[-1][0] is matches[0]:
                plan.writes[-1] = (*plan.writes[-1], record.provenance)
    return plan


def _described(expression: ValidExpression) -> str:
    reference = expression.reference or "no reference"
    return f"the {expression.form} expression of {expression.reaction.key!r} ({reference})"


def _compare(
    plan: ExpressionPlan,
    expression: ValidExpression,
    stored: StoredExpression,
    values: dict[str, Any],
    terms: tuple[TermValues, ...],
) -> None:
    shown = _shown(expression)
    changed, texts = changed_fields(stored.values, values, shown)
    new_terms = None
    if terms != stored.terms:
        new_terms = terms
        texts.extend(_term_texts(stored.terms, terms, shown))
    if not changed and new_terms is None:
        plan.unchanged += 1
        return
    target = expression.reaction.key
    plan.changes.append((target, [f"expression {stored.id}", *texts]))
    plan.writes.append((stored, changed, new_terms))


def _shown(expression: ValidExpression) -> dict[str, Shown]:
    """How each number of an expression shows in the file's units."""
    units = expression.given_units
    order = expression.reaction.order
    k_units, Ea_units = units.get("k_units", ""), units.get("Ea_units", "")
    A_factor = (
        parse_rate_unit(k_units, order=high_pressure_order(expression.form, order)).to_si
        if k_units
        else 1.0
    )
    Ea_factor = parse_energy_unit(Ea_units).to_si if Ea_units else 1.0
    low_units = units.get("k_low_units", "")
    low_factor = parse_rate_unit(low_units, order=order).to_si if low_units else 1.0
    return {
        "A": ("A", A_factor, k_units),
        "n": ("n", 1.0, ""),
        "Ea": ("Ea", Ea_factor, Ea_units),
        "T_min": ("T_min_K", 1.0, "K"),
        "T_max": ("T_max_K", 1.0, "K"),
        "uncertainty_factor": ("uncertainty_factor", 1.0, ""),
        "uncertainty_g": ("g_K", 1.0, "K"),
        "form": ("form", None, ""),
        "A_low": ("A_low", low_factor, low_units),
        "n_low": ("n_low", 1.0, ""),
        "Ea_low": ("Ea_low", Ea_factor, Ea_units),
        "broadening": ("broadening", None, ""),
        "Fc": ("Fc", 1.0, ""),
        "N": ("N", 1.0, ""),
        "troe_alpha": ("troe_alpha", 1.0, ""),
        "troe_T3": ("troe_T3_K", 1.0, "K"),
        "troe_T1": ("troe_T1_K", 1.0, "K"),
        "troe_T2": ("troe_T2_K", 1.0, "K"),
    }


def _term_texts(
    before: tuple[TermValues, ...], after: tuple[TermValues, ...], shown: dict[str, Shown]
) -> list[str]:
    if len(before) != len(after):
        return [f"terms: {len(before) + 1} -> {len(after) + 1}"]
    texts = []
    names = ("A", "n", "Ea", "T_min", "T_max")
    for number, (old, new) in enumerate(zip(before, after, strict=True), start=2):
        for name, b, a in zip(names, old, new, strict=True):
            if b != a:
                column, factor, unit = shown[name]
                texts.append(change_text(f"term {number} {column}", b, a, factor, unit))
    return texts


def write_expression_updates(session: Session, plan: ExpressionPlan, source: str) -> None:
    """Write each changed expression's numbers; its version rises by one."""
    for stored, values, terms, given in plan.writes:
        provenance = {
            **stored.provenance,
            **given,
            "updated": {
                "at": utc_now().isoformat(),
                "by": session.info.get("author"),
                "source_file": source,
                "from_version": stored.version,
                "fields": sorted(values) + (["terms"] if terms is not None else []),
            },
        }
        update_expression_numbers(
            session, stored.id, values, terms, provenance, version_read=stored.version
        )
