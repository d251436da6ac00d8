"""Measurement sets: the listing. (Importing points is
:mod:`ratebank.services.measurement_import`, kept apart because it needs numpy and a listing
must start fast.)"""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.store.listings import SetSummary, set_summaries


def list_sets(
    session: Session, *, reaction: str | None = None, include_withdrawn: bool = False
) -> list[SetSummary]:
    """Measurement sets in use (withdrawn ones too with ``include_withdrawn``) by reaction and
    name, with their point counts and temperature ranges; only those of ``reaction`` (a key
    or any spelling of the equation) when given."""
    return set_summaries(session, reaction=reaction, include_withdrawn=include_withdrawn)
