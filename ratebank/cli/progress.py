"""A rich progress bar for long commands: stderr only, terminals only, never with --quiet."""

from __future__ import annotations

import sys
from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any

from ratebank.services.progress import PROGRESS_THRESHOLD, NoProgress, Progress


class RichProgress:
    """Draws one task per phase; phases with few items draw nothing."""

    def __init__(self, bar: Any):
        self._bar = bar
        self._task: Any = None

    def start(self, phase: str, total: int) -> None:
        if self._task is not None:
            self._bar.update(self._task, visible=False)
            self._task = None
        if total >= PROGRESS_THRESHOLD:
            self._task = self._bar.add_task(phase, total=total)

    def advance(self, count: int = 1) -> None:
        if self._task is not None:
            self._bar.advance(self._task, count)


def progress_enabled(quiet: bool) -> bool:
    return not quiet and sys.stderr.isatty()


@contextmanager
def progress_bar(quiet: bool) -> Iterator[Progress]:
    """A progress reporter for the command's service call."""
    if not progress_enabled(quiet):
        yield NoProgress()
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, TextColumn, TimeElapsedColumn
    from rich.progress import Progress as RichBar

    bar = RichBar(
        TextColumn("{task.description}"),
        BarColumn(),
        MofNCompleteColumn(),
        TimeElapsedColumn(),
        console=Console(stderr=True),
        transient=True,
    )
    with bar:
        yield RichProgress(bar)
