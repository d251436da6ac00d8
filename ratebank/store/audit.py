"""The audit trail: who changed what, when."""

from __future__ import annotations

from typing import Any

from sqlalchemy import func, insert, select
from sqlalchemy.orm import Session

from ratebank.store.models import AuditEntry, utc_now


def record(session: Session, action: str, target: str | None, **detail: Any) -> None:
    """Add an audit entry in the session's transaction (author from the session)."""
    session.execute(
        insert(AuditEntry),
        [
            {
                "at": utc_now(),
                "author": session.info.get("author") or "unknown",
                "action": action,
                "target": target,
                "detail": detail,
            }
        ],
    )


def record_many(
    session: Session, action: str, entries: list[tuple[str | None, dict[str, Any]]]
) -> None:
    """One audit entry per (target, detail), in one statement."""
    if not entries:
        return
    from ratebank.store.bulk import db_timestamp, insert_rows, json_adapter

    at = db_timestamp(session, utc_now())
    author = session.info.get("author") or "unknown"
    encode = json_adapter(session)
    # the driver's executemany: a fit of a whole mechanism audits every reaction
    insert_rows(
        session,
        AuditEntry.__tablename__,
        ("at", "author", "action", "target", "detail"),
        [(at, author, action, target, encode(detail)) for target, detail in entries],
    )


#: Actions that record a reading of the store, not a change to it.
READING_ACTIONS = ("export", "release.create")


def newest_entry_id(session: Session) -> int | None:
    """The history's high-water mark: the id of the newest entry that records a change
    (an export or a release records only a reading), None when there is none."""
    return session.scalar(
        select(func.max(AuditEntry.id)).where(AuditEntry.action.not_in(READING_ACTIONS))
    )
