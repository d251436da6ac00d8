"""Importing measured k(T) points: validated chunk by chunk, written in one transaction.

A measurements file can hold millions of points, so it is streamed: each
chunk is validated column-wise (:mod:`ratebank.services.measurement_validation`)
and written through the driver's bulk path while no problem has been found.
The import is all or nothing.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.services.measurement_validation import (
    MeasurementChunk,
    MeasurementValidator,
    SetRegistry,
)
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.set_updates import (
    SetPlan,
    StoredSetPoints,
    set_plan,
    write_set_updates,
)
from ratebank.services.validate import ImportSummary, LazyReactionResolver, Problems
from ratebank.store import audit
from ratebank.store.bulk import SuspendedIndex
from ratebank.store.records import (
    fill_missing_uncertainties,
    insert_points,
    insert_sets,
    measurement_set_names,
    suspend_point_index,
)
from ratebank.store.set_updates import StoredSet, stored_sets


class MeasurementImporter:
    """Streams measured points into the store, chunk by chunk, in one transaction.

    Each chunk is validated completely. Chunks are written only while no
    problem has been found anywhere; once one is, the rest of the file is
    still validated (so every problem is reported) and :meth:`finish` raises,
    which rolls the whole import back: nothing is written.

    With ``update``, a set whose name is stored is no problem: its points are set aside
    while the file is read, then compared as a whole with the stored set
    (:mod:`ratebank.services.set_updates`); a changed one is rewritten, an identical one
    left alone. The summary then counts sets: new (``added``), changed and unchanged.
    """

    def __init__(
        self,
        session: Session,
        *,
        source: str,
        default_k_units: str | None = None,
        dry_run: bool = False,
        progress: Progress | None = None,
        problems: Problems | None = None,
        expected_rows: int = 0,
        fill_uncertainty: str | None = None,
        update: bool = False,
    ):
        self.session = session
        self.update = update
        self.source = source
        self.dry_run = dry_run
        self.progress = progress or NoProgress()
        self.problems = problems if problems is not None else Problems()
        self.rows = 0
        #: points read, and those of sets not stored before
        self.points = 0
        self.new_points = 0
        known = measurement_set_names(session)
        self.validator = MeasurementValidator(
            LazyReactionResolver(session),
            known.intersection,
            self.problems,
            default_k_units=default_k_units,
            fill_uncertainty=_checked_fill(fill_uncertainty),
            update=update,
        )
        #: stored sets the file names (an import that updates), and the points it gives them
        self._stored: dict[str, StoredSet] = {}
        self._stored_index: list[int] = []
        self._given = StoredSetPoints()
        self._expected_rows = expected_rows
        self._point_index: SuspendedIndex | None = None
        # a savepoint makes the import all-or-nothing even inside a caller's larger transaction
        self._savepoint = session.begin_nested()
        self.progress.start("importing points", expected_rows)

    def add(self, columns: Mapping[str, Sequence[str]], lines: Sequence[int]) -> None:
        """Validate (and, while the input is clean, write) one chunk of rows."""
        chunk = self.validator.validate_chunk(columns, lines)
        self.rows += len(lines)
        self.points += chunk.n_points
        if self.update and not self.problems:
            chunk = self._keep_stored(chunk)
        if not self.problems and not self.dry_run:
            self._write(chunk)
        self.new_points += chunk.n_points
        self.progress.advance(len(lines))

    def _keep_stored(self, chunk: MeasurementChunk) -> MeasurementChunk:
        """Set aside the chunk's points of stored sets (compared when the file is read); the
        points of new sets are left to write."""
        sets = chunk.sets
        stored = [i for i in chunk.new if sets.column("stored")[i]]
        if stored:
            names = sets.column("name")
            self._stored.update(stored_sets(self.session, [names[i] for i in stored]))
            self._stored_index.extend(stored)
        if not self._stored_index:
            return chunk
        index = np.asarray(self._stored_index, dtype=np.int64)
        self._given.add(chunk, index)
        keep = ~np.isin(chunk.set_index, index)
        return replace(
            chunk,
            set_index=chunk.set_index[keep],
            temperature=chunk.temperature[keep],
            rate_constant=chunk.rate_constant[keep],
            relative_uncertainty=chunk.relative_uncertainty[keep],
            pressure=chunk.pressure[keep],
        )

    def _write(self, chunk: MeasurementChunk) -> None:
        sets, new = chunk.sets, chunk.new
        ids = sets.column("id")
        stored = sets.column("stored")[new.start : new.stop]
        names = sets.column("name")
        for i in (np.flatnonzero(stored) + new.start).tolist():
            ids[i] = self._stored[names[i]].id
        fresh = np.flatnonzero(~stored) + new.start
        if fresh.size:
            ids[fresh] = insert_sets(self.session, _set_rows(sets, fresh), source=self.source)
        if self._point_index is None:
            self._point_index = suspend_point_index(self.session, self._expected_rows)
        if chunk.n_points:
            insert_points(self.session, _point_columns(chunk, ids))

    def finish(self) -> ImportSummary:
        """Raise if any chunk had a problem (nothing is then written); else commit the import."""
        if self.problems:
            self._savepoint.rollback()  # brings a suspended index back too
            self.problems.raise_if_any(self.source)
        if self._point_index is not None:
            self._point_index.restore()
        plan = self._update_stored_sets()
        filled = self._fill_missing_uncertainties()
        self._savepoint.commit()
        sets = len(self.validator.sets) - len(self._stored_index)
        if not self.dry_run and sets:
            extra = {"uncertainties_filled_with_the_set_median": filled} if filled else {}
            audit.record(
                self.session, "data.import", self.source, sets=sets, points=self.new_points, **extra
            )
        if not self.update:
            return ImportSummary(
                "measurements", self.source, self.rows, self.points, self.dry_run,
                self._details(sets),
            )  # fmt: skip
        return ImportSummary(
            "measurements",
            self.source,
            self.rows,
            sets,
            self.dry_run,
            {**self._details(sets), "points": self.points},
            update=True,
            changed=plan.changed,
            unchanged=plan.unchanged,
        )

    def _update_stored_sets(self) -> SetPlan:
        """Compare the file's stored sets with the store and rewrite the changed ones."""
        if not self._stored_index:
            return SetPlan()
        plan = set_plan(self.validator.sets, self._stored, self._given, self.session, self.problems)
        if self.problems:
            self._savepoint.rollback()
            self.problems.raise_if_any(self.source)
        if not self.dry_run:
            write_set_updates(self.session, plan, self.source)
        return plan

    def _fill_missing_uncertainties(self) -> dict[str, float]:
        """The sets whose missing uncertainties were filled with the set's median, and the
        value used (the caller chose to; it is recorded and reported)."""
        sets = self.validator.sets
        mixed = np.flatnonzero(sets.column("mixed") & (sets.column("id") >= 0))
        if self.dry_run or not mixed.size or self.validator.fill_uncertainty is None:
            return {}
        ids = sets.column("id")[mixed].tolist()
        used = fill_missing_uncertainties(self.session, ids)
        names = sets.column("name")[mixed].tolist()
        return {name: used[i] for name, i in zip(names, ids, strict=True) if i in used}

    def _details(self, sets: int) -> dict[str, int]:
        if self.validator.fill_uncertainty is None:
            return {"sets": sets}
        mixed = int(self.validator.sets.column("mixed").sum())
        return {"sets": sets, "sets_with_filled_uncertainties": mixed}


#: How missing uncertainties of a set that states some may be filled.
FILL_UNCERTAINTY = ("median",)


def _checked_fill(fill: str | None) -> str | None:
    if fill is not None and fill not in FILL_UNCERTAINTY:
        raise BadInputError(
            f"unknown way to fill missing uncertainties {fill!r}; expected "
            f"{', '.join(FILL_UNCERTAINTY)}",
            argument="fill_uncertainty",
        )
    return fill


def _set_rows(sets: SetRegistry, index: np.ndarray) -> list[tuple[object, ...]]:
    """The rows :func:`insert_sets` writes for the registry's sets at ``index`` (in the
    order of :class:`NewSet`), made column by column."""
    systematic = sets.column("systematic_uncertainty")[index]
    return list(
        zip(
            sets.column("name")[index].tolist(),
            sets.column("reaction_id")[index].tolist(),
            *([text or None for text in sets.column(name)[index].tolist()]
              for name in ("reference", "method", "bath_gas")),
            sets.column("k_units")[index].tolist(),
            [None] * index.size if np.isnan(systematic).all()
            else [None if x != x else x for x in systematic.tolist()],
            strict=True,
        )
    )  # fmt: skip


def _point_columns(chunk: MeasurementChunk, set_ids: np.ndarray) -> dict[str, list[object]]:
    """The chunk's points as lists by column, None where a value is not given.

    Chunks are written in order while the input is clean, so every set a
    point belongs to has its id in ``set_ids`` (the registry's id column). A
    column with no value at all is left out.
    """
    columns: dict[str, list[object]] = {
        "set_id": set_ids[chunk.set_index].tolist(),
        "temperature": chunk.temperature.tolist(),
        "rate_constant": chunk.rate_constant.tolist(),
    }
    for name, array in (
        ("relative_uncertainty", chunk.relative_uncertainty),
        ("pressure", chunk.pressure),
    ):
        missing = np.isnan(array)
        if missing.all():
            continue  # binding a million NULLs costs a fifth of the insert
        listed = array.tolist()
        columns[name] = [None if x != x else x for x in listed] if missing.any() else listed
    return columns


def import_measurements(
    session: Session,
    columns: Mapping[str, Sequence[str]],
    lines: Sequence[int],
    *,
    source: str,
    default_k_units: str | None = None,
    dry_run: bool = False,
    update: bool = False,
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add measured points given column-wise; all or nothing (``update``: as
    :class:`MeasurementImporter`).

    ``columns`` maps each measurement column of the README to its cell texts
    ("" when empty); ``lines`` gives each row's line in the source.
    """
    importer = MeasurementImporter(
        session,
        source=source,
        default_k_units=default_k_units,
        dry_run=dry_run,
        progress=progress,
        expected_rows=len(lines),
        update=update,
    )
    importer.add(columns, lines)
    return importer.finish()
