"""The checks that thermochemistry makes possible (called by :mod:`ratebank.services.checks`).

- ``ea-below-reaction-enthalpy``: an endothermic reaction whose activation
  energy at the expression's reference temperature, Ea + n R T_ref, is below
  ΔrH°(T_ref); the reverse reaction would need a negative barrier.
- ``reverse-above-collision-limit``: a reversible reaction whose reverse
  k_f / Kc, a bimolecular rate, exceeds the collision limit of its products.
- ``directions-disagree``: a reaction stored in both directions whose two
  exported expressions give k_f / k_r further from Kc than their combined
  uncertainty, sqrt(ln² f_f + ln² f_r), allows.
- ``reverse-without-thermochemistry``: a reversible reaction whose species
  lack thermochemistry, so its reverse cannot be had.
- ``thermo-midpoint-jump``: a species whose two polynomial ranges disagree at
  their common T_mid (a step in Cp°, H° or S°).

Each function returns :class:`Finding` rows, which the check turns into flags.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import NamedTuple

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import EquationError, ScienceInputError
from ratebank.science.arrhenius import local_activation_energy, modified_arrhenius
from ratebank.science.capture import london_capture_rate_constant
from ratebank.science.collision import collision_rate
from ratebank.science.equation import parse_equation
from ratebank.science.thermo import NasaPolynomials, midpoint_jumps, reaction_thermochemistry
from ratebank.services.partners import PairColumns, species_pair
from ratebank.services.reverse import reverse_equation
from ratebank.services.selection import Chosen, chosen_expressions, uncertainty_factor
from ratebank.services.thermo import ReactionThermoInputs, polynomials_of
from ratebank.store import queries
from ratebank.store.queries import ExpressionRow, ReactionRow
from ratebank.store.thermo import ThermoRow, equation_keys

THERMO_CODES = (
    "ea-below-reaction-enthalpy",
    "reverse-above-collision-limit",
    "directions-disagree",
    "reverse-without-thermochemistry",
    "thermo-midpoint-jump",
)
#: Largest jump at T_mid a well-made pair of polynomials shows (common practice: published
#: coefficients rounded to 8-9 digits jump by far less): Cp° [J mol-1 K-1], H° [J mol-1],
#: S° [J mol-1 K-1].
MIDPOINT_TOLERANCE = {"Cp": 0.1, "H": 50.0, "S": 0.05}
#: Range checked when an expression states none [K] (as the forward collision-limit check).
DEFAULT_RANGE = (200.0, 3000.0)
_GRID = 40


class Finding(NamedTuple):
    """One thing a thermochemistry check found (the fields of a check flag)."""

    key: str
    code: str
    message: str
    expression_id: int | None = None
    value: float | None = None
    temperature: float | None = None


def _T_ref(expression: ExpressionRow, inputs: ReactionThermoInputs) -> float:
    """The expression's reference temperature, kept inside the thermochemistry's range."""
    given = expression.provenance.get("T_ref")
    if given:
        T = float(given)
    elif expression.T_min and expression.T_max:
        T = math.sqrt(expression.T_min * expression.T_max)
    else:
        T = 298.15
    return min(max(T, inputs.T_low), inputs.T_high)


def endothermic_findings(
    inputs: dict[int, ReactionThermoInputs], expressions: dict[int, list[ExpressionRow]]
) -> list[Finding]:
    """Expressions of endothermic reactions whose Ea at T_ref is below ΔrH°(T_ref)."""
    found = []
    for reaction_id, own in expressions.items():
        thermo = inputs.get(reaction_id)
        if thermo is None or not own:
            continue
        T = np.array([_T_ref(e, thermo) for e in own])
        delta_H = np.atleast_1d(reaction_thermochemistry(thermo.nu, thermo.polynomials, T).delta_H)
        Ea = local_activation_energy(T, np.array([e.n for e in own]), np.array([e.Ea for e in own]))
        for e, t, dH, ea in zip(
            own, T.tolist(), delta_H.tolist(), np.atleast_1d(Ea).tolist(), strict=True
        ):
            if dH > 0 and ea < dH - 1e-9 * dH:
                found.append(
                    Finding(
                        thermo.reaction.key,
                        "ea-below-reaction-enthalpy",
                        f"expression {e.id} ({e.origin}): Ea at {t:.4g} K is "
                        f"{ea / 1e3:.4g} kJ/mol, below ΔrH° = {dH / 1e3:.4g} kJ/mol of this "
                        "endothermic reaction (its reverse would need a negative barrier)",
                        e.id,
                        dH - ea,
                        t,
                    )
                )
    return found


def missing_thermo_findings(
    reversible: Sequence[ReactionRow], missing: dict[int, list[str]]
) -> list[Finding]:
    return [
        Finding(
            r.key,
            "reverse-without-thermochemistry",
            f"declared reversible (detailed balance), but species {', '.join(missing[r.id])} "
            "lack thermochemistry, so its reverse rate cannot be had",
        )
        for r in reversible
        if r.id in missing
    ]


def midpoint_findings(thermo: Sequence[ThermoRow]) -> list[Finding]:
    """Species whose polynomials jump at T_mid by more than :data:`MIDPOINT_TOLERANCE`."""
    if not thermo:
        return []
    jumps = midpoint_jumps(NasaPolynomials.stack([polynomials_of(row) for row in thermo]))
    found = []
    for i, row in enumerate(thermo):
        steps = []
        if abs(jumps.Cp[i]) > MIDPOINT_TOLERANCE["Cp"]:
            steps.append(f"Cp° by {jumps.Cp[i]:.3g} J/(mol K)")
        if abs(jumps.H[i]) > MIDPOINT_TOLERANCE["H"]:
            steps.append(f"H° by {jumps.H[i]:.3g} J/mol")
        if abs(jumps.S[i]) > MIDPOINT_TOLERANCE["S"]:
            steps.append(f"S° by {jumps.S[i]:.3g} J/(mol K)")
        if steps:
            found.append(
                Finding(
                    f"species {row.species}",
                    "thermo-midpoint-jump",
                    f"the polynomials of {row.species} ({row.method}) jump at T_mid = "
                    f"{row.T_mid:g} K: {', '.join(steps)}",
                    None,
                    float(jumps.H[i]),
                    row.T_mid,
                )
            )
    return found


# --------------------------------------------------------------------------- reverse limit


def _grid(low: float | None, high: float | None, thermo: ReactionThermoInputs) -> np.ndarray:
    low = max(low or DEFAULT_RANGE[0], thermo.T_low)
    high = min(high or DEFAULT_RANGE[1], thermo.T_high)
    if not low < high:
        return np.array([])
    return np.geomspace(low, high, _GRID)


def _capture(T: np.ndarray, columns: PairColumns) -> np.ndarray:
    if not bool(columns.has_capture_data[0]):
        return np.zeros_like(T)
    return london_capture_rate_constant(
        T,
        columns.polarizability_a[0],
        columns.polarizability_b[0],
        columns.ionization_energy_a[0],
        columns.ionization_energy_b[0],
        columns.molar_mass_a[0],
        columns.molar_mass_b[0],
        identical=bool(columns.identical[0]),
    )


def reverse_limit_findings(
    session: Session, chosen: Sequence[Chosen], inputs: dict[int, ReactionThermoInputs], model: str
) -> tuple[list[Finding], list[tuple[str, int, str]]]:
    """Reversible reactions whose bimolecular reverse exceeds its products' collision limit;
    and (key, expression id, reason) of those that could not be checked."""
    found: list[Finding] = []
    unchecked: list[tuple[str, int, str]] = []
    products = {
        c.reaction.id: [(n, i) for n, i in zip(t.species, t.nu.tolist(), strict=True) if i > 0]
        for c in chosen
        if (t := inputs.get(c.reaction.id)) is not None
    }
    two = {rid: p for rid, p in products.items() if sum(i for _, i in p) == 2}
    species = queries.species_by_name(session, {n for p in two.values() for n, _ in p})
    for c in chosen:
        if c.reaction.id not in two or c.reaction.third_body:
            continue
        names = [n for n, i in two[c.reaction.id] for _ in range(int(i))]
        e, thermo = c.expression, inputs[c.reaction.id]
        pair = species_pair(
            c.reaction.id, c.reaction.key, species[names[0]], species[names[1]], model=model
        )
        T = _grid(e.T_min, e.T_max, thermo)
        if isinstance(pair, str):
            unchecked.append((c.reaction.key, e.id, f"reverse {model} collision limit: {pair}"))
            continue
        if T.size == 0:
            continue
        columns = PairColumns.of([pair])
        arguments = {
            k: v[0] if isinstance(v, np.ndarray) else v
            for k, v in columns.rate_arguments(model).items()
        }
        z = np.maximum(collision_rate(T, **arguments), _capture(T, columns))
        ln_Kc = reaction_thermochemistry(thermo.nu, thermo.polynomials, T).ln_Kc
        ratio = np.exp(np.log(modified_arrhenius(T, e.A, e.n, e.Ea)) - ln_Kc - np.log(z))
        worst = int(np.argmax(ratio))
        if ratio[worst] > 1.0 + 1e-9:
            found.append(
                Finding(
                    c.reaction.key,
                    "reverse-above-collision-limit",
                    f"the reverse ({reverse_equation(c.reaction.equation)}) of expression {e.id} "
                    f"by detailed balance is {ratio[worst]:.3g} times the collision limit "
                    f"({model}, or dispersion capture where larger) at {T[worst]:.4g} K",
                    e.id,
                    float(ratio[worst]),
                    float(T[worst]),
                )
            )
    return found, unchecked


# --------------------------------------------------------------------------- both directions


def _reverse_canonical(reaction: ReactionRow) -> str | None:
    try:
        return parse_equation(reverse_equation(reaction.equation)).canonical
    except EquationError:
        return None


def direction_findings(
    session: Session,
    chosen: Sequence[Chosen],
    inputs: dict[int, ReactionThermoInputs],
    reversible: set[int],
    *,
    whole_store: bool = False,
) -> list[Finding]:
    """Pairs of reactions stored in both directions whose expressions disagree with Kc.

    A pair is reported once, under the reaction stored first when both are checked. With
    ``whole_store``, ``chosen`` is one batch of a check of every reaction: a stored reverse
    with a chosen expression is checked too (in use, with the same species and so the same
    thermochemistry), in whichever batch it falls."""
    chosen = [c for c in chosen if c.reaction.id in inputs]
    canonical = {c.reaction.id: _reverse_canonical(c.reaction) for c in chosen}
    stored = equation_keys(session, sorted({e for e in canonical.values() if e}))
    partners = queries.reactions(session, ids=sorted({i for i, _ in stored.values()}))
    others, _ = chosen_expressions(session, partners)
    by_id = {o.reaction.id: o for o in others}
    checked = {c.reaction.id for c in chosen} | (set(by_id) if whole_store else set())
    found = []
    for c in chosen:
        thermo = inputs.get(c.reaction.id)
        match = stored.get(canonical[c.reaction.id] or "")
        other = by_id.get(match[0]) if match else None
        if thermo is None or other is None or other.reaction.id == c.reaction.id:
            continue
        if other.reaction.id in checked and other.reaction.id < c.reaction.id:
            continue  # the pair is reported once, under the reaction stored first
        finding = _disagreement(c, other, thermo, reversible)
        if finding is not None:
            found.append(finding)
    return found


def _disagreement(
    forward: Chosen, backward: Chosen, thermo: ReactionThermoInputs, reversible: set[int]
) -> Finding | None:
    f, b = forward.expression, backward.expression
    lows = [x for x in (f.T_min, b.T_min) if x is not None]
    highs = [x for x in (f.T_max, b.T_max) if x is not None]
    T = _grid(max(lows) if lows else None, min(highs) if highs else None, thermo)
    if T.size == 0:
        return None
    try:
        ln_Kc = reaction_thermochemistry(thermo.nu, thermo.polynomials, T).ln_Kc
    except ScienceInputError:
        return None
    ln_f = [np.nan_to_num(np.log(uncertainty_factor(e, T))) for e in (f, b)]
    allowed = np.sqrt(ln_f[0] ** 2 + ln_f[1] ** 2) + 1e-9
    miss = np.abs(
        np.log(modified_arrhenius(T, f.A, f.n, f.Ea))
        - np.log(modified_arrhenius(T, b.A, b.n, b.Ea))
        - ln_Kc
    )
    excess = miss - allowed
    worst = int(np.argmax(excess))
    if excess[worst] <= 0:
        return None
    twice = [r.reaction.key for r in (forward, backward) if r.reaction.id in reversible]
    note = (
        f"; {' and '.join(twice)} {'is' if len(twice) == 1 else 'are'} also declared reversible, "
        "so the reverse would be counted twice"
        if twice
        else ""
    )
    return Finding(
        forward.reaction.key,
        "directions-disagree",
        f"expressions {f.id} and {b.id} (of {backward.reaction.key}, the reverse) give k_f/k_r "
        f"a factor {math.exp(miss[worst]):.3g} from Kc at {T[worst]:.4g} K, beyond their "
        f"combined uncertainty (a factor {math.exp(allowed[worst]):.3g}){note}",
        f.id,
        float(math.exp(miss[worst])),
        float(T[worst]),
    )
