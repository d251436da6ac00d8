"""Backing up a SQLite store while others use it, and restoring a backup into an empty store.

A backup is made with SQLite's online backup API (Python's
``sqlite3.Connection.backup``) in a single step, so it is one consistent
snapshot even while other processes keep writing (WAL readers do not block
writers). It is written through :mod:`ratebank.safe_output` (staged beside
the target, checked, synced and then moved into place), so the target is never
half-written; an existing file is replaced only when asked (``force``).

PostgreSQL stores are backed up with the server's own tools (``pg_dump`` and
``pg_restore``); :func:`backup_store` says so rather than half-doing it.

A restore copies every row of a backup into an empty store (SQLite or
PostgreSQL) in one transaction and checks that the content fingerprint of the
result is the backup's. A backup from an earlier schema revision is upgraded
on a temporary copy first; the backup file itself is never changed.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import stat
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from sqlalchemy import Engine

from ratebank import __version__, safe_output
from ratebank.errors import ConflictError, OutputExistsError, RefusedError, StoreRevisionError
from ratebank.services.store_access import StoreHandle, open_store
from ratebank.store import audit
from ratebank.store.engine import create_store_engine, is_sqlite, session_scope
from ratebank.store.schema import (
    HEAD_REVISION,
    KNOWN_REVISIONS,
    check_revision,
    current_revision,
    upgrade_store,
)
from ratebank.store.snapshots import (
    audit_entry_count,
    content,
    content_table_counts,
    copy_tables,
    read_only_content,
    sqlite_file_facts,
    take_audit_trail,
    write_sqlite_snapshot,
)

SQLITE_HEADER = b"SQLite format 3\x00"


class BackupError(RefusedError):
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


# --------------------------------------------------------------------------- backup

_EXISTS = "{target} already exists; choose another name, or allow it to be replaced (force)"


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
    _check_backup_source(store)
    source = Path(store.engine.url.database or "")
    target = target.expanduser().absolute()
    _check_backup_target(source, target, force=force)
    revision, counts, fingerprint = _write_backup(store.engine, source, target, force=force)
    return BackupResult(
        path=target,
        source=store.display_url,
        revision=revision,
        bytes=target.stat().st_size,
        counts=counts,
        fingerprint=fingerprint,
    )


def _check_backup_source(store: StoreHandle) -> None:
    """A SQLite ratebank store of a revision this ratebank knows."""
    if not is_sqlite(store.engine):
        raise BackupNotSupportedError(
            f"{store.display_url} is a {store.engine.dialect.name} store: back it up with the "
            "server's own tools (pg_dump -Fc, and pg_restore to restore); a ratebank backup "
            "copies SQLite stores"
        )
    revision = current_revision(store.engine)
    if revision is None:
        raise StoreRevisionError(
            f"{store.display_url} is not a ratebank store (no schema revision); nothing to back up"
        )
    if revision not in KNOWN_REVISIONS:
        check_revision(store.engine)  # raises: from a newer ratebank


def _check_backup_target(source: Path, target: Path, *, force: bool) -> None:
    folder = target.parent
    if not folder.is_dir():
        raise BackupError(f"folder {folder} does not exist; create it or choose another file")
    if target.is_dir():
        raise BackupError(f"{target} is a folder; give a file name such as group-backup.db")
    if target.exists():
        if source.exists() and os.path.samefile(source, target):
            raise BackupError(f"{target} is the store itself; choose another file for the backup")
        if not force:
            raise BackupExistsError(_EXISTS.format(target=target))
    if not os.access(folder, os.W_OK | os.X_OK):
        raise BackupError(f"folder {folder} is not writable; nothing was written")


def _write_backup(
    engine: Engine, source: Path, target: Path, *, force: bool
) -> tuple[str, dict[str, int], str]:
    """Snapshot the store into a file staged beside ``target``, check it and move it into
    place (:mod:`ratebank.safe_output`); (revision, counts, fingerprint) of the copy."""
    # The backup is for the same readers as the store, never more (and the umask applies).
    mode_limit = stat.S_IMODE(source.stat().st_mode) if source.exists() else 0o777
    try:
        with safe_output.staged_files(
            [target], store_path=source, replace=force, mode_limit=mode_limit
        ) as stage:
            temp = stage.path(target)
            facts = write_sqlite_snapshot(engine, temp)
            if facts.integrity != "ok":
                raise BackupError(
                    f"the copy failed its integrity check ({facts.integrity}); nothing written"
                )
            counts, fingerprint = read_only_content(temp)
    except OutputExistsError:
        raise BackupExistsError(_EXISTS.format(target=target)) from None
    assert facts.revision is not None
    return facts.revision, counts, fingerprint


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
    _check_backup_file(source)
    copy = scratch / "backup.db"
    shutil.copyfile(source, copy)
    wal = Path(f"{source}-wal")
    if wal.exists():  # a store file copied by hand while in use: its WAL belongs to it
        shutil.copyfile(wal, Path(f"{copy}-wal"))
    try:
        facts = sqlite_file_facts(copy)
    except sqlite3.DatabaseError as exc:
        raise InvalidBackupError(f"{source} is damaged or not a SQLite database ({exc})") from None
    if facts.integrity != "ok":
        found = facts.integrity if facts.integrity is not None else "no answer"
        raise InvalidBackupError(f"{source} is damaged (integrity check: {found})")
    if facts.revision is None:
        raise InvalidBackupError(f"{source} is a SQLite file but not a ratebank store")
    if facts.revision not in KNOWN_REVISIONS:
        raise InvalidBackupError(
            f"{source} is at schema revision {facts.revision}, unknown to ratebank {__version__} "
            "(probably written by a newer ratebank): upgrade ratebank to restore it"
        )
    return copy, facts.revision


def _check_backup_file(source: Path) -> None:
    """An existing file that starts as a SQLite file does."""
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
            f"{source} is not a SQLite file; expected a backup written by ratebank"
        )


def _prepare_target(store: StoreHandle) -> None:
    """Create the target's schema if it is not a store yet; refuse a newer one."""
    revision = current_revision(store.engine)
    if revision is not None and revision not in KNOWN_REVISIONS:
        check_revision(store.engine)  # raises: from a newer ratebank
    if revision is not None and revision != HEAD_REVISION:
        _check_empty(content_table_counts(store.engine), store.display_url)
    if revision != HEAD_REVISION:
        upgrade_store(store.engine)


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
            "store: a new file, or a new database initialised as a ratebank store"
        )


def _restore(
    store: StoreHandle, backup_engine: Engine, source: Path, backup_revision: str
) -> RestoreResult:
    _prepare_target(store)
    with session_scope(backup_engine) as backup_session:
        expected_counts, expected_fingerprint = content(backup_session)
    with store.session(write=True) as session:
        _check_empty(content_table_counts(session), store.display_url)
        # The target's own trail describes an empty store (its creation); it is kept
        # in the restore's entry and replaced by the backup's trail.
        replaced = take_audit_trail(session)
        copy_tables(session, backup_engine)
        counts, fingerprint = content(session)
        if fingerprint != expected_fingerprint or counts != expected_counts:
            raise BackupError(
                f"the restored content does not match {source} (fingerprint {fingerprint}, "
                f"expected {expected_fingerprint}); nothing was written"
            )
        audit.record(
            session,
            "store.restore",
            str(Path(source).absolute()) if Path(source).exists() else str(source),
            backup_revision=backup_revision,
            fingerprint=fingerprint,
            counts=counts,
            replaced_audit=replaced,
        )
        audit_entries = audit_entry_count(session)
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
