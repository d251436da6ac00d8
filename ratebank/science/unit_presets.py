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

PRESETS: dict[str, dict[int, str]] = {
    "combustion": {1: "s-1", 2: "cm3/mol/s", 3: "cm6/mol2/s"},
    "atmospheric": {1: "s-1", 2: "cm3/molecule/s", 3: "cm6/molecule2/s"},
    "si": {1: "s-1", 2: "m3/mol/s", 3: "m6/mol2/s"},
}
ENERGY_PRESETS: dict[str, str] = {"combustion": "kJ/mol", "atmospheric": "K", "si": "J/mol"}


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
