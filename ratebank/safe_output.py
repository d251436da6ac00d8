"""Every file ratebank writes goes through here: exports, plots, backups, the review book.

One routine decides how a file reaches the disk, so that every output makes the
same promises:

* **Never the store.** A target that is the store itself (the same device and
  inode, links resolved) or one of its side files (``-wal``, ``-shm``,
  ``-journal``) is refused; so is an existing target that is not a regular file
  (a folder, a FIFO, a device node, a socket, a symbolic link), which a rename
  would otherwise replace by a plain file.
* **Whole or not at all.** Everything is written into a staging folder beside
  the target (same file system, so renames are atomic), synced, and then moved
  into place:

  - one file (a plot, a backup): one rename over the target, so a reader sees
    the old file or the new one, never a part of either;
  - several files that belong together (the mechanism table and its
    descriptor): all are staged and synced, then a commit marker is written,
    then they are renamed into place one by one. POSIX cannot rename two
    names at once, so a kill between two of those renames leaves the new
    first file beside the old second one, with the staging folder and its
    marker beside them. The next write to the same target finishes that
    replacement first (roll forward), so a mix never outlives the next run;
    a kill before the marker leaves the old files untouched;
  - a folder (a data package; the review book, with its subfolders): staged
    whole and swapped with the old folder in one atomic exchange of the two
    names (Linux ``renameat2``), so a reader that opens the folder sees the
    old set or the new set, never a mix. Where the exchange is not available
    the old folder is moved aside and the new one moved in, after a commit
    marker: between those two renames the folder is briefly absent (never
    mixed), and a kill there is finished by the next run.
* **Permissions as for any file the user makes.** New files are created with
  mode ``0o666`` and new folders with ``0o777``, less the umask. A file that
  replaces an existing one keeps the old one's permission bits. A caller may
  narrow the mode further (a backup is never more readable than its store).
* **Its own temporary files only.** A failure removes the staging folder it
  made, by its exact name. Nothing is ever matched by a pattern built from a
  user's file name: a staging folder is named
  ``.<target name>.ratebank-<host>-<pid>-<token>`` (host: a short hash of the
  machine's name; token: 16 random hex digits), and a leftover of a killed run
  is recognised by parsing exactly that form. It is cleaned up (rolled forward
  when its marker says so, else removed) by the next write to the same target,
  and only when its owner process is gone; a leftover of another machine
  sharing the folder is left alone.
* **Errors name the path.** Any operating-system error ends as
  :class:`~ratebank.errors.OutputError` such as
  ``No space left on device: writing /data/m.csv; nothing was written``.

Concurrent writers of the same folder take an advisory lock on the folder
(``flock``) while they move files into place, so two exports to one name
cannot interleave their renames.

For tests, the environment variable ``RATEBANK_TEST_KILL_AFTER`` names a step
(see :data:`STEP_NAMES`); the process kills itself (SIGKILL) right after that
step. Nothing else reads it.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import hashlib
import os
import re
import secrets
import shutil
import signal
import socket
import stat
from collections.abc import Callable, Iterator, Mapping, Sequence
from pathlib import Path
from typing import BinaryIO

from ratebank.errors import OutputError, OutputExistsError

#: The test seam: kill this process right after the named step.
KILL_AFTER_VARIABLE = "RATEBANK_TEST_KILL_AFTER"
#: Every step a write passes through, in order (``written:NAME`` and
#: ``moved:NAME`` once per file; ``swapped`` only for a folder).
STEP_NAMES = (
    "stage-created",
    "written:NAME",
    "committed",
    "moved:NAME",
    "swapped",
    "cleaned",
)
#: Side files SQLite keeps beside a store; replacing one would damage the store.
STORE_SIDE_FILES = ("-wal", "-shm", "-journal")
#: The commit marker inside a staging folder: the names to move, one per line.
COMMIT_MARKER = "COMMIT"
#: Inside a folder's staging folder: the new folder, and the old one moved aside.
STAGED_FOLDER = "new"
OLD_FOLDER = "old"

Content = bytes | str | Callable[[BinaryIO], None]

_STAGE_NAME = re.compile(
    r"\.(?P<label>.+)\.ratebank-(?P<host>[0-9a-f]{8})-(?P<pid>[0-9]+)-(?P<token>[0-9a-f]{16})"
)


# --------------------------------------------------------------------------- public


def check_target(target: Path | str, *, store_path: str | Path | None = None) -> Path:
    """Refuse a target that must not be written; return it as an absolute path.

    Parameters
    ----------
    target : path
        The file (or folder, for :func:`write_folder`) to be written.
    store_path : path or None
        The SQLite store in use (None for a database server): it and its side
        files are refused.

    Raises
    ------
    OutputError
        The target is the store or one of its side files, or it exists and is
        not a regular file.
    """
    target = Path(target).expanduser().absolute()
    _refuse_store(target, store_path)
    info = _lstat(target)
    if info is not None and not stat.S_ISREG(info.st_mode):
        raise OutputError(f"{target} is {_kind(info.st_mode)}, not a regular file; {_ADVICE}")
    return target


def write_file(
    target: Path | str,
    content: Content,
    *,
    store_path: str | Path | None = None,
    replace: bool = True,
    mode_limit: int = 0o777,
) -> Path:
    """Write one file atomically (see the module docstring); return its path.

    ``content`` is bytes, text (written as UTF-8) or a function that writes
    to a binary stream. With ``replace=False`` an existing target (even one
    that appears while writing) is refused with :class:`FileExistsError`
    turned into :class:`OutputError`.
    """
    return write_files(
        {Path(target): content}, store_path=store_path, replace=replace, mode_limit=mode_limit
    )[0]


def write_files(
    contents: Mapping[Path, Content] | Sequence[tuple[Path, Content]],
    *,
    store_path: str | Path | None = None,
    replace: bool = True,
    mode_limit: int = 0o777,
) -> list[Path]:
    """Write files of one folder as one unit (see the module docstring); return their paths.

    The first file names the staging folder; all must be in the same folder.
    """
    with staged_files(
        [Path(t) for t, _ in _items(contents)],
        store_path=store_path,
        replace=replace,
        mode_limit=mode_limit,
    ) as stage:
        for target, content in _items(contents):
            stage.write(target, content)
    return stage.targets


@contextlib.contextmanager
def staged_files(
    targets: Sequence[Path | str],
    *,
    store_path: str | Path | None = None,
    replace: bool = True,
    mode_limit: int = 0o777,
) -> Iterator[FileStage]:
    """Stage files of one folder, then move them into place as one unit.

    Inside the block, write each target through ``stage.write`` or to
    ``stage.path(target)`` (for writers that need a path, such as SQLite's
    backup). When the block ends without an error the files are synced,
    committed and moved into place; on any error the staging folder is removed
    and the targets are as they were.
    """
    stage = FileStage(targets, store_path=store_path, replace=replace, mode_limit=mode_limit)
    try:
        yield stage
        stage.finish()
    except BaseException:
        stage.abandon()
        raise


def write_folder(
    target: Path | str,
    contents: Mapping[str, Content],
    *,
    store_path: str | Path | None = None,
    replaceable: Sequence[str] = (),
) -> Path:
    """Write a folder of files as one unit (see the module docstring); return its path.

    A name in ``contents`` may lie in subfolders (``"pages/a.html"``, with
    ``/`` between the parts); the subfolders are made as needed. An existing
    ``target`` is replaced only if it is a folder holding nothing but regular
    files and subfolders named in ``contents`` or ``replaceable`` (or holding
    such files); anything else in it is the user's, and the write is refused.
    """
    target = Path(target).expanduser().absolute()
    folder = _checked_folder(target)
    _refuse_store(target, store_path)
    names = list(contents)
    for name in names:
        _check_inner_name(name, target)
        _refuse_store(target / name, store_path)
    allowed = set(names) | set(replaceable)
    _check_replaceable_folder(target, allowed)
    with _folder_lock(folder):
        _recover_leftovers(folder, target.name)
    stage = _make_stage(folder, target.name, 0o700)
    try:
        new = stage / STAGED_FOLDER
        _os(os.mkdir, new, 0o777, doing="creating", path=target)
        made = {new}
        for name, content in contents.items():
            _make_folders(new, name, made, shown=target)
            _write_new(new / name, content, 0o666, shown=target / name)
            _reached(f"written:{name}")
        for made_folder in sorted(made, key=lambda p: len(p.parts), reverse=True):
            _fsync_folder(made_folder, shown=target)
        _fsync_folder(stage, shown=target)
        with _folder_lock(folder):
            _check_replaceable_folder(target, allowed)
            if _lstat(target) is None:
                _os(os.rename, new, target, doing="writing", path=target)
                _reached("moved:" + target.name)
            elif _exchange(new, target):
                _reached("swapped")
            else:
                _write_marker(stage, [OLD_FOLDER], shown=target)
                _reached("committed")
                _finish_folder(stage, target)
            _fsync_folder(folder, shown=target)
        _remove_tree(stage)
        _reached("cleaned")
    except BaseException:
        if (stage / COMMIT_MARKER).exists():
            raise  # the next run finishes the swap
        _remove_tree(stage)
        raise
    return target


def finish_interrupted(target: Path | str) -> None:
    """Finish or remove what killed writes of ``target`` left beside it.

    Every write does this first for its own targets; it touches only staging
    folders of this exact name whose owner process is gone (see the module
    docstring).
    """
    target = Path(target).expanduser().absolute()
    folder = _checked_folder(target)
    with _folder_lock(folder):
        _recover_leftovers(folder, target.name)


# --------------------------------------------------------------------------- files


class FileStage:
    """Files being staged for :func:`staged_files`."""

    def __init__(
        self,
        targets: Sequence[Path | str],
        *,
        store_path: str | Path | None,
        replace: bool,
        mode_limit: int,
    ):
        if not targets:
            raise ValueError("nothing to write")
        self.targets = [check_target(t, store_path=store_path) for t in targets]
        self.folder = _checked_folder(self.targets[0])
        names = [t.name for t in self.targets]
        if any(t.parent != self.targets[0].parent for t in self.targets) or len(set(names)) < len(
            names
        ):
            raise ValueError("the files of one unit are distinct files of one folder")
        self.store_path = store_path
        self.replace = replace
        self.mode_limit = mode_limit
        self._shown = {t.name: t for t in self.targets}
        with _folder_lock(self.folder):
            for target in self.targets:
                _recover_leftovers(self.folder, target.name)
        self.stage = _make_stage(self.folder, self.targets[0].name, 0o700)
        self._written: set[str] = set()

    def path(self, target: Path | str) -> Path:
        """An empty staged file for ``target`` with its final mode (for writers needing a path)."""
        name = self._name(target)
        os.close(self._create(name))
        return self.stage / name

    def write(self, target: Path | str, content: Content) -> None:
        """Stage ``target`` with ``content`` (bytes, text, or a function of a stream)."""
        name = self._name(target)
        _write_stream(self._create(name), content, shown=self._shown[name])
        self._written.add(name)
        _reached(f"written:{name}")

    def finish(self) -> None:
        names = [t.name for t in self.targets]
        for name in names:
            staged = self.stage / name
            shown = self._shown[name]
            if not staged.exists():
                raise OutputError(f"nothing was staged for {shown}; nothing was written")
            if name not in self._written:  # written by the caller through path()
                _fsync_file(staged, shown=shown)
                _reached(f"written:{name}")
        _fsync_folder(self.stage, shown=self.targets[0])
        with _folder_lock(self.folder):
            for target in self.targets:  # re-checked: something may have appeared meanwhile
                check_target(target, store_path=self.store_path)
            if len(names) > 1:
                _write_marker(self.stage, names, shown=self.targets[0])
                _reached("committed")
            for number, name in enumerate(names):
                target = self._shown[name]
                try:
                    if self.replace:
                        os.replace(self.stage / name, target)
                    else:
                        _move_without_replacing(self.stage / name, target)
                except OSError as exc:
                    if number == 0:
                        raise _failure(exc, "writing", target) from None
                    # committed and partly moved: the next write of this unit finishes it
                    raise OutputError(
                        f"{exc.strerror or exc}: writing {target}; the files before it are "
                        f"in place, the rest wait in {self.stage} and are put in place by the "
                        "next write to the same name"
                    ) from None
                _reached(f"moved:{name}")
            _fsync_folder(self.folder, shown=self.targets[0])
        _remove_tree(self.stage)
        _reached("cleaned")

    def abandon(self) -> None:
        if (self.stage / COMMIT_MARKER).exists():
            return  # some files moved already: the next run finishes the unit
        _remove_tree(self.stage)

    def _name(self, target: Path | str) -> str:
        name = Path(target).name
        if name not in self._shown:
            raise ValueError(f"{target} is not one of the files being written")
        return name

    def _create(self, name: str) -> int:
        shown = self._shown[name]
        # the umask applies when the file is created, as for any file the user makes
        handle = _os(
            os.open,
            self.stage / name,
            os.O_WRONLY | os.O_CREAT | os.O_EXCL,
            0o666 & self.mode_limit,
            doing="writing",
            path=shown,
        )
        info = _lstat(shown)
        if info is not None and stat.S_ISREG(info.st_mode):
            # a replaced file keeps the permissions its owner gave it
            try:
                os.fchmod(handle, stat.S_IMODE(info.st_mode) & self.mode_limit)
            except OSError as exc:
                os.close(handle)
                raise _failure(exc, "writing", shown) from None
        return handle


def _items(
    contents: Mapping[Path, Content] | Sequence[tuple[Path, Content]],
) -> list[tuple[Path, Content]]:
    return list(contents.items()) if isinstance(contents, Mapping) else list(contents)


def _move_without_replacing(staged: Path, target: Path) -> None:
    try:
        os.link(staged, target)  # atomic, and fails if the target exists
    except FileExistsError:
        raise OutputExistsError(f"{target} already exists; nothing was written") from None
    except OSError:
        # a file system without hard links: the existence check must do
        if _lstat(target) is not None:
            raise OutputExistsError(f"{target} already exists; nothing was written") from None
        _os(os.rename, staged, target, doing="writing", path=target)
        return
    _os(os.unlink, staged, doing="writing", path=target)


def _write_new(path: Path, content: Content, mode: int, *, shown: Path) -> None:
    handle = _os(
        os.open, path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, mode, doing="writing", path=shown
    )
    _write_stream(handle, content, shown=shown)


def _write_stream(handle: int, content: Content, *, shown: Path) -> None:
    try:
        with os.fdopen(handle, "wb") as stream:
            if isinstance(content, str):
                stream.write(content.encode("utf-8"))
            elif isinstance(content, bytes | bytearray | memoryview):
                stream.write(content)
            else:
                content(stream)
            stream.flush()
            os.fsync(stream.fileno())
    except OSError as exc:
        raise _failure(exc, "writing", shown) from None


# --------------------------------------------------------------------------- folders


def _check_inner_name(name: str, target: Path) -> None:
    """Refuse a name that would not stay inside the folder (empty parts, ``..``, absolute)."""
    if not name or any(part in ("", ".", "..") for part in name.split("/")):
        raise OutputError(f"{name!r} is not a file name inside {target}")


def _make_folders(new: Path, name: str, made: set[Path], *, shown: Path) -> None:
    """The subfolders of ``name`` inside the staged folder ``new`` (0o777 less the umask)."""
    folder = new
    for part in name.split("/")[:-1]:
        folder = folder / part
        if folder not in made:
            _os(os.mkdir, folder, 0o777, doing="creating", path=shown)
            made.add(folder)


def _check_replaceable_folder(target: Path, allowed: set[str]) -> None:
    info = _lstat(target)
    if info is None:
        return
    if not stat.S_ISDIR(info.st_mode):
        raise OutputError(f"{target} is {_kind(info.st_mode)}, not a folder; {_ADVICE}")
    # a subfolder may stay when it is named, or when a named file lies inside it
    folders = set(allowed)
    for name in allowed:
        parts = name.split("/")
        folders.update("/".join(parts[:end]) for end in range(1, len(parts)))
    foreign = _foreign_entries(target, "", allowed, folders)
    if foreign:
        shown = ", ".join(sorted(foreign)[:5])
        raise OutputError(
            f"{target} holds files that ratebank did not write ({shown}); nothing was written; "
            "choose another folder"
        )


def _foreign_entries(folder: Path, prefix: str, allowed: set[str], folders: set[str]) -> list[str]:
    """Names under ``folder`` that are neither allowed regular files nor allowed subfolders."""
    foreign = []
    with _os(os.scandir, folder, doing="reading", path=folder) as entries:
        for entry in entries:
            name = prefix + entry.name
            if entry.is_dir(follow_symlinks=False) and name in folders:
                foreign.extend(_foreign_entries(Path(entry.path), name + "/", allowed, folders))
            elif name not in allowed or not entry.is_file(follow_symlinks=False):
                foreign.append(name)
    return foreign


def _finish_folder(stage: Path, target: Path) -> None:
    """Move the old folder aside and the new one in (a committed swap, maybe half done)."""
    new, old = stage / STAGED_FOLDER, stage / OLD_FOLDER
    if not new.exists():
        return
    if _lstat(target) is not None and not old.exists():
        _os(os.rename, target, old, doing="replacing", path=target)
        _reached("moved:" + OLD_FOLDER)
    if _lstat(target) is None:
        _os(os.rename, new, target, doing="writing", path=target)
        _reached("moved:" + target.name)


_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _exchange(first: Path, second: Path) -> bool:
    """Swap two names atomically (Linux renameat2); False where that is not available."""
    if not EXCHANGE_AVAILABLE:
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        renameat2 = libc.renameat2
    except (OSError, AttributeError):
        return False
    renameat2.argtypes = [
        ctypes.c_int,
        ctypes.c_char_p,
        ctypes.c_int,
        ctypes.c_char_p,
        ctypes.c_uint,
    ]
    result = renameat2(
        _AT_FDCWD, os.fsencode(first), _AT_FDCWD, os.fsencode(second), _RENAME_EXCHANGE
    )
    if result == 0:
        return True
    code = ctypes.get_errno()
    if code in (errno.EINVAL, errno.ENOSYS, errno.EOPNOTSUPP):
        return False  # the file system or kernel cannot exchange: move aside instead
    raise _failure(OSError(code, os.strerror(code)), "replacing", second)


#: Whether folders are swapped with one atomic exchange (tests switch it off).
EXCHANGE_AVAILABLE = hasattr(os, "uname") and os.uname().sysname == "Linux"


# --------------------------------------------------------------------------- staging


def _host_tag() -> str:
    return hashlib.sha256(socket.gethostname().encode()).hexdigest()[:8]


def _label(name: str) -> str:
    # A staging name must stay within the file system's 255 bytes.
    if len(name.encode("utf-8")) <= 180:
        return name
    return hashlib.sha256(name.encode("utf-8", "surrogateescape")).hexdigest()[:32]


def _make_stage(folder: Path, name: str, mode: int) -> Path:
    for _ in range(20):
        stage = folder / (
            f".{_label(name)}.ratebank-{_host_tag()}-{os.getpid()}-{secrets.token_hex(8)}"
        )
        try:
            os.mkdir(stage, mode)
        except FileExistsError:
            continue
        except OSError as exc:
            raise _failure(exc, "writing", folder / name) from None
        _reached("stage-created")
        return stage
    raise OutputError(f"cannot make a staging folder in {folder} for {name}")


def _write_marker(stage: Path, names: Sequence[str], *, shown: Path) -> None:
    _write_new(stage / COMMIT_MARKER, "\n".join(names) + "\n", 0o600, shown=shown)
    _fsync_folder(stage, shown=shown)


def _recover_leftovers(folder: Path, name: str) -> None:
    """Finish or remove what killed writes of ``name`` left in ``folder`` (dead owners only)."""
    label, host = _label(name), _host_tag()
    try:
        entries = [entry.name for entry in os.scandir(folder)]
    except OSError:
        return
    for entry in entries:
        match = _STAGE_NAME.fullmatch(entry)
        if match is None or match["label"] != label or match["host"] != host:
            continue
        if _process_alive(int(match["pid"])):
            continue
        stage = folder / entry
        marker = stage / COMMIT_MARKER
        try:
            if marker.is_file():
                moves = [n for n in marker.read_text(encoding="utf-8").splitlines() if n]
                if moves == [OLD_FOLDER]:
                    _finish_folder(stage, folder / name)
                else:
                    for moved in moves:
                        if (stage / moved).exists():
                            os.replace(stage / moved, folder / moved)
                _fsync_folder(folder, shown=folder / name)
            _remove_tree(stage)
        except OSError as exc:
            raise _failure(exc, "finishing an interrupted write of", folder / name) from None


def _process_alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True  # someone else's live process
    except OSError:
        return True  # cannot tell: leave it
    return True


def _remove_tree(path: Path) -> None:
    shutil.rmtree(path, ignore_errors=True)


@contextlib.contextmanager
def _folder_lock(folder: Path) -> Iterator[None]:
    """An advisory lock on ``folder`` while files are moved into it (no lock file needed)."""
    try:
        import fcntl
    except ImportError:  # pragma: no cover - not a POSIX system
        yield
        return
    try:
        descriptor = os.open(folder, os.O_RDONLY)
    except OSError:
        yield
        return
    try:
        # on a file system without locks the renames are still atomic one by one
        with contextlib.suppress(OSError):
            fcntl.flock(descriptor, fcntl.LOCK_EX)
        yield
    finally:
        os.close(descriptor)


# --------------------------------------------------------------------------- checks


_ADVICE = "give the path of a new or a regular file; nothing was written"


def _checked_folder(target: Path) -> Path:
    folder = target.parent
    info = _stat(folder)
    if info is None:
        raise OutputError(f"folder {folder} does not exist; create it or choose another output")
    if not stat.S_ISDIR(info.st_mode):
        raise OutputError(f"{folder} is not a folder; cannot write {target.name} there")
    return folder


def _refuse_store(target: Path, store_path: str | Path | None) -> None:
    if store_path is None or str(store_path) in ("", ":memory:"):
        return
    store = Path(store_path).expanduser().absolute()
    target_info = _stat(target)
    store_info = _stat(store)
    if (
        target_info is not None
        and store_info is not None
        and (target_info.st_dev, target_info.st_ino) == (store_info.st_dev, store_info.st_ino)
    ):
        raise OutputError(f"{target} is the store itself; choose another file; nothing was written")
    resolved = Path(os.path.realpath(target))
    store_resolved = os.path.realpath(store)
    for suffix in STORE_SIDE_FILES:
        side = Path(store_resolved + suffix)
        side_info = _stat(side)
        same = resolved == side or (
            target_info is not None
            and side_info is not None
            and (target_info.st_dev, target_info.st_ino) == (side_info.st_dev, side_info.st_ino)
        )
        if same:
            raise OutputError(
                f"{target} is a file the store {store} keeps beside it ({suffix}); choose "
                "another file; nothing was written"
            )


def _kind(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISLNK(mode):
        return "a symbolic link"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def _lstat(path: Path) -> os.stat_result | None:
    try:
        return os.lstat(path)
    except FileNotFoundError:
        return None
    except OSError as exc:
        raise _failure(exc, "looking at", path) from None


def _stat(path: Path) -> os.stat_result | None:
    try:
        return os.stat(path)
    except (FileNotFoundError, NotADirectoryError):
        return None
    except OSError as exc:
        raise _failure(exc, "looking at", path) from None


# --------------------------------------------------------------------------- disk


def _fsync_file(path: Path, *, shown: Path) -> None:
    try:
        descriptor = os.open(path, os.O_RDONLY)
        try:
            os.fsync(descriptor)
        finally:
            os.close(descriptor)
    except OSError as exc:
        raise _failure(exc, "writing", shown) from None


def _fsync_folder(folder: Path, *, shown: Path) -> None:
    # Makes the renames themselves durable; not every platform lets a folder be opened.
    try:
        descriptor = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(descriptor)
    except OSError as exc:
        if exc.errno not in (errno.EINVAL, errno.EBADF, errno.ENOTSUP):
            raise _failure(exc, "writing", shown) from None
    finally:
        os.close(descriptor)


def _os(function, *args, doing: str, path: Path):  # type: ignore[no-untyped-def]
    try:
        return function(*args)
    except OSError as exc:
        raise _failure(exc, doing, path) from None


def _failure(exc: OSError, doing: str, path: Path) -> OutputError:
    reason = exc.strerror or str(exc) or type(exc).__name__
    return OutputError(f"{reason}: {doing} {path}; nothing was written")


def _reached(step: str) -> None:
    if os.environ.get(KILL_AFTER_VARIABLE) == step:
        os.kill(os.getpid(), signal.SIGKILL)
