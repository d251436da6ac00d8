"""Records of the kinetics reports: SI values turned into the preset's units."""

from __future__ import annotations

import pytest

from ratebank.report.kinetics import check_records, fit_records
from ratebank.services.checks import CheckReport, Flag, Unchecked
from ratebank.services.fitting import FitReport, FitRow

N_A = 6.02214076e23  # exact (2019 SI)
R = 8.31446261815324  # exact (k_B N_A)


def test_fit_records_convert_to_the_presets_units():
    """A = 1 m3/mol/s is 1e6 cm3/mol/s (combustion) and 1e6/N_A cm3/molecule/s (atmospheric);
    Ea = 8314.46 J/mol is 8.31446 kJ/mol and 1000 K as E/R (arithmetic on exact constants)."""
    row = FitRow("k", "A + B -> C", 2, "stored", "", "arrhenius", 1.0, 0.0, 1000 * R)
    row.uncertainty_f298, row.uncertainty_g = 1.3, 40.0
    combustion = fit_records(FitReport([row]), "combustion")[0]
    atmospheric = fit_records(FitReport([row]), "atmospheric")[0]
    assert combustion["A"] == pytest.approx(1e6) and combustion["k_units"] == "cm3/mol/s"
    assert combustion["Ea"] == pytest.approx(8.31446261815324)
    assert atmospheric["A"] == pytest.approx(1e6 / N_A) and atmospheric["Ea"] == pytest.approx(1000)
    assert (combustion["uncertainty_f298"], combustion["uncertainty_g_K"]) == (1.3, 40.0)


def test_check_records_say_what_was_not_checked():
    report = CheckReport(
        [Flag("a", "fit-scatter", "m", 3, 2.0)],
        2,
        2,
        None,
        unchecked=[Unchecked("b", 4, "no diameter")],
        collision="lennard-jones",
    )
    record = check_records(report)
    assert record["clean"] is False and record["collision_model"] == "lennard-jones"
    assert record["unchecked"] == [{"key": "b", "expression_id": 4, "reason": "no diameter"}]
    assert record["flags"][0]["code"] == "fit-scatter"
