"""Thermochemistry, stoichiometry, reverse rules and Evans-Polanyi relations in the store."""

from __future__ import annotations

import pytest
from helpers.cli import run, write
from helpers.thermo import SPECIES_CSV
from sqlalchemy.exc import IntegrityError

from ratebank.errors import ConflictError, NotFoundError
from ratebank.services.store_access import open_store
from ratebank.store import queries
from ratebank.store.evans_polanyi import (
    evans_polanyi_rules,
    remove_evans_polanyi_rule,
    save_evans_polanyi_rule,
)
from ratebank.store.fingerprint import store_fingerprint
from ratebank.store.thermo import (
    NewThermo,
    reverse_rules,
    set_reverse_rule,
    species_ids_by_name,
    stoichiometry,
    thermo_of,
    write_thermo,
)

REACTIONS = """key,equation,reverse
h-o2,H + O2 -> OH + O,detailed-balance
oh-oh,OH + OH -> H2O + O,
h-o2-m,H + O2 + M -> HO2 + M,
"""
# Coefficients whose floats round-trip only at full precision (synthetic).
LOW = (
    3.3372792,
    -4.94024731e-05,
    4.99456778e-07,
    -1.79566394e-10,
    2.00255376e-14,
    -950.158922,
    -3.20502331,
)
HIGH = (
    2.34433112,
    0.00798052075,
    -1.9478151e-05,
    2.01572094e-08,
    -7.37611761e-12,
    -917.935173,
    0.683010238,
)


@pytest.fixture
def store(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, text in (("species", SPECIES_CSV), ("reactions", REACTIONS)):
        path = write(tmp_path / f"{command}.csv", text)
        assert run(db_url, command, "import", str(path)).exit_code == 0
    handle = open_store(db_url, author="tester")
    yield handle
    handle.close()


def _new(ids, name, **changes):
    values = {
        "species_id": ids[name],
        "species": name,
        "T_low": 200.0,
        "T_mid": 1000.0,
        "T_high": 3500.0,
        "low": LOW,
        "high": HIGH,
        "method": "given coefficients",
        "source": "synthetic",
    }
    values.update(changes)
    return NewThermo(**values)


def test_polynomials_are_stored_exactly_and_replaced(store):
    with store.session(write=True) as session:
        ids = species_ids_by_name(session, ["H2", "O2", "nobody"])
        assert set(ids) == {"H2", "O2"}
        assert write_thermo(session, [_new(ids, "H2")]) == []
    with store.session() as session:
        (row,) = thermo_of(session).values()
    assert (row.species, row.low, row.high) == ("H2", LOW, HIGH)
    assert (row.T_low, row.T_mid, row.T_high, row.updated_by) == (200.0, 1000.0, 3500.0, "tester")
    with store.session(write=True) as session:
        replaced = write_thermo(
            session,
            [
                _new(ids, "H2", method="fitted to tabulated Cp", max_cp_deviation=1e-3),
                _new(ids, "O2"),
            ],
        )
        assert replaced == ["H2"]
        found = thermo_of(session, [ids["H2"]])
    assert found[ids["H2"]].max_cp_deviation == 1e-3
    assert list(found) == [ids["H2"]]


def test_the_database_refuses_an_unordered_range(store):
    with store.session(write=True) as session, pytest.raises(IntegrityError):
        ids = species_ids_by_name(session, ["H2"])
        write_thermo(session, [_new(ids, "H2", T_mid=100.0)])


def test_thermochemistry_enters_the_fingerprint_only_once_it_is_there(store):
    with store.session() as session:
        empty = store_fingerprint(session)
    with store.session(write=True) as session:
        ids = species_ids_by_name(session, ["H2"])
        write_thermo(session, [_new(ids, "H2")])
    with store.session() as session:
        filled = store_fingerprint(session)
    with store.session(write=True) as session:
        write_thermo(session, [_new(ids, "H2", low=(LOW[0] + 1e-15, *LOW[1:]))])
    with store.session() as session:
        changed = store_fingerprint(session)
    assert len({empty, filled, changed}) == 3


def test_stoichiometry_is_signed_and_leaves_out_the_third_body(store):
    with store.session() as session:
        reactions = {r.key: r.id for r in queries.reactions(session)}
        found = stoichiometry(session, list(reactions.values()))
    signed = {key: sorted((p.species, p.nu) for p in found[i]) for key, i in reactions.items()}
    assert signed == {
        "h-o2": [("H", -1), ("O", 1), ("O2", -1), ("OH", 1)],
        "oh-oh": [("H2O", 1), ("O", 1), ("OH", -2)],
        "h-o2-m": [("H", -1), ("HO2", 1), ("O2", -1)],
    }


def test_reverse_rules_are_read_and_set(store):
    with store.session(write=True) as session:
        ids = {r.key: r.id for r in queries.reactions(session)}
        assert reverse_rules(session) == {ids["h-o2"]: "detailed-balance"}
        set_reverse_rule(session, ids["oh-oh"], "detailed-balance")
        set_reverse_rule(session, ids["h-o2"], None)
        assert reverse_rules(session, [ids["oh-oh"], ids["h-o2"]]) == {
            ids["oh-oh"]: "detailed-balance"
        }


def test_evans_polanyi_rules_are_versioned(store):
    with store.session(write=True) as session:
        rule, before = save_evans_polanyi_rule(
            session,
            "abstraction",
            E0=40e3,
            alpha=0.3,
            spread=None,
            source="a",
            expected_version=None,
        )
        assert (before, rule.version, rule.updated_by) == (None, 1, "tester")
        rule, before = save_evans_polanyi_rule(
            session,
            "abstraction",
            E0=42e3,
            alpha=0.35,
            spread=3e3,
            source="b",
            expected_version=1,
        )
        assert (before, rule.version, rule.E0, rule.spread) == ((40e3, 0.3), 2, 42e3, 3e3)
        with pytest.raises(ConflictError, match="now version 2, you read version 1"):
            save_evans_polanyi_rule(
                session,
                "abstraction",
                E0=1.0,
                alpha=0.0,
                spread=None,
                source=None,
                expected_version=1,
            )
        assert list(evans_polanyi_rules(session)) == ["abstraction"]
        assert remove_evans_polanyi_rule(session, "abstraction") == (42e3, 0.35)
        with pytest.raises(NotFoundError):
            remove_evans_polanyi_rule(session, "abstraction")
