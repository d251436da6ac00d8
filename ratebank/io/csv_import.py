"""CSV importers: read a file, check its header, hand the rows to validation.

Files are UTF-8 (a byte-order mark is accepted) with a header row; column
names are those of the README (Import files). Unknown columns are an error (a typo must
not be dropped silently); empty cells mean "not given". Every problem is
reported as ``FILE:LINE: column: message`` and nothing is written unless the
whole file is valid.
"""

from __future__ import annotations

import csv
import difflib
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from itertools import islice, repeat
from pathlib import Path
from typing import Any

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.services import validate as v
from ratebank.services.measurement_import import MeasurementImporter
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.progress import Progress
from ratebank.services.validate import ImportSummary

#: Longest accepted cell, in characters (a guard against runaway quoting).
MAX_FIELD = 100_000
#: Rows of a measurements file validated and written at a time.
CHUNK_ROWS = 100_000


class CsvFileError(BadInputError):
    """The file cannot be read as a CSV table."""


@dataclass
class CsvTable:
    path: str
    header: list[str]
    rows: list[list[str]]
    lines: list[int]


def _open_check(path: str | Path, columns: Sequence[str]) -> Path:
    name = str(path)
    file = Path(path)
    if not file.exists():
        raise CsvFileError(f"{name}: no such file")
    if file.is_dir():
        raise CsvFileError(f"{name}: is a folder; expected a CSV file")
    try:
        size = file.stat().st_size
    except OSError as exc:
        raise CsvFileError(f"{name}: cannot be read ({exc.strerror})") from None
    if size == 0:
        raise CsvFileError(
            f"{name}: is empty; expected a header row with the columns {', '.join(columns)}"
        )
    encoding = _wide_encoding(file)
    if encoding:
        raise CsvFileError(
            f"{name}: is {encoding} text; expected UTF-8 (save it as UTF-8, in a spreadsheet "
            'as "CSV UTF-8", and import it again)'
        )
    return file


def _wide_encoding(file: Path) -> str | None:
    """ "UTF-16" or "UTF-32" for a file in one of them (with or without a byte-order mark)."""
    try:
        with file.open("rb") as handle:
            head = handle.read(64)
    except OSError:
        return None  # reported when the text is read
    if head.startswith((b"\xff\xfe\x00\x00", b"\x00\x00\xfe\xff")):
        return "UTF-32"
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        return "UTF-16"
    # no mark: ASCII text in UTF-16 has a NUL byte beside every letter
    pairs = head[: len(head) // 2 * 2]
    if len(pairs) >= 4 and (
        pairs[1::2].count(0) == len(pairs) // 2 or pairs[::2].count(0) == len(pairs) // 2
    ):
        return "UTF-16"
    return None


def _separator_error(name: str, header: list[str]) -> CsvFileError | None:
    """A file separated by semicolons or tabs, named as such (its header is one cell)."""
    if len(header) != 1:
        return None
    for mark, word in ((";", "semicolons (;)"), ("\t", "tabs")):
        if mark in header[0]:
            return CsvFileError(
                f"{name}:1: the columns are separated by {word}; expected commas (save the "
                "file as comma-separated CSV and import it again)"
            )
    return None


def _closest_column(name: str, columns: Sequence[str]) -> str:
    """ " (did you mean 'x'?)" for the known column nearest to ``name``, or ""."""
    by_lower = {c.lower(): c for c in columns}
    found = difflib.get_close_matches(name.lower(), list(by_lower), n=1, cutoff=0.6)
    return f" (did you mean {by_lower[found[0]]!r}?)" if found else ""


def _decode_error(name: str, file: Path) -> CsvFileError:
    raw = file.read_bytes()
    try:
        raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        return CsvFileError(
            f"{name}:{line}: byte 0x{raw[exc.start]:02x} is not UTF-8; "
            "expected a UTF-8 text file (save it as UTF-8)"
        )
    return CsvFileError(f"{name}: cannot be decoded as UTF-8 text")


def _csv_error(name: str, line: int, exc: csv.Error) -> CsvFileError:
    message = str(exc)
    if "unexpected end of data" in message or "EOF" in message:
        message = "a quoted cell is not closed (unclosed quote)"
    elif "field larger than field limit" in message:
        message = f"a cell is longer than {MAX_FIELD} characters"
    elif "NUL" in message:
        message = "contains a NUL character"
    return CsvFileError(f"{name}:{line}: {message}; expected valid CSV")


def _without_nul(handle, name: str):  # type: ignore[no-untyped-def]
    """The file's lines, refusing a NUL character (a binary file, or a broken export)."""
    for number, line in enumerate(handle, start=1):
        if "\x00" in line:
            raise CsvFileError(
                f"{name}:{number}: contains a NUL character; expected a text CSV file"
            )
        yield line


def _scan_bytes(file: Path) -> bool:
    """True when the file holds no quote and no NUL character (the fast path applies)."""
    try:
        with file.open("rb") as handle:
            while block := handle.read(1 << 24):
                if b'"' in block or b"\x00" in block:
                    return False
    except OSError:
        return False  # reported when the text is read
    return True


def _csv_chunks(reader, name: str, width: int, problems: v.Problems, chunk_rows: int):  # type: ignore[no-untyped-def]
    """Chunks of (columns, lines) from the csv module's reader (quoted files)."""
    previous = reader.line_num
    rows: list[list[str]] = []
    lines: list[int] = []
    for row in reader:
        line = previous + 1
        previous = reader.line_num
        if len(row) != width or not (row[0] or any(row)):
            _misshapen_row(problems, line, row, width)
            continue
        rows.append(row)
        lines.append(line)
        if len(rows) >= chunk_rows:
            yield [list(c) for c in zip(*rows, strict=True)], lines
            rows, lines = [], []
    if rows:
        yield [list(c) for c in zip(*rows, strict=True)], lines


def _misshapen_row(problems: v.Problems, line: int, cells: Sequence[str], width: int) -> None:
    """A row without ``width`` cells (or with empty cells only): a blank row is passed
    over, any other is reported."""
    if all(c.strip() == "" for c in cells):
        return
    problems.add(
        line,
        "",
        f"has {len(cells)} cells but the header has {width}; check for a stray "
        "delimiter or an unclosed quote",
    )


def _plain_chunks(
    handle, name: str, width: int, first_line: int, problems: v.Problems, chunk_rows: int
):  # type: ignore[no-untyped-def]
    """Chunks of (columns, lines) of a file with no quote character.

    Without quotes, CSV is a line split and a comma split; doing both on a
    whole chunk at once, then slicing the flat list into columns, costs a
    fraction of building one list per row (and one garbage-collected object
    per row). The result is exactly what the csv module gives.
    """
    last = first_line
    separators = width - 1
    while block := list(islice(handle, chunk_rows)):
        start = last + 1
        last += len(block)
        counts = list(map(str.count, block, repeat(",")))
        if counts.count(separators) == len(block):
            lines: Sequence[int] = range(start, start + len(block))
        else:
            kept = []
            numbers = []
            for offset, (text, count) in enumerate(zip(block, counts, strict=True)):
                if count == separators:
                    kept.append(text)
                    numbers.append(start + offset)
                    continue
                _misshapen_row(problems, start + offset, text.rstrip("\r\n").split(","), width)
            block, lines = kept, numbers
            if not block:
                continue
        if max(map(len, block)) > MAX_FIELD:
            for offset, text in enumerate(block):
                if (
                    len(text) > MAX_FIELD
                    and max(map(len, text.rstrip("\r\n").split(","))) > MAX_FIELD
                ):
                    raise CsvFileError(
                        f"{name}:{lines[offset]}: a cell is longer than {MAX_FIELD} characters; "
                        "expected valid CSV"
                    )
        body = "".join(block)
        if "\r" in body:
            body = body.replace("\r\n", "\n").replace("\r", "\n")
        if body.endswith("\n"):
            body = body[:-1]
        flat = body.replace("\n", ",").split(",")
        columns = [flat[j::width] for j in range(width)]
        if "" in columns[0]:
            # a row of empty cells only is a blank row, as in the csv path
            blank = {
                i
                for i, c in enumerate(columns[0])
                if c == "" and all(col[i] == "" for col in columns)
            }
            if blank:
                keep = [i for i in range(len(lines)) if i not in blank]
                columns = [[col[i] for i in keep] for col in columns]
                lines = [lines[i] for i in keep]
                if not keep:
                    continue
        yield columns, lines


def _check_header(
    name: str, header: Sequence[str], line: int, columns: Sequence[str], required: Sequence[str]
) -> None:
    """Refuse an empty, repeated, unknown or missing column name (every one is reported)."""
    problems = v.Problems()
    seen: set[str] = set()
    for h in header:
        if h == "":
            problems.add(line, "", "the header has an empty column name")
        elif h in seen:
            problems.add(line, h, "appears twice in the header")
        elif h not in columns:
            problems.add(
                line,
                h,
                f"unknown column{_closest_column(h, columns)}; expected columns are "
                f"{', '.join(columns)}",
            )
        seen.add(h)
    for r in required:
        if r not in seen:
            problems.add(line, r, "required column is missing from the header")
    problems.raise_if_any(name)


def iter_table(
    path: str | Path,
    columns: Sequence[str],
    required: Sequence[str],
    *,
    problems: v.Problems,
    chunk_rows: int = 100_000,
):  # type: ignore[no-untyped-def]
    """Yield the header, then chunks of (columns, lines) of a CSV file, streaming.

    ``columns`` holds one list of cell texts per header column. The header is
    checked first (unknown, missing, duplicate columns). Rows whose number of
    cells differs from the header's are reported into ``problems`` and
    skipped; blank rows are skipped. A file without any quote character is
    split on whole chunks (see :func:`_plain_chunks`); others go through the
    csv module row by row. Both give the same cells.
    """
    name = str(path)
    file = _open_check(path, columns)
    csv.field_size_limit(MAX_FIELD)
    try:
        handle = file.open(encoding="utf-8-sig", newline="")
    except OSError as exc:
        raise CsvFileError(f"{name}: cannot be read ({exc.strerror})") from None
    plain = _scan_bytes(file)
    with handle:
        reader = csv.reader(handle if plain else _without_nul(handle, name), strict=True)
        try:
            try:
                header = [h.strip() for h in next(reader)]
            except StopIteration:
                raise CsvFileError(
                    f"{name}: is empty; expected a header row with the columns {', '.join(columns)}"
                ) from None
            separated = _separator_error(name, header)
            if separated is not None:
                raise separated
            _check_header(name, header, reader.line_num, columns, required)
            yield header
            width = len(header)
            if plain and width > 1:
                yield from _plain_chunks(handle, name, width, reader.line_num, problems, chunk_rows)
            else:
                yield from _csv_chunks(reader, name, width, problems, chunk_rows)
        except csv.Error as exc:
            raise _csv_error(name, reader.line_num, exc) from None
        except UnicodeDecodeError:
            raise _decode_error(name, file) from None


def read_table(path: str | Path, columns: Sequence[str], required: Sequence[str]) -> CsvTable:
    """Read a whole (small) CSV file whose header must use ``columns`` and include ``required``."""
    name = str(path)
    problems = v.Problems()
    stream = iter_table(path, columns, required, problems=problems, chunk_rows=1 << 30)
    header = next(stream)
    rows: list[list[str]] = []
    lines: list[int] = []
    for chunk_columns, chunk_lines in stream:
        rows.extend(list(row) for row in zip(*chunk_columns, strict=True))
        lines.extend(chunk_lines)
    problems.raise_if_any(name)
    if not rows:
        raise CsvFileError(f"{name}: has a header but no data rows")
    return CsvTable(name, header, rows, lines)


#: A row as the importers take it: (line, {column: cell}).
Row = tuple[int | None, dict[str, str | None]]


def _row_dicts(table: CsvTable) -> list[Row]:
    header = table.header
    return [
        (line, dict(zip(header, row, strict=True)))
        for line, row in zip(table.lines, table.rows, strict=True)
    ]


def _import_file(
    session: Session,
    path: str | Path,
    columns: Sequence[str],
    required: Sequence[str],
    importer: Callable[..., ImportSummary],
    shape: Callable[[CsvTable, list[Row]], list[Row]] | None = None,
    **options: Any,
) -> ImportSummary:
    """Read a whole (small) CSV file, check its header, and hand its rows, each as
    ``(line, {column: cell})``, to ``importer`` with the file as their source; ``shape``
    may check the header further and map the rows first. ``options`` (``dry_run``,
    ``update``, ``progress``) go to ``importer``."""
    table = read_table(path, columns, required)
    rows = _row_dicts(table)
    if shape is not None:
        rows = shape(table, rows)
    return importer(session, rows, source=table.path, **options)


def import_species_file(session: Session, path: str | Path, **options: Any) -> ImportSummary:
    """Import a species file (``dry_run``, ``update``, ``progress``)."""
    from ratebank.services.species import import_species  # a measurements import needs none

    return _import_file(
        session, path, v.SPECIES_COLUMNS, v.SPECIES_REQUIRED, import_species, **options
    )


def import_reactions_file(session: Session, path: str | Path, **options: Any) -> ImportSummary:
    """Import a reactions file (``dry_run``, ``update``, ``progress``)."""
    from ratebank.services.reactions import import_reactions

    return _import_file(
        session, path, v.REACTION_COLUMNS, v.REACTION_REQUIRED, import_reactions, **options
    )


def _expression_rows(table: CsvTable, rows: list[Row]) -> list[Row]:
    # an exported mechanism table (mechanism.csv of a data package) reads as one too
    v.check_expression_header(table.path, table.header)
    return v.as_expression_rows(rows)


def import_expressions_file(
    session: Session, path: str | Path, *, progress: Progress | None = None, **options: Any
) -> ImportSummary:
    """Import an expressions file (``dry_run``, ``update``; it reports no progress)."""
    from ratebank.services.expressions import import_expressions

    return _import_file(
        session, path, v.EXPRESSION_FILE_COLUMNS, ("Ea",), import_expressions, _expression_rows,
        **options,
    )  # fmt: skip


def import_measurements_file(
    session: Session,
    path: str | Path,
    *,
    k_units: str | None = None,
    dry_run: bool = False,
    update: bool = False,
    progress: Progress | None = None,
    chunk_rows: int = CHUNK_ROWS,
    fill_uncertainty: str | None = None,
) -> ImportSummary:
    """Stream a measurements file into the store in one transaction; all or nothing.

    Memory stays flat in the number of rows: the file is read, validated and
    written ``chunk_rows`` rows at a time.
    """
    name = str(path)
    problems = v.Problems()
    stream = iter_table(
        path,
        v.MEASUREMENT_COLUMNS,
        v.MEASUREMENT_REQUIRED,
        problems=problems,
        chunk_rows=chunk_rows,
    )
    header = next(stream)
    if "k_units" not in header and not k_units:
        raise CsvFileError(
            f"{name}:1: k_units: the file has no k_units column and no default k_units was "
            "given; expected one of them",
            argument="k_units",
        )
    try:
        expected = max(Path(path).stat().st_size // 60, 0)
    except OSError:
        expected = 0
    importer = MeasurementImporter(
        session,
        source=name,
        default_k_units=k_units,
        dry_run=dry_run,
        progress=progress,
        problems=problems,
        expected_rows=expected,
        fill_uncertainty=fill_uncertainty,
        update=update,
    )
    with paused_garbage_collection():
        for chunk_columns, lines in stream:
            importer.add(dict(zip(header, chunk_columns, strict=True)), lines)
    if importer.rows == 0 and not problems:
        raise CsvFileError(f"{name}: has a header but no data rows")
    return importer.finish()


def import_efficiencies_file(
    session: Session, path: str | Path, *, progress: Progress | None = None, **options: Any
) -> ImportSummary:
    """Import a third-body efficiencies file (``dry_run``, ``update``; it reports no
    progress)."""
    from ratebank.services.efficiencies import (
        EFFICIENCY_COLUMNS,
        EFFICIENCY_REQUIRED,
        import_efficiencies,
    )

    return _import_file(
        session, path, EFFICIENCY_COLUMNS, EFFICIENCY_REQUIRED, import_efficiencies, **options
    )
