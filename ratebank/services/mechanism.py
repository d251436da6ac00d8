"""The mechanism table: one row per reaction, in the units the modeller needs.

Also ``rate``: k at given temperatures from the expression that would be
exported. The table's columns (the README (Import files)), in order::

    key, equation, order, A, n, Ea, k_units, Ea_units, T_min_K, T_max_K,
    origin, steric_factor, uncertainty_factor, references

``A`` is in ``k_units`` times K^-n; k = A T^n exp(-Ea/RT) with T in K.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, NamedTuple

from sqlalchemy.orm import Session

from ratebank.errors import RatebankError, UnitError
from ratebank.services.curate import find_reaction
from ratebank.services.selection import (
    chosen_expressions,
    chosen_rows,
    evaluate,
    uncertainty_factor,
)

COLUMNS = (
    "key",
    "equation",
    "order",
    "A",
    "n",
    "Ea",
    "k_units",
    "Ea_units",
    "T_min_K",
    "T_max_K",
    "origin",
    "steric_factor",
    "uncertainty_factor",
    "references",
)
FORMS = ("modified", "arrhenius")
RATE_LAW_CONVENTION = (
    "k is defined by the rate of reaction r = k * prod([X_i]^nu_i) over the reactants "
    "(and [M] for a third body). For a self-reaction A + A -> products, r = k[A]^2 and "
    "d[A]/dt = -2 r; a code that writes d[A]/dt = -k[A]^2 needs twice this k."
)
CAUTION = (
    "Estimated rate parameters are order-of-magnitude guidance and fitted ones hold only "
    "over their measured range. Where this mechanism feeds safety decisions (ignition, "
    "explosion limits, emissions permits), its numbers must be validated against "
    "measurements; local codes and licensed practice decide."
)

_VOLUMES = {"cm3": ("cm6", 1e-6), "dm3": ("dm6", 1e-3), "L": ("L2", 1e-3), "m3": ("m6", 1.0)}
_AMOUNTS = ("molecule", "mol")


class ExportGapsError(RatebankError):
    """Some reactions have no usable expression; the export was stopped."""

    def __init__(self, gaps: list[str]):
        self.gaps = gaps
        shown = ", ".join(gaps[:30]) + (f", ... ({len(gaps) - 30} more)" if len(gaps) > 30 else "")
        super().__init__(
            f"{len(gaps)} reaction(s) have no usable expression, so nothing was written: "
            f"{shown}. Fit, estimate or import them, or pass --leave-out-gaps"
        )


@dataclass(frozen=True)
class ExportUnits:
    """The k unit of each reaction order and the energy unit of a table."""

    label: str
    k_units: dict[int, str]
    e_units: str

    def k_unit(self, order: int) -> str:
        try:
            return self.k_units[order]
        except KeyError:
            raise UnitError(f"no k unit for reactions of order {order}") from None


def _derive_orders(unit: str) -> dict[int, str]:
    """k units for orders 1-3 with the same volume and amount as ``unit``."""
    from ratebank.science.units import parse_rate_unit

    given = parse_rate_unit(unit)
    if given.order == 1:
        raise UnitError(
            f"{unit!r} is a first-order unit and says nothing about volume or amount; give a "
            "bimolecular unit such as cm3/molecule/s with --k-units"
        )
    # dm3 and L are the same volume: try first the symbol the user wrote
    for volume in sorted(_VOLUMES, key=lambda v: v.rstrip("3") not in unit):
        for amount in _AMOUNTS:
            candidate = parse_rate_unit(f"{volume}/{amount}/s")
            expected = candidate.to_si ** (given.order - 1)
            if math.isclose(given.to_si, expected, rel_tol=1e-12):
                sixth, _ = _VOLUMES[volume]
                derived = {
                    1: "s-1",
                    2: f"{volume}/{amount}/s",
                    3: f"{sixth}/{amount}2/s",
                }
                derived[given.order] = unit  # keep the user's own spelling for its order
                return derived
    raise UnitError(
        f"cannot derive the units of other reaction orders from {unit!r}: give a bimolecular "
        "unit built from cm3, dm3, L or m3 with molecule or mol, per second "
        "(e.g. cm3/molecule/s)"
    )


def export_units(
    preset: str | None = "combustion", k_units: str | None = None, e_units: str | None = None
) -> ExportUnits:
    """Units from a preset, overridden by explicit ``k_units`` and ``e_units``."""
    from ratebank.science.unit_presets import ENERGY_PRESETS, PRESETS
    from ratebank.science.units import canonical_energy_unit, parse_energy_unit

    if preset is not None and preset not in PRESETS:
        raise UnitError(f"unknown unit preset {preset!r}; expected one of {', '.join(PRESETS)}")
    base = preset or "si"
    k_map = dict(PRESETS[base])
    e = ENERGY_PRESETS[base]
    if k_units:
        k_map = _derive_orders(k_units)
    if e_units:
        parse_energy_unit(e_units)
        e = canonical_energy_unit(e_units)
    label = preset if not (k_units or e_units) else "explicit"
    return ExportUnits(label, k_map, e)


class MechanismRow(NamedTuple):
    """One exported row; the first fields, in order, are the table's COLUMNS."""

    key: str
    equation: str
    order: int
    A: float
    n: float
    Ea: float
    k_units: str
    Ea_units: str
    T_min_K: float | None
    T_max_K: float | None
    origin: str
    steric_factor: float | None
    uncertainty_factor: float | None
    references: str
    expression_id: int
    chosen_by: str
    linearised_at_K: float | None = None

    def values(self) -> list[Any]:
        return [getattr(self, c) for c in COLUMNS]


@dataclass
class MechanismTable:
    rows: list[MechanismRow]
    units: ExportUnits
    form: str
    gaps: list[str]
    left_out: list[str] = field(default_factory=list)


def mechanism_table(
    session: Session,
    *,
    units: ExportUnits,
    form: str = "modified",
    linearise_at: float | None = None,
    leave_out_gaps: bool = False,
) -> MechanismTable:
    """Build the rows of the mechanism table (nothing is written here).

    With ``form="arrhenius"`` a row whose n is not 0 is refused unless
    ``linearise_at`` gives the temperature at which to replace it by its local
    two-parameter form (A T^n e^n, Ea + nRT), which is then recorded.
    """
    from ratebank.numbers import round_significant
    from ratebank.science.units import energy_from_si, rate_from_si

    if form not in FORMS:
        raise RatebankError(f"unknown form {form!r}; expected one of {', '.join(FORMS)}")
    if linearise_at is not None and (not math.isfinite(linearise_at) or linearise_at <= 0):
        raise RatebankError("--linearise-at must be a temperature above 0 K")
    if linearise_at is not None and form != "arrhenius":
        raise RatebankError("--linearise-at applies only to --form arrhenius")
    chosen, gaps = chosen_rows(session)
    if gaps and not leave_out_gaps:
        raise ExportGapsError(gaps)
    if form == "arrhenius" and linearise_at is None:
        curved = [c.reaction_key for c in chosen if c.n != 0]
        if curved:
            raise RatebankError(
                f"{len(curved)} expression(s) have n != 0 and cannot be written as two-parameter "
                f"Arrhenius rows: {', '.join(curved[:20])}; pass --linearise-at T to use their "
                "local form at T, or export --form modified"
            )
    rows: list[MechanismRow] = []
    factors: dict[int, float] = {}
    for c in chosen:
        if c.order not in factors:
            factors[c.order] = float(rate_from_si(1.0, units.k_unit(c.order), c.order))
    energy_factor = float(energy_from_si(1.0, units.e_units))
    for c in chosen:
        A, n, Ea = c.A, c.n, c.Ea
        linearised = None
        if form == "arrhenius" and n != 0:
            assert linearise_at is not None
            # only a linearised export needs the Arrhenius module
            from ratebank.science.arrhenius import local_activation_energy, local_pre_exponential

            A = float(local_pre_exponential(linearise_at, A, n))
            Ea = float(local_activation_energy(linearise_at, n, Ea))
            n = 0.0
            linearised = linearise_at
        rows.append(
            MechanismRow(
                key=c.reaction_key,
                equation=c.equation,
                order=c.order,
                # unit conversion is a pure factor (k and A scale alike; K^-n is unchanged),
                # rounded to 15 digits so that a value given in these units reads back as given
                A=round_significant(A * factors[c.order]),
                n=float(n),
                Ea=round_significant(Ea * energy_factor),
                k_units=units.k_unit(c.order),
                Ea_units=units.e_units,
                T_min_K=c.t_min,
                T_max_K=c.t_max,
                origin=c.origin,
                steric_factor=c.steric_factor,
                uncertainty_factor=c.uncertainty_factor,
                references=c.reference or "",
                expression_id=c.expression_id,
                chosen_by=c.rule,
                linearised_at_K=linearised,
            )
        )
    return MechanismTable(rows, units, form, gaps, left_out=gaps if leave_out_gaps else [])


# --------------------------------------------------------------------------- rate


@dataclass
class RateRow:
    T: float
    k: float
    uncertainty_factor: float | None
    in_range: bool | None


@dataclass
class RateReport:
    key: str
    equation: str
    order: int
    origin: str
    expression_id: int
    chosen_by: str
    k_units: str
    t_min: float | None
    t_max: float | None
    rows: list[RateRow]


def rate(
    session: Session,
    key: str,
    temperatures: list[float],
    *,
    k_units: str | None = None,
    preset: str = "combustion",
) -> RateReport:
    """k(T) of one reaction from the expression that would be exported."""
    import numpy as np

    from ratebank.science.unit_presets import rate_unit_for
    from ratebank.science.units import parse_rate_unit, rate_from_si

    if not temperatures:
        raise RatebankError("give at least one temperature with -T")
    bad = [t for t in temperatures if not (math.isfinite(t) and t > 0)]
    if bad:
        raise RatebankError(f"temperature {bad[0]!r} must be above 0 K")
    reaction = find_reaction(session, key)
    chosen, _ = chosen_expressions(session, [reaction])
    if not chosen:
        raise RatebankError(
            f"reaction {reaction.key!r} has no usable expression yet (fit, estimate or import one)"
        )
    c = chosen[0]
    order = reaction.reaction_order
    unit = k_units or rate_unit_for(preset, order)
    parse_rate_unit(unit, order=order)
    T = np.asarray(temperatures, dtype=float)
    k_si = np.atleast_1d(evaluate(c.expression, T))
    f = np.atleast_1d(uncertainty_factor(c.expression, T))
    k_out = np.atleast_1d(rate_from_si(k_si, unit, order))
    e = c.expression
    rows = []
    for t, k, factor in zip(T.tolist(), k_out.tolist(), f.tolist(), strict=True):
        in_range = None
        if e.t_min is not None and e.t_max is not None:
            in_range = e.t_min * (1 - 1e-12) <= t <= e.t_max * (1 + 1e-12)
        rows.append(RateRow(t, k, None if math.isnan(factor) else factor, in_range))
    return RateReport(
        reaction.key,
        reaction.equation,
        order,
        e.origin,
        e.id,
        c.rule,
        unit,
        e.t_min,
        e.t_max,
        rows,
    )
