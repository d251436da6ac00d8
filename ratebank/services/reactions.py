"""Reactions: import and add them, list them with what the store knows of each, show one.

Every function takes an open :class:`~sqlalchemy.orm.Session` and works in
its transaction; the caller commits. A reaction is found by its key or by any
spelling of its equation.
"""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.science.formula import parse_formula
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.validate import ImportSummary, Problems, Row, validate_reactions
from ratebank.store import audit
from ratebank.store.listings import (
    ReactionDetail,
    ReactionSummary,
    reaction_detail,
    reaction_summaries,
)
from ratebank.store.records import (
    insert_reactions,
    reaction_equations,
    reaction_keys,
    species_formulas,
)

#: Reaction status words used by listings and filters, in order of precedence: has measured
#: k(T) sets; has a complete expression (A, n, Ea) but no measurements; has only an activation
#: energy (A still to be estimated); has neither measurements nor an expression.
STATUSES = ("measured", "complete", "ea-only", "nothing")


def import_reactions(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add reactions (parsed, balanced, canonical); all or nothing."""
    progress = progress or NoProgress()
    progress.start("validating reactions", len(rows))
    problems = Problems()
    formulas = {name: parse_formula(text) for name, text in species_formulas(session).items()}
    reactions = validate_reactions(
        rows, formulas, reaction_keys(session), reaction_equations(session), problems
    )
    progress.advance(len(rows))
    problems.raise_if_any(source)
    if not dry_run and reactions:
        insert_reactions(session, reactions)
        audit.record(
            session,
            "reactions.add",
            source,
            count=len(reactions),
            keys=[r.key for r in reactions[:20]],
        )
    return ImportSummary("reactions", source, len(rows), len(reactions), dry_run)


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


def list_reactions(
    session: Session,
    *,
    species: str | None = None,
    reaction_class: str | None = None,
    status: str | None = None,
    include_withdrawn: bool = False,
) -> list[ReactionSummary]:
    """Reactions by key; only those involving ``species``, of a class, or of a status
    (:data:`STATUSES`), when given."""
    if status is not None and status not in STATUSES:
        raise BadInputError(
            f"unknown status {status!r}; expected one of {', '.join(STATUSES)}", argument="status"
        )
    return reaction_summaries(
        session,
        species=species,
        reaction_class=reaction_class,
        status=status,
        include_withdrawn=include_withdrawn,
    )


def show_reaction(session: Session, key_or_equation: str) -> ReactionDetail:
    """One reaction with its participants, measurement sets, expressions and recent history."""
    return reaction_detail(session, key_or_equation)
