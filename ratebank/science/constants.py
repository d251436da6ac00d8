"""Physical constants [SI], the exact values that define the 2019 SI.

Every constant here is exact by definition (the 2019 SI fixes k_B, N_A, e, h
and c; the calorie, the atmosphere, the bar and the angstrom are defined
multiples of SI units), so no CODATA edition can change one. They are written
out rather than imported from :mod:`scipy.constants` because importing scipy
costs a command about 0.15 s at start-up; ``tests/science/test_constants.py``
checks each one against scipy.constants, bit for bit.

Source: BIPM, The International System of Units (SI brochure, 9th edition,
2019), Table 1; NIST SP 811 (2008), appendix B, for the calorie and the
atmosphere.

>>> from ratebank.science import constants
>>> constants.GAS_CONSTANT == constants.BOLTZMANN * constants.AVOGADRO
True
>>> round(constants.GAS_CONSTANT, 9)
8.314462618
"""

from __future__ import annotations

#: Boltzmann constant k_B [J K^-1] (exact in the 2019 SI).
BOLTZMANN: float = 1.380649e-23
#: Avogadro constant N_A [mol^-1] (exact in the 2019 SI).
AVOGADRO: float = 6.02214076e23
#: Molar gas constant R = k_B N_A [J mol^-1 K^-1] (exact, as the product of two exact values).
GAS_CONSTANT: float = AVOGADRO * BOLTZMANN
#: Elementary charge e [C] (exact in the 2019 SI); 1 eV = e J.
ELEMENTARY_CHARGE: float = 1.602176634e-19
#: Planck constant h [J s] (exact in the 2019 SI).
PLANCK: float = 6.62607015e-34
#: Speed of light in vacuum c [m s^-1] (exact).
SPEED_OF_LIGHT: float = 299_792_458.0
#: Thermochemical calorie [J] (exactly 4.184 J); ratebank's calorie.
CALORIE: float = 4.184
#: Standard atmosphere [Pa] (exactly 101 325 Pa).
ATMOSPHERE: float = 101_325.0
#: Bar [Pa] (exactly 10^5 Pa).
BAR: float = 1.0e5
#: Angstrom [m] (exactly 10^-10 m).
ANGSTROM: float = 1.0e-10
#: Debye [C m] (exactly 1e-21 / c), the unit dipole moments are quoted in.
DEBYE: float = 1.0e-21 / SPEED_OF_LIGHT
#: Electronvolt per molecule as a molar energy [J mol^-1] (e N_A, exact).
ELECTRONVOLT_MOLAR: float = ELEMENTARY_CHARGE * AVOGADRO
