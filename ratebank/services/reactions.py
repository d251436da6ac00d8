"""Reactions: import and add them, and show one (listed by :mod:`.quick_listings`).

Every function takes an open :class:`~sqlalchemy.orm.Session` and works in
its transaction; the caller commits. A reaction is found by its key or by any
spelling of its equation.
"""

from __future__ import annotations

from operator import attrgetter

from sqlalchemy.orm import Session

from ratebank.science.formula import parse_formula
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.updates import RecordKind, UpdatePlan, apply_import, change_text, differs
from ratebank.services.validate import ImportSummary, Problems, Row, cell, validate_reactions
from ratebank.store.listings import ReactionDetail, reaction_detail
from ratebank.store.records import (
    NewReaction,
    insert_reactions,
    reaction_equations,
    reaction_keys,
    species_formulas,
)
from ratebank.store.updates import StoredReaction, stored_reactions, update_reaction


def import_reactions(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    update: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add reactions (parsed, balanced, canonical); all or nothing.

    With ``update``, a row whose key is stored is compared with that reaction: a changed
    class, notes or reverse rule is written (and recorded with before and after), an
    identical row is left alone. Its equation may change only while no measurement set,
    expression or efficiency refers to the reaction. Without ``update``, a stored key is
    refused as already in the store.
    """
    progress = progress or NoProgress()
    progress.start("validating reactions", len(rows))
    problems = Problems()
    formulas = {name: parse_formula(text) for name, text in species_formulas(session).items()}
    keys = reaction_keys(session)
    reactions = validate_reactions(
        rows, formulas, keys, reaction_equations(session), problems, update=update
    )
    progress.advance(len(rows))
    stored = stored_reactions(session, [r.key for r in reactions if r.key in keys])
    plan = _reaction_plan(rows, reactions, stored, problems)
    problems.raise_if_any(source)
    new = [r for r in reactions if r.key not in keys]

    def write() -> None:
        _update_reactions(session, plan, stored)

    return apply_import(
        session, REACTIONS, new, plan, write, source, rows, dry_run=dry_run, update=update
    )


#: How an import writes reactions.
REACTIONS = RecordKind(
    "reactions", "reactions.add", "reaction.update", "keys", attrgetter("key"), insert_reactions
)


#: The reaction fields an update compares: (stored name, file column).
_REACTION_FIELDS = (
    ("equation", "equation"),
    ("reaction_class", "class"),
    ("notes", "notes"),
    ("reverse", "reverse"),
)


class _ReactionPlan(UpdatePlan):
    """An update plan with the reactions to rewrite."""

    def __init__(self) -> None:
        super().__init__()
        self.writes: list[NewReaction] = []
        #: the file's columns: a column it does not have leaves its field as stored
        self.columns: set[str] = set()


def _reaction_plan(
    rows: list[Row],
    reactions: list[NewReaction],
    stored: dict[str, StoredReaction],
    problems: Problems,
) -> _ReactionPlan:
    """Changed and unchanged stored reactions; a new equation of a reaction with data is a
    problem."""
    plan = _ReactionPlan()
    plan.columns = set(rows[0][1]) | {"equation"} if rows else set()
    lines = {cell(row, "key"): line for line, row in rows}
    for new in reactions:
        before = stored.get(new.key)
        if before is None:
            continue
        texts = [
            change_text(column, getattr(before, name), getattr(new, attribute), None, "")
            for (name, column), attribute in zip(
                _REACTION_FIELDS, ("equation", "reaction_class", "notes", "reverse"), strict=True
            )
            if column in plan.columns and differs(getattr(before, name), getattr(new, attribute))
        ]
        if not texts:
            plan.unchanged += 1
            continue
        if new.equation != before.equation and before.has_data:
            problems.add(
                lines.get(new.key),
                "equation",
                f"reaction {new.key!r} is stored as {before.equation!r} and has measurements, "
                "expressions or efficiencies; its equation cannot change",
            )
            continue
        plan.changes.append((new.key, texts))
        plan.writes.append(new)
    return plan


def _update_reactions(
    session: Session, plan: _ReactionPlan, stored: dict[str, StoredReaction]
) -> None:
    """Write each changed reaction of ``plan``: the fields the file has, and a new equation
    with its participants."""
    for reaction in plan.writes:
        before = stored[reaction.key]
        values = {
            name: getattr(reaction, name)
            for name, column in (
                ("reaction_class", "class"),
                ("notes", "notes"),
                ("reverse", "reverse"),
            )
            if column in plan.columns
        }
        participants = None
        if reaction.equation != before.equation:
            values |= {
                "equation": reaction.equation,
                "reaction_order": reaction.order,
                "third_body": reaction.third_body,
            }
            participants = [
                (name, role, count)
                for role, counts in (
                    ("reactant", reaction.reactant_counts),
                    ("product", reaction.product_counts),
                )
                for name, count in counts.items()
            ]
        update_reaction(session, before.id, values, participants)


def add_reaction(
    session: Session,
    key: str,
    equation: str,
    *,
    reaction_class: str | None = None,
    notes: str | None = None,
) -> ImportSummary:
    """Add one reaction, checked exactly as an imported one."""
    row = {"key": key, "equation": equation, "class": reaction_class, "notes": notes}
    return import_reactions(session, [(None, row)], source="command line")


def show_reaction(session: Session, key_or_equation: str) -> ReactionDetail:
    """One reaction with its participants, measurement sets, expressions and recent history."""
    return reaction_detail(session, key_or_equation)
