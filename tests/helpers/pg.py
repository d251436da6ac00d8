"""A scratch PostgreSQL schema per test, dropped afterwards."""

from __future__ import annotations

import os
import uuid
from collections.abc import Iterator
from contextlib import contextmanager

from sqlalchemy import create_engine, text


def pg_base_url() -> str | None:
    """RATEBANK_TEST_PG_URL as a psycopg 3 URL, or None when not configured."""
    url = os.environ.get("RATEBANK_TEST_PG_URL")
    if not url:
        return None
    if url.startswith("postgresql://"):
        url = "postgresql+psycopg://" + url.split("://", 1)[1]
    return url


@contextmanager
def scratch_schema() -> Iterator[str]:
    """The address of a fresh, empty schema on the test server; dropped on exit."""
    base = pg_base_url()
    assert base, "RATEBANK_TEST_PG_URL is not set"
    schema = "rbtest_" + uuid.uuid4().hex[:12]
    admin = create_engine(base, isolation_level="AUTOCOMMIT")
    with admin.connect() as connection:
        connection.execute(text(f'CREATE SCHEMA "{schema}"'))
    separator = "&" if "?" in base else "?"
    try:
        yield f"{base}{separator}options=-csearch_path%3D{schema}"
    finally:
        with admin.connect() as connection:
            connection.execute(text(f'DROP SCHEMA "{schema}" CASCADE'))
        admin.dispose()


@contextmanager
def scratch_database() -> Iterator[str]:
    """The address of a fresh, empty database on the test server; dropped on exit."""
    base = pg_base_url()
    assert base, "RATEBANK_TEST_PG_URL is not set"
    name = "rbtest_" + uuid.uuid4().hex[:12]
    admin = create_engine(base, isolation_level="AUTOCOMMIT")
    with admin.connect() as connection:
        connection.execute(text(f'CREATE DATABASE "{name}"'))
    head, _, query = base.partition("?")
    url = head.rsplit("/", 1)[0] + "/" + name + (f"?{query}" if query else "")
    try:
        yield url
    finally:
        with admin.connect() as connection:
            connection.execute(text(f'DROP DATABASE "{name}" WITH (FORCE)'))
        admin.dispose()
