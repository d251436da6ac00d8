"""Stated third-body efficiencies with the species they name, if it is still in the store.

The checks need the rows a plain join would hide: an efficiency whose species
row is gone (a store written with foreign keys off, or by hand) still counts
in nobody's [M]_eff, and the curator should hear of it.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import NamedTuple

from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_in


class StatedEfficiency(NamedTuple):
    """One stored efficiency; ``species`` is None when its species is not in the store."""

    reaction_id: int
    species_id: int
    species: str | None
    efficiency: float


def stated_efficiencies(session: Session, reaction_ids: Sequence[int]) -> list[StatedEfficiency]:
    """Every efficiency stated for these reactions, by reaction and species id."""
    query = (
        "SELECT e.reaction_id, e.species_id, s.name, e.efficiency "
        "FROM third_body_efficiency e LEFT JOIN species s ON s.id = e.species_id "
        "WHERE e.reaction_id IN ({marks})"
    )
    rows = fetch_in(session, query, sorted(set(reaction_ids)))
    return sorted((StatedEfficiency(*row) for row in rows), key=lambda r: (r[0], r[1]))
