"""The constants ratebank writes out are the ones scipy.constants carries.

Reference: scipy.constants (CODATA; the 2019 SI defining constants are exact,
so equality is bit for bit, whatever CODATA edition scipy ships).
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from scipy import constants as sc

from ratebank.science import constants

# (ratebank name, scipy.constants name)
PAIRS = [
    ("BOLTZMANN", "k"),
    ("AVOGADRO", "N_A"),
    ("GAS_CONSTANT", "R"),
    ("ELEMENTARY_CHARGE", "e"),
    ("PLANCK", "h"),
    ("SPEED_OF_LIGHT", "c"),
    ("CALORIE", "calorie_th"),
    ("ATMOSPHERE", "atm"),
    ("BAR", "bar"),
    ("ANGSTROM", "angstrom"),
]


@pytest.mark.parametrize(("ours", "theirs"), PAIRS)
def test_constant_equals_scipy(ours, theirs):
    assert getattr(constants, ours) == getattr(sc, theirs)


# (ratebank name, the same quantity from scipy.constants, source)
DERIVED = [
    ("DEBYE", 1e-21 / sc.c, "IUPAC Green Book: 1 D = 1e-21/c C m (exact)"),
    ("ELECTRONVOLT_MOLAR", sc.e * sc.N_A, "e N_A, REFERENCE-CHECKS section 2: 96485.33212 J/mol"),
]


@pytest.mark.parametrize(("ours", "value", "source"), DERIVED)
def test_derived_constant_equals_scipy(ours, value, source):
    assert getattr(constants, ours) == pytest.approx(value, rel=1e-15)


def test_every_constant_is_checked():
    public = {name for name in vars(constants) if name.isupper()}
    assert public == {ours for ours, _ in PAIRS} | {ours for ours, *_ in DERIVED}


def test_importing_constants_does_not_import_scipy():
    code = "import sys\nfrom ratebank.science import constants\nprint('scipy' in sys.modules)\n"
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    )
    assert result.stdout.strip() == "False"
