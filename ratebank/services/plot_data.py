"""The numbers behind the plots: Arrhenius plots of reactions and steric-factor distributions.

Everything here is data, in the unit the plot shows; the drawing is
``ratebank.report.plots``. Keeping the two apart lets the plotted numbers be
tested without looking at pixels, and lets a notebook user draw them their own
way.

An Arrhenius plot of a reaction shows

- every measured point of every set, with an error bar of one standard
  uncertainty in ln k (k e^(-u) to k e^(+u), u the stored relative
  uncertainty: the same reading of u the fit weights use);
- the expression :func:`ratebank.services.selection.choose` picks
  (the one exported), with its uncertainty band k/f(T) to k f(T), f from the
  fit covariance or the stored uncertainty factor
  (:func:`ratebank.services.selection.uncertainty_factor`);
- the other complete expressions of the reaction;
- for a bimolecular reaction, the hard-sphere collision-rate constant z(T),
  the ceiling no bimolecular k should pass without a reason.

Every curve carries a mask of the temperatures inside the range its numbers
hold over, so that extrapolation can be drawn differently.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, RefusedError
from ratebank.science.collision import collision_rate
from ratebank.science.unit_presets import rate_unit_for
from ratebank.science.units import parse_rate_unit, rate_from_si, rate_unit_label
from ratebank.services.mechanism import export_units
from ratebank.services.partners import CollisionPair, PairColumns, collision_pairs
from ratebank.services.selection import choose, own_order_rate, uncertainty_factor
from ratebank.services.steric import derived_steric_factors
from ratebank.store.listings import set_sources
from ratebank.store.points import points
from ratebank.store.queries import ExpressionRow, ReactionRow, expressions_of, find_reaction

#: Temperatures on each curve; uniform in 1/T, the plot's abscissa.
GRID_POINTS = 200
#: The default span reaches this factor beyond the lowest and highest temperature
#: the data and expressions cover, so that the ends of the ranges are visible.
SPAN_MARGIN = 1.15
#: Span [K] when nothing stored states a temperature (an expression without range).
FALLBACK_SPAN = (300.0, 2000.0)


@dataclass(frozen=True)
class SetPoints:
    """The measured points of one set, in the display unit.

    Attributes
    ----------
    name : str
        Set name.
    reference : str or None
        Where the set comes from.
    T : numpy.ndarray
        Temperatures [K].
    k : numpy.ndarray
        Rate constants [display unit].
    k_low, k_high : numpy.ndarray
        k e^(-u) and k e^(+u) for the stored relative uncertainty u (one
        standard uncertainty of ln k) [display unit]; NaN where the point
        states no uncertainty.
    """

    name: str
    reference: str | None
    T: np.ndarray
    k: np.ndarray
    k_low: np.ndarray
    k_high: np.ndarray

    @property
    def label(self) -> str:
        """Legend text: the set name and its reference."""
        return f"{self.name} ({self.reference})" if self.reference else self.name


@dataclass(frozen=True)
class ExpressionCurve:
    """k(T) of one stored expression over the plot's temperature grid.

    Attributes
    ----------
    expression_id : int
        Id of the expression in the store.
    origin : str
        ``measured-fit``, ``literature``, ``manual`` or ``collision-estimate``.
    label : str
        Legend text naming the origin and the id (and, for the chosen
        expression, why it was chosen).
    T : numpy.ndarray
        Temperatures [K] (the plot's grid).
    k : numpy.ndarray
        k = A T^n exp(-Ea/RT) [display unit].
    k_low, k_high : numpy.ndarray
        k / f(T) and k f(T) [display unit], f the uncertainty factor; NaN
        where the expression has none.
    inside : numpy.ndarray of bool
        True where T lies inside ``valid_range``.
    valid_range : tuple of float or None
        (T_min, T_max) [K] over which the numbers hold: the expression's own
        range, else (for the chosen expression) the measured range; None when
        neither is known, and then nothing counts as inside.
    chosen_by : str or None
        The selection rule, for the chosen expression; None for the others.
    """

    expression_id: int
    origin: str
    label: str
    T: np.ndarray
    k: np.ndarray
    k_low: np.ndarray
    k_high: np.ndarray
    inside: np.ndarray
    valid_range: tuple[float, float] | None
    chosen_by: str | None = None


@dataclass(frozen=True)
class CollisionLimit:
    """The hard-sphere collision-rate constant z(T) of a bimolecular reaction.

    Attributes
    ----------
    T : numpy.ndarray
        Temperatures [K] (the plot's grid).
    k : numpy.ndarray
        z(T) [display unit].
    label : str
        Legend text.
    uses_estimated_diameter : bool
        True when a partner's diameter is estimated, not given.
    """

    T: np.ndarray
    k: np.ndarray
    label: str
    uses_estimated_diameter: bool


@dataclass(frozen=True)
class ReactionPlotData:
    """Everything an Arrhenius plot of one reaction shows.

    Attributes
    ----------
    key, equation : str
        The reaction.
    order : int
        Reaction order; reactions of different orders cannot share a k axis.
    k_unit : str
        The display unit of every k here.
    k_axis_label : str
        Axis text, ``log10(k / unit)`` with the unit written out.
    t_span : tuple of float
        (T_min, T_max) [K] of the plotted grid.
    measured_range : tuple of float or None
        Lowest and highest measured temperature [K]; None without points.
    sets : list of SetPoints
        Measured points, one entry per set.
    chosen : ExpressionCurve or None
        The expression that is exported; None when the reaction has none.
    others : list of ExpressionCurve
        The other complete expressions.
    collision_limit : CollisionLimit or None
        z(T) for a bimolecular reaction whose partners have the data.
    collision_note : str or None
        Why there is no collision limit, when there is none.
    notes : list of str
        Anything else the reader should know (drawn nowhere by default).
    """

    key: str
    equation: str
    order: int
    k_unit: str
    k_axis_label: str
    t_span: tuple[float, float]
    measured_range: tuple[float, float] | None
    sets: list[SetPoints]
    chosen: ExpressionCurve | None
    others: list[ExpressionCurve]
    collision_limit: CollisionLimit | None
    collision_note: str | None
    notes: list[str]

    @property
    def title(self) -> str:
        return f"{self.key}: {self.equation}"


# --------------------------------------------------------------------------- helpers


def _check_t_range(t_range: tuple[float, float] | None) -> None:
    if t_range is None:
        return
    low, high = t_range
    if not (math.isfinite(low) and math.isfinite(high) and 0 < low < high):
        raise BadInputError(
            f"t_range {low:g} {high:g} must be two temperatures above 0 K, the lower first",
            argument="t_range",
        )


def display_rate_unit(order: int, *, preset: str = "combustion", k_units: str | None = None) -> str:
    """The unit a plot shows k of a reaction of ``order`` in.

    Parameters
    ----------
    order : int
        Reaction order (1-3).
    preset : str, optional
        ``combustion``, ``atmospheric`` or ``si``; used when ``k_units`` is None.
    k_units : str, optional
        An explicit unit. A unit of the reaction's own order is used as given;
        a unit of another order lends its volume and amount (``cm3/molecule/s``
        gives ``cm6/molecule2/s`` for a termolecular reaction), as the export
        does.

    Returns
    -------
    str
        The unit text.

    Examples
    --------
    >>> display_rate_unit(2, preset="atmospheric")
    'cm3/molecule/s'
    >>> display_rate_unit(3, k_units="cm3/molecule/s")
    'cm6/molecule2/s'
    """
    if k_units is None:
        return rate_unit_for(preset, order)
    if parse_rate_unit(k_units).order == order:
        return k_units
    return export_units(preset, k_units).k_unit(order)


def _grid(t_span: tuple[float, float]) -> np.ndarray:
    inverse = np.linspace(1.0 / t_span[1], 1.0 / t_span[0], GRID_POINTS)
    T = 1.0 / inverse
    # the ends exactly, not one rounding away, so a range check at the ends is exact
    T[0], T[-1] = t_span[1], t_span[0]
    return T[::-1].copy()


def _span(temperatures: list[float]) -> tuple[float, float]:
    if not temperatures:
        return FALLBACK_SPAN
    low, high = min(temperatures), max(temperatures)
    return (low / SPAN_MARGIN, high * SPAN_MARGIN)


def _inside(T: np.ndarray, valid_range: tuple[float, float] | None) -> np.ndarray:
    if valid_range is None:
        return np.zeros(T.shape, dtype=bool)
    low, high = valid_range
    # a relative tolerance so that a grid end placed on a range end counts as inside
    return (low * (1 - 1e-12) <= T) & (high * (1 + 1e-12) >= T)


def _expression_range(expression: ExpressionRow) -> tuple[float, float] | None:
    if expression.T_min is not None and expression.T_max is not None:
        return (float(expression.T_min), float(expression.T_max))
    return None


def _label(expression: ExpressionRow, chosen_by: str | None) -> str:
    text = f"{expression.origin} #{expression.id}"
    if chosen_by is not None:
        text += f", exported ({chosen_by})"
    return text


# --------------------------------------------------------------------------- Arrhenius


@dataclass(frozen=True)
class _MeasuredSet:
    """The points of one set in SI units, ordered by temperature."""

    name: str
    reference: str | None
    T: np.ndarray
    k: np.ndarray
    relative_uncertainty: np.ndarray  # NaN where not given


@dataclass(frozen=True)
class _ReactionData:
    """What the store holds for one plotted reaction."""

    reaction: ReactionRow
    unit: str
    sets: list[_MeasuredSet]
    #: the complete expressions, oldest first
    complete: list[ExpressionRow]
    #: the exported expression and the rule that chose it
    choice: tuple[ExpressionRow, str] | None
    pair: CollisionPair | str


def arrhenius_plot_data(
    session: Session,
    keys: list[str],
    *,
    preset: str = "combustion",
    k_units: str | None = None,
    t_range: tuple[float, float] | None = None,
) -> list[ReactionPlotData]:
    """The data of an Arrhenius plot of each named reaction, in the display unit.

    Parameters
    ----------
    session : sqlalchemy.orm.Session
        An open store session (read only).
    keys : list of str
        Reaction keys or equations, in plot order; a reaction named twice is
        plotted once.
    preset : str, optional
        Unit preset of k: ``combustion``, ``atmospheric`` or ``si``.
    k_units : str, optional
        An explicit k unit (see :func:`display_rate_unit`).
    t_range : tuple of float, optional
        (T_min, T_max) [K] of the plot. Default: every measured temperature
        and every expression range of all the named reactions, widened by
        :data:`SPAN_MARGIN`, so reactions plotted together share one span.

    Returns
    -------
    list of ReactionPlotData
        One entry per reaction, in the order named.

    Raises
    ------
    NotFoundError
        If a key names no reaction.
    BadInputError
        If no key is given, or the units or the temperature range are invalid.
    RefusedError
        If a reaction has neither measured points nor a complete expression.
    """
    if not keys:
        raise BadInputError("name at least one reaction to plot", argument="keys")
    _check_t_range(t_range)
    reactions: list[ReactionRow] = []
    for key in keys:
        reaction = find_reaction(session, key)
        if all(r.id != reaction.id for r in reactions):
            reactions.append(reaction)
    units = {r.id: display_rate_unit(r.order, preset=preset, k_units=k_units) for r in reactions}
    plotted = _read_reactions(session, reactions, units)
    empty = [d.reaction.key for d in plotted if not d.sets and d.choice is None]
    if empty:
        raise RefusedError(
            f"nothing to plot for {', '.join(repr(k) for k in empty)}: no measured points and "
            "no complete expression (import data, fit, estimate or import an expression first)"
        )
    t_span = _plot_span(plotted) if t_range is None else (float(t_range[0]), float(t_range[1]))
    T = _grid(t_span)
    return [_reaction_plot(data, T, t_span) for data in plotted]


def _read_reactions(
    session: Session, reactions: list[ReactionRow], units: dict[int, str]
) -> list[_ReactionData]:
    """Each reaction's measured sets, complete expressions, exported choice and collision pair."""
    ids = [r.id for r in reactions]
    sets = _measured_sets(session, ids)
    expressions = expressions_of(session, ids)
    pairs = collision_pairs(session, reactions)
    return [
        _ReactionData(
            reaction=r,
            unit=units[r.id],
            sets=sets[r.id],
            complete=[e for e in expressions[r.id] if e.complete],
            choice=choose(expressions[r.id]),
            pair=pairs[r.id],
        )
        for r in reactions
    ]


def _measured_sets(session: Session, reaction_ids: Sequence[int]) -> dict[int, list[_MeasuredSet]]:
    """The measured sets of each reaction in set order, each set's points by temperature."""
    found: dict[int, list[_MeasuredSet]] = {rid: [] for rid in reaction_ids}
    columns = points(session, reaction_ids)
    if not columns.size:
        return found
    # by set, then by temperature; the sort is stable, so equal temperatures stay in the
    # order they were stored
    order = np.lexsort((columns.T, columns.set_id))
    set_id = columns.set_id[order]
    starts = np.flatnonzero(np.concatenate(([True], set_id[1:] != set_id[:-1])))
    ends = np.append(starts[1:], set_id.size)
    sources = set_sources(session, np.unique(set_id).tolist())
    for start, end in zip(starts.tolist(), ends.tolist(), strict=True):
        rows = order[start:end]
        name, reference = sources[int(set_id[start])]
        found[int(columns.reaction_id[rows[0]])].append(
            _MeasuredSet(
                name,
                reference,
                columns.T[rows],
                columns.k[rows],
                columns.relative_uncertainty[rows],
            )
        )
    return found


def _plot_span(plotted: list[_ReactionData]) -> tuple[float, float]:
    """Every measured temperature and every complete expression's range, widened."""
    temperatures: list[float] = []
    for data in plotted:
        for measured in data.sets:
            temperatures.extend(measured.T.tolist())
        for e in data.complete:
            temperatures.extend(_expression_range(e) or ())
    return _span(temperatures)


def _reaction_plot(
    data: _ReactionData, T: np.ndarray, t_span: tuple[float, float]
) -> ReactionPlotData:
    """One reaction's plot data in its display unit."""
    reaction, unit = data.reaction, data.unit

    def shown(k_si: np.ndarray) -> np.ndarray:
        return np.asarray(rate_from_si(np.asarray(k_si, dtype=float), unit, reaction.order))

    sets = []
    for measured in data.sets:
        k = shown(measured.k)
        u = measured.relative_uncertainty
        sets.append(
            SetPoints(
                measured.name, measured.reference, measured.T, k, k * np.exp(-u), k * np.exp(u)
            )
        )
    measured_range = None
    if sets:
        all_T = np.concatenate([s.T for s in sets])
        measured_range = (float(all_T.min()), float(all_T.max()))

    def curve(e: ExpressionRow, chosen_by: str | None, fallback_range) -> ExpressionCurve:  # type: ignore[no-untyped-def]
        k = shown(own_order_rate(e, reaction.third_body, T))
        factor = np.asarray(uncertainty_factor(e, T), dtype=float)
        valid = _expression_range(e) or fallback_range
        return ExpressionCurve(
            expression_id=e.id,
            origin=e.origin,
            label=_label(e, chosen_by),
            T=T,
            k=k,
            k_low=k / factor,
            k_high=k * factor,
            inside=_inside(T, valid),
            valid_range=valid,
            chosen_by=chosen_by,
        )

    notes: list[str] = []
    chosen_curve = None
    if data.choice is not None:
        chosen, rule = data.choice
        chosen_curve = curve(chosen, rule, measured_range)
        if chosen_curve.valid_range is None:
            notes.append(
                f"expression #{chosen.id} states no temperature range; "
                "all of it is drawn as extrapolation"
            )
    else:
        notes.append("no complete expression yet: only the measured points are shown")
    others = [
        curve(e, None, None)
        for e in data.complete
        if data.choice is None or e.id != data.choice[0].id
    ]
    limit, collision_note = _collision_limit(data.pair, T, shown)
    return ReactionPlotData(
        key=reaction.key,
        equation=reaction.equation,
        order=reaction.order,
        k_unit=unit,
        k_axis_label=f"log10(k / {rate_unit_label(unit)})",
        t_span=t_span,
        measured_range=measured_range,
        sets=sets,
        chosen=chosen_curve,
        others=others,
        collision_limit=limit,
        collision_note=collision_note,
        notes=notes,
    )


def _collision_limit(  # type: ignore[no-untyped-def]
    pair: CollisionPair | str, T: np.ndarray, shown
) -> tuple[CollisionLimit | None, str | None]:
    """The hard-sphere collision rate z(T) of the pair, or why there is none."""
    if isinstance(pair, str):
        return None, pair
    label = "collision limit z(T), hard spheres"
    if pair.uses_estimated_diameter:
        label += " (estimated diameter)"
    z = collision_rate(T, **PairColumns.of([pair]).rate_arguments("hard-sphere"))
    return CollisionLimit(T, shown(z), label, pair.uses_estimated_diameter), None


# --------------------------------------------------------------------------- steric


@dataclass(frozen=True)
class StericClassPoints:
    """The steric factors derived for the measured reactions of one class.

    Attributes
    ----------
    reaction_class : str or None
        The class; None for reactions without one.
    keys : list of str
        Reaction keys, in the order of ``steric_factor``.
    steric_factor : numpy.ndarray
        Derived P of each reaction [-].
    temperature : numpy.ndarray
        Temperature each P was derived at [K].
    uses_estimated_diameter : numpy.ndarray of bool
        True where a partner's diameter is estimated.
    geometric_mean : float
        Geometric mean of the class's P [-].
    spread_factor : float or None
        exp(standard deviation of ln P) [-]; None with fewer than two reactions.
    """

    reaction_class: str | None
    keys: list[str]
    steric_factor: np.ndarray
    temperature: np.ndarray
    uses_estimated_diameter: np.ndarray
    geometric_mean: float
    spread_factor: float | None

    @property
    def label(self) -> str:
        return self.reaction_class or "(no class)"


@dataclass(frozen=True)
class StericPlotData:
    """Derived steric factors by reaction class, for one collision model."""

    model: str
    classes: list[StericClassPoints]

    @property
    def count(self) -> int:
        return sum(len(c.keys) for c in self.classes)


def steric_plot_data(
    session: Session, model: str = "hard-sphere", *, reaction_class: str | None = None
) -> StericPlotData:
    """The steric factors implied by the measured fits, grouped by class.

    Parameters
    ----------
    session : sqlalchemy.orm.Session
        An open store session (read only).
    model : str, optional
        Collision model of z(T): ``hard-sphere`` or ``lennard-jones``.
    reaction_class : str, optional
        Only this class.

    Returns
    -------
    StericPlotData
        The values of :func:`ratebank.services.steric.derived_steric_factors`
        as arrays.

    Raises
    ------
    RefusedError
        If no measured fit implies a steric factor (nothing to plot).
    """
    groups = derived_steric_factors(session, model=model, reaction_class=reaction_class)
    if not groups:
        where = f" of class {reaction_class!r}" if reaction_class is not None else ""
        raise RefusedError(
            f"no steric factors to plot: no bimolecular reaction{where} has a measured fit and "
            "collision data (import measurements and diameters, then fit them)"
        )
    classes = [
        StericClassPoints(
            reaction_class=g.reaction_class,
            keys=[s.key for s in g.samples],
            steric_factor=np.array([s.steric_factor for s in g.samples], dtype=float),
            temperature=np.array([s.temperature for s in g.samples], dtype=float),
            uses_estimated_diameter=np.array(
                [s.uses_estimated_diameter for s in g.samples], dtype=bool
            ),
            geometric_mean=g.geometric_mean,
            spread_factor=g.spread_factor,
        )
        for g in groups
    ]
    return StericPlotData(model, classes)
