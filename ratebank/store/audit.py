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
