"""Importing measured points, directly: all or nothing, in SI, chunk after chunk.

1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1 (``scipy.constants``); 1 bar = 1e5 Pa.
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest
from helpers.data import MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

from ratebank.errors import ImportValidationError
from ratebank.services.measurement_import import MeasurementImporter, import_measurements
from ratebank.services.measurements import list_sets
from ratebank.services.reactions import import_reactions
from ratebank.services.species import import_species
from ratebank.services.store_access import init_store, store_counts
from ratebank.store.listings import history
from ratebank.store.points import points


def _rows(text: str) -> list[tuple[int, dict[str, str]]]:
    return list(enumerate(csv.DictReader(io.StringIO(text)), start=2))


def _columns(text: str) -> tuple[dict[str, list[str]], list[int]]:
    rows = list(csv.reader(io.StringIO(text)))
    header, body = rows[0], rows[1:]
    return {name: [r[i] for r in body] for i, name in enumerate(header)}, list(
        range(2, 2 + len(body))
    )


@pytest.fixture
def curated(db_url):
    store, _ = init_store(db_url, author="tester")
    with store.session(write=True) as session:
        import_species(session, _rows(SPECIES_CSV), source="species.csv")
        import_reactions(session, _rows(REACTIONS_CSV), source="reactions.csv")
    yield store
    store.close()


def test_points_are_stored_in_si_with_their_sets(curated):
    columns, lines = _columns(MEASUREMENTS_CSV)
    with curated.session(write=True) as session:
        summary = import_measurements(session, columns, lines, source="points.csv")
    assert (summary.kind, summary.rows, summary.added, summary.details) == (
        "measurements",
        5,
        5,
        {"sets": 2},
    )
    with curated.session() as session:
        stored = points(session)
        sets = list_sets(session)
        entry = history(session, limit=1)[0]
    assert [(s.name, s.points) for s in sets] == [("s1", 3), ("s2", 2)]
    per_molecule = constants.N_A * 1e-6
    np.testing.assert_allclose(
        stored.k, [6.4e-15 * per_molecule, 1.4e-14 * per_molecule, 2.6e-14 * per_molecule,
                   1.1e6, 2.2e6], rtol=1e-12)  # fmt: skip
    np.testing.assert_allclose(stored.relative_uncertainty, [0.1, 0.1, 0.1, 1 / 11, 1 / 11])
    np.testing.assert_allclose(stored.pressure, [1e4, 1e4, 1e4, 1.5e5, 1.5e5], rtol=1e-12)
    assert (entry.action, entry.target, entry.detail) == (
        "data.import",
        "points.csv",
        {"sets": 2, "points": 5},
    )


def test_any_problem_writes_nothing(curated):
    columns, lines = _columns(MEASUREMENTS_CSV + "s3,oh-ch4,500,-1,cm3/mol/s,,,,,,\n")
    with curated.session(write=True) as session:
        with pytest.raises(ImportValidationError) as raised:
            import_measurements(session, columns, lines, source="points.csv")
        assert store_counts(session)["points"] == 0
        assert store_counts(session)["measurement_sets"] == 0
    assert raised.value.problems == [
        "points.csv:7: k: -1 must be greater than zero; expected a rate constant greater than zero"
    ]


def test_a_dry_run_counts_and_writes_nothing(curated):
    columns, lines = _columns(MEASUREMENTS_CSV)
    with curated.session(write=True) as session:
        summary = import_measurements(session, columns, lines, source="p.csv", dry_run=True)
        assert (summary.added, summary.dry_run) == (5, True)
        assert store_counts(session)["points"] == 0


def test_chunks_go_in_one_import_and_a_late_problem_undoes_the_early_chunks(curated):
    columns, lines = _columns(MEASUREMENTS_CSV)
    first = {name: cells[:3] for name, cells in columns.items()}
    second = {name: cells[3:] for name, cells in columns.items()}
    with curated.session(write=True) as session:
        importer = MeasurementImporter(session, source="p.csv")
        importer.add(first, lines[:3])
        importer.add(second, lines[3:])
        summary = importer.finish()
    assert (summary.added, summary.details) == (5, {"sets": 2})
    bad = {name: [*cells] for name, cells in second.items()}
    bad["set"] = ["s9", "s9"]
    bad["T_K"] = ["800", "oops"]
    with curated.session(write=True) as session:
        importer = MeasurementImporter(session, source="q.csv")
        importer.add({**first, "set": ["s8"] * 3}, lines[:3])  # clean: written for now
        importer.add(bad, lines[3:])
        with pytest.raises(ImportValidationError, match=r"q\.csv:6: T_K: 'oops' is not a number"):
            importer.finish()
        assert store_counts(session)["measurement_sets"] == 2  # s8 went with the rollback
