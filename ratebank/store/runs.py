"""Provenance common to a run, stored once and referenced by the rows of the run.

An estimate of a whole mechanism writes tens of thousands of expressions whose
provenance is mostly the same (the method, the collision model, the steric
rule); a fit or an import likewise. :func:`write_run` stores that common part
once in ``provenance_run``; each expression of the run names it in ``run_id``
and keeps only what differs in its own ``provenance``. Every read of an
expression's provenance goes through :func:`full_provenance` (or
:class:`RunCache`), which gives the run's part updated by the row's own: the
same full provenance as if the row held it all. A row without a run holds its
whole provenance, as every row written before runs existed does.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.store.bulk import db_timestamp, fetch_in, insert_returning_ids, json_adapter
from ratebank.store.json_codec import loads
from ratebank.store.models import ProvenanceRun, utc_now


def write_run(session: Session, action: str, common: dict[str, Any]) -> int:
    """Store the provenance ``common`` to the rows of one run; the run's id."""
    (run_id,) = insert_returning_ids(
        session,
        ProvenanceRun.__tablename__,
        ("action", "created_at", "created_by", "content"),
        [
            (
                action,
                db_timestamp(session, utc_now()),
                session.info.get("author"),
                json_adapter(session)(common),
            )
        ],
    )
    return run_id


def decoded(value: Any) -> dict[str, Any]:
    """A stored JSON value as a dict (SQLite hands over text, PostgreSQL's driver a dict)."""
    if isinstance(value, str | bytes):
        value = loads(value)
    return value or {}


class RunCache:
    """The common provenance of runs, each read once (a reader of many rows shares one)."""

    def __init__(self, session: Session) -> None:
        self._session = session
        self._runs: dict[int, dict[str, Any]] = {}

    def load(self, run_ids: Iterable[int | None]) -> None:
        """Read the runs among ``run_ids`` not read yet, in one query."""
        wanted = sorted({i for i in run_ids if i is not None and i not in self._runs})
        if not wanted:
            return
        query = "SELECT id, content FROM provenance_run WHERE id IN ({marks})"
        for run_id, content in fetch_in(self._session, query, wanted):
            self._runs[run_id] = decoded(content)

    def full(self, own: Any, run_id: int | None) -> dict[str, Any]:
        """The full provenance of a row: its run's part updated by its ``own``."""
        own = decoded(own)
        if run_id is None:
            return own
        if run_id not in self._runs:
            self.load([run_id])
        return {**self._runs.get(run_id, {}), **own}


def full_provenance(session: Session, own: Any, run_id: int | None) -> dict[str, Any]:
    """The full provenance of one row (its own part completed by its run's)."""
    return RunCache(session).full(own, run_id)


def remove_unused_runs(session: Session) -> None:
    """Delete the runs no expression names any more (after expressions were removed)."""
    from ratebank.store.models import Expression

    session.execute(
        ProvenanceRun.__table__.delete().where(
            ProvenanceRun.id.not_in(
                select(Expression.run_id).where(Expression.run_id.is_not(None)).distinct()
            )
        )
    )
