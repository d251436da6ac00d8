"""Opening a store: the handle whose sessions every service works in.

>>> from ratebank.services.species import list_species      # doctest: +SKIP
>>> store = open_store("group.db", author="ada")             # doctest: +SKIP
>>> with store.session() as session:                         # doctest: +SKIP
...     list_species(session)
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from sqlalchemy import Engine
from sqlalchemy.orm import Session

from ratebank.errors import StoreError
from ratebank.store.engine import (
    create_store_engine,
    database_url,
    default_author,
    mask_url,
    session_scope,
)
from ratebank.store.quick_listings import store_counts as _store_counts
from ratebank.store.schema import InitResult, check_revision, initialise_store


@dataclass
class StoreHandle:
    """An opened store: its address (password masked), engine and author."""

    url: str = field(repr=False)  # may hold a password: never in a repr
    engine: Engine = field(repr=False)
    author: str = ""

    @property
    def display_url(self) -> str:
        return mask_url(self.url)

    @contextmanager
    def session(self, *, write: bool = False) -> Iterator[Session]:
        """One transaction; committed when the block ends without an error."""
        with session_scope(self.engine, write=write, author=self.author) as session:
            yield session

    def close(self) -> None:
        self.engine.dispose()


def open_store(
    db: str | None = None,
    *,
    author: str | None = None,
    check: bool = True,
    must_exist: bool | None = None,
) -> StoreHandle:
    """Open the store named by ``db`` (path or URL), ``RATEBANK_DB`` or ``./ratebank.db``.

    With ``check`` (the default) a store whose schema revision is not this
    ratebank's head is refused with a message saying what to run. A SQLite
    file that does not exist is refused before anything touches the disk
    (so no empty file is left behind) when ``must_exist``, which defaults to
    ``check``; ``init`` and ``restore`` create it.
    """
    url = database_url(db)
    if check if must_exist is None else must_exist:
        _refuse_missing_file(url)
    engine = create_store_engine(url)
    if check:
        try:
            check_revision(engine)
        except Exception:
            engine.dispose()
            raise
    return StoreHandle(url=url, engine=engine, author=author or default_author())


def _refuse_missing_file(url: str) -> None:
    if not url.startswith("sqlite:///"):
        return
    path = url[len("sqlite:///") :]
    if path in ("", ":memory:") or Path(path).exists():
        return
    raise StoreError(
        f"there is no store at {path} (no such file); nothing was created; make one with "
        f"`ratebank --db {path} init`, or name the store you meant with --db"
    )


def init_store(
    db: str | None = None, *, author: str | None = None
) -> tuple[StoreHandle, InitResult]:
    """Create the store, or upgrade it to this ratebank's schema; a no-op at head.

    The change and its history entry are one transaction, and concurrent runs
    queue, so exactly one of them creates the store (see
    :func:`ratebank.store.schema.initialise_store`).
    """
    store = open_store(db, author=author, check=False)
    try:
        result = initialise_store(store.engine, author=store.author)
    except BaseException:
        store.close()
        raise
    return store, result


def store_counts(session: Session) -> dict[str, int]:
    """How many species, reactions, measurement sets, points and expressions the store holds."""
    return _store_counts(session)
