"""Pressure units, bath-gas concentration and effective third-body concentration.

Inside ratebank a pressure is in Pa and a concentration in mol m^-3. The
third body M of a pressure-dependent reaction is counted as an ideal gas,

    [M] = p / (R T)          [mol m^-3],
    n_M = p / (k_B T)        [m^-3],

and a mixture of colliders with mole fractions x_i and collision
efficiencies eps_i (relative to the reference bath gas, eps = 1) acts as

    [M]_eff = [M] sum_i eps_i x_i.

A pressure unit is one of the symbols of :data:`PRESSURE_UNITS`, written
exactly (``MPa`` is the megapascal and ``mPa`` is not accepted). The Torr is
exactly 101325/760 Pa, the atmosphere exactly 101325 Pa and the bar exactly
1e5 Pa; the conventional millimetre of mercury (133.322387415 Pa, slightly
more than the Torr) is deliberately not offered.

References
----------
1. BIPM, *The International System of Units (SI)*, 9th edition (2019),
   Table 8 (the bar) and section 4 (non-SI units).
2. NIST Special Publication 811 (2008), appendix B.8 (the atmosphere and the
   Torr).
3. IUPAC, *Quantities, Units and Symbols in Physical Chemistry* (Green Book),
   3rd edition (2007), section 3.7. doi:10.1039/9781847557889
4. Troe, J. Predictive possibilities of unimolecular rate theory.
   *J. Phys. Chem.* 1979, 83, 114-126 (collision efficiencies of bath gases).
   doi:10.1021/j100464a019
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import NamedTuple

import numpy as np

from ratebank.errors import ScienceInputError, UnitError
from ratebank.science.constants import ATMOSPHERE, BAR, BOLTZMANN, GAS_CONSTANT

__all__ = [
    "MIXTURE_NORMALISE_TOLERANCE",
    "PRESSURE_UNITS",
    "Mixture",
    "bath_gas_concentration",
    "bath_gas_number_density",
    "collision_efficiencies",
    "effective_third_body_concentration",
    "parse_mixture",
    "pressure_from_si",
    "pressure_to_si",
    "pressure_unit_factor",
]

#: Accepted pressure-unit symbols and their size in Pa (all exact by definition).
PRESSURE_UNITS: dict[str, float] = {
    "Pa": 1.0,
    "hPa": 1.0e2,
    "kPa": 1.0e3,
    "MPa": 1.0e6,
    "mbar": BAR * 1.0e-3,
    "bar": BAR,
    "atm": ATMOSPHERE,
    "Torr": ATMOSPHERE / 760.0,
}

#: Largest |sum of mole fractions - 1| that :func:`parse_mixture` treats as
#: rounding and normalises away; a larger deviation is refused.
MIXTURE_NORMALISE_TOLERANCE: float = 0.01


def pressure_unit_factor(unit: str) -> float:
    """Size of one pressure unit in Pa.

    p [Pa] = value x factor(unit)

    Parameters
    ----------
    unit : str
        One of ``Pa``, ``hPa``, ``kPa``, ``MPa``, ``mbar``, ``bar``, ``atm``,
        ``Torr``, written exactly (surrounding spaces are ignored).

    Returns
    -------
    float
        The factor [Pa per unit].

    Raises
    ------
    UnitError
        If the unit is not one of the accepted symbols; the message lists them.

    References
    ----------
    BIPM SI brochure, 9th ed. (2019), Table 8; NIST SP 811 (2008), B.8
    (1 Torr = 101325/760 Pa exactly).

    Examples
    --------
    >>> pressure_unit_factor("bar")
    100000.0
    >>> f"{pressure_unit_factor('Torr'):.10f}"
    '133.3223684211'
    """
    if not isinstance(unit, str):
        raise UnitError(f"a pressure unit must be given as text, got {type(unit).__name__}")
    key = unit.strip()
    if key in PRESSURE_UNITS:
        return PRESSURE_UNITS[key]
    hint = ""
    matches = [name for name in PRESSURE_UNITS if name.lower() == key.lower()]
    if matches:
        hint = f" (did you mean {matches[0]!r}? unit symbols are case-sensitive)"
    accepted = ", ".join(PRESSURE_UNITS)
    raise UnitError(f"unknown pressure unit {unit!r}{hint}; accepted pressure units are {accepted}")


def pressure_to_si(value, unit: str):
    """Convert a pressure to Pa.

    p [Pa] = value x factor(unit)

    Parameters
    ----------
    value : array_like
        Pressure in ``unit``.
    unit : str
        A symbol of :data:`PRESSURE_UNITS`.

    Returns
    -------
    numpy.ndarray or float
        Pressure [Pa].

    Raises
    ------
    UnitError
        For an unknown unit.

    References
    ----------
    NIST SP 811 (2008), appendix B.8.

    Examples
    --------
    >>> float(pressure_to_si(760.0, "Torr"))
    101325.0
    """
    return np.asarray(value, dtype=float) * pressure_unit_factor(unit)


def pressure_from_si(value, unit: str):
    """Convert a pressure in Pa to another unit.

    value = p [Pa] / factor(unit)

    Parameters
    ----------
    value : array_like
        Pressure [Pa].
    unit : str
        A symbol of :data:`PRESSURE_UNITS`.

    Returns
    -------
    numpy.ndarray or float
        Pressure in ``unit``.

    Raises
    ------
    UnitError
        For an unknown unit.

    References
    ----------
    NIST SP 811 (2008), appendix B.8.

    Examples
    --------
    >>> float(pressure_from_si(101325.0, "bar"))
    1.01325
    """
    return np.asarray(value, dtype=float) / pressure_unit_factor(unit)


def _temperature(T) -> np.ndarray:
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T) & (T > 0)):
        raise ScienceInputError("T must be positive and finite [K].")
    return T


def _pressure(p) -> np.ndarray:
    p = np.asarray(p, dtype=float)
    if not np.all(np.isfinite(p) & (p >= 0)):
        raise ScienceInputError("The pressure p must be finite and not negative [Pa].")
    return p


def bath_gas_concentration(p, T):
    """Molar concentration of an ideal bath gas.

    [M] = p / (R T)

    Parameters
    ----------
    p : array_like
        Pressure [Pa]; finite, not negative.
    T : array_like
        Temperature [K]; positive. Broadcasts against ``p``.

    Returns
    -------
    numpy.ndarray or float
        [M] [mol m^-3].

    Raises
    ------
    ScienceInputError
        If p is negative or not finite, or T is not positive and finite.

    Notes
    -----
    Ideal gas; at 1 bar the compressibility of air differs from 1 by less than
    1e-3 above 200 K.

    References
    ----------
    IUPAC Green Book, 3rd ed. (2007), section 2.11.

    Examples
    --------
    >>> f"{bath_gas_concentration(101325.0, 298.15):.4f}"
    '40.8740'
    """
    return _pressure(p) / (GAS_CONSTANT * _temperature(T))


def bath_gas_number_density(p, T):
    """Number density of an ideal bath gas.

    n_M = p / (k_B T)

    Parameters
    ----------
    p : array_like
        Pressure [Pa]; finite, not negative.
    T : array_like
        Temperature [K]; positive. Broadcasts against ``p``.

    Returns
    -------
    numpy.ndarray or float
        n_M [m^-3] (multiply by 1e-6 for cm^-3).

    Raises
    ------
    ScienceInputError
        If p is negative or not finite, or T is not positive and finite.

    References
    ----------
    IUPAC Green Book, 3rd ed. (2007), section 2.11.

    Examples
    --------
    The Loschmidt constant (273.15 K, 1 atm):

    >>> f"{bath_gas_number_density(101325.0, 273.15):.9e}"
    '2.686780112e+25'
    """
    return _pressure(p) / (BOLTZMANN * _temperature(T))


def effective_third_body_concentration(M, mole_fractions, efficiencies=None):
    """Effective third-body concentration of a mixture of colliders.

    [M]_eff = [M] sum_i eps_i x_i

    Parameters
    ----------
    M : array_like
        Total bath-gas concentration [mol m^-3] (or number density [m^-3];
        the result has the same unit); finite, not negative.
    mole_fractions : array_like, shape (..., n_species)
        Mole fractions x_i [-]; the last axis runs over the colliders. Not
        negative; they are used as given (not normalised).
    efficiencies : array_like, shape (..., n_species), optional
        Collision efficiencies eps_i [-] relative to the reference bath gas;
        default 1 for every collider. Not negative.

    ``M`` broadcasts against the mixture axes without the last one, so a
    grid of concentrations of shape (n_T, n_p) with one mixture of shape
    (n_species,) gives shape (n_T, n_p).

    Returns
    -------
    numpy.ndarray or float
        [M]_eff, in the unit of ``M``.

    Raises
    ------
    ScienceInputError
        If M, a mole fraction or an efficiency is negative or not finite, or
        the efficiencies do not match the colliders.

    References
    ----------
    Troe, *J. Phys. Chem.* 1979, 83, 114. doi:10.1021/j100464a019

    Examples
    --------
    Water counted six times as efficient as N2 and O2:

    >>> f"{effective_third_body_concentration(40.0, [0.78, 0.21, 0.01], [1.0, 1.0, 6.0]):.2f}"
    '42.00'
    """
    M = np.asarray(M, dtype=float)
    if not np.all(np.isfinite(M) & (M >= 0)):
        raise ScienceInputError("M must be finite and not negative [mol m-3].")
    x = np.asarray(mole_fractions, dtype=float)
    if x.ndim == 0 or x.shape[-1] == 0:
        raise ScienceInputError("mole_fractions needs at least one collider (last axis).")
    if not np.all(np.isfinite(x) & (x >= 0)):
        raise ScienceInputError("Mole fractions must be finite and not negative.")
    if efficiencies is None:
        weighted = x.sum(axis=-1)
    else:
        eps = np.asarray(efficiencies, dtype=float)
        if not np.all(np.isfinite(eps) & (eps >= 0)):
            raise ScienceInputError("Collision efficiencies must be finite and not negative.")
        if eps.ndim == 0 or eps.shape[-1] != x.shape[-1]:
            raise ScienceInputError(
                f"There are {x.shape[-1]} colliders but "
                f"{eps.shape[-1] if eps.ndim else 1} efficiencies; give one per collider."
            )
        weighted = (eps * x).sum(axis=-1)
    return M * weighted


class Mixture(NamedTuple):
    """A bath-gas mixture read by :func:`parse_mixture`."""

    #: Collider names, in the order given.
    names: tuple[str, ...]
    #: Mole fractions [-], summing to 1.
    fractions: np.ndarray


def _mixture_entry(entry: str, position: int) -> tuple[str, float]:
    name, colon, number = entry.partition(":")
    name = name.strip()
    if not colon or not name:
        raise ScienceInputError(
            f"mixture entry {position} {entry.strip()!r} is not of the form name:fraction "
            "(e.g. 'N2:0.78')."
        )
    try:
        fraction = float(number)
    except ValueError:
        raise ScienceInputError(
            f"the mole fraction of {name} is {number.strip()!r}, which is not a number."
        ) from None
    if not math.isfinite(fraction) or fraction < 0:
        raise ScienceInputError(
            f"the mole fraction of {name} is {number.strip()}; it must be a finite number "
            "between 0 and 1."
        )
    return name, fraction


def parse_mixture(text: str) -> Mixture:
    """Read a bath-gas mixture written as ``name:fraction`` pairs.

    Entries are separated by commas, e.g. ``"N2:0.78,O2:0.21,H2O:0.01"``;
    spaces around names and numbers are ignored. The fractions must sum to 1
    within :data:`MIXTURE_NORMALISE_TOLERANCE` (1 %); inside that band they
    are divided by their sum so that rounding in the text does not count.

    Parameters
    ----------
    text : str
        The mixture.

    Returns
    -------
    Mixture
        (names, fractions [-]).

    Raises
    ------
    ScienceInputError
        For an empty text, an entry without ``:``, an empty name, a repeated
        name, a fraction that is not a finite number or is negative, or
        fractions whose sum is off 1 by more than 1 %.

    References
    ----------
    IUPAC Green Book, 3rd ed. (2007), section 2.10 (amount fraction).

    Examples
    --------
    >>> mix = parse_mixture("N2:0.78, O2:0.21, Ar:0.0093")
    >>> mix.names
    ('N2', 'O2', 'Ar')
    >>> [f"{x:.5f}" for x in mix.fractions]
    ['0.78055', '0.21015', '0.00931']
    """
    if not isinstance(text, str) or not text.strip():
        raise ScienceInputError("no mixture given: expected text such as 'N2:0.78,O2:0.21'.")
    names: list[str] = []
    fractions: list[float] = []
    for position, entry in enumerate(text.split(","), start=1):
        name, fraction = _mixture_entry(entry, position)
        if name in names:
            raise ScienceInputError(f"{name} appears twice in the mixture; give it once.")
        names.append(name)
        fractions.append(fraction)
    total = math.fsum(fractions)
    # a sum exactly 1 % off (0.78 + 0.21) is inside the band, whatever the float rounding
    if abs(total - 1.0) > MIXTURE_NORMALISE_TOLERANCE * (1.0 + 1e-9):
        raise ScienceInputError(
            f"the mole fractions sum to {total:.6g}; they must sum to 1 "
            f"(within {MIXTURE_NORMALISE_TOLERANCE:.0%}, which is normalised away)."
        )
    return Mixture(tuple(names), np.asarray(fractions) / total)


def collision_efficiencies(
    names: Sequence[str], efficiencies: Mapping[str, float] | None = None
) -> np.ndarray:
    """Collision efficiency of each named collider, 1 where none is given.

    eps_i = efficiencies[name_i] if given, else 1

    Parameters
    ----------
    names : sequence of str
        Collider names, e.g. :attr:`Mixture.names`.
    efficiencies : mapping of str to float, optional
        Efficiencies eps [-] relative to the reference bath gas; finite and not
        negative. Names not among the colliders are ignored (a reaction's
        efficiency list usually covers more species than one mixture holds).

    Returns
    -------
    numpy.ndarray, shape (len(names),)
        eps_i [-].

    Raises
    ------
    ScienceInputError
        If an efficiency is negative or not finite.

    References
    ----------
    Troe, *J. Phys. Chem.* 1979, 83, 114. doi:10.1021/j100464a019

    Examples
    --------
    >>> collision_efficiencies(("N2", "O2", "H2O"), {"H2O": 6.0, "CO2": 2.0}).tolist()
    [1.0, 1.0, 6.0]
    """
    given = dict(efficiencies or {})
    for name, value in given.items():
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value >= 0):
            raise ScienceInputError(
                f"the collision efficiency of {name} is {value!r}; it must be a finite number "
                "not below 0."
            )
    return np.array([float(given.get(name, 1.0)) for name in names], dtype=float)
