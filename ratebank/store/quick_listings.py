"""The reads a listing command makes on every run, written to start fast.

``reactions list`` (its rows with their counts and status) and the store's
counts are plain SQL here: this module imports neither the ORM models (whose
registry costs more to build than the query takes) nor numpy. The other
listings and details are in :mod:`ratebank.store.listings`.

The reactions of a species are found through the participant index first and
the handful of matches are then counted, sorted and given a status, so the
cost follows the size of the answer, not of the store.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import text
from sqlalchemy.orm import Session

from ratebank.errors import NotFoundError


@dataclass(frozen=True)
class ReactionSummary:
    key: str
    equation: str
    order: int
    third_body: bool
    reaction_class: str | None
    sets: int
    points: int
    expressions: int
    status: str
    #: why it was withdrawn; None while it is in use
    withdrawn: str | None = None


#: Each reaction with its counts and status (measured, complete, ea-only, nothing, in that
#: precedence); the conditions are added below it.
_REACTIONS_SQL = """
SELECT r."key", r.equation, r.reaction_order, r.third_body, r.reaction_class,
    (SELECT count(*) FROM measurement_set ms WHERE ms.reaction_id = r.id) AS sets,
    (SELECT count(*) FROM point p JOIN measurement_set ms ON ms.id = p.set_id
        WHERE ms.reaction_id = r.id) AS points,
    (SELECT count(*) FROM expression e WHERE e.reaction_id = r.id) AS expressions,
    CASE
        WHEN EXISTS (SELECT 1 FROM measurement_set ms WHERE ms.reaction_id = r.id)
            THEN 'measured'
        WHEN EXISTS (SELECT 1 FROM expression e WHERE e.reaction_id = r.id AND e.a IS NOT NULL)
            THEN 'complete'
        WHEN EXISTS (SELECT 1 FROM expression e WHERE e.reaction_id = r.id) THEN 'ea-only'
        ELSE 'nothing'
    END AS status,
    r.withdrawn_reason
FROM reaction r
"""


def reaction_summaries(
    session: Session,
    *,
    species: str | None = None,
    reaction_class: str | None = None,
    status: str | None = None,
    include_withdrawn: bool = False,
) -> list[ReactionSummary]:
    """Reactions in use by key (withdrawn ones too with ``include_withdrawn``) with their
    counts and status; only those involving the species named ``species`` (NotFoundError
    when it is not stored), of ``reaction_class``, or of ``status`` when given."""
    conditions: list[str] = []
    params: dict[str, object] = {}
    if not include_withdrawn:
        # the condition of ratebank.store.in_use.reaction_in_use
        conditions.append("r.withdrawn_at IS NULL")
    if species is not None:
        conditions.append("r.id IN (SELECT reaction_id FROM participant WHERE species_id = :sid)")
        params["sid"] = _species_id(session, species)
    if reaction_class is not None:
        conditions.append("r.reaction_class = :reaction_class")
        params["reaction_class"] = reaction_class
    sql = _REACTIONS_SQL + (f"WHERE {' AND '.join(conditions)}\n" if conditions else "")
    if status is not None:
        sql = f"SELECT * FROM ({sql}) AS listed WHERE status = :status\n"
        params["status"] = status
    rows = session.execute(text(sql + 'ORDER BY "key"'), params)
    return [
        ReactionSummary(key, equation, order, bool(third_body), *rest)
        for key, equation, order, third_body, *rest in rows
    ]


def _species_id(session: Session, name: str) -> int:
    found = session.execute(text("SELECT id FROM species WHERE name = :name"), {"name": name})
    species_id = found.scalar()
    if species_id is None:
        raise NotFoundError(f"no species {name!r} in the store")
    return int(species_id)


#: The tables :func:`store_counts` counts, by the name it gives each.
_COUNTED = (
    ("species", "species"),
    ("reactions", "reaction"),
    ("measurement_sets", "measurement_set"),
    ("points", "point"),
    ("expressions", "expression"),
)


def store_counts(session: Session) -> dict[str, int]:
    """How many species, reactions, measurement sets, points and expressions the store holds."""
    return {
        name: session.execute(text(f"SELECT count(*) FROM {table}")).scalar() or 0
        for name, table in _COUNTED
    }
