"""Schema evolution: a store written at the first revision keeps every row through the upgrade;
a store from a newer ratebank is refused by every command and left exactly as it was."""

from __future__ import annotations

import datetime as dt
import json

import pytest
from helpers.cli import snapshot, write
from sqlalchemy import MetaData, Table, inspect, select, text

from ratebank.services.store_access import open_store
from ratebank.store.engine import create_store_engine, database_url
from ratebank.store.fingerprint import store_fingerprint
from ratebank.store.models import Base
from ratebank.store.schema import HEAD_REVISION, KNOWN_REVISIONS, current_revision, upgrade_store

WHEN = dt.datetime(2024, 3, 1, 12, 30, 45, 123456, tzinfo=dt.UTC)

# Rows as the first revision's schema defines them (migrations/versions/0001), in plain
# SQL: they do not depend on today's models. Floats that round-trip only at full precision,
# text with quotes and non-ASCII, JSON with nesting, NULLs where the schema allows them.
ROWS: dict[str, list[dict[str, object]]] = {
    "species": [
        {
            "id": 1,
            "name": "OH",
            "formula": "HO",
            "molar_mass": 0.017007,
            "molar_mass_source": "formula",
            "diameter": 3.147e-10,
            "diameter_kind": "lennard-jones",
            "diameter_method": "given",
            "well_depth": 79.8,
            "well_depth_method": "given",
            "critical_temperature": None,
            "critical_pressure": None,
            "acentric_factor": None,
            "boiling_volume": None,
            "source": "Svehla's table, 'as printed' — Ångström",
            "created_at": WHEN,
        },
        {
            "id": 2,
            "name": "CH4",
            "formula": "CH4",
            "molar_mass": 0.016043,
            "molar_mass_source": "formula",
            "diameter": 3.758e-10,
            "diameter_kind": "lennard-jones",
            "diameter_method": "given",
            "well_depth": 148.6,
            "well_depth_method": "given",
            "critical_temperature": 190.564,
            "critical_pressure": 4599200.0,
            "acentric_factor": 0.011,
            "boiling_volume": 3.79e-05,
            "source": None,
            "created_at": WHEN,
        },
        {
            "id": 3,
            "name": "CH3",
            "formula": "CH3",
            "molar_mass": 0.015035,
            "molar_mass_source": "formula",
            "diameter": None,
            "diameter_kind": None,
            "diameter_method": None,
            "well_depth": None,
            "well_depth_method": None,
            "critical_temperature": None,
            "critical_pressure": None,
            "acentric_factor": None,
            "boiling_volume": None,
            "source": None,
            "created_at": WHEN,
        },
        {
            "id": 4,
            "name": "H2O",
            "formula": "H2O",
            "molar_mass": 0.018015,
            "molar_mass_source": "given",
            "diameter": 2.641e-10,
            "diameter_kind": "lennard-jones",
            "diameter_method": "given",
            "well_depth": 809.1,
            "well_depth_method": "given",
            "critical_temperature": None,
            "critical_pressure": None,
            "acentric_factor": None,
            "boiling_volume": None,
            "source": None,
            "created_at": WHEN,
        },
    ],
    "reaction": [
        {
            "id": 1,
            "key": "oh-ch4",
            "equation": "CH4 + OH -> CH3 + H2O",
            "reaction_order": 2,
            "third_body": False,
            "reaction_class": "h-abstraction",
            "notes": "notes with a ' quote",
            "steric_factor": 0.0123456789012345,
            "steric_source": "analogy",
            "created_at": WHEN,
        }
    ],
    "participant": [
        {"id": 1, "reaction_id": 1, "species_id": 2, "role": "reactant", "coefficient": 1},
        {"id": 2, "reaction_id": 1, "species_id": 1, "role": "reactant", "coefficient": 1},
        {"id": 3, "reaction_id": 1, "species_id": 3, "role": "product", "coefficient": 1},
        {"id": 4, "reaction_id": 1, "species_id": 4, "role": "product", "coefficient": 1},
    ],
    "measurement_set": [
        {
            "id": 1,
            "name": "s1",
            "reaction_id": 1,
            "reference": "test lab A",
            "method": "flash photolysis",
            "bath_gas": "He",
            "original_k_units": "cm3/molecule/s",
            "source_file": "points.csv",
            "created_at": WHEN,
        }
    ],
    "point": [
        {
            "id": i + 1,
            "set_id": 1,
            "temperature": 300.0 + 50 * i + 0.1,
            "rate_constant": (6.4e-15 + i * 1.1e-15) * 6.02214076e17,
            "relative_uncertainty": 0.1 if i % 2 else None,
            "pressure": 10000.0 if i % 3 else None,
        }
        for i in range(12)
    ],
    "expression": [
        {
            "id": 1,
            "reaction_id": 1,
            "origin": "literature",
            "pre_exponential": 1.114087e-05,
            "temperature_exponent": 2.82,
            "activation_energy": 8206.3,
            "t_min": 200.0,
            "t_max": 2000.0,
            "uncertainty_factor": 1.2,
            "reference": "test review",
            "provenance": {"source_file": "e.csv", "line": 2, "given_units": {"Ea_units": "K"}},
            "recommended": True,
            "version": 3,
            "created_at": WHEN,
            "created_by": "ada",
            "updated_at": WHEN,
            "updated_by": "grace",
        },
        {
            "id": 2,
            "reaction_id": 1,
            "origin": "manual",
            "pre_exponential": None,
            "temperature_exponent": 0.0,
            "activation_energy": -4900.0,
            "t_min": None,
            "t_max": None,
            "uncertainty_factor": None,
            "reference": None,
            "provenance": {},
            "recommended": False,
            "version": 1,
            "created_at": WHEN,
            "created_by": None,
            "updated_at": None,
            "updated_by": None,
        },
    ],
    "steric_rule": [
        {
            "id": 1,
            "reaction_class": "h-abstraction",
            "steric_factor": 0.05,
            "uncertainty_factor": 3.0,
            "source": "analogy with OH + C2H6",
            "note": None,
            "version": 2,
            "updated_at": WHEN,
            "updated_by": "ada",
        }
    ],
    "audit": [
        {
            "id": 1,
            "at": WHEN,
            "author": "ada",
            "action": "store.init",
            "target": None,
            "detail": {"before": None, "after": "0001"},
        },
        {
            "id": 2,
            "at": WHEN,
            "author": "ada",
            "action": "species.add",
            "target": "species.csv",
            "detail": {"count": 4, "names": ["OH", "CH4", "CH3", "H2O"]},
        },
    ],
}
JSON_COLUMNS = {"provenance", "detail"}
DATE_COLUMNS = {"created_at", "updated_at", "at"}


def _sql_value(column: str, value: object, postgres: bool) -> object:
    if value is None:
        return None
    if column in JSON_COLUMNS:
        return json.dumps(value)
    if column in DATE_COLUMNS:
        assert isinstance(value, dt.datetime)
        # How each backend's first ratebank stored a UTC time.
        return value.strftime("%Y-%m-%d %H:%M:%S.%f") + ("+00" if postgres else "")
    return value


def _insert_first_revision_rows(engine) -> None:
    postgres = engine.dialect.name == "postgresql"
    with engine.begin() as connection:
        for table, rows in ROWS.items():
            columns = list(rows[0])
            placeholders = ", ".join(f":{c}" for c in columns)
            statement = text(f"INSERT INTO {table} ({', '.join(columns)}) VALUES ({placeholders})")
            connection.execute(
                statement,
                [{c: _sql_value(c, row[c], postgres) for c in columns} for row in rows],
            )


#: The tables of the first revision.
FIRST_TABLES = (
    "species",
    "reaction",
    "participant",
    "measurement_set",
    "point",
    "expression",
    "steric_rule",
    "audit",
)
#: Columns renamed by later revisions (0005: the rate law's own names).
RENAMED = {"pre_exponential": "a", "temperature_exponent": "n", "activation_energy": "ea"}


def _read_all(engine) -> dict[str, list[dict[str, object]]]:
    """Every row of every table of the first revision, keyed by its column names (later
    revisions rename or add columns and add tables; the added ones are checked apart)."""
    found = {}
    with engine.connect() as connection:
        stored = inspect(connection)
        for table in Base.metadata.sorted_tables:
            if table.name not in FIRST_TABLES:
                continue
            names = {c["name"] for c in stored.get_columns(table.name)}
            first = {column for row in ROWS.get(table.name, []) for column in row} or names
            columns = {
                old: old if old in names else RENAMED[old]
                for old in sorted(first)
                if old in names or RENAMED.get(old) in names
            }
            reflected = Table(table.name, MetaData(), autoload_with=connection)
            query = select(*(reflected.c[new].label(old) for old, new in columns.items()))
            order = [reflected.c[c.name] for c in table.primary_key.columns]
            found[table.name] = [
                dict(row._mapping) for row in connection.execute(query.order_by(*order))
            ]
    return found


def _normalised(value: object) -> object:
    if isinstance(value, dt.datetime):
        return value.replace(tzinfo=dt.UTC) if value.tzinfo is None else value.astimezone(dt.UTC)
    return value


def test_rows_written_at_the_first_revision_survive_the_upgrade(db_url, cli, tmp_path):
    engine = create_store_engine(database_url(db_url))
    try:
        upgrade_store(engine, KNOWN_REVISIONS[0])
        _insert_first_revision_rows(engine)
        if engine.dialect.name == "postgresql":
            with engine.begin() as connection:  # ids were given explicitly
                for table in ROWS:
                    connection.execute(
                        text(
                            f"SELECT setval(pg_get_serial_sequence('{table}', 'id'), "
                            f"(SELECT MAX(id) FROM {table}))"
                        )
                    )
        before = _read_all(engine)
        old = open_store(db_url, check=False)
        with old.session() as session:
            fingerprint_before = store_fingerprint(session)
        old.close()
        result = upgrade_store(engine)
        assert (result.before, result.after) == (KNOWN_REVISIONS[0], HEAD_REVISION)
        assert current_revision(engine) == HEAD_REVISION
        after = _read_all(engine)
        with engine.connect() as connection:
            added = {
                table: connection.execute(text(f"SELECT COUNT(*) FROM {table}")).scalar()
                for table in ("species_thermo", "evans_polanyi_rule")
            }
            reverse = connection.execute(text("SELECT DISTINCT reverse FROM reaction")).all()
    finally:
        engine.dispose()

    assert after == before
    # the tables of revision 0005 start empty, and no reaction is declared reversible
    assert added == {"species_thermo": 0, "evans_polanyi_rule": 0}
    assert reverse == [(None,)]
    # every row is the one written, value for value (floats exactly)
    for table, rows in ROWS.items():
        read = after[table]
        assert len(read) == len(rows), table
        for expected, got in zip(rows, read, strict=True):
            for column, value in expected.items():
                assert _normalised(got[column]) == value, (table, column)
    store = open_store(db_url)
    try:
        with store.session() as session:
            assert store_fingerprint(session) == fingerprint_before
    finally:
        store.close()

    # ... and the upgraded store works: lookups, a fit, an export
    shown = json.loads(cli(db_url, "reactions", "show", "OH + CH4 -> H2O + CH3", "--json").stdout)
    assert shown["key"] == "oh-ch4"
    assert [s["points"] for s in shown["sets"]] == [12]
    assert {e["origin"] for e in shown["expressions"]} == {"literature", "manual"}
    assert cli(db_url, "fit", "oh-ch4").exit_code == 0
    exported = cli(db_url, "export", str(tmp_path / "m"))
    assert exported.exit_code == 0, exported.stderr
    assert "oh-ch4" in (tmp_path / "m" / "mechanism.csv").read_text(encoding="utf-8")
    # new rows get fresh ids after the explicitly numbered old ones
    assert cli(db_url, "species", "add", "O2", "O2").exit_code == 0
    assert cli(db_url, "species", "show", "O2").exit_code == 0


@pytest.fixture
def newer_store(db_url, cli, tmp_path):
    assert cli(db_url, "init").exit_code == 0
    assert cli(db_url, "species", "add", "CH4", "CH4").exit_code == 0
    engine = create_store_engine(database_url(db_url))
    with engine.begin() as connection:
        connection.execute(text("UPDATE alembic_version SET version_num = '0099'"))
    engine.dispose()
    return db_url


NEWER_COMMANDS = [
    ["init"],
    ["species", "list"],
    ["species", "show", "CH4"],
    ["species", "add", "O2", "O2"],
    ["species", "import", "{species_csv}"],
    ["reactions", "list"],
    ["data", "list"],
    ["expressions", "list"],
    ["expressions", "edit", "1", "--n", "1", "--expect-version", "1"],
    ["fit"],
    ["check"],
    ["history"],
    ["steric", "set-class", "x", "0.1"],
    ["export", "{out}"],
    ["backup", "{backup}"],
]


def test_a_store_from_a_newer_ratebank_is_refused_and_unchanged(newer_store, cli, tmp_path):
    species_csv = write(tmp_path / "s.csv", "name,formula\nO3,O3\n")
    names = {"species_csv": str(species_csv), "out": str(tmp_path / "m")}
    names["backup"] = str(tmp_path / "b.db")
    engine = create_store_engine(database_url(newer_store))
    try:
        for command in NEWER_COMMANDS:
            args = [part.format(**names) for part in command]
            before = snapshot(newer_store)
            outcome = cli(newer_store, *args)
            assert outcome.exit_code == 1, (command, outcome.stdout)
            message = outcome.stderr.strip()
            assert len(message.splitlines()) == 1, command
            assert message.startswith("Error: "), command
            if command[0] == "backup" and "postgresql" in newer_store:
                assert "pg_dump" in message  # refused before it looks at the revision
            else:
                assert "schema revision 0099, unknown to ratebank" in message, command
                assert "newer ratebank" in message, command
            assert snapshot(newer_store) == before, command
            assert current_revision(engine) == "0099", command
            assert not (tmp_path / "m.csv").exists(), command
            assert not (tmp_path / "b.db").exists(), command
    finally:
        engine.dispose()


def test_restore_refuses_a_newer_target_and_leaves_it(newer_store, cli, tmp_path):
    source = tmp_path / "src.db"
    assert cli(str(source), "init").exit_code == 0
    assert cli(str(source), "backup", str(tmp_path / "b.db")).exit_code == 0
    before = snapshot(newer_store)
    outcome = cli(newer_store, "restore", str(tmp_path / "b.db"))
    assert outcome.exit_code == 1
    assert "newer ratebank" in outcome.stderr
    assert snapshot(newer_store) == before


def _downgrade(engine, target: str) -> None:
    from alembic import command

    from ratebank.store.schema import _alembic_config

    with engine.begin() as connection:
        command.downgrade(_alembic_config(connection), target)


def _previous_revision_rows(engine) -> dict[str, list[tuple]]:
    """Every row of every table the store has, columns in stored order."""
    with engine.connect() as connection:
        names = inspect(connection).get_table_names()
        return {
            name: [
                tuple(row)
                for row in connection.execute(
                    select(Table(name, MetaData(), autoload_with=connection)).order_by(text("1"))
                )
            ]
            for name in sorted(names)
            if name != "alembic_version"
        }


#: An expression of a reaction written with M, as a store before the rate-law forms held it.
_THIRD_BODY_ROW = "h-o2-m,2.1e-32,-0.8,0,kJ/mol,cm6/molecule2/s,300,2000,2,test third body\n"


def _old_third_body_expressions_read_the_same(db_url, cli, before, after, columns):
    # revision 0008 adds expression columns, empty on the old rows; an expression of a
    # reaction written with M reads as third-body: its coefficient, and with a pressure
    # k0 [M] (at 300 K and 1 bar, [M] = 1e5 / (R 300) mol/m3)
    assert all(set(row[len(before["expression"][0]) :]) == {None} for row in after["expression"])
    listed = json.loads(cli(db_url, "expressions", "list", "--json").stdout)
    assert {e["reaction"]: e["form"] for e in listed}["h-o2-m"] == "third-body"
    plain = json.loads(
        cli(db_url, "rate", "h-o2-m", "-T", "300", "--k-units", "cm6/molecule2/s", "--json").stdout
    )
    assert plain["rates"][0]["k"] == pytest.approx(2.1e-32 * 300**-0.8, rel=1e-12)
    at_one_bar = json.loads(
        cli(
            db_url, "rate", "h-o2-m", "-T", "300", "-P", "1", "--k-units", "m3/mol/s", "--json"
        ).stdout
    )
    k0_si = 2.1e-32 * 300**-0.8 * 1e-12 * 6.02214076e23**2  # m6 mol-2 s-1 (CODATA N_A)
    M = 1e5 / (8.31446261815324 * 300)  # ideal gas; R = N_A k_B exactly (SI 2019)
    assert at_one_bar["rates"][0]["k"] == pytest.approx(k0_si * M, rel=1e-12)


def _old_records_enter_the_lifecycle(db_url, cli, before, after, columns):
    # revision 0009 adds withdrawal and versions: every old record is in use at version 1,
    # and the lifecycle works on the old rows
    width = {name: len(rows[0]) for name, rows in before.items() if rows}
    for table, names in columns.items():
        added = names[width[table] :]
        assert set(added) >= {"withdrawn_at", "withdrawn_by", "withdrawn_reason"}
        for row in after[table]:
            values = dict(zip(names, row, strict=True))
            assert values["withdrawn_at"] is None and values["withdrawn_reason"] is None
            assert values["version"] == 1
    assert (
        cli(db_url, "species", "edit", "OH", "--tc", "500", "--expect-version", "1").exit_code == 0
    )
    assert cli(db_url, "withdraw", "set", "s2", "--reason", "checked later").exit_code == 0
    listed = json.loads(cli(db_url, "data", "list", "--json").stdout)
    assert [s["set"] for s in listed] == ["s1"]


@pytest.mark.parametrize(
    ("revision", "more_expressions", "new_tables", "then"),
    [
        # the state a group's store was in before the rate-law forms (third-body
        # expressions included)
        pytest.param(
            "0007",
            _THIRD_BODY_ROW,
            ("expression_term", "third_body_efficiency", "release", "provenance_run"),
            _old_third_body_expressions_read_the_same,
            id="0007",
        ),
        # before withdrawal and versions
        pytest.param(
            "0008",
            "",
            ("release", "provenance_run"),
            _old_records_enter_the_lifecycle,
            id="0008",
        ),
    ],
)
def test_a_store_at_an_earlier_revision_upgrades_with_every_row_intact(
    revision, more_expressions, new_tables, then, db_url, cli, tmp_path
):
    # a store with every kind of record (a fit too) taken back to ``revision``, then
    # upgraded: the tables added since start empty (revision 0010 adds release, 0011
    # provenance_run), every
    # earlier table keeps every row and each row its values, the fingerprint is unchanged;
    # ``then`` checks what the revisions since mean for the old rows
    from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

    assert cli(db_url, "init").exit_code == 0
    for kind, text_ in (
        ("species", SPECIES_CSV),
        ("reactions", REACTIONS_CSV),
        ("data", MEASUREMENTS_CSV),
        ("expressions", EXPRESSIONS_CSV + more_expressions),
    ):
        path = write(tmp_path / f"{kind}.csv", text_)
        assert cli(db_url, kind, "import", str(path)).exit_code == 0
    assert cli(db_url, "fit", "oh-ch4").exit_code == 0
    engine = create_store_engine(database_url(db_url))
    try:
        _downgrade(engine, revision)
        assert current_revision(engine) == revision
        before = _previous_revision_rows(engine)
        old = open_store(db_url, check=False)
        with old.session() as session:
            fingerprint_before = store_fingerprint(session)
        old.close()
        result = upgrade_store(engine)
        assert (result.before, result.after) == (revision, HEAD_REVISION)
        after = _previous_revision_rows(engine)
        with engine.connect() as connection:
            columns = {
                table: [c["name"] for c in inspect(connection).get_columns(table)]
                for table in ("species", "reaction", "measurement_set", "point", "expression")
            }
    finally:
        engine.dispose()
    assert [after.pop(name) for name in new_tables] == [[] for _ in new_tables]
    width = {name: len(rows[0]) for name, rows in before.items() if rows}
    assert {name: [row[: width.get(name, 0)] for row in rows] for name, rows in after.items()} == (
        before
    )
    store = open_store(db_url)
    try:
        with store.session() as session:
            assert store_fingerprint(session) == fingerprint_before
    finally:
        store.close()
    then(db_url, cli, before, after, columns)
