"""Editing expressions with optimistic locking, and stale edits of any versioned row."""

from __future__ import annotations

import datetime as dt
import json
import re

import pytest
from helpers.cli import snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants
from sqlalchemy import select, update

from ratebank.errors import ConflictError, StaleEditError
from ratebank.services import steric
from ratebank.services.expressions import edit_expression
from ratebank.services.store_access import open_store
from ratebank.store.engine import ConcurrentEditError, session_scope
from ratebank.store.models import Expression, StericRule

STALE = re.compile(
    r"^Error: expression (\d+) was changed by (\S+) at (\d{4}-\d\d-\d\d \d\d:\d\d:\d\d) UTC "
    r"\(now version (\d+), you read version (\d+)\); nothing was written; read it again before "
    r"changing it$"
)


def _fill(db, cli, tmp_path):
    assert cli(db, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", MEASUREMENTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = cli(db, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return db


@pytest.fixture
def filled(db_url, cli, tmp_path):
    return _fill(db_url, cli, tmp_path)


@pytest.fixture
def filled_sqlite(sqlite_url, cli, tmp_path):
    """For checks of the edit's own validation, which does not depend on the backend."""
    return _fill(sqlite_url, cli, tmp_path)


def _expressions(cli, db, *args):
    outcome = cli(db, "expressions", "list", "--json", *args)
    assert outcome.exit_code == 0, outcome.stderr
    return json.loads(outcome.stdout)


def _literature_id(cli, db, reaction):
    return next(
        r["id"]
        for r in _expressions(cli, db, "--reaction", reaction)
        if r["origin"] == "literature"
    )


def _row(db, expression_id):
    store = open_store(db)
    try:
        with store.session() as session:
            return session.get(Expression, expression_id)
    finally:
        store.close()


def test_edit_converts_to_si_and_bumps_the_version(filled, cli):
    first = _literature_id(cli, filled, "h2o2-dec")
    outcome = cli(
        filled,
        "expressions",
        "edit",
        str(first),
        "--A",
        "3.5e13",
        "--k-units",
        "s-1",
        "--Ea",
        "48",
        "--Ea-units",
        "kcal/mol",
        "--t-min",
        "700",
        "--t-max",
        "1600",
        "--uncertainty-factor",
        "2",
        "--reference",
        "second review",
        "--expect-version",
        "1",
        env={"RATEBANK_AUTHOR": "ada"},
    )
    assert outcome.exit_code == 0, outcome.stderr
    assert outcome.stdout.strip() == (
        f"Expression {first} (literature, h2o2-dec): changed A, Ea, T_min, T_max, uncertainty "
        "factor, reference; now version 2."
    )
    row = _row(filled, first)
    assert row.version == 2
    assert row.A == pytest.approx(3.5e13, rel=1e-12)  # s-1 is already SI
    assert row.Ea == pytest.approx(48 * 4184.0, rel=1e-12)  # thermochemical calorie
    assert (row.T_min, row.T_max, row.uncertainty_factor) == (700.0, 1600.0, 2.0)
    assert row.reference == "second review"
    assert row.updated_by == "ada"
    assert row.provenance["edited"]["by"] == "ada"
    assert row.provenance["edited"]["from_version"] == 1
    assert row.provenance["given_units"] == {"Ea_units": "kcal/mol", "k_units": "s-1"}
    history = json.loads(cli(filled, "history", "--json", "--limit", "1").stdout)[0]
    assert history["action"] == "expression.edit"
    assert history["author"] == "ada"
    assert history["target"] == "h2o2-dec"
    assert history["detail"]["version"] == 2
    # the history speaks the units typed: 200 kJ/mol before, in kcal/mol (4.184 kJ each)
    assert history["detail"]["changed"]["Ea"] == {
        "before": pytest.approx(200.0 / 4.184, rel=1e-12),
        "after": 48.0,
        "unit": "kcal/mol",
    }

    # a bimolecular A in molecular units: 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1
    second = _literature_id(cli, filled, "oh-ch4")
    outcome = cli(
        filled,
        "expressions",
        "edit",
        str(second),
        "--A",
        "2e-20",
        "--k-units",
        "cm3/molecule/s",
        "--n",
        "2.5",
        "--expect-version",
        "1",
    )
    assert outcome.exit_code == 0, outcome.stderr
    row = _row(filled, second)
    assert row.A == pytest.approx(2e-20 * constants.N_A * 1e-6, rel=1e-12)
    assert row.n == 2.5
    assert row.version == 2


def test_a_stale_version_is_refused_naming_who_and_when(filled, cli):
    expression_id = _literature_id(cli, filled, "h2o2-dec")
    ok = cli(
        filled,
        "expressions",
        "edit",
        str(expression_id),
        "--reference",
        "ada's reading",
        "--expect-version",
        "1",
        env={"RATEBANK_AUTHOR": "ada"},
    )
    assert ok.exit_code == 0, ok.stderr
    before = snapshot(filled)
    stale = cli(
        filled,
        "expressions",
        "edit",
        str(expression_id),
        "--reference",
        "grace's reading",
        "--expect-version",
        "1",
        env={"RATEBANK_AUTHOR": "grace"},
    )
    assert stale.exit_code == 1
    assert len(stale.stderr.strip().splitlines()) == 1
    match = STALE.match(stale.stderr.strip())
    assert match, stale.stderr
    assert match.group(1) == str(expression_id)
    assert match.group(2) == "ada"
    when = dt.datetime.strptime(match.group(3), "%Y-%m-%d %H:%M:%S").replace(tzinfo=dt.UTC)
    assert abs((dt.datetime.now(dt.UTC) - when).total_seconds()) < 120
    assert (match.group(4), match.group(5)) == ("2", "1")
    assert snapshot(filled) == before
    assert _row(filled, expression_id).reference == "ada's reading"


def test_a_version_from_the_future_is_refused(filled, cli):
    expression_id = _literature_id(cli, filled, "h2o2-dec")
    before = snapshot(filled)
    outcome = cli(
        filled, "expressions", "edit", str(expression_id), "--n", "0", "--expect-version", "7"
    )
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        f"Error: version 7 never existed; expression {expression_id} is at version 1; nothing "
        "was written"
    )
    assert snapshot(filled) == before


def test_fits_and_estimates_are_regenerated_not_edited(filled, cli):
    assert cli(filled, "fit", "oh-ch4").exit_code == 0
    estimated = cli(filled, "estimate", "ho2-ho2", "--steric", "0.1", "--t-ref", "298")
    assert estimated.exit_code == 0, estimated.stderr
    records = _expressions(cli, filled)
    fit = next(r["id"] for r in records if r["origin"] == "measured-fit")
    estimate = next(r["id"] for r in records if r["origin"] == "collision-estimate")
    before = snapshot(filled)
    for expression_id, command in (
        (fit, "a new fit of its measurements"),
        (estimate, "a new estimate from its inputs"),
    ):
        outcome = cli(
            filled, "expressions", "edit", str(expression_id), "--n", "1", "--expect-version", "1"
        )
        assert outcome.exit_code == 1
        message = outcome.stderr.strip()
        assert len(message.splitlines()) == 1
        assert message.startswith(f"Error: expression {expression_id} of ")
        assert f"regenerated by {command}" in message
        assert "only literature and manual expressions can be edited" in message
    assert snapshot(filled) == before


@pytest.mark.parametrize(
    ("args", "expected"),
    [
        (["--A", "1e13"], "k_units: is empty; A needs its unit (e.g. cm3/molecule/s)"),
        (["--A", "-1e13", "--k-units", "s-1"], "A: -1e+13 must be greater than zero"),
        (["--A", "nan", "--k-units", "s-1"], "A: nan is not a finite number"),
        (["--A", "1e13", "--k-units", "cm3/molecule/s"], "k_units: unit 'cm3/molecule/s' is for a"),
        (["--k-units", "s-1"], "k_units: is given without A"),
        (["--Ea", "12"], "Ea_units: is empty; Ea needs its unit (e.g. kJ/mol or K)"),
        (["--Ea", "12", "--Ea-units", "kJ"], "Ea_units: "),
        (["--Ea", "inf", "--Ea-units", "kJ/mol"], "Ea: inf is not a finite number"),
        (["--Ea-units", "K"], "Ea_units: is given without Ea"),
        (["--t-max", "500"], "T_max: 500 K is below T_min 800 K"),
        (["--t-min", "0"], "T_min: 0 must be greater than zero; expected a temperature in K"),
        (["--uncertainty-factor", "0.5"], "uncertainty_factor: 0.5 is below 1"),
        ([], "nothing to change in expression"),
    ],
)
def test_invalid_edits_write_nothing(filled_sqlite, cli, args, expected):
    filled = filled_sqlite
    expression_id = _literature_id(cli, filled, "h2o2-dec")
    before = snapshot(filled)
    outcome = cli(filled, "expressions", "edit", str(expression_id), *args, "--expect-version", "1")
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith("Error: ")
    assert len(outcome.stderr.strip().splitlines()) == 1
    assert expected in outcome.stderr
    assert snapshot(filled) == before


def test_unknown_expression_and_n_without_a(filled, cli):
    unknown = cli(filled, "expressions", "edit", "9999", "--n", "1", "--expect-version", "1")
    assert unknown.exit_code == 1
    assert unknown.stderr.strip() == "Error: no expression 9999 in the store"
    ea_only = _literature_id(cli, filled, "ho2-ho2")
    outcome = cli(filled, "expressions", "edit", str(ea_only), "--n", "1", "--expect-version", "1")
    assert outcome.exit_code == 1
    assert "n: is given without A" in outcome.stderr
    # ... but giving it an A (with its unit) completes it
    complete = cli(
        filled,
        "expressions",
        "edit",
        str(ea_only),
        "--A",
        "1.5e-12",
        "--k-units",
        "cm3/molecule/s",
        "--expect-version",
        "1",
    )
    assert complete.exit_code == 0, complete.stderr
    statuses = json.loads(cli(filled, "reactions", "list", "--json", "--status", "complete").stdout)
    assert "ho2-ho2" in {r["key"] for r in statuses}


def test_the_same_values_change_nothing(filled, cli):
    expression_id = _literature_id(cli, filled, "h2o2-dec")
    before = snapshot(filled)
    outcome = cli(
        filled,
        "expressions",
        "edit",
        str(expression_id),
        "--reference",
        "test review",
        "--expect-version",
        "1",
    )
    assert outcome.exit_code == 0
    assert "already has these values; nothing changed (version 1)" in outcome.stdout
    assert snapshot(filled) == before


# --------------------------------------------------------------------------- stale rows


def test_a_version_bump_between_read_and_write_is_named(filled):
    """SQLAlchemy's StaleDataError (UPDATE ... WHERE version = read matched nothing)."""
    store = open_store(filled, author="setup")
    with store.session(write=True) as session:
        steric.set_class_rule(session, "h-abstraction", 0.1)
    try:
        with (
            pytest.raises(ConcurrentEditError) as caught,
            session_scope(store.engine, author="carl") as mine,
        ):
            rule = mine.scalar(select(StericRule))
            mine.commit()  # the rule stays loaded (expire_on_commit=False) at version 1
            with session_scope(store.engine, write=True, author="bob") as theirs:
                steric.set_class_rule(theirs, "h-abstraction", 0.2, expected_version=1)
            rule.steric_factor = 0.3  # written with WHERE version = 1 at commit
        message = str(caught.value)
        assert re.fullmatch(
            r"the steric rule for 'h-abstraction' was changed by bob at \d{4}-\d\d-\d\d "
            r"\d\d:\d\d:\d\d UTC \(now version 2, you read version 1\); nothing was written; "
            r"read it again before changing it",
            message,
        ), message
        with store.session() as session:
            assert session.scalar(select(StericRule.steric_factor)) == 0.2
    finally:
        store.close()


def test_a_row_removed_between_read_and_write_is_named(filled):
    store = open_store(filled, author="setup")
    with store.session(write=True) as session:
        steric.set_class_rule(session, "h-abstraction", 0.1)
    try:
        with (
            pytest.raises(ConcurrentEditError, match="was removed by someone else"),
            session_scope(store.engine, author="carl") as mine,
        ):
            rule = mine.scalar(select(StericRule))
            mine.commit()
            with session_scope(store.engine, write=True, author="bob") as theirs:
                steric.remove_class_rule(theirs, "h-abstraction")
            rule.steric_factor = 0.3
    finally:
        store.close()


def test_the_edit_service_names_a_concurrent_bump(sqlite_url, cli, tmp_path, monkeypatch):
    """The edit's own StaleDataError path (reachable where FOR UPDATE is not honoured)."""
    from sqlalchemy.orm.exc import StaleDataError

    assert cli(sqlite_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", SPECIES_CSV),
        ("reactions", "r.csv", REACTIONS_CSV),
        ("expressions", "e.csv", EXPRESSIONS_CSV),
    ):
        assert cli(sqlite_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    expression_id = _literature_id(cli, sqlite_url, "h2o2-dec")
    store = open_store(sqlite_url, author="carl")
    try:
        with session_scope(store.engine, author="carl") as mine:
            real_flush = mine.flush

            def bumped_meanwhile(*args, **kwargs):
                if not mine.dirty:  # an autoflush before a query
                    return real_flush(*args, **kwargs)
                monkeypatch.setattr(mine, "flush", real_flush)  # once only
                with store.engine.begin() as other:
                    other.execute(
                        update(Expression.__table__)
                        .where(Expression.__table__.c.id == expression_id)
                        .values(version=2, updated_by="bob")
                    )
                raise StaleDataError("UPDATE statement on table 'expression' matched 0 rows")

            monkeypatch.setattr(mine, "flush", bumped_meanwhile)
            with pytest.raises(StaleEditError) as caught:
                edit_expression(mine, expression_id, expected_version=1, n=1.0)
        assert str(caught.value).startswith(f"expression {expression_id} was changed by bob at "), (
            caught.value
        )
        assert "(now version 2, you read version 1)" in str(caught.value)
    finally:
        store.close()


def test_a_stale_error_reaching_the_command_line_is_one_line(filled, cli, monkeypatch):
    from sqlalchemy.orm.exc import StaleDataError

    import ratebank.services.expressions as editing

    def racing(*_args, **_kwargs):
        raise StaleDataError("UPDATE statement on table 'expression' expected to update 1 row(s)")

    monkeypatch.setattr(editing, "edit_expression", racing)
    before = snapshot(filled)
    outcome = cli(filled, "expressions", "edit", "1", "--n", "1", "--expect-version", "1")
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        "Error: someone else changed a record you were editing at the same time; nothing was "
        "written; read it again before changing it"
    )
    assert snapshot(filled) == before


def test_steric_rule_stale_version_on_the_command_line(filled, cli):
    first = cli(
        filled, "steric", "set-class", "h-abstraction", "0.1", env={"RATEBANK_AUTHOR": "ada"}
    )
    assert first.exit_code == 0
    second = cli(
        filled,
        "steric",
        "set-class",
        "h-abstraction",
        "0.2",
        "--expect-version",
        "1",
        env={"RATEBANK_AUTHOR": "ada"},
    )
    assert second.exit_code == 0
    before = snapshot(filled)
    stale = cli(
        filled,
        "steric",
        "set-class",
        "h-abstraction",
        "0.3",
        "--expect-version",
        "1",
        env={"RATEBANK_AUTHOR": "grace"},
    )
    assert stale.exit_code == 1
    assert len(stale.stderr.strip().splitlines()) == 1
    assert re.match(
        r"Error: the steric rule for 'h-abstraction' was changed by ada at .* UTC \(now version "
        r"2, you read version 1\)",
        stale.stderr,
    )
    assert snapshot(filled) == before


def test_conflicts_are_conflict_errors():
    # Library users catch both kinds of refusal as one class.
    assert issubclass(ConcurrentEditError, ConflictError)
    assert issubclass(StaleEditError, ConflictError)
