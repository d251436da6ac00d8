"""The mechanism table's units and forms, and k at given temperatures."""

from __future__ import annotations

import pytest

from ratebank.errors import BadInputError, ExportGapsError, NotFoundError, UnitError
from ratebank.services import fitting
from ratebank.services.mechanism import export_units, mechanism_table
from ratebank.services.rates import rate


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


def test_two_parameter_rows_stay_within_their_recorded_deviation(store):
    """Each curved row is linearised inside its own range (default: the geometric middle);
    at 20 temperatures across the range its k stays within the recorded deviation of the
    modified form (A T^n exp(-Ea/RT), evaluated here by hand)."""
    import numpy as np

    with store.session() as session:
        table = mechanism_table(session, units=export_units("si"), form="arrhenius",
                                leave_out_gaps=True)  # fmt: skip
    row = next(r for r in table.rows if r.key == "oh-ch4")
    # tests/helpers/data.py: A = 1.85e-20 cm3/molecule/s K^-2.82, n = 2.82, E/R = 987 K
    A_si, n, E_R = 1.85e-20 * 6.02214076e23 * 1e-6, 2.82, 987.0
    assert row.n == 0.0 and row.linearised_at_K == pytest.approx(np.sqrt(200.0 * 2000.0))
    T = np.geomspace(row.T_min_K, row.T_max_K, 20)
    k_modified = A_si * T**n * np.exp(-E_R / T)
    k_row = row.A * np.exp(-row.Ea / (8.31446261815324 * T))
    assert np.max(np.abs(np.log(k_row / k_modified))) <= row.linearisation_max_ln_deviation * (
        1 + 1e-9
    )
    # the uncertainty factor includes the deviation: ln f298 grows by it (uncertainty module)
    assert np.log(row.uncertainty_f298) == pytest.approx(
        np.log(1.2) + row.linearisation_max_ln_deviation
    )


def test_a_linearisation_temperature_outside_a_rows_range_is_refused(store):
    with store.session() as session, pytest.raises(BadInputError, match="outside 200-2000 K"):
        mechanism_table(
            session, units=export_units(), form="arrhenius", linearise_at=3000.0,
            leave_out_gaps=True,
        )  # fmt: skip
