"""Tables that never break a number: the terminal layout of every ratebank table.

:class:`ReportTable` is a rich Table that fits itself to the width it is drawn
at (80 columns, say) by these rules:

- a column whose cells are all numbers (``2.914``, ``1.03-1.07``, ``12/3``,
  ``4 ★``) never wraps and is as wide as its widest cell;
- any other column folds at spaces, but never narrower than the longest word
  that holds a digit (a number, a species such as ``CH3OH``), so that no number
  and no formula is split across lines, nor than its longest word up to
  :data:`LONG_WORD` characters (a check code, a class name);
- when even that is too wide, whole columns are left out, those named first in
  ``drop`` first (else from the right; never the first column), and the
  caption says which and how to see them (``--json`` or a wider terminal).

The table's cells are read as drawn text; nothing about a command's content is
known here, so every table gets the same rules.
"""

from __future__ import annotations

import copy
import re
from collections.abc import Iterable, Sequence
from typing import Any

from rich.cells import cell_len
from rich.table import Column, Table
from rich.text import Text

_NUMBER = r"[-+−]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
#: A cell that is a number, a range or ratio of two, optionally marked (★, *).
NUMERIC_CELL = re.compile(rf"^{_NUMBER}(?:\s?[-/–]\s?{_NUMBER})?(?:\s?[★*])?$")
#: A text column is never narrower than this, unless its cells are all shorter.
TEXT_FLOOR = 14
#: A word (without digits) longer than this may be folded (a path, a long reference).
LONG_WORD = 22
#: The first column (a key) is kept whole up to this width.
FIRST_COLUMN_LIMIT = 24


def _plain(cell: Any) -> str:
    if isinstance(cell, Text):
        return cell.plain
    return str(cell) if cell is not None else ""


def is_numeric(texts: Iterable[str]) -> bool:
    """Whether every non-empty text is a number, a range or a ratio.

    >>> is_numeric(["2.914", "", "1.03-1.07", "12/3", "1.2e+12", "4 ★"])
    True
    >>> is_numeric(["2.914", "(to estimate)"])
    False
    """
    seen = False
    for text in texts:
        text = text.strip()
        if not text:
            continue
        if not NUMERIC_CELL.match(text):
            return False
        seen = True
    return seen


def _floor(texts: Sequence[str], header: str, numeric: bool) -> int:
    """The narrowest a column may be drawn."""
    widths = [cell_len(line) for text in texts for line in text.splitlines() or [""]]
    if numeric:
        # the header may wrap at its spaces, but not letter by letter
        header_word = max((cell_len(w) for w in header.split()), default=1)
        return max(max(widths, default=1), min(header_word, TEXT_FLOOR + 2))
    words = [w for text in texts for w in text.split()]
    digit_words = [cell_len(w) for w in words if any(c.isdigit() for c in w)]
    longest_word = max((cell_len(w) for w in [*words, *header.split()]), default=1)
    natural = max(widths, default=1)
    return max(
        max(digit_words, default=1),
        min(longest_word, LONG_WORD),
        min(TEXT_FLOOR, natural),
    )


def _natural(texts: Sequence[str], header: str) -> int:
    widths = [cell_len(line) for text in texts for line in text.splitlines() or [""]]
    return max([*widths, cell_len(header), 1])


class ReportTable(Table):
    """A rich Table that keeps every number whole at any width (see the module text).

    Parameters
    ----------
    *args, **kwargs
        As for :class:`rich.table.Table`.
    drop : sequence of str, optional
        Column headers in the order they are left out when the table is too
        wide; columns not named go after them, from the right.
    """

    def __init__(self, *args: Any, drop: Sequence[str] = (), **kwargs: Any):
        super().__init__(*args, **kwargs)
        self.drop = list(drop)

    def __rich_console__(self, console: Any, options: Any) -> Any:
        fitted = fit_table(self, options.max_width)
        yield from Table.__rich_console__(fitted, console, options)

    def __rich_measure__(self, console: Any, options: Any) -> Any:
        fitted = fit_table(self, options.max_width)
        return Table.__rich_measure__(fitted, console, options)


def _overhead(table: Table, columns: int) -> tuple[int, int]:
    """(characters each column adds around its content, characters of the table's frame)."""
    _, right, _, left = table.padding
    per_column = left + right
    if table.box is None:
        return per_column, 0
    frame = 2 if table.show_edge else 0
    return per_column + 1, frame - 1


def fit_table(table: Table, width: int) -> Table:
    """A copy of ``table`` laid out for ``width`` characters (see the module text)."""
    columns = list(table.columns)
    if not columns:
        return table
    texts = [[_plain(c) for c in column.cells] for column in columns]
    headers = [_plain(column.header) for column in columns]
    numeric = [is_numeric(t) for t in texts]
    floors = [_floor(t, h, n) for t, h, n in zip(texts, headers, numeric, strict=True)]
    # the first column names the row (a key): whole, unless it is very long
    floors[0] = max(floors[0], min(_natural(texts[0], ""), FIRST_COLUMN_LIMIT))
    naturals = [max(_natural(t, h), f) for t, h, f in zip(texts, headers, floors, strict=True)]
    per_column, frame = _overhead(table, len(columns))

    def needed(kept: list[int]) -> int:
        return sum(floors[i] + per_column for i in kept) + frame

    kept = list(range(len(columns)))
    order = [headers.index(h) for h in getattr(table, "drop", []) if h in headers]
    order += [i for i in reversed(range(len(columns))) if i not in order]
    order = [i for i in order if i != 0]
    dropped: list[int] = []
    for index in order:
        if needed(kept) <= width:
            break
        kept.remove(index)
        dropped.append(index)

    # widths: start at the floor, then give the room left to the columns that want it
    widths = {i: floors[i] for i in kept}
    room = width - needed(kept)
    deficits = {i: naturals[i] - widths[i] for i in kept if naturals[i] > widths[i]}
    total = sum(deficits.values())
    if total and room > 0:
        # in proportion to what each column lacks, then one at a time for the rest
        share = min(room, total)
        for i, deficit in deficits.items():
            widths[i] += share * deficit // total
        room -= sum(widths.values()) - sum(floors[i] for i in kept)
        for i in sorted(deficits, key=lambda i: naturals[i] - widths[i], reverse=True):
            if room <= 0:
                break
            if widths[i] < naturals[i]:
                widths[i] += 1
                room -= 1

    fitted = copy.copy(table)
    fitted.columns = []
    for i in kept:
        column: Column = copy.copy(columns[i])
        column.width = widths[i]
        column.min_width = None
        column.max_width = None
        # a numeric column is as wide as its widest cell, so its cells never wrap; its
        # header (and any text) folds at spaces, and at a word only if it must
        column.no_wrap = False
        column.overflow = "fold"
        fitted.columns.append(column)
    if dropped:
        names = ", ".join(headers[i] for i in sorted(dropped))
        note = (
            f"Not shown at this width: {names} (use --json, or a wider terminal: "
            f"COLUMNS={needed(list(range(len(columns))))})"
        )
        caption = _plain(table.caption) if table.caption is not None else ""
        fitted.caption = f"{caption}\n{note}" if caption else note
    return fitted
