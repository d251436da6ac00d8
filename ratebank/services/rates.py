"""``rate``: k of one reaction at given temperatures (and a pressure) from the expression
that would be exported.

A reaction whose expression needs no pressure (``arrhenius``, ``sum``) gives
its k; a ``third-body`` expression gives its coefficient k0 without a
pressure and the effective k = k0 [M]_eff with one. ``falloff`` and
``activated`` need a pressure, and give k with k0, k_inf, the reduced
pressure Pr and the broadening F. [M]_eff = [M] sum_i eps_i x_i, [M] = P/RT,
over the bath gas (one collider) or a mixture, each collider counting with the
efficiency stated for the reaction (1 when none is).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, NotFoundError
from ratebank.science.pressure import (
    Mixture,
    bath_gas_concentration,
    collision_efficiencies,
    effective_third_body_concentration,
    parse_mixture,
    pressure_to_si,
)
from ratebank.science.unit_presets import rate_unit_for
from ratebank.science.units import parse_rate_unit, rate_from_si
from ratebank.services.selection import chosen_expressions, rate_at, uncertainty_factor
from ratebank.store.efficiencies import efficiencies_by_reaction
from ratebank.store.expressions import form_of
from ratebank.store.queries import ReactionRow, find_reaction

#: Forms that have no k without a pressure.
PRESSURE_FORMS = ("falloff", "activated")


@dataclass
class RateRow:
    T: float
    k: float
    uncertainty_factor: float | None
    in_range: bool | None
    #: the parts of a pressure-dependent form, each in its own unit (None where none)
    k0: float | None = None
    k_inf: float | None = None
    Pr: float | None = None
    F: float | None = None


@dataclass
class RateConditions:
    """The pressure and colliders a rate was asked at."""

    pressure: float
    pressure_units: str
    #: (collider, mole fraction, efficiency)
    colliders: list[tuple[str, float, float]] = field(default_factory=list)


@dataclass
class RateReport:
    key: str
    equation: str
    order: int
    origin: str
    expression_id: int
    chosen_by: str
    k_units: str
    T_min: float | None
    T_max: float | None
    rows: list[RateRow]
    form: str = "arrhenius"
    conditions: RateConditions | None = None
    k0_units: str | None = None
    k_inf_units: str | None = None


def checked_temperatures(temperatures: Sequence[float]) -> np.ndarray:
    """The temperatures [K] asked for, as an array; at least one, each finite and above 0."""
    if not temperatures:
        raise BadInputError("give at least one temperature", argument="temperatures")
    bad = [t for t in temperatures if not (math.isfinite(t) and t > 0)]
    if bad:
        raise BadInputError(f"temperature {bad[0]!r} must be above 0 K", argument="temperatures")
    return np.asarray(temperatures, dtype=float)


def _colliders(bath: str | None, mixture: str | None) -> Mixture | None:
    if bath is not None and mixture is not None:
        raise BadInputError("give a bath gas or a mixture, not both", argument="mixture")
    if mixture is not None:
        return parse_mixture(mixture)
    if bath is not None:
        if not bath.strip():
            raise BadInputError("the bath gas is empty", argument="bath")
        return Mixture((bath.strip(),), np.ones(1))
    return None


def _conditions(
    session: Session,
    reaction: ReactionRow,
    pressure: float,
    pressure_units: str,
    colliders: Mixture | None,
) -> tuple[RateConditions, float, float]:
    """(the conditions, the pressure [Pa], sum eps_i x_i)."""
    if not (math.isfinite(pressure) and pressure > 0):
        raise BadInputError(f"pressure {pressure!r} must be above 0", argument="pressure")
    p_si = float(pressure_to_si(pressure, pressure_units))
    stated = efficiencies_by_reaction(session, [reaction.id]).get(reaction.id, {})
    if colliders is None:
        conditions = RateConditions(pressure, pressure_units, [("(any, efficiency 1)", 1.0, 1.0)])
        return conditions, p_si, 1.0
    eps = collision_efficiencies(colliders.names, stated)
    weight = float(effective_third_body_concentration(1.0, colliders.fractions, eps))
    listed = [
        (name, float(x), float(e))
        for name, x, e in zip(colliders.names, colliders.fractions, eps, strict=True)
    ]
    return RateConditions(pressure, pressure_units, listed), p_si, weight


def rate(
    session: Session,
    key: str,
    temperatures: list[float],
    *,
    k_units: str | None = None,
    preset: str = "combustion",
    pressure: float | None = None,
    pressure_units: str = "bar",
    bath: str | None = None,
    mixture: str | None = None,
) -> RateReport:
    """k(T) of one reaction from the expression that would be exported; at ``pressure`` (in
    ``pressure_units``) of the ``bath`` gas or ``mixture`` ("N2:0.78,O2:0.21") when given."""
    T = checked_temperatures(temperatures)
    colliders = _colliders(bath, mixture)
    reaction = find_reaction(session, key)
    chosen, _ = chosen_expressions(session, [reaction])
    if not chosen:
        raise NotFoundError(
            f"reaction {reaction.key!r} has no usable expression yet (fit, estimate or import one)"
        )
    c = chosen[0]
    e = c.expression
    form = form_of(e.form, reaction.third_body)
    if pressure is None:
        if form in PRESSURE_FORMS:
            raise BadInputError(
                f"reaction {reaction.key!r} has a {form} expression, whose k depends on the "
                "pressure; give a pressure",
                argument="pressure",
            )
        if colliders is not None:
            raise BadInputError("a bath gas or mixture needs a pressure", argument="pressure")
        conditions, M = None, None
    else:
        conditions, p_si, weight = _conditions(
            session, reaction, pressure, pressure_units, colliders
        )
        M = bath_gas_concentration(p_si, T) * weight
        if not (reaction.third_body or form in PRESSURE_FORMS):
            M = None  # k of a reaction without M and without fall-off is the same at any P
    # with [M] the effective k of a reaction written with M has one concentration fewer
    order = reaction.order - 1 if reaction.third_body and M is not None else reaction.order
    unit = k_units or rate_unit_for(preset, order)
    parse_rate_unit(unit, order=order)
    parts = rate_at(e, reaction.third_body, T, M)
    f = np.atleast_1d(uncertainty_factor(e, T))
    k_out = np.atleast_1d(rate_from_si(np.atleast_1d(parts.k), unit, order))
    rows = _rows(T, k_out, f, e, parts, reaction.order, preset, form)
    report = RateReport(
        reaction.key, reaction.equation, order, e.origin, e.id, c.rule, unit,
        e.T_min, e.T_max, rows, form=form, conditions=conditions,
    )  # fmt: skip
    if form in PRESSURE_FORMS:
        report.k0_units = rate_unit_for(preset, reaction.order)
        report.k_inf_units = rate_unit_for(preset, reaction.order - 1)
    return report


def _rows(T, k_out, f, e, parts, order: int, preset: str, form: str) -> list[RateRow]:  # type: ignore[no-untyped-def]
    limits = form in PRESSURE_FORMS
    if limits:
        k0 = np.atleast_1d(
            rate_from_si(np.atleast_1d(parts.k0), rate_unit_for(preset, order), order)
        )
        k_inf = np.atleast_1d(
            rate_from_si(np.atleast_1d(parts.k_inf), rate_unit_for(preset, order - 1), order - 1)
        )
        Pr, F = np.atleast_1d(parts.Pr), np.atleast_1d(parts.F)
    rows = []
    for i, (t, k, factor) in enumerate(zip(T.tolist(), k_out.tolist(), f.tolist(), strict=True)):
        in_range = None
        if e.T_min is not None and e.T_max is not None:
            in_range = e.T_min * (1 - 1e-12) <= t <= e.T_max * (1 + 1e-12)
        row = RateRow(t, k, None if math.isnan(factor) else factor, in_range)
        if limits:
            row.k0, row.k_inf = float(k0[i]), float(k_inf[i])
            row.Pr, row.F = float(Pr[i]), float(F[i])
        rows.append(row)
    return rows
