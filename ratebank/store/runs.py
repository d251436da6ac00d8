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

The collision partners of a row (``partners``: ``identical`` and the record of
each partner ``a`` and ``b``) repeat the same few species records across a whole
mechanism. A run may hold them once, by species name, under :data:`PARTNERS`; a
row then names its partners (``"a": "OH"``) and :class:`RunCache` puts each
name's record back in its place (:func:`resolved`). :data:`PARTNERS` itself is
never part of a row's provenance.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.store.bulk import db_timestamp, fetch_in, insert_returning_ids, json_adapter
from ratebank.store.json_codec import loads
from ratebank.store.models import ProvenanceRun, utc_now

#: The run's key for the partner records its rows name (not part of any provenance).
PARTNERS = "partner_records"


def resolved(provenance: dict[str, Any], partners: dict[str, Any] | None) -> dict[str, Any]:
    """``provenance`` with the partners it names by species replaced by their records
    (``partners``: the run's records by species name).

    >>> table = {"OH": {"species": "OH", "diameter_m": 3.1e-10}, "H2": {"species": "H2"}}
    >>> resolved({"partners": {"identical": False, "a": "OH", "b": "H2"}}, table)["partners"]
    {'identical': False, 'a': {'species': 'OH', 'diameter_m': 3.1e-10}, 'b': {'species': 'H2'}}
    """
    pair = provenance.get("partners")
    if partners and isinstance(pair, dict):
        a, b = pair.get("a"), pair.get("b")
        if isinstance(a, str) and isinstance(b, str) and a in partners and b in partners:
            provenance["partners"] = {**pair, "a": partners[a], "b": partners[b]}
    return provenance


def take_common(provenances: Sequence[dict[str, Any]], names: Iterable[str]) -> dict[str, Any]:
    """The run's part of ``provenances``: the first row's value of each of ``names`` that
    every row has; each row (changed in place) keeps such a field only where its value
    differs, so the run's part updated by a row's own is the row's whole provenance.

    >>> rows = [{"file": "a.csv", "line": 2}, {"file": "a.csv", "line": 3}]
    >>> take_common(rows, ["file"]), rows
    ({'file': 'a.csv'}, [{'line': 2}, {'line': 3}])
    """
    if not provenances:
        return {}
    first = provenances[0]
    common = {
        name: first[name]
        for name in names
        if name in first and all(name in row for row in provenances)
    }
    for row in provenances:
        for name, value in common.items():
            if row[name] == value:
                del row[name]
    return common


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
        self._partners: dict[int, dict[str, Any]] = {}

    def load(self, run_ids: Iterable[int | None]) -> None:
        """Read the runs among ``run_ids`` not read yet, in one query."""
        wanted = sorted({i for i in run_ids if i is not None and i not in self._runs})
        if not wanted:
            return
        query = "SELECT id, content FROM provenance_run WHERE id IN ({marks})"
        for run_id, content in fetch_in(self._session, query, wanted):
            common = dict(decoded(content))
            partners = common.pop(PARTNERS, None)
            if partners:
                self._partners[run_id] = partners
            self._runs[run_id] = common

    def ids(self) -> list[int]:
        """The runs read."""
        return list(self._runs)

    def common(self, run_id: int) -> dict[str, Any]:
        """The provenance run ``run_id`` (read before) gives its rows, its partners' records
        aside."""
        return self._runs.get(run_id, {})

    def full(self, own: Any, run_id: int | None) -> dict[str, Any]:
        """The full provenance of a row: its run's part updated by its ``own``."""
        own = decoded(own)
        if run_id is None:
            return own
        if run_id not in self._runs:
            self.load([run_id])
        full = {**self._runs.get(run_id, {}), **own}
        partners = self._partners.get(run_id)
        return resolved(full, partners) if partners else full


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
