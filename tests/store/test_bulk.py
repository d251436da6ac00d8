"""Bulk-load helpers of store/bulk.py: an index suspended for a large import."""

from __future__ import annotations

import sqlite3

import pytest
from helpers.cli import run, snapshot, write

from ratebank.errors import ImportValidationError
from ratebank.io.csv_import import import_measurements_file
from ratebank.services.store_access import open_store
from ratebank.store import bulk

HEADER = "set,reaction,T_K,k,k_units\n"


@pytest.fixture
def store(sqlite_url):
    assert run(sqlite_url, "init").exit_code == 0
    for name, formula in (("A", "H"), ("B", "Cl"), ("AB", "HCl")):
        assert run(sqlite_url, "species", "add", name, formula).exit_code == 0
    assert run(sqlite_url, "reactions", "add", "ab", "A + B -> AB").exit_code == 0
    return sqlite_url


@pytest.fixture
def drops(monkeypatch):
    """Every import counts as large; records each index actually dropped."""
    monkeypatch.setattr(bulk, "BULK_LOAD_ROWS", 1)
    dropped: list[str] = []
    original = bulk.SuspendedIndex.drop

    def spy(self):
        original(self)
        if self._create is not None:
            dropped.append(self.index)

    monkeypatch.setattr(bulk.SuspendedIndex, "drop", spy)
    return dropped


def _index_sql(url: str) -> list[tuple[str, str]]:
    connection = sqlite3.connect(url.removeprefix("sqlite:///"))
    try:
        return connection.execute(
            "SELECT name, sql FROM sqlite_master WHERE type = 'index' AND tbl_name = 'point' "
            "ORDER BY name"
        ).fetchall()
    finally:
        connection.close()


def _import(url: str, path, chunk_rows: int = 3):
    handle = open_store(url)
    try:
        with handle.session(write=True) as session:
            return import_measurements_file(session, path, chunk_rows=chunk_rows)
    finally:
        handle.close()


def _rows(n: int, *, bad_at: int | None = None) -> str:
    lines = []
    for i in range(n):
        k = "-1" if i == bad_at else f"{1e-12 * (1 + i % 5):.3e}"
        lines.append(f"s{i // 4},ab,{300 + 10 * (i % 4)},{k},cm3/molecule/s\n")
    return HEADER + "".join(lines)


def test_large_import_suspends_the_point_index_and_rebuilds_it(store, tmp_path, drops):
    before = _index_sql(store)
    assert ("ix_point_set_id", "CREATE INDEX ix_point_set_id ON point (set_id)") in before
    summary = _import(store, write(tmp_path / "points.csv", _rows(20)))
    assert summary.added == 20
    assert drops == ["ix_point_set_id"]
    assert _index_sql(store) == before
    connection = sqlite3.connect(store.removeprefix("sqlite:///"))
    try:
        assert connection.execute("PRAGMA integrity_check").fetchone() == ("ok",)
        # the rebuilt index serves the per-set lookups fit and plot make
        plan = connection.execute(
            "EXPLAIN QUERY PLAN SELECT * FROM point WHERE set_id = 1"
        ).fetchall()
        assert "ix_point_set_id" in " ".join(str(step) for step in plan)
        assert connection.execute("SELECT count(*) FROM point").fetchone() == (20,)
    finally:
        connection.close()


def test_a_late_problem_leaves_store_and_index_as_they_were(store, tmp_path, drops):
    before_rows, before_index = snapshot(store), _index_sql(store)
    # the bad row is in the last chunk: earlier chunks were written, then rolled back
    path = write(tmp_path / "points.csv", _rows(20, bad_at=19))
    with pytest.raises(ImportValidationError) as err:
        _import(store, path)
    assert any(":21: k: -1 must be greater than zero" in p for p in err.value.problems)
    assert drops == ["ix_point_set_id"]
    assert _index_sql(store) == before_index
    assert snapshot(store) == before_rows


def test_small_import_into_a_larger_table_keeps_the_index(store, tmp_path, monkeypatch):
    assert _import(store, write(tmp_path / "first.csv", _rows(40))).added == 40
    monkeypatch.setattr(bulk, "BULK_LOAD_ROWS", 1)
    handle = open_store(store)
    try:
        with handle.session() as session:
            # 10 new rows into a table holding 40: row-by-row upkeep is cheaper
            assert not bulk.SuspendedIndex.worth_it(session, "point", 10)
            assert bulk.SuspendedIndex.worth_it(session, "point", 40)
    finally:
        handle.close()


def test_only_sqlite_suspends_indexes(db_url):
    assert run(db_url, "init").exit_code == 0
    handle = open_store(db_url)
    try:
        with handle.session() as session:
            # PostgreSQL loads with COPY and keeps its indexes up to date
            expected = session.connection().dialect.name == "sqlite"
            assert bulk.SuspendedIndex.worth_it(session, "point", 10**6) is expected
            assert not bulk.SuspendedIndex.worth_it(session, "point", 10)  # too few to matter
    finally:
        handle.close()
