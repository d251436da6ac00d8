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
KNOWN_REVISIONS: tuple[str, ...] = ("0001", "0002", "0003", "0004", "0005")
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
    if revision is None:
        raise StoreRevisionError(
            "this database is not a ratebank store yet: run `ratebank init` to create it"
        )
    if revision in KNOWN_REVISIONS:
        raise StoreRevisionError(
            f"the store is at schema revision {revision}, this ratebank needs "
            f"{HEAD_REVISION}: run `ratebank init` to upgrade it"
        )
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
