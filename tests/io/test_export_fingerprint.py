"""The content fingerprint of an export: of its rows and the records they derive from, and
of nothing else in the store; the history mark beside it."""

from __future__ import annotations

import json

import pytest
from helpers.cli import fill_store
from sqlalchemy import update

import ratebank
from ratebank.io.export import package_content
from ratebank.services import checks
from ratebank.services.mechanism import export_units
from ratebank.store import audit, queries
from ratebank.store.expressions import update_expression
from ratebank.store.models import Expression, ProvenanceRun


@pytest.fixture
def store(db_url, tmp_path):
    """helpers.data's store (rate numbers made up), with a fit of oh-ch4 (which outranks its
    literature expression) and a collision estimate of ho2-ho2 (a run)."""
    fill_store(db_url, tmp_path)
    with ratebank.open(db_url, author="tester") as opened:
        opened.fit(["oh-ch4"])
        opened.estimate(["ho2-ho2"], steric=0.1, T_ref=500.0)
        yield opened


def _fingerprint(store, preset: str = "si") -> str:
    with store.session() as session:
        content = package_content(session, units=export_units(preset), leave_out_gaps=True)
    return content.fingerprint


def _exported(store, key: str) -> int:
    with store.session() as session:
        table_content = package_content(session, units=export_units("si"), leave_out_gaps=True)
    return next(r.expression_id for r in table_content.table.rows if r.key == key)


def _not_exported(store, key: str) -> int:
    chosen = _exported(store, key)
    with store.session() as session:
        reaction = queries.find_reaction(session, key)
        others = queries.expressions_of(session, [reaction.id])[reaction.id]
    return next(e.id for e in others if e.id != chosen and e.A is not None)


def _edit_A(store, expression_id: int, factor: float) -> None:
    with store.session(write=True) as session:
        expression = session.get(Expression, expression_id)
        update_expression(session, expression, {"A": expression.A * factor})


def _edit_provenance(store, expression_id: int) -> None:
    with store.session(write=True) as session:
        whole = queries.expression(session, expression_id).provenance
        expression = session.get(Expression, expression_id)
        update_expression(session, expression, {"provenance": {**whole, "method": "changed"}})


def _edit_run(store) -> None:
    with store.session(write=True) as session:
        (found,) = session.query(ProvenanceRun).filter(ProvenanceRun.action == "estimate")
        content = {**found.content, "steric_rule": "a rule of another name"}
        session.execute(
            update(ProvenanceRun).where(ProvenanceRun.id == found.id).values(content=content)
        )


# (what changes, how, whether the exported content changes)
CHANGES = [
    ("A of an exported expression", lambda s: _edit_A(s, _exported(s, "h2o2-dec"), 2.0), True),
    ("A, in the 16th digit", lambda s: _edit_A(s, _exported(s, "h2o2-dec"), 1 + 4e-16), True),
    ("provenance of an exported fit", lambda s: _edit_provenance(s, _exported(s, "oh-ch4")), True),
    ("the common provenance of an estimate's run", _edit_run, True),
    ("a record not exported", lambda s: _edit_A(s, _not_exported(s, "oh-ch4"), 3.0), False),
    (
        "an unrelated history entry",
        lambda s: _in_session(s, lambda x: audit.record(x, "note", "oh-ch4", text="unrelated")),
        False,
    ),
    ("an export written", lambda s: s.export(s.out, preset="si", leave_out_gaps=True), False),
]


def _in_session(store, action) -> None:
    with store.session(write=True) as session:
        action(session)


@pytest.mark.parametrize(("what", "change", "changes"), CHANGES, ids=[c[0] for c in CHANGES])
def test_the_fingerprint_follows_exported_content_only(store, tmp_path, what, change, changes):
    store.out = tmp_path / "out"  # where an export in a change writes
    before = _fingerprint(store)
    assert _fingerprint(store) == before  # the same content, the same fingerprint
    change(store)
    assert (_fingerprint(store) != before) is changes, what


def test_the_fingerprint_follows_the_units(store):
    assert _fingerprint(store, "si") != _fingerprint(store, "combustion")


def test_the_descriptor_holds_the_fingerprint_and_the_history_mark(store, tmp_path):
    first = store.export(tmp_path / "a", preset="si", leave_out_gaps=True)
    block = json.loads(first.descriptor_path.read_text(encoding="utf-8"))["ratebank"]
    newest_change = max(e.id for e in _entries(store) if e.action != "export")
    assert block["history_mark"] == newest_change
    assert block["content_fingerprint"] == first.fingerprint == _fingerprint(store)
    # an export records a reading: the next export's mark stays where it was
    second = store.export(tmp_path / "b", preset="si", leave_out_gaps=True)
    again = json.loads(second.descriptor_path.read_text(encoding="utf-8"))["ratebank"]
    assert again["history_mark"] == newest_change
    assert again["content_fingerprint"] == block["content_fingerprint"]
    # the history records which content and mark the export wrote
    (entry, *_) = [e for e in store.history(limit=5) if e.action == "export"]
    assert entry.detail["fingerprint"] == first.fingerprint
    assert entry.detail["history_mark"] == newest_change


def _entries(store):
    from ratebank.store.models import AuditEntry

    with store.session() as session:
        return list(session.query(AuditEntry).all())


def test_a_release_fingerprint_follows_the_check_results(store, monkeypatch):
    plain = store.create_release("plain", leave_out_gaps=True)
    original = checks.check_store

    def flagged(session):
        report = original(session)
        report.flags.append(checks.Flag("oh-ch4", "SYNTHETIC-flag", "a flag of the test"))
        return report

    monkeypatch.setattr(checks, "check_store", flagged)
    other = store.create_release("flagged", leave_out_gaps=True)
    assert other.fingerprint != plain.fingerprint
    assert other.store_fingerprint == plain.store_fingerprint  # the same exported content
    assert store.release("flagged").checks["flags"]["SYNTHETIC-flag"] == 1


def test_the_mechanism_file_written_a_slice_at_a_time_is_the_table_text(
    store, tmp_path, monkeypatch
):
    from ratebank.io import export
    from ratebank.services import mechanism

    monkeypatch.setattr(mechanism, "ROW_SLICE", 1)  # a packed slice per row
    written = store.export(tmp_path / "sliced", preset="si", leave_out_gaps=True)
    with store.session() as session:
        content = package_content(session, units=export_units("si"), leave_out_gaps=True)
    files, _ = export.package_files(content, "sliced", "")
    assert len(content.table.rows) > 2
    assert written.table_path.read_text(encoding="utf-8") == files[export.MECHANISM]
    assert files[export.MECHANISM].count("key,equation,order") == 1


def test_packed_rows_read_back_as_the_rows_they_hold(monkeypatch):
    from ratebank.services import mechanism

    monkeypatch.setattr(mechanism, "ROW_SLICE", 3)  # several slices and an open one
    rows = [
        mechanism.MechanismRow(*([f"r{i}", "A + B -> C", 2, 1.5e-12 * i, 0.5, -2.5]
                                 + [None] * 27 + [i, "newest literature"]))
        for i in range(8)
    ]  # fmt: skip
    packed = mechanism.PackedRows(rows)
    assert len(packed) == 8 and list(packed) == rows
    assert packed[0] == rows[0] and packed[4] == rows[4] and packed[-1] == rows[7]
    assert packed[2:5] == rows[2:5]
    assert [len(part) for part in mechanism.tuple_slices(packed)] == [3, 3, 2]
    assert [len(part) for part in mechanism.tuple_slices(rows)] == [3, 3, 2]
    with pytest.raises(IndexError):
        packed[8]


@pytest.mark.parametrize("row_slice", [1, 2, 10_000])
def test_the_streamed_descriptor_is_the_whole_one_encoded(store, tmp_path, monkeypatch, row_slice):
    """The descriptor's chosen_by, filled a slice of rows at a time, gives the bytes of the
    whole mapping encoded at once (as exports wrote it before)."""
    from ratebank.io import export
    from ratebank.services import mechanism
    from ratebank.store import json_codec

    monkeypatch.setattr(mechanism, "ROW_SLICE", row_slice)
    with store.session() as session:
        content = package_content(session, units=export_units("si"), leave_out_gaps=True)
    files, descriptor = export.package_files(content, "whole", "2026-01-01T00:00:00Z")
    whole = json.loads(json.dumps(descriptor))
    whole["ratebank"]["chosen_by"] = {
        r.key: {"expression_id": r.expression_id, "rule": r.chosen_by} for r in content.table.rows
    }
    assert len(whole["ratebank"]["chosen_by"]) > 2
    expected = json_codec.indented_line_bytes(whole).decode("utf-8")
    assert files[export.DESCRIPTOR] == expected
    # and what an export writes, from the store's packed rows
    written = store.export(tmp_path / "whole", preset="si", leave_out_gaps=True)
    on_disk = json.loads(written.descriptor_path.read_text(encoding="utf-8"))
    assert on_disk["ratebank"]["chosen_by"] == whole["ratebank"]["chosen_by"]
