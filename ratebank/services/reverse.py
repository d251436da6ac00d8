"""Reverse rates by detailed balance: ``rate --reverse``, and the reverse in the export.

The reverse rate constant of a reaction is k_r(T) = k_f(T) / Kc(T), with k_f
from the expression that would be exported and Kc = Kp (p°/(RT))^Δn from the
species' thermochemistry (:mod:`ratebank.science.thermo`; p° = 1 bar, third
bodies not counted in Δn). The reverse reaction's order is the forward order
plus Δn.

In the export, a reversible reaction (``detailed-balance``) is either left to
the modeller, who computes k_r = k_f / Kc (the row says so in its ``reverse``
column and the descriptor states the formula, the standard state and the
species' polynomials), or, on request, written as a row of its own: a
modified-Arrhenius fit of k_r over the forward row's range, whose largest
relative deviation is recorded.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, NotFoundError, ScienceInputError
from ratebank.science.thermo import (
    STANDARD_PRESSURE,
    fit_reverse_modified_arrhenius,
    reaction_thermochemistry,
    reverse_rate_constant,
)
from ratebank.science.unit_presets import kc_unit, rate_unit_for
from ratebank.science.units import energy_from_si, energy_to_si, rate_from_si, rate_to_si
from ratebank.services.rates import checked_temperatures
from ratebank.services.selection import chosen_expressions, evaluate
from ratebank.services.thermo import (
    ReactionThermoInputs,
    check_in_range,
    inputs_of,
    lacking_thermo_message,
    reaction_thermo_inputs,
)
from ratebank.store import queries
from ratebank.store.queries import ReactionRow
from ratebank.store.thermo import reverse_rules, thermo_of

if TYPE_CHECKING:  # the mechanism table calls this module
    from ratebank.services.mechanism import ExportUnits, MechanismRow

#: The ``reverse`` column of the mechanism table.
REVERSE_NONE = "none"
REVERSE_DETAILED_BALANCE = "detailed-balance"
REVERSE_FITTED = "fitted-row"
#: The origin of a reverse row written by the export.
REVERSE_ORIGIN = "detailed-balance-fit"
#: How the key of a reverse row is made from its forward row's.
REVERSE_KEY_SUFFIX = ":reverse"
REVERSE_RULE = "k_r(T) = k_f(T) / Kc(T)"
KC_DEFINITION = (
    "Kc = Kp (p0 / (R T))**dn, Kp = exp(-sum(nu_i G0_i(T)) / (R T)), p0 = 1e5 Pa (1 bar), "
    "dn = sum(nu_i) over the species (a third body M is not a species and is not counted)"
)
STANDARD_STATE = "ideal gas at p0 = 1 bar = 1e5 Pa (the NIST-JANAF tables' standard state)"


def reverse_equation(equation: str) -> str:
    """The equation read backwards: ``A + B -> C + D`` becomes ``C + D -> A + B``."""
    left, right = equation.split(" -> ")
    return f"{right} -> {left}"


def reverse_order(reaction: ReactionRow, inputs: ReactionThermoInputs) -> int:
    """The order of the reverse reaction: the forward order plus Δn."""
    order = reaction.order + inputs.delta_n
    if not 1 <= order <= 3:
        raise BadInputError(
            f"the reverse of {reaction.key!r} has order {order}; ratebank gives rate constants "
            "of orders 1 to 3",
            argument="reverse",
        )
    return order


# --------------------------------------------------------------------------- rate --reverse


@dataclass(frozen=True)
class ReverseRateRow:
    """k_f, Kc and k_r at T: SI (``*_si``) and in the report's units."""

    T: float
    k_forward_si: float
    Kc_si: float
    k_reverse_si: float
    Kc: float
    k_reverse: float
    in_range: bool | None


@dataclass(frozen=True)
class ReverseRateReport:
    key: str
    equation: str
    reverse_equation: str
    #: the reaction's declared reverse rule ("none" or "detailed-balance")
    declared: str
    forward_order: int
    order: int
    delta_n: int
    origin: str
    expression_id: int
    chosen_by: str
    k_units: str
    Kc_units: str
    T_min: float | None
    T_max: float | None
    rows: list[ReverseRateRow]


def reverse_rate(
    session: Session,
    key: str,
    temperatures: Sequence[float],
    *,
    k_units: str | None = None,
    preset: str = "combustion",
) -> ReverseRateReport:
    """k_r = k_f / Kc of one reaction at ``temperatures`` [K], k_f from the expression that
    would be exported; ``k_units`` is the unit of k_r (default: the preset's for its order)."""
    T = checked_temperatures(temperatures)
    reaction = queries.find_reaction(session, key)
    chosen, _ = chosen_expressions(session, [reaction])
    if not chosen:
        raise NotFoundError(
            f"reaction {reaction.key!r} has no usable expression yet (fit, estimate or import one)"
        )
    inputs = inputs_of(session, reaction)
    check_in_range(inputs, T.tolist())
    order = reverse_order(reaction, inputs)
    unit = k_units or rate_unit_for(preset, order)
    kc_text, kc_factor = kc_unit(preset, inputs.delta_n)
    expression = chosen[0].expression
    k_forward = np.atleast_1d(evaluate(expression, T))
    Kc = np.atleast_1d(reaction_thermochemistry(inputs.nu, inputs.polynomials, T).Kc)
    k_reverse = np.atleast_1d(reverse_rate_constant(k_forward, Kc))
    shown = np.atleast_1d(rate_from_si(k_reverse, unit, order))
    rows = []
    for t, kf, kc, kr, k_shown in zip(
        T.tolist(),
        k_forward.tolist(),
        Kc.tolist(),
        k_reverse.tolist(),
        shown.tolist(),
        strict=True,
    ):
        in_range = None
        if expression.T_min is not None and expression.T_max is not None:
            in_range = expression.T_min * (1 - 1e-12) <= t <= expression.T_max * (1 + 1e-12)
        rows.append(ReverseRateRow(t, kf, kc, kr, kc / kc_factor, k_shown, in_range))
    declared = reverse_rules(session, [reaction.id]).get(reaction.id, REVERSE_NONE)
    return ReverseRateReport(
        reaction.key,
        reaction.equation,
        reverse_equation(reaction.equation),
        declared,
        reaction.order,
        order,
        inputs.delta_n,
        expression.origin,
        expression.id,
        chosen[0].rule,
        unit,
        kc_text,
        expression.T_min,
        expression.T_max,
        rows,
    )


# --------------------------------------------------------------------------- export


@dataclass
class ReverseInfo:
    """What the export's descriptor says of the reversible reactions of a mechanism table."""

    #: keys of the reactions declared reversible (detailed balance)
    reversible: list[str] = field(default_factory=list)
    #: keys of those whose reverse is written as a row of its own
    fitted: list[str] = field(default_factory=list)
    #: the polynomials of every species of a reversible reaction, by species name
    thermochemistry: dict[str, dict[str, Any]] = field(default_factory=dict)


def _thermo_record(row) -> dict[str, Any]:  # type: ignore[no-untyped-def]
    return {
        "T_low_K": row.T_low,
        "T_mid_K": row.T_mid,
        "T_high_K": row.T_high,
        "low": list(row.low),
        "high": list(row.high),
        "method": row.method,
        "source": row.source,
    }


def with_reverse(
    session: Session, rows: Sequence[MechanismRow], units: ExportUnits, *, as_fit: bool = False
) -> tuple[Sequence[MechanismRow], ReverseInfo]:
    """The rows with their ``reverse`` column filled; with ``as_fit``, each reversible
    reaction's row is followed by the modified-Arrhenius fit of its reverse over the row's
    range.

    A reversible reaction whose species lack thermochemistry, or (with
    ``as_fit``) whose row states no range or a range beyond its species'
    polynomials, stops the export with the reasons.
    """
    declared = reverse_rules(session)
    if not declared:
        return rows, ReverseInfo()
    reactions = {r.key: r for r in queries.reactions(session, ids=list(declared))}
    reversible = [reactions[row.key] for row in rows if row.key in reactions]
    inputs, missing = reaction_thermo_inputs(session, reversible)
    refused = [lacking_thermo_message(r, missing[r.id]) for r in reversible if r.id in missing]
    # a new sequence of the same kind (the table's packed rows are streamed, never listed)
    found: Any = type(rows)()
    fitted: list[str] = []
    for row in rows:
        reaction = reactions.get(row.key)
        if reaction is None:
            found.append(row)
        elif not as_fit:
            found.append(row._replace(reverse=REVERSE_DETAILED_BALANCE))
        else:
            reverse = _reverse_row(row, reaction, inputs.get(reaction.id), units)
            if isinstance(reverse, str):
                refused.append(reverse)
                continue
            found.extend([row._replace(reverse=REVERSE_FITTED), reverse])
            fitted.append(row.key)
    if refused:
        raise BadInputError(
            f"{len(refused)} reversible reaction(s) cannot be exported with their reverse: "
            + "; ".join(refused[:20]),
            argument="reverse_as_fit" if as_fit else None,
        )
    species = {name for i in inputs.values() for name in i.species}
    thermo = {
        row.species: _thermo_record(row)
        for row in thermo_of(session).values()
        if row.species in species
    }
    return found, ReverseInfo([r.key for r in reversible], fitted, thermo)


def _reverse_row(
    row: MechanismRow,
    reaction: ReactionRow,
    inputs: ReactionThermoInputs | None,
    units: ExportUnits,
) -> MechanismRow | str:
    """The forward row's reverse as a modified-Arrhenius row, or why it cannot be written."""
    if inputs is None:
        return f"{row.key} (no thermochemistry)"
    if row.form not in ("arrhenius", "third-body"):
        return f"{row.key} (a {row.form} expression; only a one-term row's reverse is fitted)"
    if row.T_min_K is None or row.T_max_K is None:
        return f"{row.key} (its row states no valid range to fit the reverse over)"
    try:
        order = reverse_order(reaction, inputs)
        check_in_range(inputs, [row.T_min_K, row.T_max_K])
    except BadInputError as exc:
        return f"{row.key} ({exc})"
    A = float(rate_to_si(row.A, row.k_units, row.order))
    Ea = float(energy_to_si(row.Ea, row.Ea_units))
    try:
        fit = fit_reverse_modified_arrhenius(
            A, row.n, Ea, inputs.nu, inputs.polynomials, row.T_min_K, row.T_max_K
        )
    except (ScienceInputError, ValueError) as exc:
        return f"{row.key} (the reverse cannot be fitted: {exc})"
    widen = 1.0 + fit.max_relative_deviation
    unit = units.k_unit(order)
    return row._replace(
        key=row.key + REVERSE_KEY_SUFFIX,
        equation=reverse_equation(row.equation),
        order=order,
        A=float(rate_from_si(fit.A, unit, order)),
        n=float(fit.n),
        Ea=float(energy_from_si(fit.Ea, row.Ea_units)),
        k_units=unit,
        origin=REVERSE_ORIGIN,
        steric_factor=None,
        uncertainty_factor=row.uncertainty_factor * widen if row.uncertainty_factor else None,
        references=f"detailed balance of {row.key}: {REVERSE_RULE}",
        uncertainty_f298=row.uncertainty_f298 * widen if row.uncertainty_f298 else None,
        linearised_at_K=None,
        linearisation_max_ln_deviation=None,
        reverse=REVERSE_NONE,
        reverse_max_relative_deviation=float(fit.max_relative_deviation),
        chosen_by=f"detailed balance of {row.key}",
    )


def descriptor_block(found: ReverseInfo) -> dict[str, Any]:
    """What the export's descriptor says of reverse reactions."""
    return {
        "rule": REVERSE_RULE,
        "Kc": KC_DEFINITION,
        "standard_state": STANDARD_STATE,
        "standard_pressure_Pa": STANDARD_PRESSURE,
        "reversible": found.reversible,
        "written_as_rows": found.fitted,
        "reverse_row_key": f"<key>{REVERSE_KEY_SUFFIX}",
        "polynomials": "Cp0/R = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4; H0/(R T) = a1 + a2 T/2 + "
        "a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T; S0/R = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + "
        "a5 T^4/4 + a7; T in K; 'low' holds for T_low_K..T_mid_K, 'high' for T_mid_K..T_high_K "
        "(McBride, Gordon & Reno, NASA TM-4513, 1993)",
        "thermochemistry": found.thermochemistry,
    }
