"""Physical constants, all taken from :mod:`scipy.constants` (CODATA).

Nothing is retyped: every value below is a name imported from scipy. Importing
this module costs about 0.1 s, so modules that only sometimes need a constant
import it inside the function that does.

>>> from ratebank.science import constants
>>> constants.GAS_CONSTANT == constants.BOLTZMANN * constants.AVOGADRO
True
"""

from __future__ import annotations

from scipy import constants as _c

#: Boltzmann constant k_B [J K^-1] (exact in the 2019 SI).
BOLTZMANN: float = _c.k
#: Avogadro constant N_A [mol^-1] (exact in the 2019 SI).
AVOGADRO: float = _c.N_A
#: Molar gas constant R = k_B N_A [J mol^-1 K^-1].
GAS_CONSTANT: float = _c.R
#: Elementary charge e [C]; 1 eV = e J.
ELEMENTARY_CHARGE: float = _c.e
#: Planck constant h [J s].
PLANCK: float = _c.h
#: Speed of light in vacuum c [m s^-1].
SPEED_OF_LIGHT: float = _c.c
#: Thermochemical calorie [J] (exactly 4.184 J); ratebank's calorie.
CALORIE: float = _c.calorie_th
#: Standard atmosphere [Pa].
ATMOSPHERE: float = _c.atm
#: Bar [Pa].
BAR: float = _c.bar
#: Atomic mass constant m_u [kg].
ATOMIC_MASS: float = _c.atomic_mass
#: Angstrom [m].
ANGSTROM: float = _c.angstrom
