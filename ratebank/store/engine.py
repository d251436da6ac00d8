"""The one place that makes engines and sessions.

A store is named by ``--db PATH_OR_URL``, else the ``RATEBANK_DB`` environment
variable, else ``./ratebank.db``. A plain path is a SQLite file; anything with
``://`` is an SQLAlchemy URL (``postgresql://`` is read as psycopg 3).

SQLite gets WAL journalling, foreign keys and a busy timeout. Transactions are
begun explicitly (``BEGIN``, or ``BEGIN IMMEDIATE`` for writing sessions) so
that two writers queue on the busy timeout instead of failing half-way.
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from sqlalchemy import Engine, create_engine, event
from sqlalchemy.engine import make_url
from sqlalchemy.exc import ArgumentError
from sqlalchemy.orm import Session, sessionmaker

from ratebank.errors import StoreError

DEFAULT_DB = "ratebank.db"
#: How long a SQLite writer waits for another writer's lock [ms].
SQLITE_BUSY_TIMEOUT_MS = 30_000


def database_url(db: str | None = None) -> str:
    """The SQLAlchemy URL of the store named by ``db``, ``RATEBANK_DB`` or the default."""
    text = db if db else os.environ.get("RATEBANK_DB") or DEFAULT_DB
    if "://" not in text:
        return "sqlite:///" + str(Path(text).expanduser().absolute())
    if text.startswith("postgresql://") or text.startswith("postgres://"):
        text = "postgresql+psycopg://" + text.split("://", 1)[1]
    return text


def mask_url(url: str) -> str:
    """The URL with any password replaced by ``***``, safe to print or store."""
    try:
        return make_url(url).render_as_string(hide_password=True)
    except ArgumentError:
        return re.sub(r"(://[^:/@]*:)[^@]*@", r"\1***@", url)


def _configure_sqlite(engine: Engine) -> None:
    @event.listens_for(engine, "connect")
    def _on_connect(dbapi_connection, _record):  # type: ignore[no-untyped-def]
        # Let SQLAlchemy, not the driver, decide when transactions begin.
        dbapi_connection.isolation_level = None
        cursor = dbapi_connection.cursor()
        cursor.execute(f"PRAGMA busy_timeout = {SQLITE_BUSY_TIMEOUT_MS}")
        cursor.execute("PRAGMA foreign_keys = ON")
        if engine.url.database not in (None, "", ":memory:"):
            cursor.execute("PRAGMA journal_mode = WAL")
            cursor.execute("PRAGMA synchronous = NORMAL")
        cursor.close()

    @event.listens_for(engine, "begin")
    def _on_begin(connection):  # type: ignore[no-untyped-def]
        if connection.get_execution_options().get("ratebank_write"):
            connection.exec_driver_sql("BEGIN IMMEDIATE")
        else:
            connection.exec_driver_sql("BEGIN")


def create_store_engine(url: str) -> Engine:
    """An engine for the store at ``url`` (see :func:`database_url`)."""
    try:
        parsed = make_url(url)
    except ArgumentError as exc:
        raise StoreError(f"cannot read the store address {mask_url(url)!r}: {exc}") from None
    if parsed.get_backend_name() == "sqlite":
        database = parsed.database
        if database and database != ":memory:":
            folder = Path(database).parent
            if not folder.is_dir():
                raise StoreError(f"folder {folder} does not exist for the store {database}")
        engine = create_engine(parsed, connect_args={"timeout": SQLITE_BUSY_TIMEOUT_MS / 1000})
        _configure_sqlite(engine)
        return engine
    try:
        return create_engine(parsed, pool_pre_ping=True)
    except Exception as exc:  # missing driver and the like
        raise StoreError(f"cannot open the store {mask_url(url)}: {exc}") from None


def is_sqlite(engine: Engine) -> bool:
    return engine.dialect.name == "sqlite"


@contextmanager
def session_scope(
    engine: Engine, *, write: bool = False, author: str | None = None
) -> Iterator[Session]:
    """A session in one transaction: committed on success, rolled back on any error.

    ``write=True`` takes SQLite's write lock at the start of the transaction, so
    an import either waits for another writer or runs, never half-way.
    """
    bind = engine.execution_options(ratebank_write=True) if write else engine
    session = sessionmaker(bind=bind, expire_on_commit=False)()
    session.info["author"] = author or default_author()
    session.info["write"] = write
    try:
        yield session
        session.commit()
    except BaseException:
        session.rollback()
        raise
    finally:
        session.close()


def default_author() -> str:
    """``RATEBANK_AUTHOR``, else the login name, else ``unknown``."""
    name = os.environ.get("RATEBANK_AUTHOR")
    if name:
        return name
    try:
        import getpass

        return getpass.getuser()
    except Exception:
        return "unknown"
