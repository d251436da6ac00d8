"""Fixtures: a fresh store per test, on SQLite and (when configured) PostgreSQL.

Set ``RATEBANK_TEST_PG_URL`` (e.g. ``postgresql://postgres@127.0.0.1:5432/test``)
to run every store test a second time against PostgreSQL; each test then gets
its own schema, dropped afterwards.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from pathlib import Path

import pytest
from helpers.pg import scratch_schema
from hypothesis import settings

settings.register_profile("ci", max_examples=300, derandomize=True, deadline=None)
settings.register_profile("dev", max_examples=100, deadline=None)
settings.load_profile("ci" if os.environ.get("CI") else "dev")

PG_URL = os.environ.get("RATEBANK_TEST_PG_URL")
BACKENDS = ["sqlite"] + (["postgresql"] if PG_URL else [])


@pytest.fixture(params=BACKENDS)
def db_url(request: pytest.FixtureRequest, tmp_path: Path) -> Iterator[str]:
    """The address of a fresh, empty database (not yet initialised)."""
    if request.param == "sqlite":
        yield str(tmp_path / "store.db")
        return
    with scratch_schema() as url:
        yield url


@pytest.fixture
def sqlite_url(tmp_path: Path) -> str:
    """A fresh SQLite store path, for tests of SQLite-only behaviour."""
    return str(tmp_path / "store.db")
