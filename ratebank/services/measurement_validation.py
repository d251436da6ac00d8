"""Validation of measured k(T) points, column-wise with numpy.

A million rows are checked in a few array passes; rows are looked at one by
one only to name the lines of their problems. Rows arrive in chunks (the
importer streams the file), and the verdict is the same whatever the chunk
size (``tests/io/test_streaming_import.py`` checks this). Problems are
collected, never raised half-way (:class:`ratebank.services.validate.Problems`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ratebank.errors import UnitError
from ratebank.science.pressure import bath_gas_concentration
from ratebank.science.units import parse_rate_unit
from ratebank.services import input_rules
from ratebank.services.validate import (
    BAR_PA,
    TEXT_LIMITS,
    UNCERTAINTY_KINDS,
    Problems,
    ReactionRef,
    ReactionResolver,
    parse_number,
    too_long,
)


@dataclass(slots=True)
class MeasurementSetRecord:
    """A new measurement set, as its first row defines it.

    The validator keeps its sets as columns (:class:`SetRegistry`); a record is built
    from them where one set is looked at on its own (a problem to name, an update to
    compare), and by the slow path that checks a chunk's new sets one by one.
    """

    name: str
    reaction: ReactionRef
    k_units: str
    reference: str | None
    method: str | None
    bath_gas: str | None
    first_line: int
    #: the factor that turns k in ``k_units`` into SI
    factor: float = float("nan")
    #: ``k_units`` has one concentration fewer than the reaction (written with M): the points
    #: are the effective k at their pressure, stored as k / [M]
    effective: bool = False
    valid: bool = True
    id: int | None = None
    #: one standard deviation of the set's scale, a fraction of k (its text, for agreement)
    systematic_text: str = ""
    systematic_uncertainty: float | None = None
    #: points seen so far with and without a stated uncertainty
    with_uncertainty: int = 0
    without_uncertainty: int = 0
    mixed: bool = False
    #: a set of this name is stored (an import that updates compares the two)
    stored: bool = False


class _Column:
    """A numpy column that grows at its end (its buffer doubles: appending is amortized O(1))."""

    def __init__(self, dtype: object):
        self._data = np.empty(1024, dtype=dtype)
        self._size = 0

    @property
    def values(self) -> np.ndarray:
        """The column (a view: writes go to the column until it next grows)."""
        return self._data[: self._size]

    def extend(self, values: Sequence[object] | np.ndarray) -> None:
        end = self._size + len(values)
        if end > self._data.size:
            grown = np.empty(max(end, 2 * self._data.size), dtype=self._data.dtype)
            grown[: self._size] = self._data[: self._size]
            self._data = grown
        self._data[self._size : end] = values
        self._size = end


#: The columns of :class:`SetRegistry`: dtype, and the value of a record field it holds.
#: Texts a set need not have (reference, method, bath gas) are kept as "" for none.
_SET_COLUMNS: dict[str, object] = {
    "name": object,
    "first_line": np.int64,
    "reaction_id": np.int64,  # -1: the reaction cell did not resolve
    "reaction_key": object,  # the key, or the cell's text when it did not resolve
    "order": np.int64,
    "third_body": bool,
    "k_units": object,
    "reference": object,
    "method": object,
    "bath_gas": object,
    "factor": np.float64,
    "effective": bool,
    "valid": bool,
    "id": np.int64,  # -1 until written
    "systematic_text": object,
    "systematic_uncertainty": np.float64,  # NaN for none
    "with_uncertainty": np.int64,
    "without_uncertainty": np.int64,
    "mixed": bool,
    "stored": bool,
}


class SetRegistry:
    """The measurement sets a file has named so far, as columns: one entry per set.

    A file of a million points may name a hundred thousand sets; keeping them as
    numpy columns (and one name -> index dictionary) instead of one object each
    keeps the memory and the per-set work small, and lets every row of a chunk be
    checked against its set's first row by whole-column indexing. Indexing and
    iterating give :class:`MeasurementSetRecord` objects built from the columns.
    """

    def __init__(self) -> None:
        self.by_name: dict[str, int] = {}
        self._columns = {name: _Column(dtype) for name, dtype in _SET_COLUMNS.items()}

    def __len__(self) -> int:
        return len(self.by_name)

    def column(self, name: str) -> np.ndarray:
        return self._columns[name].values

    def append(self, columns: Mapping[str, Sequence[object] | np.ndarray]) -> range:
        """Add sets given column-wise (every column of ``_SET_COLUMNS``); their indices."""
        start = len(self)
        names = columns["name"]
        self.by_name.update(zip(names, range(start, start + len(names)), strict=True))
        for name, column in self._columns.items():
            column.extend(columns[name])
        return range(start, len(self))

    def append_records(self, records: Sequence[MeasurementSetRecord]) -> range:
        return self.append(
            {
                "name": [r.name for r in records],
                "first_line": [r.first_line for r in records],
                "reaction_id": [r.reaction.id for r in records],
                "reaction_key": [r.reaction.key for r in records],
                "order": [r.reaction.order for r in records],
                "third_body": [r.reaction.third_body for r in records],
                "k_units": [r.k_units for r in records],
                "reference": [r.reference or "" for r in records],
                "method": [r.method or "" for r in records],
                "bath_gas": [r.bath_gas or "" for r in records],
                "factor": [r.factor for r in records],
                "effective": [r.effective for r in records],
                "valid": [r.valid for r in records],
                "id": [-1 if r.id is None else r.id for r in records],
                "systematic_text": [r.systematic_text for r in records],
                "systematic_uncertainty": [
                    np.nan if r.systematic_uncertainty is None else r.systematic_uncertainty
                    for r in records
                ],
                "with_uncertainty": [r.with_uncertainty for r in records],
                "without_uncertainty": [r.without_uncertainty for r in records],
                "mixed": [r.mixed for r in records],
                "stored": [r.stored for r in records],
            }
        )

    def record(self, index: int) -> MeasurementSetRecord:
        """The set at ``index`` as a record (a copy: changing it changes nothing here)."""
        value = {name: column.values[index] for name, column in self._columns.items()}
        reaction_id = int(value["reaction_id"])
        systematic = float(value["systematic_uncertainty"])
        return MeasurementSetRecord(
            name=value["name"],
            reaction=ReactionRef(
                reaction_id, value["reaction_key"], int(value["order"]), bool(value["third_body"])
            ),
            k_units=value["k_units"],
            reference=value["reference"] or None,
            method=value["method"] or None,
            bath_gas=value["bath_gas"] or None,
            first_line=int(value["first_line"]),
            factor=float(value["factor"]),
            effective=bool(value["effective"]),
            valid=bool(value["valid"]),
            id=None if value["id"] < 0 else int(value["id"]),
            systematic_text=value["systematic_text"],
            systematic_uncertainty=None if np.isnan(systematic) else systematic,
            with_uncertainty=int(value["with_uncertainty"]),
            without_uncertainty=int(value["without_uncertainty"]),
            mixed=bool(value["mixed"]),
            stored=bool(value["stored"]),
        )

    def __getitem__(self, index: int) -> MeasurementSetRecord:
        return self.record(index)

    def __iter__(self) -> Iterator[MeasurementSetRecord]:
        return (self.record(i) for i in range(len(self)))


@dataclass
class MeasurementChunk:
    """Validated points of one chunk, column-wise, SI units."""

    #: the validator's sets, and which of them this chunk named first
    sets: SetRegistry
    new: range
    set_index: np.ndarray  # int: index into MeasurementValidator.sets per point
    temperature: np.ndarray
    rate_constant: np.ndarray
    relative_uncertainty: np.ndarray  # NaN where not given
    pressure: np.ndarray  # NaN where not given

    @property
    def n_points(self) -> int:
        return len(self.temperature)

    @property
    def new_sets(self) -> list[MeasurementSetRecord]:
        """The sets this chunk named first, as records."""
        return [self.sets.record(i) for i in self.new]


@dataclass(frozen=True)
class _TextColumns:
    """The text columns of a chunk, stripped."""

    set_names: Sequence[str]
    reactions: Sequence[str]
    units: Sequence[str]
    kinds: Sequence[str]
    references: Sequence[str]
    methods: Sequence[str]
    baths: Sequence[str]
    systematic: Sequence[str]
    #: the list every absent column is (empty cells)
    empty: Sequence[str]

    @classmethod
    def of(cls, columns: Mapping[str, Sequence[str]], n: int) -> _TextColumns:
        empty = [""] * n
        return cls(
            *(
                _stripped(columns.get(name), empty)
                for name in (
                    "set",
                    "reaction",
                    "k_units",
                    "uncertainty_kind",
                    "reference",
                    "method",
                    "bath_gas",
                    "systematic_uncertainty",
                )
            ),
            empty,
        )


#: Maps every ASCII character ``str.strip`` removes to a space (the rest unchanged).
_ASCII_SPACES = bytes.maketrans(b"\t\n\x0b\x0c\r\x1c\x1d\x1e\x1f", b" " * 9)


def _padded(values: Sequence[str]) -> bool:
    """True unless no cell of ``values`` starts or ends with a space ``str.strip`` removes
    (a column of ASCII cells is answered in a few passes over its joined bytes; any other
    may be padded)."""
    if values and values[0] == values[-1] and values.count(values[0]) == len(values):
        return values[0] != values[0].strip()  # one text throughout (a unit, say)
    joined = "\x00".join(values)
    if not joined.isascii() or joined.count("\x00") != len(values) - 1:
        return True  # a space of another script, or a NUL in a cell: strip cell by cell
    data = joined.encode("ascii").translate(_ASCII_SPACES)
    return data.startswith(b" ") or data.endswith(b" ") or b"\x00 " in data or b" \x00" in data


def _stripped(values: Sequence[str] | None, empty: Sequence[str]) -> Sequence[str]:
    if values is None:
        return empty
    if not _padded(values):
        return values
    # strip each distinct text once: a million cells hold few distinct ones
    table = {text: text.strip() for text in dict.fromkeys(values)}
    if all(text == clean for text, clean in table.items()):
        return values  # no cell is padded
    return [table[text] for text in values]


#: The characters of the plain number syntax (:data:`.input_rules.PLAIN_CHARACTERS`).
_PLAIN_BYTES = b"0123456789+-.eE \t"


def _plain_text(text: str) -> bool:
    """True when ``text`` holds only the characters of the plain number syntax.

    Deleting those bytes from the ASCII encoding runs at memory speed; a regular
    expression over a column of a million cells costs ten times as much.
    """
    try:
        data = text.encode("ascii")
    except UnicodeEncodeError:
        return False
    return not data.translate(None, _PLAIN_BYTES)


def number_problems(
    texts: Sequence[str], values: np.ndarray, present: np.ndarray
) -> list[tuple[int, str]]:
    """(index, reason) for each present cell of ``texts`` that is not an accepted number.

    ``values`` holds Python's ``float`` of each text (NaN where it could not
    read it) and ``present`` marks the non-empty cells, both as numpy arrays.
    Every reason comes from :func:`number_text_problem`; only the cells that
    can have one are looked at one by one: those ``float`` could not read or
    read as infinite, NaN or subnormal, and, when the column holds any
    character outside the plain syntax, those cells.
    """
    with np.errstate(invalid="ignore"):
        suspects = present & (
            ~np.isfinite(values) | ((values != 0) & (np.abs(values) < input_rules.SMALLEST_NORMAL))
        )
    if not _plain_text("".join(texts)):
        plain = np.fromiter(
            (input_rules.PLAIN_CHARACTERS.fullmatch(text) is not None for text in texts),
            dtype=bool,
            count=len(texts),
        )
        suspects |= present & ~plain
    found = []
    for i in np.flatnonzero(suspects).tolist():
        problem = input_rules.number_text_problem(texts[i])
        if problem is not None:
            found.append((i, problem))
    return found


def _column_numbers(
    texts: Sequence[str],
    lines: Sequence[int],
    column: str,
    problems: Problems,
    *,
    required: bool,
    positive: bool,
    what: str,
) -> np.ndarray:
    """Parse a column of number texts with numpy; report the bad cells by line.

    The syntax is :mod:`.input_rules`' (the same as a single cell's); numpy
    reads the column in one pass and only suspect cells are looked at. A
    temperature column (``T_K``) must also lie in the accepted range.
    """
    n = len(texts)
    values = np.full(n, np.nan)
    if not required and (n == 0 or (texts[0] == "" and texts.count("") == n)):
        return values  # an absent or empty optional column: nothing to parse or report
    try:
        if "" in texts:
            present = np.fromiter((t != "" for t in texts), dtype=bool, count=n)
            values[present] = np.array([t for t in texts if t != ""], dtype=np.float64)
        else:
            present = np.ones(n, dtype=bool)
            values = np.array(texts, dtype=np.float64)  # every cell given: read in place
    except ValueError:
        for i, text in enumerate(texts):
            if text == "":
                continue
            try:
                values[i] = float(text)
            except ValueError:
                values[i] = np.nan
    given = present.copy()
    for i, message in number_problems(texts, values, present):
        problems.add(lines[i], column, f"{message}; expected {what}")
        present[i] = False
        values[i] = np.nan
    if positive:
        for i in np.flatnonzero(present & (values <= 0)):
            problems.add(
                lines[i], column, f"{texts[i].strip()} must be greater than zero; expected {what}"
            )
    if column == "T_K":
        _temperature_range(values, present, lines, column, problems, what)
    if required:
        for i in np.flatnonzero(~given):
            problems.add(lines[i], column, f"is empty; expected {what}")
    return values


def _temperature_range(values, present, lines, column, problems, what) -> None:  # type: ignore[no-untyped-def]
    low, high = input_rules.TEMPERATURE_RANGE_K
    with np.errstate(invalid="ignore"):
        outside = present & (values > 0) & ((values < low) | (values > high))
    for i in np.flatnonzero(outside):
        problem = input_rules.temperature_problem(float(values[i]))
        problems.add(lines[i], column, f"{problem}; expected {what}")


#: The number columns of a measurements file: (column, required, what it must be).
_NUMBER_COLUMNS = (
    ("T_K", True, "a temperature in K greater than zero"),
    ("k", True, "a rate constant greater than zero"),
    ("k_uncertainty", False, "an uncertainty greater than zero"),
    ("pressure_bar", False, "a pressure in bar greater than zero"),
)


@dataclass(frozen=True)
class _Runs:
    """Where each run of rows of one set starts, and where each set of the chunk first occurs.

    Rows of one set are usually consecutive, so looking at the first row of
    each run is enough for most work.
    """

    starts: list[int]
    first_rows: dict[str, int]

    @classmethod
    def of(cls, set_names: Sequence[str]) -> _Runs:
        n = len(set_names)
        names = np.array(set_names, dtype=object)
        starts = (
            np.flatnonzero(np.concatenate(([True], names[1:] != names[:-1]))).tolist() if n else []
        )
        named = names[starts].tolist()
        first_rows = dict(zip(named, starts, strict=True))
        if len(first_rows) != len(starts):
            # a set whose rows are not all together: keep the first run of each
            first_rows = {}
            for name, i in zip(named, starts, strict=True):
                first_rows.setdefault(name, i)
        return cls(starts, first_rows)


@dataclass(frozen=True)
class _SetsOfRows:
    """Which set each row of a chunk belongs to, globally and among the sets the chunk touches."""

    #: index into MeasurementValidator.sets of each row (-1 for a row without a valid name)
    set_index: np.ndarray
    #: the first row of the run each row is in
    run_first_row: np.ndarray
    starts: np.ndarray
    #: index into ``touched`` of each row
    local_index: np.ndarray
    #: the sets the chunk touches (indices into MeasurementValidator.sets; -1: no set)
    touched: np.ndarray

    def of_touched(self, column: np.ndarray, missing: object) -> np.ndarray:
        """A column of the registry for the touched sets (``missing`` where no set)."""
        if not (self.touched.size and self.touched[0] < 0):  # sorted: -1 comes first
            return column[self.touched]
        found = np.empty(self.touched.size, dtype=object)
        found[0] = missing
        found[1:] = column[self.touched[1:]]
        return found

    def per_row(self, column: np.ndarray, missing: object) -> np.ndarray:
        """A column of the registry for every row of the chunk."""
        return self.of_touched(column, missing)[self.local_index]


#: What a quick check of a chunk's new sets needs that only a slow look can say.
_SLOW = None


class MeasurementValidator:
    """Validates measurement rows chunk by chunk, keeping the sets seen so far.

    ``resolver`` finds the reaction of a reaction cell; ``set_exists`` takes
    a list of set names and returns those already stored. The sets are kept
    as columns (:class:`SetRegistry`): a chunk whose new sets are all well
    formed is checked with whole-column operations; one with a problem among
    its new sets is looked at set by set, so that each problem is named as
    precisely (and in the same order) as a row-by-row check would.
    """

    def __init__(
        self,
        resolver: ReactionResolver,
        set_exists: Callable[[list[str]], Iterable[str]],
        problems: Problems,
        *,
        default_k_units: str | None = None,
        fill_uncertainty: str | None = None,
        update: bool = False,
    ):
        self.resolver = resolver
        #: a stored set name is no problem: its set is marked ``stored``, to be compared
        self.update = update
        self.set_exists = set_exists
        self.problems = problems
        self.default_k_units = default_k_units or ""
        #: how points without an uncertainty in a set with some are filled (None: refused)
        self.fill_uncertainty = fill_uncertainty
        self.sets = SetRegistry()
        self.by_name: dict[str, int] = self.sets.by_name
        self._unit_cache: dict[tuple[str, int, bool], tuple[float, bool] | str] = {}
        #: (id, key, order, third body) by reaction text, of the texts met so far
        self._reactions: dict[str, tuple[Any, ...]] = {}

    def validate_chunk(
        self, columns: Mapping[str, Sequence[str]], lines: Sequence[int]
    ) -> MeasurementChunk:
        """Validate one chunk of rows given column-wise (raw cell texts)."""
        texts = _TextColumns.of(columns, len(lines))
        temperature, rate_constant, uncertainty, pressure = (
            _column_numbers(
                columns.get(name, [""] * len(lines)),
                lines,
                name,
                self.problems,
                required=required,
                positive=True,
                what=what,
            )
            for name, required, what in _NUMBER_COLUMNS
        )
        runs = _Runs.of(texts.set_names)
        self._check_set_names(texts, runs, lines)
        new = self._add_new_sets(texts, runs, lines)
        rows = self._sets_of_rows(texts.set_names, runs, new)
        self._check_agreement_with_first_rows(texts, rows, lines)
        absolute, percent = self._uncertainty_kinds(texts.kinds, lines)
        factor = rows.per_row(self.sets.column("factor"), np.nan).astype(float)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            rate_si = rate_constant * factor
            relative = np.where(absolute, uncertainty * factor / rate_si, uncertainty)
        relative = np.where(percent, uncertainty / 100.0, relative)
        rate_si = self._per_concentration(rate_si, temperature, pressure * BAR_PA, rows, lines)
        self._check_plausible(
            rate_constant, texts.units, rate_si, relative, percent | absolute, rows, lines
        )
        self._check_stated_uncertainties(np.isfinite(uncertainty), rows, lines)
        return MeasurementChunk(
            sets=self.sets,
            new=new,
            set_index=rows.set_index,
            temperature=temperature,
            rate_constant=rate_si,
            relative_uncertainty=relative,
            pressure=pressure * BAR_PA,
        )

    # ------------------------------------------------------------------ sets

    def _set_systematic(self, record: MeasurementSetRecord, text: str, line: int) -> None:
        """The set's systematic uncertainty from its first row (a fraction of k, below 1)."""
        record.systematic_text = text
        if not text:
            return
        what = "a systematic uncertainty as a fraction of k (0.1 for 10 %)"
        try:
            value = parse_number(text, minimum=0.0, what=what)
        except ValueError as exc:
            self.problems.add(line, "systematic_uncertainty", str(exc))
            return
        if value >= 1.0:
            self.problems.add(
                line,
                "systematic_uncertainty",
                f"{value:g} is {value * 100:g} % of k; expected {what}",
            )
            return
        record.systematic_uncertainty = value

    def _check_set_names(self, texts: _TextColumns, runs: _Runs, lines: Sequence[int]) -> None:
        """Empty set names, and set, bath gas or unit texts longer than the store keeps."""
        if "" in runs.first_rows:
            for i, name in enumerate(texts.set_names):
                if name == "":
                    self.problems.add(
                        lines[i], "set", "is empty; expected the name of the measurement set"
                    )
        first = list(runs.first_rows.values())
        for column, values in (
            ("set", texts.set_names),
            ("bath_gas", texts.baths),
            ("k_units", texts.units),
        ):
            # only a set's first row is reported (a later row that differs is a disagreement)
            if max(map(len, map(values.__getitem__, first)), default=0) > TEXT_LIMITS[column]:
                for i in first:
                    too_long(self.problems, lines[i], column, values[i])

    def _add_new_sets(self, texts: _TextColumns, runs: _Runs, lines: Sequence[int]) -> range:
        """The sets this chunk is the first to name, each as defined by its first row."""
        by_name = self.by_name
        fresh = [name for name in runs.first_rows if name and name not in by_name]
        if not fresh:
            return range(len(self.sets), len(self.sets))
        existing = set(self.set_exists(fresh))
        first = [runs.first_rows[name] for name in fresh]
        columns = self._new_sets_quickly(fresh, first, existing, texts, lines)
        if columns is not _SLOW:
            return self.sets.append(columns)
        self.resolver.prefetch({texts.reactions[i] for i in first})
        return self.sets.append_records(
            [
                self._new_set_slowly(name, i, existing, texts, lines)
                for name, i in zip(fresh, first, strict=True)
            ]
        )

    def _new_sets_quickly(
        self,
        names: list[str],
        first: list[int],
        existing: set[str],
        texts: _TextColumns,
        lines: Sequence[int],
    ) -> dict[str, object] | None:
        """The new sets as columns when every one is well formed: printable name not
        stored (or stored, in an import that updates), a known reaction, a unit that fits
        it, no systematic uncertainty; None when any needs the slow look."""
        if (existing and not self.update) or not "".join(names).isprintable():
            return _SLOW
        if texts.systematic is not texts.empty and any(texts.systematic[i] for i in first):
            return _SLOW
        found = self._reaction_rows([texts.reactions[i] for i in first])
        if found is None:
            return _SLOW
        ids, keys, orders, third_bodies = zip(*found, strict=True)
        default = self.default_k_units
        units = [texts.units[i] or default for i in first]
        combos = list(zip(units, orders, third_bodies, strict=True))
        for combo in dict.fromkeys(combos):
            if not combo[0] or isinstance(self._unit_factor(*combo), str):
                return _SLOW
        factor, effective = zip(*map(self._unit_cache.__getitem__, combos), strict=True)
        n = len(names)
        return {
            "name": names,
            "first_line": [lines[i] for i in first],
            "reaction_id": ids,
            "reaction_key": keys,
            "order": orders,
            "third_body": third_bodies,
            "k_units": units,
            "reference": [texts.references[i] for i in first],
            "method": [texts.methods[i] for i in first],
            "bath_gas": [texts.baths[i] for i in first],
            "factor": factor,
            "effective": effective,
            "valid": np.ones(n, dtype=bool),
            "id": np.full(n, -1, dtype=np.int64),
            "systematic_text": [""] * n,
            "systematic_uncertainty": np.full(n, np.nan),
            "with_uncertainty": np.zeros(n, dtype=np.int64),
            "without_uncertainty": np.zeros(n, dtype=np.int64),
            "mixed": np.zeros(n, dtype=bool),
            "stored": [name in existing for name in names] if existing else np.zeros(n, bool),
        }

    def _reaction_rows(self, reaction_texts: list[str]) -> list[tuple[Any, ...]] | None:
        """(id, key, order, third body) of the reaction each text names, or None when one
        names none. The texts not met before are looked up as keys in one query; those
        that are no stored key (equations) are resolved one by one."""
        known = self._reactions
        missing = [text for text in dict.fromkeys(reaction_texts) if text not in known]
        if missing:
            for row in self.resolver.rows_by_key(missing):
                known[row[1]] = row
            others = [text for text in missing if text not in known]
            if others:
                self.resolver.prefetch(others)
                for text in others:
                    resolved = self.resolver.resolve(text)
                    if not isinstance(resolved, ReactionRef):
                        return None
                    known[text] = tuple(resolved)
        return [known[text] for text in reaction_texts]

    def _new_set_slowly(
        self, name: str, i: int, existing: set[str], texts: _TextColumns, lines: Sequence[int]
    ) -> MeasurementSetRecord:
        """One new set, each of its problems reported."""
        record = self._new_set_quickly(name, texts, i, lines[i]) or self._new_set(
            name, texts, i, lines[i]
        )
        self._set_systematic(record, texts.systematic[i], lines[i])
        if name in existing and self.update:
            record.stored = True
        elif name in existing:
            self.problems.add(
                lines[i],
                "set",
                f"measurement set {name!r} is already in the store; an import that "
                "updates compares it with the stored one",
            )
            record.valid = False
        elif (problem := input_rules.name_problem(name, "set name")) is not None:
            self.problems.add(lines[i], "set", problem)
            record.valid = False
        return record

    def _new_set_quickly(
        self, name: str, texts: _TextColumns, i: int, line: int
    ) -> MeasurementSetRecord | None:
        """The common set, a known reaction and a unit seen before, in a few steps (None for
        anything else, problems included)."""
        reaction_text, unit_text = texts.reactions[i], texts.units[i] or self.default_k_units
        if not (reaction_text and unit_text):
            return None
        resolved = self.resolver.by_key.get(reaction_text) or self.resolver.resolve(reaction_text)
        if not isinstance(resolved, ReactionRef):
            return None
        found = self._unit_cache.get((unit_text, resolved.order, resolved.third_body))
        if not isinstance(found, tuple):
            return None
        return MeasurementSetRecord(
            name,
            resolved,
            unit_text,
            texts.references[i] or None,
            texts.methods[i] or None,
            texts.baths[i] or None,
            line,
            *found,
        )

    def _new_set(self, name: str, texts: _TextColumns, i: int, line: int) -> MeasurementSetRecord:
        """A new set the long way, reporting what is wrong with its first row."""
        reaction_text = texts.reactions[i]
        unit_text = texts.units[i] or self.default_k_units
        record = MeasurementSetRecord(
            name=name,
            reaction=ReactionRef(-1, reaction_text, 0),
            k_units=unit_text,
            reference=texts.references[i] or None,
            method=texts.methods[i] or None,
            bath_gas=texts.baths[i] or None,
            first_line=line,
            valid=False,
        )
        ok = True
        if reaction_text == "":
            self.problems.add(line, "reaction", "is empty; expected a reaction key or equation")
            ok = False
        else:
            resolved = self.resolver.resolve(reaction_text)
            if isinstance(resolved, ReactionRef):
                record.reaction = resolved
            else:
                self.problems.add(line, "reaction", resolved)
                ok = False
        if unit_text == "":
            self.problems.add(
                line, "k_units", "is empty and no default k_units was given; expected a unit"
            )
            ok = False
        elif record.reaction.id != -1:
            found = self._unit_factor(unit_text, record.reaction.order, record.reaction.third_body)
            if isinstance(found, str):
                self.problems.add(line, "k_units", found)
                ok = False
            else:
                record.factor, record.effective = found
        record.valid = ok
        return record

    def _unit_factor(self, text: str, order: int, third_body: bool) -> tuple[float, bool] | str:
        """(SI factor, effective) of a k unit for a reaction of ``order``, or why it is
        refused. A reaction written with M also takes the unit of one order fewer: its
        points are then the effective k at their pressure (``effective`` True)."""
        key = (text, order, third_body)
        if key not in self._unit_cache:
            try:
                self._unit_cache[key] = (parse_rate_unit(text, order=order).to_si, False)
            except UnitError as exc:
                self._unit_cache[key] = str(exc)
                if third_body and order > 1:
                    self._unit_cache[key] = (
                        f"{exc}; a reaction written with M also takes k of order {order - 1}, "
                        "the effective k at each point's pressure"
                    )
                    try:
                        factor = parse_rate_unit(text, order=order - 1).to_si
                    except UnitError:
                        pass
                    else:
                        self._unit_cache[key] = (factor, True)
        return self._unit_cache[key]

    def _per_concentration(
        self,
        rate_si: np.ndarray,
        T: np.ndarray,
        pressure: np.ndarray,
        rows: _SetsOfRows,
        lines: Sequence[int],
    ) -> np.ndarray:
        """The points of sets given as effective k (one concentration fewer than their
        reaction written with M) as the reaction's coefficient k / [M], [M] = P / (R T);
        such a point without a pressure is reported."""
        effective = rows.of_touched(self.sets.column("effective"), False).astype(bool)
        if not effective.any():
            return rate_si
        effective = effective[rows.local_index]
        with np.errstate(invalid="ignore"):
            usable = effective & np.isfinite(pressure) & (pressure > 0) & (T > 0)
        for i in np.flatnonzero(effective & np.isnan(pressure)).tolist():
            record = self.sets.record(int(rows.set_index[i]))
            self.problems.add(
                lines[i],
                "pressure_bar",
                f"is empty; k in {record.k_units} is the effective k of "
                f"{record.reaction.key!r} (written with M) at its pressure, so the point "
                "needs the pressure it was measured at; expected a pressure in bar",
            )
        converted = rate_si.copy()
        if usable.any():
            converted[usable] = rate_si[usable] / bath_gas_concentration(
                pressure[usable], T[usable]
            )
        converted[effective & ~usable] = np.nan
        return converted

    def _sets_of_rows(self, set_names: Sequence[str], runs: _Runs, new: range) -> _SetsOfRows:
        n = len(set_names)
        starts = np.asarray(runs.starts, dtype=np.int64)
        run_lengths = np.diff(np.append(starts, n))
        if len(new) == len(runs.starts):
            # every run is a set of its own that this chunk named first, in order (the new
            # sets are appended in the order of their first rows): no look-up, no sort
            touched = np.arange(new.start, new.stop, dtype=np.int64)
            set_index = np.repeat(touched, run_lengths)
            local_index = np.repeat(np.arange(len(new), dtype=np.int64), run_lengths)
            return _SetsOfRows(
                set_index=set_index,
                run_first_row=np.repeat(starts, run_lengths),
                starts=starts,
                local_index=local_index,
                touched=touched,
            )
        by_name = self.by_name
        run_index = np.array([by_name.get(set_names[i], -1) for i in runs.starts], dtype=np.int64)
        set_index = np.repeat(run_index, run_lengths)
        # work on the sets this chunk touches only, so that cost does not grow with the file
        touched, local_index = np.unique(set_index, return_inverse=True)
        return _SetsOfRows(
            set_index=set_index,
            run_first_row=np.repeat(starts, run_lengths),
            starts=starts,
            local_index=local_index.reshape(-1),
            touched=touched,
        )

    # ------------------------------------------------------------------ rows

    def _check_agreement_with_first_rows(
        self, texts: _TextColumns, rows: _SetsOfRows, lines: Sequence[int]
    ) -> None:
        """Every row of a set must agree with the set's first row."""
        units = texts.units
        if self.default_k_units:
            units = [u or self.default_k_units for u in units]
        for column, values in (
            ("reaction", texts.reactions),
            ("k_units", units),
            ("reference", texts.references),
            ("method", texts.methods),
            ("bath_gas", texts.baths),
            ("systematic_text", texts.systematic),
        ):
            if values is not texts.empty:  # an absent column's empty cells agree with any
                self._check_agreement(rows, texts.set_names, values, column, lines)

    def _expected(self, rows: _SetsOfRows, column: str) -> np.ndarray:
        """What each touched set's rows must say in ``column`` (None: nothing to compare)."""
        if column != "reaction":
            return rows.of_touched(self.sets.column(column), None)
        keys = rows.of_touched(self.sets.column("reaction_key"), None)
        resolved = rows.of_touched(self.sets.column("reaction_id"), -1).astype(np.int64) != -1
        return np.where(resolved, keys, None)

    def _check_agreement(
        self,
        rows: _SetsOfRows,
        set_names: Sequence[str],
        values: Sequence[str],
        column: str,
        lines: Sequence[int],
    ) -> None:
        local_index = rows.local_index
        expected_array = self._expected(rows, column)
        n = len(values)
        # one text in the whole chunk (a unit, an absent column): every row
        # repeats its run's first cell, so the run starts decide
        uniform = n == 0 or values.count(values[0]) == n
        given = (
            np.array([values[i] for i in rows.starts.tolist()], dtype=object)
            if uniform
            else np.array(values, dtype=object)
        )

        def disagree(which, cells):  # type: ignore[no-untyped-def]
            reference = expected_array[local_index[which]]
            return (cells != reference) & (cells != "") & (reference != None)  # noqa: E711

        # A row's verdict depends only on its cell and its set, so a row that
        # repeats the first cell of its run shares that row's verdict: when
        # every run starts clean, only the rows that differ need a look.
        start_cells = given if uniform else given[rows.starts]
        if not disagree(rows.starts, start_cells).any():
            if uniform:
                return
            candidates = np.flatnonzero(given != given[rows.run_first_row])
            suspects = candidates[disagree(candidates, given[candidates])]
        else:
            if uniform:
                given = np.array(values, dtype=object)
            suspects = np.flatnonzero(disagree(slice(None), given))
        first_lines = self.sets.column("first_line")
        for i in suspects.tolist():
            index = int(rows.set_index[i])
            if lines[i] != first_lines[index]:
                record = self.sets.record(index)
                self._report_disagreement(record, column, values[i], set_names[i], lines[i])

    def _report_disagreement(
        self, record: MeasurementSetRecord, column: str, value: str, set_name: str, line: int
    ) -> None:
        first = record.first_line
        if column == "reaction":
            resolved = self.resolver.resolve(value)
            if isinstance(resolved, ReactionRef) and resolved.id == record.reaction.id:
                return
            self.problems.add(
                line,
                "reaction",
                f"set {set_name!r} was given for reaction {record.reaction.key!r} on "
                f"line {first}; one set belongs to one reaction",
            )
        elif column == "k_units":
            self.problems.add(
                line,
                "k_units",
                f"{value!r} differs from {record.k_units!r} used for set {set_name!r} on "
                f"line {first}; one set uses one unit",
            )
        else:
            shown = "systematic_uncertainty" if column == "systematic_text" else column
            self.problems.add(
                line,
                shown,
                f"{value!r} differs from {(getattr(record, column) or '')!r} given for set "
                f"{set_name!r} on line {first}",
            )

    def _uncertainty_kinds(
        self, kinds: Sequence[str], lines: Sequence[int]
    ) -> tuple[np.ndarray, np.ndarray]:
        """(absolute, percent) per row; an unknown kind is reported."""
        n = len(kinds)
        if n and kinds[0] in ("", "relative") and kinds.count(kinds[0]) == n:
            return np.zeros(n, dtype=bool), np.zeros(n, dtype=bool)  # one plain kind throughout
        kind_array = np.array(kinds, dtype=object)
        absolute = kind_array == "absolute"
        percent = kind_array == "percent"
        unknown = ~(absolute | percent | (kind_array == "relative") | (kind_array == ""))
        for i in np.flatnonzero(unknown):
            self.problems.add(
                lines[i],
                "uncertainty_kind",
                f"{kinds[i]!r} is not one of {', '.join(UNCERTAINTY_KINDS)}",
            )
        return absolute, percent

    def _check_plausible(
        self,
        given: np.ndarray,
        units: Sequence[str],
        rate_si: np.ndarray,
        relative: np.ndarray,
        converted: np.ndarray,
        rows: _SetsOfRows,
        lines: Sequence[int],
    ) -> None:
        """A k outside what its order can be, and a relative uncertainty of 1 or more."""
        valid = rows.of_touched(self.sets.column("valid"), False).astype(bool)
        order = rows.of_touched(self.sets.column("order"), 0).astype(np.int64)
        orders = np.where(valid, order, 0)[rows.local_index]
        for order in np.unique(orders[orders > 0]).tolist():
            low, high, said = input_rules.rate_constant_bounds_si(order)
            with np.errstate(invalid="ignore"):
                outside = (orders == order) & ~((rate_si >= low) & (rate_si <= high))
            # a k of zero or less is already reported as such
            for i in np.flatnonzero(outside & ~np.isnan(rate_si) & (given > 0)):
                self.problems.add(
                    lines[i],
                    "k",
                    f"{given[i]:g} {units[i] or self.default_k_units} is outside what a rate "
                    f"constant of order {order} can be ({said}); check the value and its unit",
                )
        with np.errstate(invalid="ignore"):
            large = (relative >= 1.0) & ~converted
        for i in np.flatnonzero(large):
            self.problems.add(
                lines[i],
                "k_uncertainty",
                f"{relative[i]:g} as a relative uncertainty is {relative[i] * 100:g} % of k; "
                "give it as a fraction (0.2 for 20 %), or say uncertainty_kind percent",
            )

    def _check_stated_uncertainties(
        self, stated: np.ndarray, rows: _SetsOfRows, lines: Sequence[int]
    ) -> None:
        """A set whose points state an uncertainty for some points but not all is refused.

        A fit then would silently weight none of them; the set's points are
        counted across chunks, and the set is reported once.
        """
        size = len(rows.touched)
        total = np.bincount(rows.local_index, minlength=size)
        with_counts = np.bincount(rows.local_index, weights=stated, minlength=size).astype(int)
        named = rows.touched >= 0
        sets = rows.touched[named]
        with_column = self.sets.column("with_uncertainty")
        without_column = self.sets.column("without_uncertainty")
        mixed_column = self.sets.column("mixed")
        with_column[sets] += with_counts[named]
        without_column[sets] += (total - with_counts)[named]
        newly = (with_column[sets] > 0) & (without_column[sets] > 0) & ~mixed_column[sets]
        if not newly.any():
            return
        mixed_column[sets[newly]] = True
        if self.fill_uncertainty is not None:
            return  # filled once the set is complete, and said so
        first_lines = self.sets.column("first_line")
        for local in np.flatnonzero(named)[newly].tolist():
            index = int(rows.touched[local])
            missing = np.flatnonzero(~stated & (rows.local_index == local))
            first = lines[int(missing[0])] if missing.size else int(first_lines[index])
            self.problems.add(
                first,
                "k_uncertainty",
                f"set {self.sets.column('name')[index]!r} states an uncertainty for some "
                "points but not for this one; give every point of a set an uncertainty, or "
                "none, or fill the missing ones with the set's median",
            )
