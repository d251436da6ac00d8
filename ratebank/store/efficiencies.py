"""Third-body collision efficiencies, read and written.

One row of ``third_body_efficiency`` says how strongly one species counts in
the effective third-body concentration [M]_eff = sum_i eps_i [X_i] of one
reaction; a species without a row counts 1.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any, NamedTuple

from sqlalchemy import delete, insert, select
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_in
from ratebank.store.in_use import reaction_in_use, species_in_use
from ratebank.store.models import Reaction, Species, ThirdBodyEfficiency, utc_now

#: The efficiency of a species a reaction states none for.
DEFAULT_EFFICIENCY = 1.0


class EfficiencyRow(NamedTuple):
    """The efficiency of one species in one reaction's [M]_eff."""

    reaction_id: int
    reaction_key: str
    species_id: int
    species: str
    efficiency: float
    source: str | None
    updated_at: Any
    updated_by: str | None


_COLUMNS = (
    ThirdBodyEfficiency.reaction_id,
    Reaction.key,
    ThirdBodyEfficiency.species_id,
    Species.name,
    ThirdBodyEfficiency.efficiency,
    ThirdBodyEfficiency.source,
    ThirdBodyEfficiency.updated_at,
    ThirdBodyEfficiency.updated_by,
)


def _query():  # type: ignore[no-untyped-def]
    # the efficiencies of reactions and species in use: a withdrawn record's stay out of
    # rates, checks and exports
    return (
        select(*_COLUMNS)
        .join(Reaction, Reaction.id == ThirdBodyEfficiency.reaction_id)
        .join(Species, Species.id == ThirdBodyEfficiency.species_id)
        .where(reaction_in_use(), species_in_use())
        .order_by(Reaction.key, Species.name)
    )


def efficiencies(
    session: Session, reaction_ids: Sequence[int] | None = None
) -> list[EfficiencyRow]:
    """Every stated efficiency (of ``reaction_ids`` when given), by reaction key and species."""
    if reaction_ids is None:
        return [EfficiencyRow(*row) for row in session.execute(_query())]
    found: list[EfficiencyRow] = []
    ids = list(reaction_ids)
    for start in range(0, len(ids), 500):
        query = _query().where(ThirdBodyEfficiency.reaction_id.in_(ids[start : start + 500]))
        found.extend(EfficiencyRow(*row) for row in session.execute(query))
    return sorted(found, key=lambda r: (r.reaction_key, r.species))


def efficiencies_by_reaction(
    session: Session, reaction_ids: Sequence[int] | None = None
) -> dict[int, dict[str, float]]:
    """{reaction id: {species name: efficiency}} of the stated efficiencies."""
    found: dict[int, dict[str, float]] = {}
    for row in efficiencies(session, reaction_ids):
        found.setdefault(row.reaction_id, {})[row.species] = row.efficiency
    return found


class NewEfficiency(NamedTuple):
    reaction_id: int
    species_id: int
    efficiency: float
    source: str | None


def stated_pairs(session: Session, reaction_ids: Sequence[int]) -> dict[tuple[int, int], float]:
    """{(reaction id, species id): efficiency} already stored for these reactions."""
    query = (
        "SELECT reaction_id, species_id, efficiency FROM third_body_efficiency "
        "WHERE reaction_id IN ({marks})"
    )
    return {(r, s): e for r, s, e in fetch_in(session, query, sorted(set(reaction_ids)))}


def write_efficiencies(session: Session, rows: Sequence[NewEfficiency]) -> None:
    """Store these efficiencies, replacing any stated before for the same pair."""
    if not rows:
        return
    now = utc_now()
    author = session.info.get("author")
    for start in range(0, len(rows), 500):
        chunk = rows[start : start + 500]
        for row in chunk:
            session.execute(
                delete(ThirdBodyEfficiency).where(
                    ThirdBodyEfficiency.reaction_id == row.reaction_id,
                    ThirdBodyEfficiency.species_id == row.species_id,
                )
            )
        session.execute(
            insert(ThirdBodyEfficiency),
            [{**row._asdict(), "updated_at": now, "updated_by": author} for row in chunk],
        )
