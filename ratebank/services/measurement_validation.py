"""Validation of measured k(T) points, column-wise with numpy.

A million rows are checked in a few array passes; rows are looked at one by
one only to name the lines of their problems. Rows arrive in chunks (the
importer streams the file), and the verdict is the same whatever the chunk
size (``tests/io/test_streaming_import.py`` checks this). Problems are
collected, never raised half-way (:class:`ratebank.services.validate.Problems`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass

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
    """A new measurement set, as its first row defines it."""

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


@dataclass
class MeasurementChunk:
    """Validated points of one chunk, column-wise, SI units."""

    new_sets: list[MeasurementSetRecord]
    set_index: np.ndarray  # int: index into MeasurementValidator.sets per point
    temperature: np.ndarray
    rate_constant: np.ndarray
    relative_uncertainty: np.ndarray  # NaN where not given
    pressure: np.ndarray  # NaN where not given

    @property
    def n_points(self) -> int:
        return len(self.temperature)


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
            )
        )


def _stripped(values: Sequence[str] | None, empty: Sequence[str]) -> Sequence[str]:
    if values is None:
        return empty
    # strip each distinct text once: a million cells hold few distinct ones
    table = {text: text.strip() for text in dict.fromkeys(values)}
    if all(text == clean for text, clean in table.items()):
        return values  # no cell is padded
    return [table[text] for text in values]


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
    if not input_rules.PLAIN_CHARACTERS.fullmatch("".join(texts)):
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
    if "" in texts:
        present = np.fromiter((t != "" for t in texts), dtype=bool, count=n)
        candidates = [t for t in texts if t != ""]
    else:
        present = np.ones(n, dtype=bool)
        candidates = list(texts)
    try:
        values[present] = np.array(candidates, dtype=np.float64)
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
        first_rows: dict[str, int] = {}
        for i in starts:
            first_rows.setdefault(set_names[i], i)
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
    touched: list[MeasurementSetRecord | None]


class MeasurementValidator:
    """Validates measurement rows chunk by chunk, keeping the sets seen so far.

    ``resolver`` finds the reaction of a reaction cell; ``set_exists`` takes
    a list of set names and returns those already stored.
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
        self.sets: list[MeasurementSetRecord] = []
        self.by_name: dict[str, int] = {}
        self._unit_cache: dict[tuple[str, int, bool], tuple[float, bool] | str] = {}

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
        new_sets = self._add_new_sets(texts, runs, lines)
        rows = self._sets_of_rows(texts.set_names, runs)
        self._check_agreement_with_first_rows(texts, rows, lines)
        absolute, percent = self._uncertainty_kinds(texts.kinds, lines)
        factor = np.array([r.factor if r is not None else np.nan for r in rows.touched])[
            rows.local_index
        ]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            rate_si = rate_constant * factor
            relative = np.where(absolute, uncertainty * factor / rate_si, uncertainty)
        relative = np.where(percent, uncertainty / 100.0, relative)
        rate_si = self._per_concentration(rate_si, temperature, pressure * BAR_PA, rows, lines)
        units = [u or (self.default_k_units or "") for u in texts.units]
        self._check_plausible(
            rate_constant, units, rate_si, relative, percent | absolute, rows, lines
        )
        self._check_stated_uncertainties(np.isfinite(uncertainty), rows, lines)
        return MeasurementChunk(
            new_sets=new_sets,
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
        for column, values in (
            ("set", texts.set_names),
            ("bath_gas", texts.baths),
            ("k_units", texts.units),
        ):
            if max(map(len, values), default=0) > TEXT_LIMITS[column]:
                for i in runs.first_rows.values():
                    too_long(self.problems, lines[i], column, values[i])

    def _add_new_sets(
        self, texts: _TextColumns, runs: _Runs, lines: Sequence[int]
    ) -> list[MeasurementSetRecord]:
        """The sets this chunk is the first to name, each as defined by its first row."""
        fresh = [name for name in runs.first_rows if name and name not in self.by_name]
        existing = set(self.set_exists(fresh)) if fresh else set()
        self.resolver.prefetch({texts.reactions[runs.first_rows[name]] for name in fresh})
        new_sets = []
        for name in fresh:
            i = runs.first_rows[name]
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
            self.by_name[name] = len(self.sets)
            self.sets.append(record)
            new_sets.append(record)
        return new_sets

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
        effective = np.array([r is not None and r.effective for r in rows.touched], dtype=bool)
        if not effective.any():
            return rate_si
        effective = effective[rows.local_index]
        with np.errstate(invalid="ignore"):
            usable = effective & np.isfinite(pressure) & (pressure > 0) & (T > 0)
        for i in np.flatnonzero(effective & np.isnan(pressure)).tolist():
            record = rows.touched[rows.local_index[i]]
            assert record is not None
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

    def _sets_of_rows(self, set_names: Sequence[str], runs: _Runs) -> _SetsOfRows:
        n = len(set_names)
        run_index = np.array(
            [self.by_name.get(set_names[i], -1) for i in runs.starts], dtype=np.int64
        )
        run_lengths = np.diff(np.append(runs.starts, n))
        set_index = np.repeat(run_index, run_lengths)
        starts = np.asarray(runs.starts, dtype=np.int64)
        # work on the sets this chunk touches only, so that cost does not grow with the file
        local_sets, local_index = np.unique(set_index, return_inverse=True)
        return _SetsOfRows(
            set_index=set_index,
            run_first_row=np.repeat(starts, run_lengths),
            starts=starts,
            local_index=local_index.reshape(-1),
            touched=[self.sets[i] if i >= 0 else None for i in local_sets.tolist()],
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
            self._check_agreement(rows, texts.set_names, values, column, lines)

    def _check_agreement(
        self,
        rows: _SetsOfRows,
        set_names: Sequence[str],
        values: Sequence[str],
        column: str,
        lines: Sequence[int],
    ) -> None:
        touched, local_index = rows.touched, rows.local_index
        if column == "reaction":
            expected = [
                r.reaction.key if r is not None and r.reaction.id != -1 else None for r in touched
            ]
        else:
            expected = [(getattr(r, column) or "") if r is not None else None for r in touched]
        expected_array = np.array(expected, dtype=object)
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
        for i in suspects:
            record = touched[local_index[i]]
            assert record is not None
            if lines[i] != record.first_line:
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
        orders = np.array(
            [r.reaction.order if r is not None and r.valid else 0 for r in rows.touched]
        )[rows.local_index]
        for order in np.unique(orders[orders > 0]).tolist():
            low, high, said = input_rules.rate_constant_bounds_si(order)
            with np.errstate(invalid="ignore"):
                outside = (orders == order) & ~((rate_si >= low) & (rate_si <= high))
            # a k of zero or less is already reported as such
            for i in np.flatnonzero(outside & ~np.isnan(rate_si) & (given > 0)):
                self.problems.add(
                    lines[i],
                    "k",
                    f"{given[i]:g} {units[i]} is outside what a rate constant of order {order} "
                    f"can be ({said}); check the value and its unit",
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
        for local, record in enumerate(rows.touched):
            if record is None:
                continue
            record.with_uncertainty += int(with_counts[local])
            record.without_uncertainty += int(total[local] - with_counts[local])
            if record.with_uncertainty and record.without_uncertainty and not record.mixed:
                record.mixed = True
                if self.fill_uncertainty is not None:
                    continue  # filled once the set is complete, and said so
                missing = np.flatnonzero(~stated & (rows.local_index == local))
                first = lines[int(missing[0])] if missing.size else record.first_line
                self.problems.add(
                    first,
                    "k_uncertainty",
                    f"set {record.name!r} states an uncertainty for some points but not for "
                    "this one; give every point of a set an uncertainty, or none, or fill the "
                    "missing ones with the set's median",
                )
