"""The one routine every output goes through: refusals, modes, units, leftovers, errors."""

from __future__ import annotations

import errno
import os
import subprocess
import sys
from pathlib import Path

import pytest

from ratebank import safe_output
from ratebank.errors import OutputError, OutputExistsError


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _dead_pid() -> int:
    process = subprocess.Popen([sys.executable, "-c", "pass"])
    process.wait()
    return process.pid


def _stage_name(target_name: str, pid: int, token: str = "0123456789abcdef") -> str:
    return f".{target_name}.ratebank-{safe_output._host_tag()}-{pid}-{token}"


@pytest.fixture
def store(tmp_path) -> Path:
    path = tmp_path / "store.db"
    path.write_bytes(b"SQLite format 3\x00 the store")
    return path


# --------------------------------------------------------------------------- single files


def test_a_new_file_has_the_umask_mode_and_nothing_else_is_left(tmp_path):
    target = tmp_path / "out.txt"
    assert safe_output.write_file(target, "hello\n") == target
    assert target.read_text() == "hello\n"
    assert target.stat().st_mode & 0o777 == 0o666 & ~_umask()
    assert [p.name for p in tmp_path.iterdir()] == ["out.txt"]


@pytest.mark.parametrize("mask", [0o022, 0o002, 0o077])
def test_the_umask_decides_the_mode_of_new_files_and_folders(tmp_path, mask):
    old = os.umask(mask)
    try:
        safe_output.write_file(tmp_path / "f.csv", b"x")
        safe_output.write_folder(tmp_path / "package", {"a.csv": b"a"})
    finally:
        os.umask(old)
    assert (tmp_path / "f.csv").stat().st_mode & 0o777 == 0o666 & ~mask
    assert (tmp_path / "package").stat().st_mode & 0o777 == 0o777 & ~mask
    assert (tmp_path / "package" / "a.csv").stat().st_mode & 0o777 == 0o666 & ~mask


def test_a_replaced_file_keeps_its_permissions_and_a_limit_narrows_them(tmp_path):
    target = tmp_path / "out.txt"
    target.write_text("old")
    target.chmod(0o640)
    safe_output.write_file(target, "new")
    assert target.read_text() == "new"
    assert target.stat().st_mode & 0o777 == 0o640
    private = tmp_path / "private.db"
    safe_output.write_file(private, b"x", mode_limit=0o600)
    assert private.stat().st_mode & 0o777 == 0o600 & ~_umask()


def test_a_writer_given_a_path_gets_an_empty_file_with_the_final_mode(tmp_path):
    target = tmp_path / "copy.db"
    with safe_output.staged_files([target]) as stage:
        staged = stage.path(target)
        assert staged.read_bytes() == b""
        assert staged.parent != tmp_path  # staged beside, in a folder of its own
        staged.write_bytes(b"written by someone else")
    assert target.read_bytes() == b"written by someone else"
    assert target.stat().st_mode & 0o777 == 0o666 & ~_umask()
    assert [p.name for p in tmp_path.iterdir()] == ["copy.db"]


def test_without_replace_an_existing_file_is_kept(tmp_path):
    target = tmp_path / "backup.db"
    target.write_text("precious")
    with pytest.raises(OutputExistsError, match="already exists"):
        safe_output.write_file(target, b"new", replace=False)
    assert target.read_text() == "precious"
    assert [p.name for p in tmp_path.iterdir()] == ["backup.db"]


def test_a_failure_while_writing_leaves_the_old_file_and_no_temporary(tmp_path):
    target = tmp_path / "plot.png"
    target.write_bytes(b"the earlier plot")

    def half_then_fail(stream):
        stream.write(b"half")
        raise RuntimeError("drawing failed")

    with pytest.raises(RuntimeError, match="drawing failed"):
        safe_output.write_file(target, half_then_fail)
    assert target.read_bytes() == b"the earlier plot"
    assert [p.name for p in tmp_path.iterdir()] == ["plot.png"]


def test_a_full_disk_is_reported_with_the_path(tmp_path, monkeypatch):
    target = tmp_path / "m.csv"

    def full(descriptor):
        # what a file system with delayed allocation reports when the data meet the disk
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(OutputError) as caught:
        safe_output.write_files({target: "a" * 100_000, tmp_path / "m.json": "{}"})
    assert str(caught.value) == f"No space left on device: writing {target}; nothing was written"
    assert list(tmp_path.iterdir()) == []


# --------------------------------------------------------------------------- refusals


def test_the_store_is_refused_by_identity_through_links(tmp_path, store):
    before = store.read_bytes()
    (tmp_path / "hard.db").hardlink_to(store)
    (tmp_path / "soft.db").symlink_to(store)
    (tmp_path / "sub").mkdir()
    (tmp_path / "folder-link").symlink_to(tmp_path)
    for target in (
        store,
        tmp_path / "hard.db",
        tmp_path / "sub" / ".." / "store.db",
        tmp_path / "folder-link" / "store.db",
    ):
        with pytest.raises(OutputError, match="is the store itself"):
            safe_output.write_file(target, b"not a database", store_path=store)
    with pytest.raises(OutputError):  # refused as a link (it also points at the store)
        safe_output.write_file(tmp_path / "soft.db", b"x", store_path=store)
    assert store.read_bytes() == before


@pytest.mark.parametrize("suffix", ["-wal", "-shm", "-journal"])
def test_the_side_files_of_the_store_are_refused(tmp_path, store, suffix):
    side = Path(f"{store}{suffix}")
    with pytest.raises(OutputError, match=f"keeps beside it \\({suffix}\\)"):
        safe_output.write_file(side, b"x", store_path=store)
    assert not side.exists()
    side.write_bytes(b"live log")
    with pytest.raises(OutputError, match="keeps beside it"):
        safe_output.write_file(side, b"x", store_path=store)
    assert side.read_bytes() == b"live log"


def test_non_regular_targets_are_refused_and_kept(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    link = tmp_path / "link.csv"
    link.symlink_to(tmp_path / "elsewhere.csv")
    folder = tmp_path / "folder.csv"
    folder.mkdir()
    cases = [
        (fifo, "a named pipe"),
        (link, "a symbolic link"),
        (folder, "a folder"),
        (Path("/dev/null"), "a device"),
    ]
    for target, kind in cases:
        with pytest.raises(OutputError, match=kind):
            safe_output.write_file(target, b"x")
    assert Path("/dev/null").is_char_device()
    assert fifo.is_fifo() and link.is_symlink() and folder.is_dir()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["folder.csv", "link.csv", "pipe"]


def test_a_missing_folder_is_named(tmp_path):
    with pytest.raises(OutputError, match="does not exist"):
        safe_output.write_file(tmp_path / "missing" / "m.csv", b"x")


# --------------------------------------------------------------------------- leftovers


def test_a_leftover_of_a_dead_process_is_removed_by_the_next_write(tmp_path):
    leftover = tmp_path / _stage_name("m.csv", _dead_pid())
    leftover.mkdir()
    (leftover / "m.csv").write_text("half")
    safe_output.write_file(tmp_path / "m.csv", "whole")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.csv"]


def test_a_leftover_of_a_live_process_or_another_name_is_left_alone(tmp_path):
    live = tmp_path / _stage_name("m.csv", os.getppid())
    other = tmp_path / _stage_name("other.csv", _dead_pid())
    foreign_host = tmp_path / f".m.csv.ratebank-ffffffff-{_dead_pid()}-0123456789abcdef"
    for folder in (live, other, foreign_host):
        folder.mkdir()
    safe_output.write_file(tmp_path / "m.csv", "whole")
    assert live.is_dir() and other.is_dir()
    if safe_output._host_tag() != "ffffffff":
        assert foreign_host.is_dir()


@pytest.mark.parametrize("name", ["*", ".thesis.draft", "?", "[a-z]*", "m.csv.*"])
def test_cleanup_never_matches_a_pattern(tmp_path, name):
    bystanders = [
        ".thesis.draft.tmp",
        ".thesis.draft.ratebank.tmp",
        ".m.csv.x.tmp",
        f".other.ratebank-{safe_output._host_tag()}-{_dead_pid()}-0123456789abcdef",
        "notes.txt",
    ]
    for bystander in bystanders:
        (tmp_path / bystander).write_text("mine")
    safe_output.write_file(tmp_path / name, "output")
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted([*bystanders, name])


def test_an_interrupted_unit_is_finished_by_the_next_write(tmp_path):
    table, descriptor = tmp_path / "m.csv", tmp_path / "m.resource.json"
    table.write_text("old table")
    descriptor.write_text("old descriptor")
    # killed after the commit marker and the first rename
    stage = tmp_path / _stage_name("m.csv", _dead_pid())
    stage.mkdir()
    (stage / "m.resource.json").write_text("new descriptor")
    (stage / safe_output.COMMIT_MARKER).write_text("m.csv\nm.resource.json\n")
    table.write_text("new table")
    safe_output.finish_interrupted(table)
    assert table.read_text() == "new table"
    assert descriptor.read_text() == "new descriptor"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.csv", "m.resource.json"]


def test_an_uncommitted_unit_is_rolled_back(tmp_path):
    table = tmp_path / "m.csv"
    table.write_text("old table")
    stage = tmp_path / _stage_name("m.csv", _dead_pid())
    stage.mkdir()
    (stage / "m.csv").write_text("new table, never committed")
    safe_output.finish_interrupted(table)
    assert table.read_text() == "old table"
    assert [p.name for p in tmp_path.iterdir()] == ["m.csv"]


# --------------------------------------------------------------------------- units and folders


def test_files_of_one_unit_are_written_together(tmp_path):
    paths = safe_output.write_files({tmp_path / "a.csv": "a", tmp_path / "a.json": "{}"})
    assert paths == [tmp_path / "a.csv", tmp_path / "a.json"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.csv", "a.json"]


@pytest.mark.parametrize("exchange", [True, False], ids=["exchange", "move-aside"])
def test_a_folder_is_replaced_whole(tmp_path, monkeypatch, exchange):
    available = exchange and safe_output.EXCHANGE_AVAILABLE
    monkeypatch.setattr(safe_output, "EXCHANGE_AVAILABLE", available)
    target = tmp_path / "package"
    safe_output.write_folder(target, {"datapackage.json": "{1}", "mechanism.csv": "one"})
    safe_output.write_folder(
        target, {"datapackage.json": "{2}", "extra.csv": "x"}, replaceable=["mechanism.csv"]
    )
    assert sorted(p.name for p in target.iterdir()) == ["datapackage.json", "extra.csv"]
    assert (target / "datapackage.json").read_text() == "{2}"
    assert [p.name for p in tmp_path.iterdir()] == ["package"]


def test_a_folder_holding_someone_elses_files_is_not_replaced(tmp_path):
    target = tmp_path / "package"
    target.mkdir()
    (target / "thesis.tex").write_text("years of work")
    with pytest.raises(
        OutputError, match=r"holds files that ratebank did not write \(thesis.tex\)"
    ):
        safe_output.write_folder(target, {"mechanism.csv": "x"})
    assert [p.name for p in target.iterdir()] == ["thesis.tex"]
    assert [p.name for p in tmp_path.iterdir()] == ["package"]


def test_a_folder_target_that_is_a_file_or_would_replace_the_store_is_refused(tmp_path, store):
    with pytest.raises(OutputError, match="not a folder"):
        safe_output.write_folder(store, {"a.csv": "x"})
    package = tmp_path / "pkg"
    package.mkdir()
    (package / "store.db").hardlink_to(store)
    with pytest.raises(OutputError, match="is the store itself"):
        safe_output.write_folder(package, {"store.db": "x"}, store_path=store)
    assert store.read_bytes().startswith(b"SQLite format 3")


def _tree(folder: Path) -> dict[str, str]:
    return {
        p.relative_to(folder).as_posix(): p.read_text() for p in folder.rglob("*") if p.is_file()
    }


@pytest.mark.parametrize("mask", [0o022, 0o077])
def test_a_folder_with_subfolders_is_written_with_the_umask_modes(tmp_path, mask):
    old = os.umask(mask)
    try:
        safe_output.write_folder(
            tmp_path / "book", {"index.html": "i", "pages/a.html": "a", "pages/deep/b.html": "b"}
        )
    finally:
        os.umask(old)
    book = tmp_path / "book"
    assert _tree(book) == {"index.html": "i", "pages/a.html": "a", "pages/deep/b.html": "b"}
    for folder in (book, book / "pages", book / "pages" / "deep"):
        assert folder.stat().st_mode & 0o777 == 0o777 & ~mask
    assert (book / "pages" / "deep" / "b.html").stat().st_mode & 0o777 == 0o666 & ~mask
    assert [p.name for p in tmp_path.iterdir()] == ["book"]


@pytest.mark.parametrize("exchange", [True, False], ids=["exchange", "move-aside"])
def test_a_folder_with_subfolders_is_replaced_only_when_everything_in_it_is_named(
    tmp_path, monkeypatch, exchange
):
    monkeypatch.setattr(
        safe_output, "EXCHANGE_AVAILABLE", exchange and safe_output.EXCHANGE_AVAILABLE
    )
    book = tmp_path / "book"
    safe_output.write_folder(book, {"index.html": "1", "pages/a.html": "a", "old/x.html": "x"})
    (book / "empty").mkdir()
    # "old/x.html" and the empty folder are not in the new book: named as replaceable
    safe_output.write_folder(
        book,
        {"index.html": "2", "pages/b.html": "b"},
        replaceable=["pages/a.html", "old/x.html", "empty"],
    )
    assert _tree(book) == {"index.html": "2", "pages/b.html": "b"}
    assert sorted(p.name for p in book.iterdir()) == ["index.html", "pages"]
    (book / "pages" / "notes.txt").write_text("mine")
    with pytest.raises(OutputError, match=r"did not write \(pages/notes.txt\)"):
        safe_output.write_folder(book, {"index.html": "3", "pages/b.html": "c"})
    assert _tree(book) == {"index.html": "2", "pages/b.html": "b", "pages/notes.txt": "mine"}
    assert [p.name for p in tmp_path.iterdir()] == ["book"]


def test_a_link_inside_a_subfolder_is_not_replaced(tmp_path):
    book = tmp_path / "book"
    safe_output.write_folder(book, {"index.html": "1", "pages/a.html": "a"})
    elsewhere = tmp_path / "elsewhere.html"
    elsewhere.write_text("keep")
    (book / "pages" / "a.html").unlink()
    (book / "pages" / "a.html").symlink_to(elsewhere)
    with pytest.raises(OutputError, match=r"did not write \(pages/a.html\)"):
        safe_output.write_folder(book, {"index.html": "2", "pages/a.html": "new"})
    assert elsewhere.read_text() == "keep"
    assert (book / "pages" / "a.html").is_symlink()


@pytest.mark.parametrize("name", ["", "../x.html", "a//b.html", "a/./b.html", "/abs.html", "a/"])
def test_a_name_that_would_leave_the_folder_is_refused(tmp_path, name):
    with pytest.raises(OutputError, match="is not a file name inside"):
        safe_output.write_folder(tmp_path / "book", {name: "x"})
    assert list(tmp_path.iterdir()) == []


# --------------------------------------------------------------------------- killed folder writes

_FOLDER_WRITER = """
import sys
from ratebank import safe_output
safe_output.EXCHANGE_AVAILABLE = safe_output.EXCHANGE_AVAILABLE and sys.argv[2] == "exchange"
safe_output.write_folder(sys.argv[1], {"a.csv": "new a", "b.json": "new b"})
"""
FOLDER_STEPS = {
    "exchange": ["stage-created", "written:a.csv", "written:b.json", "swapped", "cleaned"],
    "move-aside": [
        "stage-created",
        "written:a.csv",
        "written:b.json",
        "committed",
        "moved:old",
        "moved:package",
        "cleaned",
    ],
}
OLD_SET = {"a.csv": "old a", "b.json": "old b"}
NEW_SET = {"a.csv": "new a", "b.json": "new b"}


def _folder_set(folder: Path) -> dict[str, str] | None:
    if not folder.exists():
        return None
    return {p.name: p.read_text() for p in folder.iterdir()}


@pytest.mark.parametrize(
    ("mode", "step"), [(mode, step) for mode, steps in FOLDER_STEPS.items() for step in steps]
)
def test_a_folder_write_killed_after_any_step_leaves_the_old_or_the_new_set(tmp_path, mode, step):
    if mode == "exchange" and not safe_output.EXCHANGE_AVAILABLE:
        pytest.skip("no atomic exchange of names on this system")
    target = tmp_path / "package"
    target.mkdir()
    for name, content in OLD_SET.items():
        (target / name).write_text(content)
    killed = subprocess.run(
        [sys.executable, "-c", _FOLDER_WRITER, str(target), mode],
        env={**os.environ, safe_output.KILL_AFTER_VARIABLE: step},
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert killed.returncode == -9, killed.stderr
    steps = FOLDER_STEPS[mode]
    done = steps.index(step) >= steps.index("swapped" if mode == "exchange" else "committed")
    seen = _folder_set(target)
    if step == "moved:old":
        assert seen is None  # moved aside, not mixed; the next run puts the new set in
    else:
        assert seen == (NEW_SET if done and step != "committed" else OLD_SET)
    safe_output.finish_interrupted(target)
    assert _folder_set(target) == (NEW_SET if done else OLD_SET)
    assert [p.name for p in tmp_path.iterdir()] == ["package"]
