"""Backing up a SQLite store while others use it, and restoring a backup into an empty store.

A backup is made with SQLite's online backup API (Python's
``sqlite3.Connection.backup``) in a single step, so it is one consistent
snapshot even while other processes keep writing (WAL readers do not block
writers). It is written to a temporary file in the target folder, checked,
synced and then moved into place, so the target is never half-written; an
existing file is replaced only when asked (``force``).

PostgreSQL stores are backed up with the server's own tools (``pg_dump`` and
``pg_restore``); :func:`backup_store` says so rather than half-doing it.

A restore copies every row of a backup into an empty store (SQLite or
PostgreSQL) in one transaction and checks that the content fingerprint of the
result is the backup's. A backup from an earlier schema revision is upgraded
on a temporary copy first; the backup file itself is never changed.
"""

from __future__ import annotations

import datetime as dt
import os
import shutil
import sqlite3
import stat
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from sqlalchemy import JSON, DateTime, Engine, Text, cast, func, select, text
from sqlalchemy.orm import Session

from ratebank.errors import ConflictError, RatebankError, StoreRevisionError
from ratebank.services.store_access import StoreHandle, open_store
from ratebank.store.engine import create_store_engine, is_sqlite, session_scope
from ratebank.store.models import (
    AuditEntry,
    Base,
    Expression,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
    StericRule,
)
from ratebank.store.schema import HEAD_REVISION, KNOWN_REVISIONS, current_revision, upgrade_store

SQLITE_HEADER = b"SQLite format 3\x00"
#: Curated tables: a store with a row in any of them is not empty.
CONTENT_TABLES = (Species, Reaction, Participant, MeasurementSet, Point, Expression, StericRule)
#: Rows copied per statement during a restore.
RESTORE_CHUNK = 10_000


class BackupError(RatebankError):
    """A backup or restore cannot be made as asked; nothing was written."""


class BackupNotSupportedError(BackupError):
    """The store is not a SQLite file (PostgreSQL is backed up with its own tools)."""


class BackupExistsError(BackupError):
    """The backup file exists already and ``force`` was not given."""


class InvalidBackupError(BackupError):
    """The file to restore is not a ratebank store this ratebank can read."""


class RestoreTargetNotEmptyError(ConflictError):
    """The store to restore into already holds data."""


@dataclass(frozen=True)
class BackupResult:
    """A finished backup: where, how big, and what it holds."""

    path: Path
    source: str  # masked address of the store backed up
    revision: str
    bytes: int
    counts: dict[str, int]
    fingerprint: str


@dataclass(frozen=True)
class RestoreResult:
    """A finished restore."""

    source: Path
    target: str  # masked address of the store restored into
    backup_revision: str
    revision: str
    counts: dict[str, int]
    fingerprint: str
    audit_entries: int
    replaced_audit: list[dict[str, Any]] = field(default_factory=list)


def _fsync_folder(folder: Path) -> None:
    # Make the rename itself durable; not every platform lets a folder be opened.
    try:
        descriptor = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(descriptor)
    except OSError:
        pass
    finally:
        os.close(descriptor)


def _remove_sqlite_file(path: Path) -> None:
    for suffix in ("", "-journal", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)


def _content(session: Session) -> tuple[dict[str, int], str]:
    from ratebank.services.curate import store_counts
    from ratebank.store.fingerprint import store_fingerprint

    return store_counts(session), store_fingerprint(session)


# --------------------------------------------------------------------------- backup


def backup_store(db: str | None, target: str | Path, *, force: bool = False) -> BackupResult:
    """Write a consistent copy of the SQLite store ``db`` to ``target``.

    Parameters
    ----------
    db : str or None
        The store (path or URL; None for ``RATEBANK_DB`` or ``./ratebank.db``).
    target : path
        The backup file to write.
    force : bool
        Replace ``target`` if it exists (atomically: readers see the old or the
        new file, never a mix).

    Raises
    ------
    BackupNotSupportedError
        For a PostgreSQL (or other server) store: use ``pg_dump``.
    BackupExistsError
        ``target`` exists and ``force`` is False.
    StoreRevisionError
        The store is not a ratebank store, or is from a newer ratebank.
    """
    store = open_store(db, check=False, must_exist=True)
    try:
        return _backup(store, Path(target), force=force)
    finally:
        store.close()


def _backup(store: StoreHandle, target: Path, *, force: bool) -> BackupResult:
    if not is_sqlite(store.engine):
        raise BackupNotSupportedError(
            f"{store.display_url} is a {store.engine.dialect.name} store: back it up with the "
            "server's own tools (pg_dump -Fc, and pg_restore to restore); `ratebank backup` "
            "copies SQLite stores"
        )
    revision = current_revision(store.engine)
    if revision is None:
        raise StoreRevisionError(
            f"{store.display_url} is not a ratebank store (no schema revision); nothing to back up"
        )
    if revision not in KNOWN_REVISIONS:
        from ratebank.store.schema import check_revision

        check_revision(store.engine)  # raises: from a newer ratebank
    source = Path(store.engine.url.database or "")
    target = target.expanduser().absolute()
    folder = target.parent
    if not folder.is_dir():
        raise BackupError(f"folder {folder} does not exist; create it or choose another file")
    if target.is_dir():
        raise BackupError(f"{target} is a folder; give a file name such as group-backup.db")
    if target.exists():
        if source.exists() and os.path.samefile(source, target):
            raise BackupError(f"{target} is the store itself; choose another file for the backup")
        if not force:
            raise BackupExistsError(
                f"{target} already exists; choose another name, or give --force to replace it"
            )
    if not os.access(folder, os.W_OK | os.X_OK):
        raise BackupError(f"folder {folder} is not writable; nothing was written")

    descriptor, temp_name = tempfile.mkstemp(dir=folder, prefix=f".{target.name}.", suffix=".tmp")
    os.close(descriptor)
    temp = Path(temp_name)
    try:
        # The backup is for the same readers as the store (mkstemp makes it private).
        if source.exists():
            os.chmod(temp, stat.S_IMODE(source.stat().st_mode))
        copy = sqlite3.connect(temp)
        try:
            with store.engine.connect() as connection:
                raw = connection.connection.dbapi_connection
                assert raw is not None
                # pages=-1: the whole store in one step, i.e. one read snapshot. Stepping
                # in pieces would restart whenever another process writes in between.
                raw.backup(copy, pages=-1)
            # The copy carries the store's WAL flag; a backup should be one
            # self-contained file.
            copy.execute("PRAGMA journal_mode = DELETE")
            check = copy.execute("PRAGMA quick_check").fetchone()
            if not check or check[0] != "ok":
                raise BackupError(f"the copy failed its integrity check ({check}); nothing written")
            row = copy.execute("SELECT version_num FROM alembic_version").fetchone()
            copied_revision = row[0] if row else None
        finally:
            copy.close()
        counts, fingerprint = _read_content(temp)
        with open(temp, "rb") as handle:
            os.fsync(handle.fileno())
        if force:
            os.replace(temp, target)
        else:
            _link_without_replacing(temp, target)
        _fsync_folder(folder)
    except BaseException:
        _remove_sqlite_file(temp)
        raise
    assert copied_revision is not None
    return BackupResult(
        path=target,
        source=store.display_url,
        revision=copied_revision,
        bytes=target.stat().st_size,
        counts=counts,
        fingerprint=fingerprint,
    )


def _link_without_replacing(temp: Path, target: Path) -> None:
    """Move ``temp`` to ``target`` unless ``target`` appeared meanwhile."""
    try:
        os.link(temp, target)  # atomic, and fails if the target exists
    except FileExistsError:
        raise BackupExistsError(
            f"{target} already exists; choose another name, or give --force to replace it"
        ) from None
    except OSError:
        # A file system without hard links: the existence check above must do.
        if target.exists():
            raise BackupExistsError(
                f"{target} already exists; choose another name, or give --force to replace it"
            ) from None
        os.replace(temp, target)
        return
    temp.unlink()


def _read_content(path: Path) -> tuple[dict[str, int], str]:
    """Counts and fingerprint of a SQLite store file, opened read-only."""
    from urllib.parse import quote

    from sqlalchemy import create_engine

    uri = f"file:{quote(str(path))}?mode=ro"
    engine = create_engine("sqlite://", creator=lambda: sqlite3.connect(uri, uri=True))
    try:
        with Session(engine) as session:
            return _content(session)
    finally:
        engine.dispose()


# --------------------------------------------------------------------------- restore


def restore_store(
    db: str | None, source: str | Path, *, author: str | None = None
) -> RestoreResult:
    """Copy the backup ``source`` into the empty store ``db`` (SQLite or PostgreSQL).

    The backup is checked first: a SQLite file, undamaged, a ratebank store at
    a revision this ratebank knows (an earlier one is upgraded on a temporary
    copy). The target must hold no species, reactions, measurements,
    expressions or steric rules; a target that is not yet a store is created.
    Everything is copied in one transaction, with the same ids, and the
    result's content fingerprint is checked against the backup's.

    Raises
    ------
    InvalidBackupError
        ``source`` is missing, not a SQLite file, damaged, not a ratebank store
        or from a newer ratebank.
    RestoreTargetNotEmptyError
        The target store already holds data.
    """
    source = Path(source).expanduser().absolute()
    with tempfile.TemporaryDirectory(prefix="ratebank-restore-") as scratch:
        copy, backup_revision = _checked_copy(source, Path(scratch))
        backup_engine = create_store_engine(f"sqlite:///{copy}")
        try:
            if backup_revision != HEAD_REVISION:
                upgrade_store(backup_engine)
            store = open_store(db, author=author, check=False)
            try:
                return _restore(store, backup_engine, source, backup_revision)
            finally:
                store.close()
        finally:
            backup_engine.dispose()


def _checked_copy(source: Path, scratch: Path) -> tuple[Path, str]:
    """A private copy of the backup file, after checking it is a ratebank store we know."""
    if not source.exists():
        raise InvalidBackupError(f"{source}: no such file")
    if not source.is_file():
        raise InvalidBackupError(f"{source} is not a file; expected a backup file")
    try:
        with open(source, "rb") as handle:
            header = handle.read(len(SQLITE_HEADER))
    except OSError as exc:
        raise InvalidBackupError(f"{source} cannot be read ({exc.strerror})") from None
    if header != SQLITE_HEADER:
        raise InvalidBackupError(
            f"{source} is not a SQLite file; expected a backup written by `ratebank backup`"
        )
    copy = scratch / "backup.db"
    shutil.copyfile(source, copy)
    wal = Path(f"{source}-wal")
    if wal.exists():  # a store file copied by hand while in use: its WAL belongs to it
        shutil.copyfile(wal, Path(f"{copy}-wal"))
    try:
        connection = sqlite3.connect(copy)
        try:
            check = connection.execute("PRAGMA quick_check").fetchone()
            tables = {
                row[0]
                for row in connection.execute("SELECT name FROM sqlite_master WHERE type='table'")
            }
            revision = None
            if "alembic_version" in tables:
                row = connection.execute("SELECT version_num FROM alembic_version").fetchone()
                revision = row[0] if row else None
        finally:
            connection.close()
    except sqlite3.DatabaseError as exc:
        raise InvalidBackupError(f"{source} is damaged or not a SQLite database ({exc})") from None
    if not check or check[0] != "ok":
        found = check[0] if check else "no answer"
        raise InvalidBackupError(f"{source} is damaged (integrity check: {found})")
    if revision is None:
        raise InvalidBackupError(f"{source} is a SQLite file but not a ratebank store")
    if revision not in KNOWN_REVISIONS:
        from ratebank import __version__

        raise InvalidBackupError(
            f"{source} is at schema revision {revision}, unknown to ratebank {__version__} "
            "(probably written by a newer ratebank): upgrade ratebank to restore it"
        )
    return copy, revision


def _prepare_target(store: StoreHandle) -> None:
    """Create the target's schema if it is not a store yet; refuse a newer one."""
    revision = current_revision(store.engine)
    if revision is not None and revision not in KNOWN_REVISIONS:
        from ratebank.store.schema import check_revision

        check_revision(store.engine)  # raises: from a newer ratebank
    if revision is not None and revision != HEAD_REVISION:
        _refuse_if_not_empty(store.engine, store.display_url)
    if revision != HEAD_REVISION:
        upgrade_store(store.engine)


def _counts(connection: Any) -> dict[str, int]:
    return {
        model.__tablename__: connection.execute(select(func.count()).select_from(model)).scalar()
        for model in CONTENT_TABLES
    }


def _refuse_if_not_empty(bind: Any, label: str) -> None:
    with bind.connect() as connection:
        counts = _counts(connection)
    _check_empty(counts, label)


_PLURALS = {
    "species": "species",
    "reaction": "reactions",
    "participant": "participants",
    "measurement_set": "measurement sets",
    "point": "points",
    "expression": "expressions",
    "steric_rule": "steric rules",
}


def _check_empty(counts: dict[str, int], label: str) -> None:
    held = [f"{n} {_PLURALS.get(name, name)}" for name, n in counts.items() if n]
    if held:
        raise RestoreTargetNotEmptyError(
            f"the store {label} is not empty ({', '.join(held)}); restore only into an empty "
            "store: a new file, or a new database after `ratebank init`"
        )


def _restore(
    store: StoreHandle, backup_engine: Engine, source: Path, backup_revision: str
) -> RestoreResult:
    _prepare_target(store)
    with session_scope(backup_engine) as backup_session:
        expected_counts, expected_fingerprint = _content(backup_session)
    target_is_postgres = store.engine.dialect.name == "postgresql"
    with store.session(write=True) as session:
        _check_empty(_counts(session), store.display_url)
        # The target's own trail describes an empty store (its creation); it is kept
        # in the restore's entry and replaced by the backup's trail.
        replaced = [
            {"at": str(entry.at), "author": entry.author, "action": entry.action}
            for entry in session.scalars(select(AuditEntry).order_by(AuditEntry.id))
        ]
        session.execute(AuditEntry.__table__.delete())
        with backup_engine.connect() as backup:
            for table in Base.metadata.sorted_tables:
                _copy_table(session, backup, table)
        if target_is_postgres:
            _advance_sequences(session)
        counts, fingerprint = _content(session)
        if fingerprint != expected_fingerprint or counts != expected_counts:
            raise BackupError(
                f"the restored content does not match {source} (fingerprint {fingerprint}, "
                f"expected {expected_fingerprint}); nothing was written"
            )
        from ratebank.store import audit

        audit.record(
            session,
            "store.restore",
            str(source),
            backup_revision=backup_revision,
            fingerprint=fingerprint,
            counts=counts,
            replaced_audit=replaced,
        )
        audit_entries = session.scalar(select(func.count()).select_from(AuditEntry)) or 0
    return RestoreResult(
        source=source,
        target=store.display_url,
        backup_revision=backup_revision,
        revision=HEAD_REVISION,
        counts=counts,
        fingerprint=fingerprint,
        audit_entries=audit_entries,
        replaced_audit=replaced,
    )


def _copy_table(session: Session, backup: Any, table: Any) -> None:
    from ratebank.store.bulk import insert_rows

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
    target_is_sqlite = session.connection().dialect.name == "sqlite"
    for rows in result.partitions():
        values = [list(row) for row in rows]
        if dates:
            for row in values:
                for i in dates:
                    moment = row[i]
                    if not isinstance(moment, dt.datetime):
                        continue
                    if moment.tzinfo is not None:
                        moment = moment.astimezone(dt.UTC).replace(tzinfo=None)
                    # ratebank writes UTC: naive text for SQLite (as SQLAlchemy does), and
                    # an aware value for PostgreSQL, which would otherwise read it in the
                    # server's own time zone
                    row[i] = (
                        moment.strftime("%Y-%m-%d %H:%M:%S.%f")
                        if target_is_sqlite
                        else moment.replace(tzinfo=dt.UTC)
                    )
        # the driver's bulk path for every table: points arrive by the hundred thousand
        insert_rows(session, table.name, names, values)


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
