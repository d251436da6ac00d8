"""The mechanism table's units and forms, and k at given temperatures."""

from __future__ import annotations

import pytest

from ratebank.errors import BadInputError, ExportGapsError, NotFoundError, UnitError
from ratebank.services import fitting
from ratebank.services.mechanism import export_units, mechanism_table, rate


@pytest.mark.parametrize(
    ("given", "expected"),
    [
        ("cm3/molecule/s", {1: "s-1", 2: "cm3/molecule/s", 3: "cm6/molecule2/s"}),
        ("L/mol/s", {1: "s-1", 2: "L/mol/s", 3: "L2/mol2/s"}),
        ("cm6/mol2/s", {1: "s-1", 2: "cm3/mol/s", 3: "cm6/mol2/s"}),
        ("m3 mol-1 s-1", {1: "s-1", 2: "m3 mol-1 s-1", 3: "m6/mol2/s"}),
    ],
)
def test_explicit_k_units_follow_for_every_order(given, expected):
    assert export_units("combustion", given, None).k_units == expected


def test_first_order_unit_cannot_define_the_others():
    with pytest.raises(UnitError, match="first-order unit"):
        export_units(None, "s-1", None)


def test_linearise_only_with_two_parameter_form(store):
    with store.session() as session, pytest.raises(BadInputError, match="only to the arrhenius"):
        mechanism_table(
            session, units=export_units(), form="modified", linearise_at=300.0, leave_out_gaps=True
        )


def test_gaps_stop_the_table_unless_left_out(store):
    with store.session() as session:
        with pytest.raises(ExportGapsError) as caught:
            mechanism_table(session, units=export_units())
        assert caught.value.gaps == ["h-o2-m", "ho2-ho2"]
        table = mechanism_table(session, units=export_units(), leave_out_gaps=True)
    assert [r.key for r in table.rows] == ["h2o2-dec", "oh-ch4"]
    assert table.left_out == ["h-o2-m", "ho2-ho2"]


def test_rate_uses_the_exported_expression(store):
    """k(T) of the literature row of tests/helpers/data.py, by hand: A T^n exp(-Ea/RT)."""
    with store.session(write=True) as session:
        report = rate(session, "oh-ch4", [300.0, 1000.0], k_units="cm3/molecule/s")
        with pytest.raises(NotFoundError, match="no usable expression"):
            rate(session, "ho2-ho2", [300.0])
        with pytest.raises(BadInputError) as caught:
            rate(session, "oh-ch4", [-5.0])
        assert caught.value.argument == "temperatures"
        fitting.fit_reactions(session, form="arrhenius")
        refit = rate(session, "oh-ch4", [300.0], k_units="cm3/molecule/s")
    assert report.origin == "literature" and refit.origin == "measured-fit"
    assert all(row.k > 0 for row in report.rows)
