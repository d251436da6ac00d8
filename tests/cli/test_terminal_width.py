"""On an 80-column terminal every printed number is whole.

The tables of ``fit``, ``reactions list`` and ``check`` are drawn at
COLUMNS=80, read back cell by cell (continuation lines joined with a space, so
a number split over two lines reads as two), and compared with the ``--json``
values of the same command. The store is the invented demo scenario (every
rate number synthetic).
"""

from __future__ import annotations

import json
import re

import pytest
from helpers.cli import run

from ratebank.report.format import sig, trange
from ratebank.report.layout import ReportTable

NARROW = {"COLUMNS": "80"}
NUMBER = re.compile(r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[-+]?\d+)?")


@pytest.fixture(scope="module")
def demo_db(tmp_path_factory) -> str:
    folder = tmp_path_factory.mktemp("narrow")
    db = str(folder / "demo.db")
    assert run(db, "demo", "--out", str(folder / "out")).exit_code == 0
    return db


def read_table(text: str) -> tuple[list[str], dict[str, dict[str, str]]]:
    """(headers, rows by first cell) of the first rich table in ``text``."""
    lines = text.splitlines()
    assert all(len(line) <= 80 for line in lines), max(lines, key=len)
    header_lines = [line for line in lines if line.startswith("┃")]
    headers: list[str] = []
    for line in header_lines:
        cells = [c.strip() for c in line.strip("┃").split("┃")]
        headers = (
            cells
            if not headers
            else [f"{a} {b}".strip() for a, b in zip(headers, cells, strict=True)]
        )
    rows: dict[str, dict[str, str]] = {}
    current: list[str] | None = None
    for line in lines:
        if not line.startswith("│"):
            if line.startswith("└"):
                break
            continue
        cells = [c.strip() for c in line.strip("│").split("│")]
        assert len(cells) == len(headers), line
        if cells[0]:
            current = cells
            rows.setdefault(cells[0], {})
            rows[cells[0]] = dict(zip(headers, cells, strict=True))
        else:
            assert current is not None
            row = rows[current[0]]
            for header, cell in zip(headers, cells, strict=True):
                if cell:
                    row[header] = f"{row[header]} {cell}".strip()
    return headers, rows


def test_fit_at_80_columns(demo_db):
    outcome = run(demo_db, "fit", env=NARROW)
    assert outcome.exit_code == 0, outcome.stderr
    headers, rows = read_table(outcome.stdout)
    records = {r["key"]: r for r in json.loads(run(demo_db, "fit", "--json").stdout)}
    assert {"reaction", "A (k units·K^-n)", "n", "Ea (kJ/mol)"} <= set(headers)
    assert "Not shown at this width:" in outcome.stdout and "--json" in outcome.stdout
    assert set(rows) == set(records)
    for key, row in rows.items():
        record = records[key]
        assert row["n"] == sig(record["n"]) and float(row["n"]) == pytest.approx(
            record["n"], rel=1e-3, abs=1e-9
        )
        assert float(row["Ea (kJ/mol)"]) == pytest.approx(record["Ea"], rel=1e-3, abs=1e-9)
        a_text, unit = row["A (k units·K^-n)"].split(" ", 1)
        assert float(a_text) == pytest.approx(record["A"], rel=1e-3)
        assert unit == record["k_units"]
        if "T (K)" in row:
            assert row["T (K)"] == trange(record["T_min_K"], record["T_max_K"])


def test_reactions_list_at_80_columns(demo_db):
    outcome = run(demo_db, "reactions", "list", env=NARROW)
    assert outcome.exit_code == 0
    headers, rows = read_table(outcome.stdout)
    records = {r["key"]: r for r in json.loads(run(demo_db, "reactions", "list", "--json").stdout)}
    assert set(rows) == set(records)
    assert {"key", "equation", "status"} <= set(headers)
    for key, row in rows.items():
        record = records[key]
        for header in ("sets", "points", "order", "expressions"):
            if header in row:
                assert int(row[header]) == record[header]
        # the equation reads back whole: no species name split over two lines
        assert row["equation"] == record["equation"]
        assert row["status"] == record["status"]


def test_check_at_80_columns(demo_db):
    outcome = run(demo_db, "check", env=NARROW)
    assert outcome.exit_code == 1  # the demo has findings
    headers, _ = read_table(outcome.stdout)
    assert headers == ["reaction", "check", "finding"]
    findings = []
    key = None
    for line in outcome.stdout.splitlines():
        if line.startswith("│"):
            cells = [c.strip() for c in line.strip("│").split("│")]
            if cells[0]:
                key = cells[0]
                findings.append([key, cells[1], cells[2]])
            else:
                findings[-1][1] = f"{findings[-1][1]} {cells[1]}".strip()
                findings[-1][2] = f"{findings[-1][2]} {cells[2]}".strip()
    report = json.loads(run(demo_db, "check", "--json").stdout)
    # the flags, then what could not be checked, then the notes
    flags = (
        report["flags"]
        + [
            {"key": u["key"], "code": "unchecked", "message": u["reason"]}
            for u in report["unchecked"]
        ]
        + [
            {"key": n["key"], "code": f"note: {n['code']}", "message": n["message"]}
            for n in report["notes"]
        ]
    )
    assert len(findings) == len(flags) > 5
    for (key, code, finding), flag in zip(findings, flags, strict=True):
        assert (key, code) == (flag["key"], flag["code"])
        assert NUMBER.findall(finding) == NUMBER.findall(flag["message"])


def test_a_narrow_table_keeps_numbers_whole_and_says_what_it_left_out():
    from rich.console import Console

    table = ReportTable(title="synthetic", drop=("note",))
    for header in ("key", "value", "range", "note", "more"):
        table.add_column(header, overflow="fold")
    table.add_row("r1", "1.2345e+12", "300-2000", "a long note " * 5, "12/3")
    console = Console(width=40, record=True)
    console.print(table)
    text = console.export_text()
    assert all(len(line) <= 40 for line in text.splitlines())
    assert "1.2345e+12" in text and "300-2000" in text
    assert "Not shown at this width: note" in text and "--json" in text
