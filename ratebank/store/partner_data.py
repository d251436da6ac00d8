"""Writing the collision data an estimate worked out onto its species."""

from __future__ import annotations

from typing import Any

from sqlalchemy import update
from sqlalchemy.orm import Session

from ratebank.store import audit
from ratebank.store.models import Species


def store_species_estimates(
    session: Session, species_id: int, name: str, changed: dict[str, Any]
) -> None:
    """Set the estimated ``changed`` columns of one species and record it in the history."""
    session.execute(update(Species).where(Species.id == species_id).values(**changed))
    audit.record(session, "species.estimate", name, **changed)
