"""Checking every expression against physical limits, called directly."""

from __future__ import annotations

import pytest

from ratebank.errors import BadInputError
from ratebank.services import checks, estimation


def test_clean_store_but_for_gaps(store):
    with store.session() as session:
        report = checks.check_store(session)
    assert {f.code for f in report.flags} == {"nothing-usable"}
    assert sorted(f.key for f in report.flags) == ["h-o2-m", "ho2-ho2"]
    assert not report.clean and report.reactions == 4


def test_a_steric_factor_above_one_is_flagged(store):
    with store.session(write=True) as session:
        estimation.estimate(session, ["ho2-ho2"], steric=3.0)
        report = checks.check_store(session, keys=["ho2-ho2"], ignore=["above-collision-limit"])
    assert {f.code for f in report.flags} == {"steric-above-one"}
    assert report.flags[0].value == pytest.approx(3.0)


def test_a_rate_above_the_collision_limit_is_flagged(store):
    """P = 50 with Ea = -4.9 kJ/mol gives k far above z(T) (Laidler 1987 ch. 3: z is the bound)."""
    with store.session(write=True) as session:
        estimation.estimate(session, ["ho2-ho2"], steric=50.0)
        report = checks.check_store(session, keys=["ho2-ho2"], ignore=["steric-above-one"])
    (flag,) = report.flags
    assert flag.code == "above-collision-limit" and flag.value > 1.0


def test_extrapolation_beyond_the_valid_range(store):
    with store.session() as session:
        report = checks.check_store(session, keys=["oh-ch4"], T_range=(300.0, 3000.0))
    (flag,) = report.flags
    assert flag.code == "extrapolation" and "200-2000 K" in flag.message


@pytest.mark.parametrize(
    ("options", "argument"),
    [({"ignore": ["no-such-check"]}, "ignore"), ({"T_range": (800.0, 300.0)}, "T_range")],
)
def test_bad_options_name_the_argument(store, options, argument):
    with store.session() as session, pytest.raises(BadInputError) as caught:
        checks.check_store(session, **options)
    assert caught.value.argument == argument
