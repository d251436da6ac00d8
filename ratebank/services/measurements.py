"""Measurement sets: the listing. (Importing points is
:mod:`ratebank.services.measurement_import`, kept apart because it needs numpy and a listing
must start fast.)"""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.store.listings import SetSummary, set_summaries


def list_sets(session: Session, *, reaction: str | None = None) -> list[SetSummary]:
    """Measurement sets by reaction and name, with their point counts and temperature ranges;
    only those of ``reaction`` (a key or any spelling of the equation) when given."""
    return set_summaries(session, reaction=reaction)
