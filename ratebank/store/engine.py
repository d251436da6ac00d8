"""The one place that makes engines and sessions.

A store is named by ``--db PATH_OR_URL``, else the ``RATEBANK_DB`` environment
variable, else ``./ratebank.db``. A plain path is a SQLite file; anything with
``://`` is an SQLAlchemy URL (``postgresql://`` is read as psycopg 3).

SQLite gets WAL journalling, foreign keys, a case-sensitive LIKE (as on
PostgreSQL) and a busy timeout. Transactions are
begun explicitly (``BEGIN``, or ``BEGIN IMMEDIATE`` for writing sessions) so
that two writers queue on the busy timeout instead of failing half-way. How
long a writer queues is ``RATEBANK_BUSY_TIMEOUT`` seconds (default 30); after
that it gives up with :class:`StoreBusyError` and nothing is written.

PostgreSQL relies on its own transactions. On both, rows with a ``version``
column (expressions, steric rules) are edited optimistically: an edit whose
row was changed by someone else since it was read ends as
:class:`ConcurrentEditError`, naming who changed it and when.
"""

from __future__ import annotations

import datetime as dt
import os
import re
import sqlite3
import time
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any
from urllib.parse import quote, unquote

from sqlalchemy import Engine, create_engine, event, select
from sqlalchemy.engine import make_url
from sqlalchemy.exc import ArgumentError, OperationalError
from sqlalchemy.orm import Session, sessionmaker
from sqlalchemy.orm.exc import StaleDataError

from ratebank.errors import ConflictError, StoreError
from ratebank.store import json_codec

DEFAULT_DB = "ratebank.db"
#: Database backends a store can live in, and how to name them.
SUPPORTED_BACKENDS = ("sqlite", "postgresql")
SUPPORTED_ADDRESSES = (
    "a SQLite file path (or sqlite:///PATH) or postgresql://USER@HOST:PORT/DATABASE "
    "(also postgres:// or postgresql+psycopg://)"
)
#: How long a SQLite writer waits for another writer's lock by default [s].
DEFAULT_BUSY_TIMEOUT_S = 30.0
BUSY_TIMEOUT_VARIABLE = "RATEBANK_BUSY_TIMEOUT"

# SQLite's primary result code for "another connection holds the lock"; the
# extended codes (BUSY_RECOVERY, BUSY_SNAPSHOT, ...) share its low byte.
_SQLITE_BUSY = 5


class StoreBusyError(StoreError):
    """Another process held the store's write lock for longer than the busy timeout."""

    def __init__(self, waited: float):
        self.waited = waited
        super().__init__(
            f"the store is busy: another ratebank has been writing for {waited:g} s; try again"
        )


class ConcurrentEditError(ConflictError):
    """A versioned row was changed by someone else between reading and writing it."""


# --------------------------------------------------------------------------- addresses


def _quote_at_in_userinfo(url: str) -> str:
    """Percent-encode an ``@`` typed inside a password (``u:p@ss@host``).

    SQLAlchemy splits the address at the first ``@``, which would read the
    rest of such a password as the host name and show it in error messages.
    Browsers and ``urllib`` split at the last one; so do we.
    """
    scheme, separator, rest = url.partition("://")
    if not separator:
        return url
    authority_and_path = rest.split("?", 1)[0]
    at = authority_and_path.rfind("@")
    if at < 0 or "@" not in authority_and_path[:at]:
        return url
    return f"{scheme}://{rest[:at].replace('@', '%40')}{rest[at:]}"


def database_url(db: str | None = None) -> str:
    """The SQLAlchemy URL of the store named by ``db``, ``RATEBANK_DB`` or the default."""
    text = db if db else os.environ.get("RATEBANK_DB") or DEFAULT_DB
    if "://" not in text:
        path = str(Path(text).expanduser().absolute())
        if "?" in path:
            # In an address "?" starts the options: "a?b.db" would silently become the
            # store "a", shared with every other path that starts the same way.
            raise StoreError(
                f"the store path {path!r} contains '?', which a database address cannot "
                "hold; rename the file or folder"
            )
        return "sqlite:///" + path
    if text.startswith("postgresql://") or text.startswith("postgres://"):
        text = "postgresql+psycopg://" + text.split("://", 1)[1]
    return _quote_at_in_userinfo(text)


#: Query parameters whose value is a secret: named like a password, a key or a token.
_SECRET_PARAMETER = re.compile(r"pass|pwd|secret|token|key|auth|cred|sig", re.IGNORECASE)
#: Stands for a hidden query value while SQLAlchemy renders the address (it would
#: percent-encode "***").
_MASKED = "ratebankmaskedvalue"
_QUERY_PAIR = re.compile(r"(?P<name>[^=&;#]*)=(?P<value>[^&;#]*)")


def is_secret_parameter(name: str) -> bool:
    """Whether a query parameter of a store address holds a secret (``password``, ``sslkey``...)."""
    return bool(_SECRET_PARAMETER.search(name))


def mask_url(url: str) -> str:
    """The URL with its password and every secret query value replaced by ``***``.

    This is the one function that makes an address safe to print or store:
    messages, the history and the export descriptor all go through it.

    >>> mask_url("postgresql+psycopg://ada:pw@db/kin?sslmode=require&password=s3")
    'postgresql+psycopg://ada:***@db/kin?password=***&sslmode=require'
    """
    text = _quote_at_in_userinfo(url)
    try:
        parsed = make_url(text)
        query = {
            name: ((_MASKED,) * len(value) if isinstance(value, tuple) else _MASKED)
            if is_secret_parameter(name)
            else value
            for name, value in parsed.query.items()
        }
        rendered = parsed.set(query=query).render_as_string(hide_password=True)
        return rendered.replace(_MASKED, "***")
    except (ArgumentError, ValueError, TypeError):
        # Unparseable (a bad port, say): hide everything between the user name
        # and the last "@" of the address, which is where a password would be,
        # and the value of every secret query parameter.
        scheme, separator, rest = text.partition("://")
        if not separator:
            return text
        head, question, query_text = rest.partition("?")
        at = head.rfind("@")
        if at >= 0 and ":" in head[:at]:
            user = head[:at].split(":", 1)[0]
            head = f"{user}:***{head[at:]}"
        query_text = _QUERY_PAIR.sub(
            lambda m: f"{m['name']}=***" if is_secret_parameter(unquote(m["name"])) else m[0],
            query_text,
        )
        return f"{scheme}://{head}{question}{query_text}"


def url_secrets(url: str | None) -> list[str]:
    """Every secret written in a store address: the password and secret query values."""
    if not url or "://" not in url:
        return []
    text = _quote_at_in_userinfo(url)
    found: list[str] = []
    try:
        parsed = make_url(text)
        if parsed.password:
            found.append(str(parsed.password))
        for name, value in parsed.query.items():
            if is_secret_parameter(name):
                found.extend(value if isinstance(value, tuple) else [value])
    except (ArgumentError, ValueError, TypeError):
        head = text.partition("://")[2].partition("?")[0]
        at = head.rfind("@")
        userinfo = head[:at] if at >= 0 else ""
        if ":" in userinfo:
            found.append(userinfo.split(":", 1)[1])
    # the raw text too: a value SQLAlchemy could not parse is still in it
    for match in _QUERY_PAIR.finditer(text.partition("?")[2]):
        if is_secret_parameter(unquote(match["name"])):
            found.append(match["value"])
    return [secret for secret in dict.fromkeys(found) if secret]


def url_password(url: str | None) -> str | None:
    """The password written in a store address, if any (to scrub it from messages)."""
    if not url or "://" not in url:
        return None
    text = _quote_at_in_userinfo(url)
    try:
        password = make_url(text).password
    except (ArgumentError, ValueError):
        head = text.partition("://")[2].partition("?")[0]
        at = head.rfind("@")
        userinfo = head[:at] if at >= 0 else ""
        password = userinfo.split(":", 1)[1] if ":" in userinfo else None
    return str(password) if password else None


def redact(text: str, *urls: str | None) -> str:
    """``text`` with the secrets of ``urls`` (raw, percent-decoded and -encoded) as ``***``."""
    for url in urls:
        for secret in url_secrets(url):
            for form in {secret, unquote(secret), quote(secret, safe="")}:
                if len(form) >= 3:  # a one- or two-letter secret would blank out ordinary words
                    text = text.replace(form, "***")
    return text


# --------------------------------------------------------------------------- busy timeout


def busy_timeout_seconds() -> float:
    """How long a writer waits for another writer's lock: ``RATEBANK_BUSY_TIMEOUT`` or 30 s."""
    text = os.environ.get(BUSY_TIMEOUT_VARIABLE)
    if text is None or text.strip() == "":
        return DEFAULT_BUSY_TIMEOUT_S
    try:
        value = float(text)
    except ValueError:
        value = float("nan")
    if not (0 <= value < 1e6):
        raise StoreError(
            f"{BUSY_TIMEOUT_VARIABLE}={text!r} is not a number of seconds; expected e.g. 30"
        )
    return value


def is_busy_error(exc: BaseException) -> bool:
    """Whether ``exc`` (SQLAlchemy's or the driver's) says another connection holds the lock."""
    orig = getattr(exc, "orig", exc)
    code = getattr(orig, "sqlite_errorcode", None)
    if code is not None:
        return code & 0xFF == _SQLITE_BUSY
    message = str(orig).lower()
    return "database is locked" in message or "database is busy" in message


def _begin_immediate(connection: Any, dbapi_connection: Any, timeout_s: float) -> None:
    """``BEGIN IMMEDIATE``, retried until ``timeout_s`` has passed, then StoreBusyError.

    SQLite's own busy handler does most of the waiting; the loop covers the
    cases where SQLite reports "busy" at once instead of waiting (a writer in
    WAL recovery, a lock handed over between two other processes).
    """
    started = time.monotonic()
    shortened = False
    while True:
        try:
            connection.exec_driver_sql("BEGIN IMMEDIATE")
            if shortened:  # the next transaction on this pooled connection waits in full
                _set_busy_timeout(dbapi_connection, timeout_s)
            return
        except OperationalError as exc:
            if not is_busy_error(exc):
                raise
            if dbapi_connection.in_transaction:  # never keep a half-begun transaction
                dbapi_connection.rollback()
            remaining = timeout_s - (time.monotonic() - started)
            if remaining <= 0:
                _set_busy_timeout(dbapi_connection, timeout_s)
                raise StoreBusyError(timeout_s) from None
            time.sleep(min(0.05, remaining))
            _set_busy_timeout(dbapi_connection, max(remaining - 0.05, 0.0))
            shortened = True


def _set_busy_timeout(dbapi_connection: Any, seconds: float) -> None:
    cursor = dbapi_connection.cursor()
    try:
        cursor.execute(f"PRAGMA busy_timeout = {int(seconds * 1000)}")
    finally:
        cursor.close()


def explain_sqlite_error(exc: BaseException, database: str | None) -> StoreError | None:
    """A clear StoreError for a SQLite failure of the store file itself, else None.

    ``exc`` is the driver's error or SQLAlchemy's wrapper of it; ``database`` is
    the file's path. Used when connecting (here) and by the command line's one
    error handler, so that both say the same thing.
    """
    if is_busy_error(exc):
        return StoreBusyError(busy_timeout_seconds())
    message = str(getattr(exc, "orig", None) or exc).splitlines()[0] if str(exc) else ""
    where = database or "the store"
    name = Path(database).name if database else "the store"
    lowered = message.lower()
    if "file is not a database" in lowered or "malformed" in lowered:
        return StoreError(
            f"{where} is not a usable store: the file is not a SQLite database or it is "
            f"damaged ({message}); restore a backup into a new file with `ratebank restore`"
        )
    if "readonly" in lowered or "read-only" in lowered:
        return StoreError(
            f"the store {where} is read-only for you ({message}); nothing was written; SQLite "
            f"needs to write the file and to create {name}-wal and {name}-shm beside it, so ask "
            "for write access to the file and its folder, or work on a copy"
        )
    if "unable to open database file" in lowered:
        return StoreError(
            f"cannot open the store file {where} ({message}); check that it is a file you may "
            "read and write, in a folder you may write"
        )
    if "database or disk is full" in lowered:
        return StoreError(
            f"No space left on device: writing the store {where}; nothing was written; free "
            "some space and run the command again"
        )
    if "disk i/o error" in lowered:
        return StoreError(f"the disk holding {where} failed ({message}); nothing was written")
    return None


def _configure_sqlite(engine: Engine, timeout_s: float) -> None:
    @event.listens_for(engine, "connect")
    def _on_connect(dbapi_connection, _record):  # type: ignore[no-untyped-def]
        # Let SQLAlchemy, not the driver, decide when transactions begin.
        dbapi_connection.isolation_level = None
        try:
            cursor = dbapi_connection.cursor()
            try:
                cursor.execute(f"PRAGMA busy_timeout = {int(timeout_s * 1000)}")
                cursor.execute("PRAGMA foreign_keys = ON")
                # LIKE is case-blind for ASCII on SQLite but not on PostgreSQL; a name
                # filter must find the same species on both (CO is not Co).
                cursor.execute("PRAGMA case_sensitive_like = ON")
                if engine.url.database not in (None, "", ":memory:"):
                    cursor.execute("PRAGMA journal_mode = WAL")
                    cursor.execute("PRAGMA synchronous = NORMAL")
            finally:
                cursor.close()
        except sqlite3.DatabaseError as exc:
            # The first statements on a new connection are where a damaged, foreign or
            # read-only file shows itself; say so plainly instead of "cannot read".
            explained = explain_sqlite_error(exc, engine.url.database)
            if explained is None:
                raise
            dbapi_connection.close()
            raise explained from exc

    @event.listens_for(engine, "begin")
    def _on_begin(connection):  # type: ignore[no-untyped-def]
        if connection.get_execution_options().get("ratebank_write"):
            _begin_immediate(connection, connection.connection.dbapi_connection, timeout_s)
        else:
            connection.exec_driver_sql("BEGIN")


def create_store_engine(url: str) -> Engine:
    """An engine for the store at ``url`` (see :func:`database_url`)."""
    try:
        parsed = make_url(url)
    except (ArgumentError, ValueError) as exc:
        raise StoreError(
            f"cannot read the store address {mask_url(url)!r}: {redact(str(exc), url)}"
        ) from None
    backend, driver = parsed.get_backend_name(), parsed.get_driver_name()
    if backend not in SUPPORTED_BACKENDS or (backend == "postgresql" and driver != "psycopg"):
        scheme = url.split("://", 1)[0]
        raise StoreError(
            f"cannot open the store {mask_url(url)}: the address scheme {scheme!r} is not "
            f"supported; use {SUPPORTED_ADDRESSES}"
        )
    if backend == "sqlite":
        database = parsed.database
        timeout_s = busy_timeout_seconds()
        if database and database != ":memory:":
            folder = Path(database).parent
            if not folder.is_dir():
                raise StoreError(f"folder {folder} does not exist for the store {database}")
        engine = create_engine(
            parsed,
            connect_args={"timeout": timeout_s},
            json_serializer=json_codec.dumps,
            json_deserializer=json_codec.loads,
        )
        _configure_sqlite(engine, timeout_s)
        return engine
    try:
        return create_engine(
            parsed,
            pool_pre_ping=True,
            json_serializer=json_codec.dumps,
            json_deserializer=json_codec.loads,
        )
    except Exception as exc:  # missing driver and the like
        detail = redact(str(exc), url)
        raise StoreError(f"cannot open the store {mask_url(url)}: {detail}") from None


def is_sqlite(engine: Engine) -> bool:
    return engine.dialect.name == "sqlite"


# --------------------------------------------------------------------------- sessions


@dataclass(frozen=True)
class _VersionedEdit:
    """A versioned row about to be written, remembered to explain a conflict."""

    table: Any
    key: int
    version_read: int | None
    label: str


def _label(table_name: str, obj: Any) -> str:
    if table_name == "expression":
        return f"expression {obj.id}"
    if table_name == "steric_rule":
        return f"the steric rule for {obj.__dict__.get('reaction_class')!r}"
    return f"{table_name} row {obj.id}"


class StoreSession(Session):
    """A session that remembers the versioned rows each flush writes.

    When a flush fails with SQLAlchemy's StaleDataError (another process bumped
    a row's version between our read and our write), the session has already
    expired everything; what it remembered here names the row in the message.
    """


@event.listens_for(StoreSession, "before_flush")
def _remember_versioned(session, _context, _instances):  # type: ignore[no-untyped-def]
    from sqlalchemy import inspect

    edits: list[_VersionedEdit] = []
    dirty = list(session.dirty)
    for obj, deleting in [*((o, False) for o in dirty), *((o, True) for o in session.deleted)]:
        state = inspect(obj)
        mapper = state.mapper
        if mapper.version_id_col is None or state.key is None:
            continue
        if not deleting and not session.is_modified(obj):
            continue
        version_key = mapper.get_property_by_column(mapper.version_id_col).key
        edits.append(
            _VersionedEdit(
                mapper.local_table,
                state.key[1][0],
                state.dict.get(version_key),
                _label(mapper.local_table.name, obj),
            )
        )
    session.info["versioned_edits"] = edits


def _utc_text(value: dt.datetime | None) -> str:
    if value is None:
        return "an unknown time"
    if value.tzinfo is not None:
        value = value.astimezone(dt.UTC)
    return f"{value:%Y-%m-%d %H:%M:%S} UTC"


def concurrent_edit_message(
    label: str,
    version_read: int | None,
    current_version: int | None,
    changed_by: str | None,
    changed_at: dt.datetime | None,
) -> str:
    """The one-line refusal of an edit whose row changed since it was read."""
    if current_version is None:
        return f"{label} was removed by someone else since you read it; nothing was written"
    read = f", you read version {version_read}" if version_read is not None else ""
    return (
        f"{label} was changed by {changed_by or 'someone'} at {_utc_text(changed_at)} "
        f"(now version {current_version}{read}); nothing was written; read it again before "
        "changing it"
    )


def stale_conflict(session: Session) -> ConcurrentEditError:
    """Roll ``session`` back after a StaleDataError and say who changed which row, when."""
    edits: list[_VersionedEdit] = list(session.info.get("versioned_edits") or [])
    bind = session.get_bind()
    session.rollback()
    read_only = bind.execution_options(ratebank_write=False)
    try:
        # Who changed it is worth one more read; if even that fails, say what we know.
        with read_only.connect() as connection:
            for edit in edits:
                table = edit.table
                columns = [table.c.version]
                for name in ("updated_by", "updated_at"):
                    if name in table.c:
                        columns.append(table.c[name])
                row = connection.execute(select(*columns).where(table.c.id == edit.key)).first()
                if row is None:
                    return ConcurrentEditError(
                        concurrent_edit_message(edit.label, edit.version_read, None, None, None)
                    )
                values = dict(row._mapping)
                if values["version"] != edit.version_read:
                    return ConcurrentEditError(
                        concurrent_edit_message(
                            edit.label,
                            edit.version_read,
                            values["version"],
                            values.get("updated_by"),
                            values.get("updated_at"),
                        )
                    )
    except Exception:  # pragma: no cover - e.g. the connection was lost meanwhile
        pass
    return ConcurrentEditError(
        "someone else changed a record you were editing at the same time; nothing was "
        "written; read it again before changing it"
    )


@contextmanager
def session_scope(
    engine: Engine, *, write: bool = False, author: str | None = None
) -> Iterator[Session]:
    """A session in one transaction: committed on success, rolled back on any error.

    ``write=True`` takes SQLite's write lock at the start of the transaction, so
    an import either waits for another writer or runs, never half-way. A
    concurrent change to a versioned row ends as :class:`ConcurrentEditError`.
    """
    bind = engine.execution_options(ratebank_write=True) if write else engine
    session = sessionmaker(bind=bind, class_=StoreSession, expire_on_commit=False)()
    session.info["author"] = author or default_author()
    session.info["write"] = write
    try:
        yield session
        session.commit()
    except StaleDataError as exc:
        raise stale_conflict(session) from exc
    except BaseException:
        _roll_back(session)
        raise
    finally:
        session.close()


def _roll_back(session: Session) -> None:
    """Roll back after an error, keeping that error the one reported.

    SQLite ends a transaction itself on a full disk or an I/O error; rolling
    back to a savepoint then fails ("no such savepoint"), and that second
    error must not hide the first, which says what happened.
    """
    try:
        session.rollback()
    except Exception:
        session.invalidate()


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
