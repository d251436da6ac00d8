"""Bulk inserts that go down to the database driver.

Measured points arrive by the hundred thousand; building ORM objects for them
costs about thirty times what the driver's own ``executemany`` (SQLite) or
``COPY`` (PostgreSQL) does, so points take this path. It runs on the
session's own connection, inside the session's transaction.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

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
