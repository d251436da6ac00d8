"""Where and how the mechanism export writes: never the store, never a non-regular file,
text cells safe in a spreadsheet, permissions from the umask, its own temporary files only."""

from __future__ import annotations

import csv
import io
import json
import os
import stat
import time
from pathlib import Path

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import SPECIES_CSV

# Keys and references a spreadsheet would run as formulas (synthetic rate numbers).
FORMULA_KEYS = ['=HYPERLINK("http://example.invalid/x")', "+SUM(1+1)", "-2+3", "'quoted"]
REACTIONS = (
    "key,equation\n"
    '"=HYPERLINK(""http://example.invalid/x"")",OH + CH4 -> CH3 + H2O\n'
    '"+SUM(1+1)",H2O2 -> OH + OH\n'
    '"-2+3",H + O2 -> HO2\n'
    "'quoted,H + O3 -> O2 + OH\n"
    "plain,HO2 + HO2 -> H2O2 + O2\n"
)
REFERENCES = ["@SUM(1+1)*cmd|' /C calc'!A0", "-1+2", "+cmd", "=1+1", "a plain one"]


@pytest.fixture
def store(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    assert (
        run(db_url, "species", "import", str(write(tmp_path / "s.csv", SPECIES_CSV))).exit_code == 0
    )
    outcome = run(db_url, "reactions", "import", str(write(tmp_path / "r.csv", REACTIONS)))
    assert outcome.exit_code == 0, outcome.stderr
    keys = [*FORMULA_KEYS, "plain"]
    orders = [2, 1, 2, 2, 2]
    units = {1: "s-1", 2: "cm3/molecule/s"}
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["reaction", "A", "n", "Ea", "Ea_units", "k_units", "reference"])
    for key, order, reference in zip(keys, orders, REFERENCES, strict=True):
        # a negative activation energy: a number that begins with '-' stays a number
        writer.writerow([key, "1e-12", "0", "-2.5", "kJ/mol", units[order], reference])
    path = tmp_path / "e.csv"
    path.write_text(buffer.getvalue(), encoding="utf-8")
    outcome = run(db_url, "expressions", "import", str(path))
    assert outcome.exit_code == 0, outcome.stderr
    return db_url


def _rows(path: Path) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(path.read_text(encoding="utf-8"), newline="")))


def test_formula_like_text_cells_get_an_apostrophe_and_numbers_stay(store, tmp_path):
    out = tmp_path / "m"
    outcome = run(store, "export", str(out))
    assert outcome.exit_code == 0, outcome.stderr
    rows = {row["key"]: row for row in _rows(out / "mechanism.csv")}
    assert set(rows) == {"'" + key for key in FORMULA_KEYS} | {"plain"}
    for row in rows.values():
        assert row["Ea"] == "-2.5"  # numbers are written as they are
        assert float(row["A"]) > 0  # (in the preset's unit)
        cell = row["references"]
        assert cell[:1] not in ("=", "+", "-", "@", "\t", "\r")
    references = {row["references"] for row in rows.values()}
    assert references == {"'" + r for r in REFERENCES[:4]} | {"a plain one"}
    # removing the one leading apostrophe gives the stored text back
    assert {k[1:] if k.startswith("'") else k for k in rows} == {*FORMULA_KEYS, "plain"}
    descriptor = json.loads((out / "datapackage.json").read_text(encoding="utf-8"))
    rule = descriptor["ratebank"]["text_cells"]
    assert (
        "apostrophe" in rule and "=, +, -, @" in rule and "Numbers are written as they are" in rule
    )


@pytest.mark.parametrize(
    ("cell", "written"),
    [
        ("=1+1", "'=1+1"),
        ("+1", "'+1"),
        ("-1", "'-1"),
        ("@A1", "'@A1"),
        ("\tlead", "'\tlead"),
        ("\rlead", "'\rlead"),
        ("'a", "''a"),
        ("a=1", "a=1"),
        ("", ""),
    ],
)
def test_neutralised_text(cell, written):
    # the common practice against formula injection: an apostrophe before a formula start
    from ratebank.io.export import neutralised_text

    assert neutralised_text(cell) == written


def test_the_export_still_validates_as_a_table(store, tmp_path):
    frictionless = pytest.importorskip("frictionless")
    out = tmp_path / "m"
    assert run(store, "export", str(out)).exit_code == 0
    report = frictionless.validate(str(out / "datapackage.json"))
    assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "note"])


# --------------------------------------------------------------------------- never the store


def _sqlite_only(db: str) -> Path:
    if "://" in db:
        pytest.skip("a database server has no store file to overwrite")
    return Path(db)


@pytest.mark.parametrize("how", ["itself", "hard-link", "symbolic-link", "dotted-path", "wal"])
def test_export_onto_the_store_is_refused_and_the_store_keeps_working(store, tmp_path, how):
    path = _sqlite_only(store)
    targets = {
        "itself": path,
        "hard-link": tmp_path / "hard",
        "symbolic-link": tmp_path / "soft",
        "dotted-path": path.parent / "." / path.name,
        "wal": Path(f"{path}-wal"),
    }
    if how == "hard-link":
        targets[how].hardlink_to(path)
    if how == "symbolic-link":
        targets[how].symlink_to(path)
    before, content = snapshot(store), path.read_bytes()
    outcome = run(store, "export", str(targets[how]))
    assert outcome.exit_code == 1
    assert len(outcome.stderr.strip().splitlines()) == 1
    assert outcome.stderr.startswith("Error: ")
    assert "the store" in outcome.stderr and "nothing was written" in outcome.stderr
    assert path.read_bytes() == content
    assert snapshot(store) == before
    assert run(store, "reactions", "list").exit_code == 0


def test_plot_and_backup_onto_the_store_are_refused(store, tmp_path):
    path = _sqlite_only(store)
    link = tmp_path / "store-plot.png"
    link.symlink_to(path)
    content = path.read_bytes()
    plotted = run(store, "plot", "plain", "-o", str(link))
    assert plotted.exit_code == 1
    assert plotted.stderr.startswith("Error: ")
    backed = run(store, "backup", str(path), "--force")
    assert backed.exit_code == 1
    assert "is the store itself" in backed.stderr
    assert path.read_bytes() == content


# --------------------------------------------------------------------------- non-regular targets


@pytest.mark.parametrize("command", ["export", "plot", "backup"])
def test_a_fifo_or_a_device_is_never_replaced(store, tmp_path, command):
    fifo = tmp_path / "pipe.png"
    os.mkfifo(fifo)
    targets = [fifo, Path("/dev/null")]
    for target in targets:
        args = {
            "export": ["export", str(target)],
            "plot": ["plot", "plain", "-o", str(target)],
            "backup": ["backup", str(target), "--force"],
        }[command]
        if command == "backup" and "://" in store:
            continue  # PostgreSQL is backed up with pg_dump
        before = snapshot(store)
        outcome = run(store, *args)
        assert outcome.exit_code != 0, (command, target)
        assert outcome.stderr.startswith("Error: ")
        assert snapshot(store) == before
    assert stat.S_ISFIFO(fifo.lstat().st_mode)
    assert stat.S_ISCHR(Path("/dev/null").lstat().st_mode)
    # nothing was left beside them either
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".pipe")]


def test_the_refusal_names_what_the_target_is(store, tmp_path):
    fifo = tmp_path / "m"
    os.mkfifo(fifo)
    outcome = run(store, "export", str(fifo))
    assert outcome.stderr == (
        f"Error: {fifo} is a named pipe (FIFO), not a regular file; give the path of a new "
        "or a regular file; nothing was written\n"
    )
    device = run(store, "export", "/dev/null")
    assert "/dev/null is a device, not a regular file" in device.stderr


# --------------------------------------------------------------------------- permissions


@pytest.mark.parametrize("mask", [0o022, 0o002, 0o077])
def test_exports_honour_the_umask(store, tmp_path, mask):
    old = os.umask(mask)
    try:
        outcome = run(store, "export", str(tmp_path / "m"))
    finally:
        os.umask(old)
    assert outcome.exit_code == 0, outcome.stderr
    assert (tmp_path / "m").stat().st_mode & 0o777 == 0o777 & ~mask
    names = ("datapackage.json", "mechanism.csv", "efficiencies.csv", "species.csv")
    assert sorted(p.name for p in (tmp_path / "m").iterdir()) == sorted(names)
    for name in names:
        assert (tmp_path / "m" / name).stat().st_mode & 0o777 == 0o666 & ~mask, name


# --------------------------------------------------------------------------- temporary files


def test_cleanup_never_treats_the_output_name_as_a_pattern(store, tmp_path):
    folder = tmp_path / "d"
    folder.mkdir()
    bystanders = [".thesis.draft.tmp", ".notes.x.tmp", ".m.abc.tmp"]
    an_hour_ago = time.time() - 7200
    for name in bystanders:
        (folder / name).write_text("someone's work")
        os.utime(folder / name, (an_hour_ago, an_hour_ago))
    outcome = run(store, "export", str(folder / "*"))
    assert outcome.exit_code == 0, outcome.stderr
    assert sorted(p.name for p in folder.iterdir()) == sorted([*bystanders, "*"])
    for name in bystanders:
        assert (folder / name).read_text() == "someone's work"


def test_a_failed_export_leaves_no_temporary_file(store, tmp_path, monkeypatch):
    import errno

    out = tmp_path / "out"
    out.mkdir()
    assert run(store, "export", str(out / "m")).exit_code == 0
    earlier = {p.name: p.read_bytes() for p in (out / "m").iterdir()}
    (out / "m" / "mechanism.csv").write_bytes(b"the earlier table")
    earlier["mechanism.csv"] = b"the earlier table"

    def full(descriptor):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    before = snapshot(store)
    monkeypatch.setattr(os, "fsync", full)
    outcome = run(store, "export", str(out / "m"))
    monkeypatch.undo()
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith(f"Error: No space left on device: writing {out / 'm'}")
    assert outcome.stderr.endswith("; nothing was written\n")
    assert len(outcome.stderr.splitlines()) == 1
    # the earlier package is there, whole, and nothing else
    assert sorted(p.name for p in out.iterdir()) == ["m"]
    assert {p.name: p.read_bytes() for p in (out / "m").iterdir()} == earlier
    assert snapshot(store) == before
