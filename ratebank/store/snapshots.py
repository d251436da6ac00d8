"""Whole-store copies: a consistent SQLite snapshot, what a SQLite file holds, and a copy of
every row into another store.

These are the store's side of ``backup`` and ``restore``
(:mod:`ratebank.services.backup` decides what may be copied where). A
snapshot uses SQLite's online backup API in a single step, so it is one read
snapshot even while other processes write. A restore copies every table in
dependency order, with the same ids, inside the caller's transaction; JSON
travels as its stored text, so that the content fingerprint of the copy is the
original's.
"""

from __future__ import annotations

import datetime as dt
import sqlite3
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from urllib.parse import quote

from sqlalchemy import (
    JSON,
    DateTime,
    Engine,
    Text,
    cast,
    create_engine,
    func,
    inspect,
    select,
    text,
)
from sqlalchemy.orm import Session

from ratebank.store.bulk import insert_rows
from ratebank.store.fingerprint import store_fingerprint
from ratebank.store.models import (
    AuditEntry,
    Base,
    EvansPolanyiRule,
    Expression,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
    SpeciesThermo,
    StericRule,
)
from ratebank.store.quick_listings import store_counts

#: Curated tables: a store with a row in any of them is not empty.
CONTENT_TABLES = (
    Species,
    Reaction,
    Participant,
    MeasurementSet,
    Point,
    Expression,
    StericRule,
    SpeciesThermo,
    EvansPolanyiRule,
)
#: Rows copied per statement during a restore.
RESTORE_CHUNK = 10_000


@dataclass(frozen=True)
class SqliteFileFacts:
    """What a SQLite file is: undamaged or not, and a ratebank store of which revision."""

    #: the first answer of ``PRAGMA quick_check`` ("ok" when undamaged; None for no answer)
    integrity: str | None
    #: the schema revision; None when the file is not a ratebank store
    revision: str | None


def _facts(connection: sqlite3.Connection) -> SqliteFileFacts:
    check = connection.execute("PRAGMA quick_check").fetchone()
    tables = {
        row[0] for row in connection.execute("SELECT name FROM sqlite_master WHERE type='table'")
    }
    revision = None
    if "alembic_version" in tables:
        row = connection.execute("SELECT version_num FROM alembic_version").fetchone()
        revision = row[0] if row else None
    return SqliteFileFacts(check[0] if check else None, revision)


def sqlite_file_facts(path: Path) -> SqliteFileFacts:
    """The facts of a SQLite file (``sqlite3.DatabaseError`` when it is not a SQLite database)."""
    connection = sqlite3.connect(path)
    try:
        return _facts(connection)
    finally:
        connection.close()


def write_sqlite_snapshot(engine: Engine, path: Path) -> SqliteFileFacts:
    """Copy the SQLite store of ``engine`` into the new file ``path`` as one read snapshot, as a
    self-contained file (no write-ahead log), and return the facts of the copy."""
    copy = sqlite3.connect(path)
    try:
        with engine.connect() as connection:
            raw = connection.connection.dbapi_connection
            assert raw is not None
            # pages=-1: the whole store in one step, i.e. one read snapshot. Stepping
            # in pieces would restart whenever another process writes in between.
            raw.backup(copy, pages=-1)  # type: ignore[attr-defined]
        # The copy carries the store's WAL flag; a backup should be one self-contained file.
        copy.execute("PRAGMA journal_mode = DELETE")
        return _facts(copy)
    finally:
        copy.close()


def content(session: Session) -> tuple[dict[str, int], str]:
    """The store's record counts and content fingerprint."""
    return store_counts(session), store_fingerprint(session)


def read_only_content(path: Path) -> tuple[dict[str, int], str]:
    """:func:`content` of a SQLite store file, opened read-only."""
    uri = f"file:{quote(str(path))}?mode=ro"
    engine = create_engine("sqlite://", creator=lambda: sqlite3.connect(uri, uri=True))
    try:
        with Session(engine) as session:
            return content(session)
    finally:
        engine.dispose()


def content_table_counts(bind: Engine | Session) -> dict[str, int]:
    """The rows of each curated table, by table name."""
    if isinstance(bind, Engine):
        with bind.connect() as connection:
            return _content_table_counts(connection)
    return _content_table_counts(bind)


def _content_table_counts(connection: Any) -> dict[str, int]:
    # a store of an earlier revision lacks the tables added since: they hold nothing
    present = set(
        inspect(
            connection.connection() if isinstance(connection, Session) else connection
        ).get_table_names()
    )
    return {
        model.__tablename__: connection.execute(select(func.count()).select_from(model)).scalar()
        if model.__tablename__ in present
        else 0
        for model in CONTENT_TABLES
    }


def take_audit_trail(session: Session) -> list[dict[str, Any]]:
    """Remove the store's audit trail; return (at, author, action) of each entry removed."""
    removed = [
        {"at": str(at), "author": author, "action": action}
        for at, author, action in session.execute(
            select(AuditEntry.at, AuditEntry.author, AuditEntry.action).order_by(AuditEntry.id)
        )
    ]
    session.execute(AuditEntry.__table__.delete())
    return removed


def audit_entry_count(session: Session) -> int:
    return session.scalar(select(func.count()).select_from(AuditEntry)) or 0


def copy_tables(session: Session, source: Engine) -> None:
    """Copy every row of every table of the store ``source`` into the session's store, in
    dependency order, with the same ids; then move PostgreSQL's id sequences past them."""
    dialect = session.connection().dialect.name
    with source.connect() as backup:
        for table in Base.metadata.sorted_tables:
            _copy_table(session, backup, table, target_is_sqlite=dialect == "sqlite")
    if dialect == "postgresql":
        _advance_sequences(session)


def _copy_table(session: Session, backup: Any, table: Any, *, target_is_sqlite: bool) -> None:
    names = [column.name for column in table.columns]
    dates = [i for i, column in enumerate(table.columns) if isinstance(column.type, DateTime)]
    # JSON travels as its stored text, byte for byte: the content fingerprint
    # hashes that text, and decoding and re-encoding could respell it
    selected = [
        cast(column, Text) if isinstance(column.type, JSON) else column for column in table.columns
    ]
    result = backup.execute(
        select(*selected)
        .order_by(*table.primary_key.columns)
        .execution_options(yield_per=RESTORE_CHUNK)
    )
    for rows in result.partitions():
        values = [list(row) for row in rows]
        for row in values:
            for i in dates:
                row[i] = _utc_for_target(row[i], target_is_sqlite=target_is_sqlite)
        # the driver's bulk path for every table: points arrive by the hundred thousand
        insert_rows(session, table.name, names, values)


def _utc_for_target(moment: Any, *, target_is_sqlite: bool) -> Any:
    """A stored time as the target writes it: ratebank writes UTC, as naive text on SQLite (as
    SQLAlchemy does) and as an aware value on PostgreSQL, which would otherwise read it in the
    server's own time zone."""
    if not isinstance(moment, dt.datetime):
        return moment
    if moment.tzinfo is not None:
        moment = moment.astimezone(dt.UTC).replace(tzinfo=None)
    if target_is_sqlite:
        return moment.strftime("%Y-%m-%d %H:%M:%S.%f")
    return moment.replace(tzinfo=dt.UTC)


def _advance_sequences(session: Session) -> None:
    """Move PostgreSQL's id sequences past the copied ids (rows were inserted with ids)."""
    for table in Base.metadata.sorted_tables:
        if "id" not in table.c:
            continue
        session.execute(
            text(
                "SELECT setval(pg_get_serial_sequence(:table, 'id'), "
                f"COALESCE((SELECT MAX(id) FROM {table.name}), 0) + 1, false)"
            ),
            {"table": table.name},
        )
