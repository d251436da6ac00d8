"""The listings a curator runs most, kept light: nothing here imports the validators, the ORM
models or numpy, so ``reactions list`` starts fast (see :mod:`ratebank.store.quick_listings`).

Every function takes an open :class:`~sqlalchemy.orm.Session` and reads in its transaction.
"""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.store.quick_listings import ReactionSummary, reaction_summaries

#: Reaction status words used by listings and filters, in order of precedence: has measured
#: k(T) sets; has a complete expression (A, n, Ea) but no measurements; has only an activation
#: energy (A still to be estimated); has neither measurements nor an expression.
STATUSES = ("measured", "complete", "ea-only", "nothing")


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
