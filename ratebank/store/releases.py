"""Releases: write one, read one, list them (``release`` table, revision 0009).

A release is written once and never changed: there is no update or delete here.
"""

from __future__ import annotations

import datetime as dt
from typing import NamedTuple

from sqlalchemy import select
from sqlalchemy.exc import IntegrityError
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError
from ratebank.store.models import Release, utc_now


class ReleaseRow(NamedTuple):
    name: str
    created_at: dt.datetime
    created_by: str
    fingerprint: str
    #: the frozen content, JSON text as stored (None in listings)
    content: str | None


def _utc(at: dt.datetime) -> dt.datetime:
    # SQLite gives back naive datetimes; every stored time is UTC
    return at if at.tzinfo is not None else at.replace(tzinfo=dt.UTC)


def name_taken(name: str) -> str:
    """The refusal of a release name in use."""
    return (
        f"a release named {name!r} exists already; a release cannot be replaced or "
        "changed: choose another name; nothing was written"
    )


def write_release(session: Session, name: str, fingerprint: str, content: str) -> ReleaseRow:
    """Store a new release; a name already taken is a ConflictError (nothing written)."""
    if session.scalar(select(Release.id).where(Release.name == name)) is not None:
        raise ConflictError(name_taken(name))
    author = session.info.get("author") or "unknown"
    row = Release(
        name=name,
        created_at=utc_now(),
        created_by=author,
        fingerprint=fingerprint,
        content=content,
    )
    try:
        with session.begin_nested():
            session.add(row)
            session.flush()
    except IntegrityError:
        raise ConflictError(name_taken(name)) from None
    return ReleaseRow(name, _utc(row.created_at), author, fingerprint, content)


def release(session: Session, name: str) -> ReleaseRow | None:
    """The release ``name`` with its content, or None."""
    found = session.scalars(select(Release).where(Release.name == name)).first()
    if found is None:
        return None
    return ReleaseRow(
        found.name, _utc(found.created_at), found.created_by, found.fingerprint, found.content
    )


def releases(session: Session) -> list[ReleaseRow]:
    """Every release, oldest first, without its content."""
    rows = session.execute(
        select(Release.name, Release.created_at, Release.created_by, Release.fingerprint).order_by(
            Release.created_at, Release.id
        )
    )
    return [ReleaseRow(n, _utc(at), by, fp, None) for n, at, by, fp in rows]
