"""The audit trail: who changed what, when."""

from __future__ import annotations

from typing import Any

from sqlalchemy import insert
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
    at = utc_now()
    author = session.info.get("author") or "unknown"
    # the table, not the mapped class: a plain executemany, no ORM bookkeeping per row
    session.execute(
        insert(AuditEntry.__table__),
        [
            {"at": at, "author": author, "action": action, "target": target, "detail": detail}
            for target, detail in entries
        ],
    )
