"""Schema revisions: create or upgrade a store, and refuse one we do not know.

The revision check (:func:`check_revision`) reads the ``alembic_version`` row
with one SQL query and compares it with :data:`HEAD_REVISION`; Alembic itself is
imported only by :func:`upgrade_store`, which ``ratebank init`` calls.
"""

from __future__ import annotations

from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from sqlalchemy import Engine, inspect, text
from sqlalchemy.exc import OperationalError, ProgrammingError, SQLAlchemyError

from ratebank.errors import StoreError, StoreRevisionError

#: Every revision this ratebank knows, oldest first. A test checks this list
#: against the Alembic scripts shipped in the package.
KNOWN_REVISIONS: tuple[str, ...] = (
    "0001",
    "0002",
    "0003",
    "0004",
    "0005",
    "0006",
    "0007",
    "0008",
    "0009",
    "0010",
    "0011",
)
HEAD_REVISION = KNOWN_REVISIONS[-1]


def migrations_folder() -> Path:
    """The folder holding ``env.py`` and ``versions/`` (installed or in a checkout)."""
    try:
        folder = Path(str(resources.files("ratebank._migrations")))
        if (folder / "env.py").is_file():
            return folder
    except ModuleNotFoundError:
        pass
    checkout = Path(__file__).resolve().parents[2] / "migrations"
    if (checkout / "env.py").is_file():
        return checkout
    raise StoreError("the ratebank installation is missing its migrations folder")


def current_revision(engine: Engine) -> str | None:
    """The store's revision, or None for an empty database (no ratebank tables)."""
    try:
        with engine.connect() as connection:
            row = connection.execute(text("SELECT version_num FROM alembic_version")).first()
    except (OperationalError, ProgrammingError) as exc:
        message = str(exc.orig) if getattr(exc, "orig", None) else str(exc)
        if "alembic_version" in message or "no such table" in message:
            return None
        raise StoreError(f"cannot read the store: {message.splitlines()[0]}") from None
    except SQLAlchemyError as exc:
        raise StoreError(f"cannot read the store: {str(exc).splitlines()[0]}") from None
    return row[0] if row else None


def check_revision(engine: Engine) -> None:
    """Refuse a store that is empty, behind, or from a newer ratebank."""
    revision = current_revision(engine)
    if revision == HEAD_REVISION:
        return
    _refuse_unknown(revision)
    if revision is None:
        raise StoreRevisionError(
            "this database is not a ratebank store yet: run `ratebank init` to create it"
        )
    if revision in KNOWN_REVISIONS:
        raise StoreRevisionError(
            f"the store is at schema revision {revision}, this ratebank needs "
            f"{HEAD_REVISION}: run `ratebank init` to upgrade it"
        )


def _refuse_unknown(revision: str | None) -> None:
    """Refuse a revision this ratebank does not know (a store from a newer ratebank)."""
    if revision is None or revision in KNOWN_REVISIONS:
        return
    from ratebank import __version__

    raise StoreRevisionError(
        f"the store is at schema revision {revision}, unknown to ratebank {__version__} "
        "(probably written by a newer ratebank): upgrade ratebank; the store was not changed"
    )


@dataclass(frozen=True)
class InitResult:
    """What ``ratebank init`` did."""

    before: str | None
    after: str

    @property
    def changed(self) -> bool:
        return self.before != self.after


def _alembic_config(connection):  # type: ignore[no-untyped-def]
    from alembic.config import Config

    config = Config()
    config.set_main_option("script_location", str(migrations_folder()))
    config.attributes["connection"] = connection
    return config


def upgrade_store(engine: Engine, target: str = "head") -> InitResult:
    """Create or upgrade the store's schema through the Alembic revisions."""
    before = current_revision(engine)
    if before is not None and before not in KNOWN_REVISIONS:
        check_revision(engine)  # raises with the "newer ratebank" message
    if before is None:
        names = set(inspect(engine).get_table_names())
        if names - {"alembic_version"}:
            raise StoreError(
                "this database already holds tables that are not a ratebank store "
                f"({', '.join(sorted(names)[:5])}); choose an empty database"
            )
    from alembic import command

    with engine.begin() as connection:
        command.upgrade(_alembic_config(connection), target)
    after = current_revision(engine)
    assert after is not None
    return InitResult(before=before, after=after)


#: First key of the PostgreSQL advisory lock that queues concurrent ``init`` runs
#: (the second is a hash of the schema, so stores in different schemas do not wait).
INIT_LOCK_KEY = 0x72617465


def initialise_store(engine: Engine, *, author: str | None = None) -> InitResult:
    """Create or upgrade the store and write its history entry, in one transaction.

    Concurrent calls queue before they look at the store: SQLite takes its
    write lock (``BEGIN IMMEDIATE``), PostgreSQL a transaction-level advisory
    lock (``pg_advisory_xact_lock``) for the schema. So exactly one of them
    creates the store and writes one ``store.init`` entry, and the others find
    it up to date. A creation or upgrade and its ``store.init`` or
    ``store.upgrade`` entry are committed together: a run stopped anywhere
    leaves the store as it was, or done and recorded.
    """
    with engine.execution_options(ratebank_write=True).begin() as connection:
        _lock_for_init(connection)
        before = _revision_in(connection)
        _refuse_unknown(before)
        if before is None:
            _refuse_foreign_tables(connection)
        if before == HEAD_REVISION:
            return InitResult(before=before, after=before)
        _migrate(connection)
        after = _revision_in(connection)
        assert after is not None
        _record_init(connection, author, before, after)
    return InitResult(before=before, after=after)


def _lock_for_init(connection) -> None:  # type: ignore[no-untyped-def]
    if connection.dialect.name == "postgresql":
        connection.execute(
            text("SELECT pg_advisory_xact_lock(:key, hashtext(coalesce(current_schema(), '')))"),
            {"key": INIT_LOCK_KEY},
        )
    # SQLite: the transaction began with BEGIN IMMEDIATE, which holds the write lock


def _revision_in(connection) -> str | None:  # type: ignore[no-untyped-def]
    # a failed SELECT would abort a PostgreSQL transaction: look for the table first
    if not inspect(connection).has_table("alembic_version"):
        return None
    row = connection.execute(text("SELECT version_num FROM alembic_version")).first()
    return row[0] if row else None


def _refuse_foreign_tables(connection) -> None:  # type: ignore[no-untyped-def]
    names = set(inspect(connection).get_table_names())
    if names - {"alembic_version"}:
        raise StoreError(
            "this database already holds tables that are not a ratebank store "
            f"({', '.join(sorted(names)[:5])}); choose an empty database"
        )


def _migrate(connection) -> None:  # type: ignore[no-untyped-def]
    from alembic import command

    command.upgrade(_alembic_config(connection), "head")


def _record_init(  # type: ignore[no-untyped-def]
    connection, author: str | None, before: str | None, after: str
) -> None:
    from sqlalchemy import insert

    from ratebank.store.models import AuditEntry, utc_now

    connection.execute(
        insert(AuditEntry),
        [
            {
                "at": utc_now(),
                "author": author or "unknown",
                "action": "store.init" if before is None else "store.upgrade",
                "target": None,
                "detail": {"before": before, "after": after},
            }
        ],
    )
