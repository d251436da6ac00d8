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


def test_every_constant_is_checked():
    public = {name for name in vars(constants) if name.isupper()}
    assert public == {ours for ours, _ in PAIRS}


def test_importing_constants_does_not_import_scipy():
    code = "import sys\nfrom ratebank.science import constants\nprint('scipy' in sys.modules)\n"
    result = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    )
    assert result.stdout.strip() == "False"
