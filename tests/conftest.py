"""Fixtures: a fresh store per test, on SQLite and (when configured) PostgreSQL.

Set ``RATEBANK_TEST_PG_URL`` (e.g. ``postgresql://postgres@127.0.0.1:5432/test``)
to run every store test a second time against PostgreSQL; each test then gets
its own schema, dropped afterwards.
"""

from __future__ import annotations

import os
import uuid
from collections.abc import Iterator
from pathlib import Path

import pytest
from hypothesis import settings
from sqlalchemy import create_engine, text

settings.register_profile("ci", max_examples=300, derandomize=True, deadline=None)
settings.register_profile("dev", max_examples=100, deadline=None)
settings.load_profile("ci" if os.environ.get("CI") else "dev")

PG_URL = os.environ.get("RATEBANK_TEST_PG_URL")
BACKENDS = ["sqlite"] + (["postgresql"] if PG_URL else [])


def _pg_base_url() -> str:
    assert PG_URL
    url = PG_URL
    if url.startswith("postgresql://"):
        url = "postgresql+psycopg://" + url.split("://", 1)[1]
    return url


@pytest.fixture(params=BACKENDS)
def db_url(request: pytest.FixtureRequest, tmp_path: Path) -> Iterator[str]:
    """The address of a fresh, empty database (not yet initialised)."""
    if request.param == "sqlite":
        yield str(tmp_path / "store.db")
        return
    schema = "rbtest_" + uuid.uuid4().hex[:12]
    base = _pg_base_url()
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


@pytest.fixture
def sqlite_url(tmp_path: Path) -> str:
    """A fresh SQLite store path, for tests of SQLite-only behaviour."""
    return str(tmp_path / "store.db")
