"""Bulk inserts that go down to the database driver.

Measured points arrive by the hundred thousand; building ORM objects for them
costs about thirty times what the driver's own ``executemany`` (SQLite) or
``COPY`` (PostgreSQL) does, so points take this path. It runs on the
session's own connection, inside the session's transaction.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Sequence
from typing import Any

from sqlalchemy.orm import Session


def insert_rows(
    session: Session, table: str, columns: Sequence[str], rows: Iterable[Sequence[object]]
) -> None:
    """Insert ``rows`` (tuples in ``columns`` order) into ``table`` with the raw driver."""
    connection = session.connection()
    dialect = connection.dialect.name
    raw = connection.connection.dbapi_connection
    assert raw is not None
    column_list = ", ".join(columns)
    cursor = raw.cursor()
    try:
        if dialect == "postgresql":
            with cursor.copy(f"COPY {table} ({column_list}) FROM STDIN") as copy:
                for row in rows:
                    copy.write_row(row)
        else:
            marks = ", ".join("?" for _ in columns)
            cursor.executemany(f"INSERT INTO {table} ({column_list}) VALUES ({marks})", rows)
    finally:
        cursor.close()


#: Below this many new rows an index is kept up to date row by row.
BULK_LOAD_ROWS = 200_000


class SuspendedIndex:
    """An index dropped for a bulk load and rebuilt before the transaction commits.

    Keeping a B-tree index up to date row by row costs SQLite about a quarter
    of a large insert; building it once from the finished table costs less
    when the new rows are at least as many as those already there (common
    practice for bulk loads). Both steps run inside the session's
    transaction, so a rollback brings the index back untouched, and the index
    is rebuilt from its own stored ``CREATE INDEX`` text, so the schema ends
    exactly as it began. Other dialects keep their indexes (``COPY`` there).
    """

    def __init__(self, session: Session, table: str, index: str):
        self.session = session
        self.table = table
        self.index = index
        self._create: str | None = None

    @staticmethod
    def worth_it(
        session: Session, table: str, new_rows: int, *, at_least: int | None = None
    ) -> bool:
        """True on SQLite when ``new_rows`` is large and not fewer than the rows in ``table``."""
        from sqlalchemy import text

        connection = session.connection()
        if connection.dialect.name != "sqlite" or new_rows < (at_least or BULK_LOAD_ROWS):
            return False
        # MAX(id) walks one edge of the primary key: a bound on the row count, no scan
        existing = connection.execute(text(f"SELECT COALESCE(MAX(id), 0) FROM {table}")).scalar()
        return new_rows >= int(existing or 0)

    def drop(self) -> None:
        from sqlalchemy import text

        if self._create is not None:
            return
        connection = self.session.connection()
        found = connection.execute(
            text("SELECT sql FROM sqlite_master WHERE type = 'index' AND name = :name"),
            {"name": self.index},
        ).scalar()
        if not found:
            return  # nothing to suspend (an older or hand-made store)
        self._create = str(found)
        connection.execute(text(f"DROP INDEX {self.index}"))

    def restore(self) -> None:
        from sqlalchemy import text

        if self._create is None:
            return
        self.session.connection().execute(text(self._create))
        self._create = None


def db_timestamp(session: Session, when: object | None = None) -> object:
    """A UTC timestamp as the session's database stores it.

    SQLAlchemy keeps SQLite datetimes as naive ISO text; raw inserts must
    write the same text so the ORM reads them back.
    """
    import datetime as dt

    moment = when if isinstance(when, dt.datetime) else dt.datetime.now(dt.UTC)
    if session.connection().dialect.name == "sqlite":
        return moment.astimezone(dt.UTC).replace(tzinfo=None).strftime("%Y-%m-%d %H:%M:%S.%f")
    return moment


def insert_returning_ids(
    session: Session, table: str, columns: Sequence[str], rows: list[Sequence[object]]
) -> list[int]:
    """Insert ``rows`` and return their new ids, in order.

    The rows go in with the driver's bulk path (executemany on SQLite, COPY
    on PostgreSQL) while no other writer can add rows to ``table``; the new
    ids are then those above the previous maximum, in order. On SQLite the
    session's write transaction (``BEGIN IMMEDIATE``) already excludes other
    writers. On PostgreSQL the table is locked against other writers (not
    readers) until the transaction ends: ``SHARE ROW EXCLUSIVE`` waits for
    inserts in progress and conflicts with itself, and the id sequence hands
    out increasing values in the order COPY sends the rows.
    """
    from sqlalchemy import text

    if not rows:
        return []
    connection = session.connection()
    postgres = connection.dialect.name == "postgresql"
    if postgres:
        connection.execute(text(f"LOCK TABLE {table} IN SHARE ROW EXCLUSIVE MODE"))
    before = connection.execute(text(f"SELECT COALESCE(MAX(id), 0) FROM {table}")).scalar()
    insert_rows(session, table, columns, rows)
    raw_cursor = connection.connection.dbapi_connection.cursor()  # type: ignore[union-attr]
    try:
        mark = "%s" if postgres else "?"
        # the new ids are usually one unbroken run: three numbers say so without a row each
        raw_cursor.execute(
            f"SELECT MIN(id), MAX(id), COUNT(*) FROM {table} WHERE id > {mark}", (before,)
        )
        low, high, count = raw_cursor.fetchone()
        if count and high - low + 1 == count:
            ids = list(range(low, high + 1))
        else:
            raw_cursor.execute(f"SELECT id FROM {table} WHERE id > {mark} ORDER BY id", (before,))
            ids = [row[0] for row in raw_cursor.fetchall()]
    finally:
        raw_cursor.close()
    if len(ids) != len(rows):
        raise RuntimeError(f"inserted {len(rows)} rows into {table} but found {len(ids)} ids")
    return ids


def json_adapter(session: Session) -> Callable[[object], object]:
    """The function that turns a value into what a raw insert into a JSON column takes.

    SQLite keeps JSON as text (the encoding the engine's JSON type reads
    back); PostgreSQL's driver takes a wrapped value. Look it up once per
    bulk insert, not per row.
    """
    from ratebank.store.json_codec import dumps

    if session.connection().dialect.name == "sqlite":
        return dumps
    from psycopg.types.json import Json

    return lambda value: Json(value, dumps=dumps)


def fetch_in(
    session: Session, query: str, ids: Sequence[object], *, batch: int = 5000
) -> list[tuple[Any, ...]]:
    """The rows of ``query`` for every value of ``ids``, through the raw driver.

    ``query`` holds one ``IN ({marks})`` where the list goes, e.g.
    ``"SELECT id, key FROM reaction WHERE id IN ({marks})"``; on SQLite it runs
    once per ``batch`` values (well under its 32,766 bound parameters), on
    PostgreSQL as ``= ANY(array)``. Whole mechanisms ask for tens of
    thousands of ids at once; compiling each statement and building a result
    row object per row would cost more than the query itself.
    """
    if not ids:
        return []
    connection = session.connection()
    postgres = connection.dialect.name == "postgresql"
    if postgres:
        # one array parameter: psycopg would otherwise parse thousands of placeholders
        if "IN ({marks})" not in query:
            raise ValueError("fetch_in needs a query with 'IN ({marks})'")
        query = query.replace("IN ({marks})", "= ANY(%s)")
    raw = connection.connection.dbapi_connection
    assert raw is not None
    rows: list[tuple[Any, ...]] = []
    cursor = raw.cursor()
    try:
        for start in range(0, len(ids), batch):
            chunk = list(ids[start : start + batch])
            if postgres:
                cursor.execute(query, (chunk,))
            else:
                cursor.execute(query.format(marks=", ".join(["?"] * len(chunk))), chunk)
            rows.extend(cursor.fetchall())
    finally:
        cursor.close()
    return rows


def fetch_all(session: Session, query: Any) -> list[tuple[Any, ...]]:
    """Every row of a Core ``query`` as plain tuples, through the raw driver.

    The query is compiled with its values inline, so it must carry no values
    from outside the program (keys, names): only ids and constants.
    """
    rows: list[tuple[Any, ...]] = []
    for batch in fetch_batches(session, query, size=None):
        rows.extend(batch)
    return rows


def fetch_batches(
    session: Session, query: Any, size: int | None = 2_000
) -> Iterator[list[tuple[Any, ...]]]:
    """The rows of a Core ``query`` through the raw driver, ``size`` at a time (all at
    once for None); ids and constants only, as for :func:`fetch_all`."""
    connection = session.connection()
    compiled = query.compile(dialect=connection.dialect, compile_kwargs={"literal_binds": True})
    raw = connection.connection.dbapi_connection
    assert raw is not None
    cursor = raw.cursor()
    try:
        cursor.execute(str(compiled))
        if size is None:
            yield cursor.fetchall()
            return
        while batch := cursor.fetchmany(size):
            yield batch
    finally:
        cursor.close()
