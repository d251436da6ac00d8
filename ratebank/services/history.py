"""The audit trail: who changed what, when."""

from __future__ import annotations

from sqlalchemy.orm import Session

from ratebank.store.listings import HistoryEntry, history


def list_history(
    session: Session, *, limit: int = 50, target: str | None = None, author: str | None = None
) -> list[HistoryEntry]:
    """The newest ``limit`` audit entries first; only those about ``target`` (a file or a key)
    or by ``author``, when given."""
    return history(session, limit=limit, target=target, author=author)
