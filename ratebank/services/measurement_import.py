"""Importing measured k(T) points: validated chunk by chunk, written in one transaction.

A measurements file can hold millions of points, so it is streamed: each
chunk is validated column-wise (:mod:`ratebank.services.measurement_validation`)
and written through the driver's bulk path while no problem has been found.
The import is all or nothing.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np
from sqlalchemy.orm import Session

from ratebank.services.measurement_validation import MeasurementChunk, MeasurementValidator
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.validate import ImportSummary, LazyReactionResolver, Problems
from ratebank.store import audit
from ratebank.store.bulk import SuspendedIndex
from ratebank.store.records import (
    NewSet,
    insert_points,
    insert_sets,
    measurement_set_names,
    suspend_point_index,
)


class MeasurementImporter:
    """Streams measured points into the store, chunk by chunk, in one transaction.

    Each chunk is validated completely. Chunks are written only while no
    problem has been found anywhere; once one is, the rest of the file is
    still validated (so every problem is reported) and :meth:`finish` raises,
    which rolls the whole import back: nothing is written.
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
    ):
        self.session = session
        self.source = source
        self.dry_run = dry_run
        self.progress = progress or NoProgress()
        self.problems = problems if problems is not None else Problems()
        self.rows = 0
        self.points = 0
        known = measurement_set_names(session)
        self.validator = MeasurementValidator(
            LazyReactionResolver(session),
            known.intersection,
            self.problems,
            default_k_units=default_k_units,
        )
        self._set_ids: list[int] = []
        self._expected_rows = expected_rows
        self._point_index: SuspendedIndex | None = None
        # a savepoint makes the import all-or-nothing even inside a caller's larger transaction
        self._savepoint = session.begin_nested()
        self.progress.start("importing points", expected_rows)

    def add(self, columns: Mapping[str, Sequence[str]], lines: Sequence[int]) -> None:
        """Validate (and, while the input is clean, write) one chunk of rows."""
        chunk = self.validator.validate_chunk(columns, lines)
        self.rows += len(lines)
        if not self.problems and not self.dry_run:
            self._write(chunk)
        self.points += chunk.n_points
        self.progress.advance(len(lines))

    def _write(self, chunk: MeasurementChunk) -> None:
        if chunk.new_sets:
            set_ids = insert_sets(
                self.session,
                [
                    NewSet(
                        s.name,
                        s.reaction.id,
                        s.reference,
                        s.method,
                        s.bath_gas,
                        s.k_units,
                        s.systematic_uncertainty,
                    )
                    for s in chunk.new_sets
                ],
                source=self.source,
            )
            for record, set_id in zip(chunk.new_sets, set_ids, strict=True):
                record.id = set_id
            self._set_ids.extend(set_ids)
        if self._point_index is None:
            self._point_index = suspend_point_index(self.session, self._expected_rows)
        insert_points(self.session, _point_columns(chunk, self._set_ids))

    def finish(self) -> ImportSummary:
        """Raise if any chunk had a problem (nothing is then written); else commit the import."""
        if self.problems:
            self._savepoint.rollback()  # brings a suspended index back too
            self.problems.raise_if_any(self.source)
        if self._point_index is not None:
            self._point_index.restore()
        self._savepoint.commit()
        sets = len(self.validator.sets)
        if not self.dry_run and self.points:
            audit.record(self.session, "data.import", self.source, sets=sets, points=self.points)
        return ImportSummary(
            "measurements", self.source, self.rows, self.points, self.dry_run, {"sets": sets}
        )


def _point_columns(chunk: MeasurementChunk, set_ids: list[int]) -> dict[str, list[object]]:
    """The chunk's points as lists by column, None where a value is not given.

    Chunks are written in order while the input is clean, so ``set_ids``
    (the ids of the validator's sets so far) line up with the chunk's set
    index. A column with no value at all is left out.
    """
    columns: dict[str, list[object]] = {
        "set_id": np.asarray(set_ids, dtype=np.int64)[chunk.set_index].tolist(),
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
    progress: Progress | None = None,
) -> ImportSummary:
    """Validate and add measured points given column-wise; all or nothing.

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
    )
    importer.add(columns, lines)
    return importer.finish()
