"""A fingerprint of the store's content: SHA-256 over every curated row.

The audit trail is left out (reading or exporting does not change the
content), and so are timestamps; floats enter with their exact repr. Two
stores with the same species, reactions, measurements, expressions and
steric rules have the same fingerprint on SQLite and PostgreSQL.
"""

from __future__ import annotations

import hashlib
import json

from sqlalchemy import select
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


def _canonical(value: object) -> object:
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, dict):
        return {k: _canonical(v) for k, v in sorted(value.items())}
    if isinstance(value, list | tuple):
        return [_canonical(v) for v in value]
    return value


def store_fingerprint(session: Session) -> str:
    """``sha256:<hex>`` of the curated content."""
    digest = hashlib.sha256()
    for model in TABLES:
        table = model.__table__
        columns = [c for c in table.columns if c.name not in _SKIP]
        digest.update(f"\n#{table.name}:{','.join(c.name for c in columns)}\n".encode())
        result = session.execute(
            select(*columns)
            .order_by(*table.primary_key.columns)
            .execution_options(yield_per=10_000)
        )
        for row in result:
            digest.update(json.dumps([_canonical(v) for v in row], separators=(",", ":")).encode())
            digest.update(b"\n")
    return "sha256:" + digest.hexdigest()
