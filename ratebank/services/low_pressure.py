"""Estimate k0 of a unimolecular decomposition from Hinshelwood's strong-collision formula.

For a reaction written with M and one reactant besides it (``C2H5 + M -> C2H4 + H + M``)
k0(T) = beta_c Z_LJ(T) (E0/RT)^(s-1)/(s-1)! exp(-E0/RT)
(:func:`ratebank.science.low_pressure.hinshelwood_estimate`): Z_LJ is the
Lennard-Jones collision rate of the reactant with the bath gas, s the effective
number of oscillators and beta_c the collision efficiency, both given by the
caller, and E0 the threshold energy, given or taken from the reaction's stored
activation energy. The result is stored as the reaction's third-body k0
(A, n, Ea fitted over the range) with every input in its provenance.

It is order-of-magnitude guidance: the classical oscillators, the strong
collisions and the chosen s leave it uncertain by about a factor 10, the
uncertainty factor stored unless the caller gives another (common practice:
such estimates are quoted to "an order of magnitude").
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, RefusedEstimateError, ScienceInputError
from ratebank.science.low_pressure import LowPressureEstimate, hinshelwood_estimate
from ratebank.science.units import energy_to_si
from ratebank.services.partners import CollisionPair, species_pair, store_estimated_partners
from ratebank.store import queries
from ratebank.store.expressions import ExpressionRecord, remove_expressions, write_expressions
from ratebank.store.queries import ExpressionRow, ReactionRow

#: f(298 K) of a Hinshelwood estimate unless the caller gives one: an order of magnitude.
LOW_PRESSURE_UNCERTAINTY_FACTOR = 10.0
METHOD = "Hinshelwood strong-collision low-pressure limit"


@dataclass(frozen=True)
class LowPressureOptions:
    """What the caller gives: s, beta_c, the bath gas, and optionally E0 and a range."""

    oscillators: float
    collision_efficiency: float
    bath: str
    threshold_energy: float | None = None
    T_range: tuple[float, float] | None = None
    uncertainty_factor: float | None = None


@dataclass
class LowPressureRow:
    key: str
    equation: str
    bath: str
    A: float
    n: float
    Ea: float
    T_min: float
    T_max: float
    threshold_energy: float
    threshold_from: str
    oscillators: float
    collision_efficiency: float
    uncertainty_factor: float
    k0_at_middle: float
    T_middle: float
    max_fit_deviation: float
    estimated_diameters: list[str]
    expression_id: int | None = None
    replaced: list[int] = field(default_factory=list)


@dataclass
class LowPressureReport:
    rows: list[LowPressureRow]
    written: bool = True


def _check_options(options: LowPressureOptions) -> None:
    checks = (
        ("oscillators", options.oscillators, "a number of at least 1", lambda v: v >= 1),
        (
            "collision_efficiency",
            options.collision_efficiency,
            "a number in (0, 1]",
            lambda v: 0 < v <= 1,
        ),
        ("threshold_energy", options.threshold_energy, "an energy above 0", lambda v: v > 0),
        (
            "uncertainty_factor",
            options.uncertainty_factor,
            "a number of at least 1",
            lambda v: v >= 1,
        ),
    )
    for argument, value, what, good in checks:
        if value is not None and not (math.isfinite(value) and good(value)):
            raise BadInputError(f"{argument} {value!r} must be {what}", argument=argument)
    T_range = options.T_range
    if T_range is not None and not (0 < T_range[0] < T_range[1]):
        raise BadInputError(
            "T_range needs two temperatures, the lower first, both above 0 K", argument="T_range"
        )


def _decomposition_reactant(session: Session, reaction: ReactionRow) -> int:
    """The species id of the one reactant of a decomposition written with M."""
    reactants = queries.reactants(session, [reaction.id])[reaction.id]
    if not reaction.third_body or len(reactants) != 1 or reactants[0][1] != 1:
        raise BadInputError(
            f"reaction {reaction.key!r} ({reaction.equation}) is not a unimolecular "
            "decomposition written with M (one reactant besides M); Hinshelwood's k0 "
            "applies to those only",
        )
    return reactants[0][0]


def _threshold(
    reaction: ReactionRow, own: list[ExpressionRow], options: LowPressureOptions
) -> tuple[float, str, ExpressionRow | None]:
    """E0, where it came from, and the expression whose Ea (and range) it is."""
    waiting = [e for e in own if not e.complete]
    source = (waiting or own or [None])[-1]
    if options.threshold_energy is not None:
        return options.threshold_energy, "given by the user", source
    if source is None or not source.Ea > 0:
        raise BadInputError(
            f"reaction {reaction.key!r} has no positive activation energy stored to take the "
            "threshold energy from; give one",
            argument="threshold_energy",
        )
    return float(source.Ea), f"the activation energy of expression {source.id}", source


def _range(
    reaction: ReactionRow, source: ExpressionRow | None, options: LowPressureOptions
) -> tuple[float, float]:
    if options.T_range is not None:
        return options.T_range
    if source is not None and source.T_min and source.T_max and source.T_min < source.T_max:
        return source.T_min, source.T_max
    raise BadInputError(
        f"reaction {reaction.key!r}: no temperature range stated with its activation energy; "
        "give the range the estimate should cover",
        argument="T_range",
    )


def _refuse_replacing(reaction: ReactionRow, own: list[ExpressionRow]) -> None:
    complete = [e for e in own if e.complete and e.origin != "collision-estimate"]
    if complete:
        raise RefusedEstimateError(
            f"{reaction.key}: already has a complete {complete[-1].origin} expression; "
            "estimates never replace measured or literature values"
        )


def _pair(session: Session, reaction: ReactionRow, bath: str) -> CollisionPair:
    reactant = queries.species_by_id(session, [_decomposition_reactant(session, reaction)])
    bath_species = queries.find_species(session, bath)
    (species,) = reactant.values()
    pair = species_pair(reaction.id, reaction.key, species, bath_species, model="lennard-jones")
    if isinstance(pair, str):
        raise RefusedEstimateError(
            f"{reaction.key}: Lennard-Jones collision rate with {bath}: {pair}"
        )
    return pair


def _science(
    pair: CollisionPair, T_range: tuple[float, float], E0: float, options: LowPressureOptions
) -> LowPressureEstimate:
    a, b = pair.a, pair.b
    try:
        return hinshelwood_estimate(
            T_range[0],
            T_range[1],
            E0,
            options.oscillators,
            a.diameter,  # type: ignore[arg-type]
            b.diameter,  # type: ignore[arg-type]
            a.molar_mass,
            b.molar_mass,
            a.well_depth,  # type: ignore[arg-type]
            b.well_depth,  # type: ignore[arg-type]
            collision_efficiency=options.collision_efficiency,
        )
    except ScienceInputError as exc:
        raise RefusedEstimateError(f"{pair.key}: {exc}") from exc


def _row(
    reaction: ReactionRow,
    pair: CollisionPair,
    options: LowPressureOptions,
    threshold: tuple[float, str],
    T_range: tuple[float, float],
    result: LowPressureEstimate,
) -> LowPressureRow:
    return LowPressureRow(
        key=reaction.key,
        equation=reaction.equation,
        bath=options.bath,
        A=result.A,
        n=result.n,
        Ea=result.Ea,
        T_min=T_range[0],
        T_max=T_range[1],
        threshold_energy=threshold[0],
        threshold_from=threshold[1],
        oscillators=options.oscillators,
        collision_efficiency=options.collision_efficiency,
        uncertainty_factor=options.uncertainty_factor or LOW_PRESSURE_UNCERTAINTY_FACTOR,
        k0_at_middle=result.k0_at_middle,
        T_middle=result.T_middle,
        max_fit_deviation=result.max_relative_deviation,
        estimated_diameters=pair.estimated_diameters,
    )


def estimate_low_pressure(
    session: Session,
    keys: Sequence[str] | None,
    *,
    oscillators: float | None,
    collision_efficiency: float | None,
    bath: str | None,
    threshold_energy: float | None = None,
    threshold_units: str | None = None,
    T_range: tuple[float, float] | None = None,
    uncertainty_factor: float | None = None,
) -> LowPressureReport:
    """Estimate and store k0 of each named decomposition; all or nothing.

    Refused (nothing written): a reaction that is not a decomposition written with M, one
    with a complete measured, literature or hand-entered expression, a threshold energy
    or range that is neither stored nor given, partners without Lennard-Jones data. An
    earlier estimate of the same reaction (not recommended) is replaced.
    ``threshold_energy`` is in ``threshold_units`` (default J/mol).
    """
    if not keys:
        raise BadInputError("name the reactions whose k0 to estimate", argument="keys")
    for argument, value in (
        ("oscillators", oscillators),
        ("collision_efficiency", collision_efficiency),
        ("bath", bath),
    ):
        if value is None:
            raise BadInputError(
                f"a low-pressure estimate needs {argument} (the number of effective "
                "oscillators s, the collision efficiency beta_c and the bath gas)",
                argument=argument,
            )
    if threshold_energy is not None and threshold_units:
        try:
            threshold_energy = float(energy_to_si(threshold_energy, threshold_units))
        except BadInputError as exc:
            raise BadInputError(str(exc), argument="threshold_units") from exc
    options = LowPressureOptions(
        oscillators,  # type: ignore[arg-type]
        collision_efficiency,  # type: ignore[arg-type]
        bath,  # type: ignore[arg-type]
        threshold_energy,
        T_range,
        uncertainty_factor,
    )
    _check_options(options)
    reactions = queries.find_reactions(session, list(keys))
    expressions = queries.expressions_of(session, [r.id for r in reactions])
    planned = []
    for reaction in reactions:
        own = expressions[reaction.id]
        pair = _pair(session, reaction, options.bath)
        _refuse_replacing(reaction, own)
        E0, threshold_from, source = _threshold(reaction, own, options)
        T_range = _range(reaction, source, options)
        result = _science(pair, T_range, E0, options)
        row = _row(reaction, pair, options, (E0, threshold_from), T_range, result)
        row.replaced = [e.id for e in own if e.origin == "collision-estimate" and not e.recommended]
        planned.append((reaction, pair, row))
    _write(session, planned)
    return LowPressureReport([row for _, _, row in planned])


def _provenance(row: LowPressureRow, pair: CollisionPair) -> dict[str, Any]:
    return {
        "method": METHOD,
        "guidance": "order of magnitude",
        "oscillators": row.oscillators,
        "collision_efficiency": row.collision_efficiency,
        "bath_gas": row.bath,
        "collision_model": "lennard-jones",
        "threshold_energy_J_per_mol": row.threshold_energy,
        "threshold_energy_from": row.threshold_from,
        "uncertainty_factor": row.uncertainty_factor,
        "uncertainty_factor_from": "given by the user"
        if row.uncertainty_factor != LOW_PRESSURE_UNCERTAINTY_FACTOR
        else "an order of magnitude (common practice for strong-collision estimates)",
        "k0_at_middle_SI": row.k0_at_middle,
        "T_middle": row.T_middle,
        "form": "modified-Arrhenius fit of k0 over the range",
        "max_relative_deviation_of_fit": row.max_fit_deviation,
        "partners": pair.as_record(),
        "estimated_diameters": row.estimated_diameters,
    }


def _write(
    session: Session, planned: list[tuple[ReactionRow, CollisionPair, LowPressureRow]]
) -> None:
    store_estimated_partners(session, [pair for _, pair, _ in planned])
    remove_expressions(session, [i for _, _, row in planned for i in row.replaced])
    records = [
        ExpressionRecord(
            reaction_id=reaction.id,
            origin="collision-estimate",
            A=row.A,
            n=row.n,
            Ea=row.Ea,
            T_min=row.T_min,
            T_max=row.T_max,
            uncertainty_factor=row.uncertainty_factor,
            uncertainty_g=0.0,
            reference=f"{METHOD} (s = {row.oscillators:g}, beta_c = "
            f"{row.collision_efficiency:g}, bath {row.bath}): order-of-magnitude guidance",
            provenance=_provenance(row, pair),
            form="third-body",
            third_body=True,
        )
        for reaction, pair, row in planned
    ]
    history = [
        (
            row.key,
            {
                "method": METHOD,
                "oscillators": row.oscillators,
                "collision_efficiency": row.collision_efficiency,
                "bath_gas": row.bath,
                "replaced": row.replaced,
            },
        )
        for _, _, row in planned
    ]
    ids = write_expressions(session, records, action="estimate", history=history)
    for (_, _, row), new_id in zip(planned, ids, strict=True):
        row.expression_id = new_id
