"""A fingerprint of the store's content: SHA-256 over every curated row.

The audit trail is left out (reading or exporting does not change the
content), and so are timestamps and lock versions. Rows are hashed as the
text of their values in primary-key order; booleans are read as integers and
JSON columns as their stored text, so that the same content gives the same
fingerprint on SQLite and PostgreSQL. Floats enter with their exact repr.
"""

from __future__ import annotations

import hashlib

from sqlalchemy import JSON, Boolean, Integer, Text, cast, select
from sqlalchemy.orm import Session

from ratebank.store.models import (
    Expression,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
    StericRule,
)

_SKIP = {"created_at", "updated_at", "updated_by", "created_by", "version"}
TABLES = (Species, Reaction, Participant, MeasurementSet, Point, Expression, StericRule)


def _selectable(column):  # type: ignore[no-untyped-def]
    if isinstance(column.type, Boolean):
        return cast(column, Integer)
    if isinstance(column.type, JSON):
        return cast(column, Text)
    return column


def store_fingerprint(session: Session) -> str:
    """``sha256:<hex>`` of the curated content."""
    digest = hashlib.sha256()
    for model in TABLES:
        table = model.__table__
        columns = [c for c in table.columns if c.name not in _SKIP]
        digest.update(f"\n#{table.name}:{','.join(c.name for c in columns)}\n".encode())
        result = session.execute(
            select(*[_selectable(c) for c in columns])
            .order_by(*table.primary_key.columns)
            .execution_options(yield_per=20_000)
        )
        for partition in result.partitions():
            digest.update("\n".join(repr(tuple(row)) for row in partition).encode())
            digest.update(b"\n")
    return "sha256:" + digest.hexdigest()
