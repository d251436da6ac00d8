"""Imports look reactions up in batches, not one query per row."""

from __future__ import annotations

from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, REACTIONS_CSV, SPECIES_CSV

from ratebank.services import curate


def _filled(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    return db_url


def _count_prefetches(monkeypatch) -> list[int]:
    sizes: list[int] = []
    original = curate.LazyReactionResolver.prefetch

    def counting(self, texts):  # type: ignore[no-untyped-def]
        texts = list(texts)
        sizes.append(len(texts))
        return original(self, texts)

    monkeypatch.setattr(curate.LazyReactionResolver, "prefetch", counting)
    return sizes


def test_expressions_import_looks_up_every_reaction_in_one_batch(db_url, tmp_path, monkeypatch):
    db = _filled(db_url, tmp_path)
    sizes = _count_prefetches(monkeypatch)
    outcome = run(db, "expressions", "import", str(write(tmp_path / "e.csv", EXPRESSIONS_CSV)))
    assert outcome.exit_code == 0, outcome.stderr
    rows = EXPRESSIONS_CSV.strip().count("\n")  # data rows under the header
    assert rows > 2
    # one batch with every distinct reaction of the file; resolving then asks nothing more
    assert len(sizes) == 1 and 1 < sizes[0] <= rows
