"""CSV importers: read a file, check its header, hand the rows to validation.

Files are UTF-8 (a byte-order mark is accepted) with a header row; column
names are those of DESIGN section 7a. Unknown columns are an error (a typo must
not be dropped silently); empty cells mean "not given". Every problem is
reported as ``FILE:LINE: column: message`` and nothing is written unless the
whole file is valid.
"""

from __future__ import annotations

import csv
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from sqlalchemy.orm import Session

from ratebank.errors import ImportValidationError, RatebankError
from ratebank.services import curate
from ratebank.services import validate as v
from ratebank.services.progress import Progress

#: Longest accepted cell, in characters (a guard against runaway quoting).
MAX_FIELD = 100_000


class CsvFileError(RatebankError):
    """The file cannot be read as a CSV table."""


@dataclass
class CsvTable:
    path: str
    header: list[str]
    rows: list[list[str]]
    lines: list[int]


def read_table(path: str | Path, columns: Sequence[str], required: Sequence[str]) -> CsvTable:
    """Read a CSV file whose header must use ``columns`` and include ``required``."""
    name = str(path)
    file = Path(path)
    if not file.exists():
        raise CsvFileError(f"{name}: no such file")
    if file.is_dir():
        raise CsvFileError(f"{name}: is a folder; expected a CSV file")
    try:
        raw = file.read_bytes()
    except OSError as exc:
        raise CsvFileError(f"{name}: cannot be read ({exc.strerror})") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise CsvFileError(
            f"{name}:{line}: byte 0x{raw[exc.start]:02x} is not UTF-8; "
            "expected a UTF-8 text file (save it as UTF-8)"
        ) from None
    if "\x00" in text:
        line = text[: text.index("\x00")].count("\n") + 1
        raise CsvFileError(f"{name}:{line}: contains a NUL character; expected a text CSV file")
    if not text.strip():
        raise CsvFileError(
            f"{name}: is empty; expected a header row with the columns {', '.join(columns)}"
        )
    csv.field_size_limit(MAX_FIELD)
    reader = csv.reader(text.splitlines(keepends=True), strict=True)
    rows: list[list[str]] = []
    lines: list[int] = []
    try:
        header = [h.strip() for h in next(reader)]
        header_line = reader.line_num
        problems = v.Problems()
        seen: set[str] = set()
        for h in header:
            if h == "":
                problems.add(header_line, "", "the header has an empty column name")
            elif h in seen:
                problems.add(header_line, h, "appears twice in the header")
            elif h not in columns:
                problems.add(
                    header_line, h, f"unknown column; expected columns are {', '.join(columns)}"
                )
            seen.add(h)
        for r in required:
            if r not in seen:
                problems.add(header_line, r, "required column is missing from the header")
        if problems:
            raise ImportValidationError(name, [p.render(name) for p in problems.sorted()])
        width = len(header)
        previous = reader.line_num
        for row in reader:
            line = previous + 1
            previous = reader.line_num
            if not row or all(c.strip() == "" for c in row):
                continue
            if len(row) != width:
                problems.add(
                    line,
                    "",
                    f"has {len(row)} cells but the header has {width}; check for a stray "
                    "delimiter or an unclosed quote",
                )
                continue
            rows.append(row)
            lines.append(line)
    except csv.Error as exc:
        message = str(exc)
        if "unexpected end of data" in message or "EOF" in message:
            message = "a quoted cell is not closed (unclosed quote)"
        elif "field larger than field limit" in message:
            message = f"a cell is longer than {MAX_FIELD} characters"
        raise CsvFileError(f"{name}:{reader.line_num}: {message}; expected valid CSV") from None
    if problems:
        raise ImportValidationError(
            name, [p.render(name) for p in problems.sorted()], total=problems.total
        )
    if not rows:
        raise CsvFileError(f"{name}: has a header but no data rows")
    return CsvTable(name, header, rows, lines)


def _row_dicts(table: CsvTable) -> list[tuple[int | None, dict[str, str | None]]]:
    header = table.header
    return [
        (line, dict(zip(header, row, strict=True)))
        for line, row in zip(table.lines, table.rows, strict=True)
    ]


def import_species_file(
    session: Session, path: str | Path, *, dry_run: bool = False, progress: Progress | None = None
) -> curate.ImportSummary:
    table = read_table(path, v.SPECIES_COLUMNS, v.SPECIES_REQUIRED)
    return curate.import_species(
        session, _row_dicts(table), source=table.path, dry_run=dry_run, progress=progress
    )


def import_reactions_file(
    session: Session, path: str | Path, *, dry_run: bool = False, progress: Progress | None = None
) -> curate.ImportSummary:
    table = read_table(path, v.REACTION_COLUMNS, v.REACTION_REQUIRED)
    return curate.import_reactions(
        session, _row_dicts(table), source=table.path, dry_run=dry_run, progress=progress
    )


def import_expressions_file(
    session: Session, path: str | Path, *, dry_run: bool = False, progress: Progress | None = None
) -> curate.ImportSummary:
    table = read_table(path, v.EXPRESSION_COLUMNS, v.EXPRESSION_REQUIRED)
    return curate.import_expressions(session, _row_dicts(table), source=table.path, dry_run=dry_run)


def import_measurements_file(
    session: Session,
    path: str | Path,
    *,
    k_units: str | None = None,
    dry_run: bool = False,
    progress: Progress | None = None,
) -> curate.ImportSummary:
    table = read_table(path, v.MEASUREMENT_COLUMNS, v.MEASUREMENT_REQUIRED)
    if "k_units" not in table.header and not k_units:
        raise CsvFileError(
            f"{table.path}:1: k_units: the file has no k_units column and no --k-units was "
            "given; expected one of them"
        )
    transposed = list(zip(*table.rows, strict=True)) if table.rows else []
    columns = {
        name: [cell.strip() for cell in values]
        for name, values in zip(table.header, transposed, strict=True)
    }
    return curate.import_measurements(
        session,
        columns,
        table.lines,
        source=table.path,
        default_k_units=k_units,
        dry_run=dry_run,
        progress=progress,
    )
