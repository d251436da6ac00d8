"""Progress reporting from long service calls, without tying services to a terminal.

A service that may run long takes ``progress: Progress | None``. It calls
``progress.start(phase, total)`` and ``progress.advance(n)``; the command
line passes a rich progress bar (on stderr, only on a terminal and without
``--quiet``), Python callers pass nothing.
"""

from __future__ import annotations

from typing import Protocol

#: Below this many items no bar is worth drawing.
PROGRESS_THRESHOLD = 300


class Progress(Protocol):
    def start(self, phase: str, total: int) -> None: ...

    def advance(self, count: int = 1) -> None: ...


class NoProgress:
    """Reports nothing."""

    def start(self, phase: str, total: int) -> None:
        return None

    def advance(self, count: int = 1) -> None:
        return None


def chunks(total: int, size: int) -> list[tuple[int, int]]:
    """(start, stop) pairs covering ``range(total)`` in steps of ``size``.

    >>> chunks(5, 2)
    [(0, 2), (2, 4), (4, 5)]
    """
    return [(start, min(start + size, total)) for start in range(0, total, size)]
