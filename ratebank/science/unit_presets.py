"""Unit presets: which k and energy units a community reads its tables in.

=============  ==========================================  ===============
preset         rate constants (orders 1, 2, 3)             energies
=============  ==========================================  ===============
combustion     s-1, cm3/mol/s, cm6/mol2/s                  kJ/mol
atmospheric    s-1, cm3/molecule/s, cm6/molecule2/s        K (E/R)
si             s-1, m3/mol/s, m6/mol2/s                    J/mol
=============  ==========================================  ===============

>>> rate_unit_for("atmospheric", 2)
'cm3/molecule/s'
>>> energy_unit_for("combustion")
'kJ/mol'
"""

from __future__ import annotations

from ratebank.errors import UnitError
from ratebank.science.units import parse_unit

PRESETS: dict[str, dict[int, str]] = {
    "combustion": {1: "s-1", 2: "cm3/mol/s", 3: "cm6/mol2/s"},
    "atmospheric": {1: "s-1", 2: "cm3/molecule/s", 3: "cm6/molecule2/s"},
    "si": {1: "s-1", 2: "m3/mol/s", 3: "m6/mol2/s"},
}
ENERGY_PRESETS: dict[str, str] = {"combustion": "kJ/mol", "atmospheric": "K", "si": "J/mol"}
#: The concentration unit of each preset (amount/volume), for equilibrium constants Kc.
CONCENTRATIONS: dict[str, str] = {
    "combustion": "mol/cm3",
    "atmospheric": "molecule/cm3",
    "si": "mol/m3",
}


def _check(preset: str) -> None:
    if preset not in PRESETS:
        raise UnitError(f"unknown unit preset {preset!r}; expected one of {', '.join(PRESETS)}")


def rate_unit_for(preset: str, order: int) -> str:
    """The k unit of a reaction of ``order`` (1-3) in ``preset``."""
    _check(preset)
    try:
        return PRESETS[preset][order]
    except KeyError:
        raise UnitError(f"ratebank has no unit for a rate constant of order {order}") from None


def energy_unit_for(preset: str) -> str:
    """The activation-energy unit of ``preset``."""
    _check(preset)
    return ENERGY_PRESETS[preset]


def kc_unit(preset: str, delta_n: int) -> tuple[str, float]:
    """The unit of Kc for a change of ``delta_n`` moles in ``preset``, and its SI factor
    (Kc_SI = Kc × factor).

    >>> kc_unit("combustion", -1)
    ('cm3/mol', 1e-06)
    >>> kc_unit("si", 0)
    ('1', 1.0)
    """
    if preset not in CONCENTRATIONS:
        raise UnitError(
            f"unknown unit preset {preset!r}; expected one of {', '.join(CONCENTRATIONS)}",
        )
    if delta_n == 0:
        return "1", 1.0
    amount, volume = (_power(symbol, abs(delta_n)) for symbol in CONCENTRATIONS[preset].split("/"))
    text = f"{amount}/{volume}" if delta_n > 0 else f"{volume}/{amount}"
    return text, parse_unit(text).to_si


def _power(symbol: str, power: int) -> str:
    """A unit symbol to a power in the project's spelling: cm3 squared is cm6."""
    if power == 1:
        return symbol
    if symbol[-1].isdigit():
        return f"{symbol[:-1]}{int(symbol[-1]) * power}"
    return f"{symbol}{power}"
