"""Everything the review book shows, gathered from the store into plain dataclasses.

The review book (``ratebank review``) is a static HTML site for colleagues who
review a mechanism by looking rather than through the terminal. This module
reads the store only through ``ratebank.store``'s read functions and the other
services (selection, checks, steric factors, plot data, collision partners)
and returns a :class:`Book`; ``ratebank.report.book`` turns a Book into files
and never touches the store.

A reaction's status in the book follows the expression that would be
exported (:mod:`ratebank.services.selection`): ``measured`` for a measured fit,
``literature`` for a literature or hand-entered expression, ``estimated`` for
a collision-theory estimate, and ``gap`` when there is no complete expression.
Every expression shows its uncertainty as f(298 K) and g (f(T) = f(298)
exp|g (1/T - 1/298)|); a reaction's uncertainty factor is the largest f(T) of
its exported expression over that expression's range, as the export states it.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank import __version__
from ratebank.caution import CAUTION
from ratebank.errors import RatebankError
from ratebank.science.unit_presets import energy_unit_for, rate_unit_for
from ratebank.science.units import energy_from_si, rate_from_si
from ratebank.services.checks import CheckReport, Flag, Unchecked, check_store
from ratebank.services.partners import species_detail
from ratebank.services.plot_data import (
    ReactionPlotData,
    StericClassPoints,
    arrhenius_plot_data,
    steric_plot_data,
)
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.quick_listings import list_reactions
from ratebank.services.reactions import show_reaction
from ratebank.services.reverse import ReverseRateReport, reverse_rate
from ratebank.services.selection import Chosen, chosen_expressions, uncertainty_factor
from ratebank.services.steric import ClassSteric, RuleView, derived_steric_factors, list_rules
from ratebank.services.thermo import (
    DEFAULT_TEMPERATURES,
    SpeciesThermoView,
    inputs_of,
    species_thermo,
)
from ratebank.store import queries
from ratebank.store.listings import (
    ExpressionSummary,
    HistoryEntry,
    ParticipantInfo,
    SetSummary,
    SpeciesSummary,
)
from ratebank.store.queries import ExpressionRow
from ratebank.store.quick_listings import ReactionSummary
from ratebank.store.thermo import reverse_rules

#: Status words of the book, in the order the index counts them.
BOOK_STATUSES = ("measured", "literature", "estimated", "gap")
_STATUS_OF_ORIGIN = {
    "measured-fit": "measured",
    "literature": "literature",
    "manual": "literature",
    "collision-estimate": "estimated",
}
_STATUS_WORDS = {
    "measured": "the exported expression is a fit to measured k(T)",
    "literature": "the exported expression is a literature or hand-entered one",
    "estimated": "the exported expression is a collision-theory estimate",
    "gap": "there is no complete expression to export",
}
#: The temperature at which f(298) is stated [K].
_T_298 = 298.0


@dataclass(frozen=True)
class BookExpression:
    """One stored expression, in the book's units, with its provenance in words.

    ``A`` is in ``k_units`` times K^-n (None when A is still to be estimated),
    ``Ea`` in ``Ea_units``; ``exported`` marks the one the export uses.
    ``uncertainty_factor`` is f(298 K) and ``uncertainty_g`` is g [K] (None
    where no uncertainty is stated).
    """

    id: int
    origin: str
    A: float | None
    n: float
    Ea: float
    k_units: str
    Ea_units: str
    T_min: float | None
    T_max: float | None
    uncertainty_factor: float | None
    uncertainty_g: float | None
    reference: str | None
    recommended: bool
    exported: bool
    created_at: Any
    created_by: str | None
    version: int
    provenance: list[str]


@dataclass(frozen=True)
class BookReaction:
    """Everything one reaction page shows."""

    key: str
    equation: str
    order: int
    third_body: bool
    reaction_class: str | None
    notes: str | None
    status: str
    exported_id: int | None
    exported_origin: str | None
    exported_rule: str | None
    #: the largest f(T) of the exported expression over its range (f(298) without one)
    uncertainty_factor: float | None
    steric_factor: float | None
    steric_source: str | None
    participants: list[ParticipantInfo]
    sets: list[SetSummary]
    expressions: list[BookExpression]
    flags: list[Flag]
    history: list[HistoryEntry]
    #: the Arrhenius plot's numbers (display units); None when there is nothing to draw
    plot: ReactionPlotData | None
    plot_note: str | None
    #: expressions ``check`` could not hold to the collision limit, and why
    unchecked: list[Unchecked] = field(default_factory=list)
    #: the reverse rate by detailed balance, for a reaction declared reversible
    reverse: ReverseRateReport | None = None
    #: why a reversible reaction's reverse rate cannot be shown (e.g. thermochemistry lacking)
    reverse_note: str | None = None

    @property
    def points(self) -> int:
        return sum(s.points for s in self.sets)


@dataclass(frozen=True)
class BookSpecies:
    """One species page: its properties, an estimate it would get, its reactions."""

    species: SpeciesSummary
    #: the diameter collision theory would estimate for it (not stored), if it has none
    estimated_diameter: Any
    #: (key, equation, role) of every reaction it takes part in
    reactions: list[tuple[str, str, str]]
    #: Cp°, H°, S° at the book's temperatures; None without stored thermochemistry
    thermo: SpeciesThermoView | None = None


@dataclass(frozen=True)
class BookClass:
    """One reaction-class page: its steric factors, derived and set."""

    name: str
    reactions: list[str]
    rule: RuleView | None
    derived: ClassSteric | None
    points: StericClassPoints | None
    collision_model: str = "hard-sphere"


@dataclass(frozen=True)
class BookGap:
    """A reaction without a measured or literature expression, for the index's ranking."""

    key: str
    equation: str
    status: str
    uncertainty_factor: float | None
    why: str


@dataclass(frozen=True)
class Release:
    """A named, frozen state of the store (none are recorded yet; see the README)."""

    name: str
    created_at: Any
    note: str | None = None


@dataclass
class Book:
    """The whole review book: index, reactions, species and classes."""

    store_label: str
    created_at: dt.datetime
    version: str
    preset: str
    selection: str
    caution: str
    reactions: list[BookReaction]
    species: list[BookSpecies]
    classes: list[BookClass]
    check: CheckReport
    gaps: list[BookGap]
    releases: list[Release] = field(default_factory=list)

    @property
    def status_counts(self) -> dict[str, int]:
        counts = dict.fromkeys(BOOK_STATUSES, 0)
        for reaction in self.reactions:
            counts[reaction.status] += 1
        return counts

    @staticmethod
    def status_meaning(status: str) -> str:
        return _STATUS_WORDS[status]


# --------------------------------------------------------------------------- provenance


def _number(value: Any, digits: int = 4) -> str:
    if value is None:
        return "?"
    if isinstance(value, float) and not math.isfinite(value):
        return str(value)
    return f"{value:.{digits}g}"


def provenance_words(origin: str, provenance: dict[str, Any], reference: str | None) -> list[str]:
    """Where an expression's numbers come from, as short sentences.

    >>> provenance_words("literature", {"source_file": "lit.csv", "line": 3}, "a review")
    ['Taken from a review.', 'Imported from lit.csv, line 3.']
    """
    if origin == "measured-fit":
        words = _fit_words(provenance)
    elif origin == "collision-estimate":
        words = _estimate_words(provenance)
    else:
        words = _entered_words(provenance, reference)
    return words or ["No provenance was recorded."]


def _fit_words(provenance: dict[str, Any]) -> list[str]:
    points, sets = provenance.get("n_points"), provenance.get("n_sets")
    form = provenance.get("form") or "?"
    words = [
        f"Fitted ({provenance.get('method') or 'least squares'}, {form} form) to "
        f"{points} measured point(s) in {sets} set(s)."
    ]
    if provenance.get("form_reason"):
        words.append(f"Form chosen because: {provenance['form_reason']}")
    if provenance.get("fixed_n") is not None:
        words.append(f"n was held at {_number(provenance['fixed_n'])}.")
    chi = provenance.get("reduced_chi_square")
    if chi is not None:
        weighting = (
            "weighted by the stated uncertainties"
            if provenance.get("absolute_sigma")
            else "unweighted; the covariance is scaled by the reduced chi-square"
        )
        words.append(f"Reduced chi-square {_number(chi, 3)}; {weighting}.")
    if provenance.get("steric_factor") is not None:
        words.append(
            f"Implies a steric factor of {_number(provenance['steric_factor'], 3)} at "
            f"{_number(provenance.get('steric_factor_T_K'))} K."
        )
    for warning in provenance.get("warnings") or []:
        words.append(f"Warning: {warning}.")
    return words


def _estimate_words(provenance: dict[str, Any]) -> list[str]:
    words = [
        f"Estimated from {provenance.get('collision_model') or 'hard-sphere'} collision "
        f"theory times a steric factor P = {_number(provenance.get('steric_factor'), 3)}."
    ]
    if provenance.get("steric_rule"):
        words.append(f"P from: {provenance['steric_rule']}.")
    energy = provenance.get("activation_energy_J_per_mol")
    if energy is not None:
        where = f" ({provenance['T_ref_from']})" if provenance.get("T_ref_from") else ""
        words.append(
            f"Activation energy {_number(energy / 1000.0)} kJ/mol (expression "
            f"{provenance.get('activation_energy_expression_id')}) at T_ref "
            f"{_number(provenance.get('T_ref'))} K{where}."
        )
    if provenance.get("threshold_energy_held_at_zero"):
        shortfall = provenance.get("activation_energy_below_collision_rate_J_per_mol")
        words.append(
            "E0 held at 0: the given Ea is "
            f"{_number(None if shortfall is None else shortfall / 1000.0, 3)} kJ/mol below the "
            "collision rate's own, so the estimate is P z(T)."
        )
    partners = provenance.get("partners") or {}
    for side in ("a", "b"):
        partner = partners.get(side) or {}
        if not partner:
            continue
        diameter = partner.get("diameter_m")
        method = partner.get("diameter_method") or "?"
        note = " (estimated)" if partner.get("diameter_estimated") else ""
        words.append(
            f"{partner.get('species')}: diameter "
            f"{_number(None if diameter is None else diameter * 1e10)} Å from {method}{note}."
        )
    if provenance.get("uncertainty_factor") is not None:
        words.append(f"Uncertainty factor {_number(provenance['uncertainty_factor'], 3)}.")
    return words


def _entered_words(provenance: dict[str, Any], reference: str | None) -> list[str]:
    words: list[str] = []
    if reference:
        words.append(f"Taken from {reference}.")
    if provenance.get("source_file"):
        where = provenance["source_file"]
        line = provenance.get("line")
        words.append(f"Imported from {where}" + (f", line {line}." if line else "."))
    given = provenance.get("given_units") or {}
    if given:
        units = ", ".join(f"{k.replace('_units', '')} in {v}" for k, v in given.items() if v)
        if units:
            words.append(f"Given with {units}.")
    for key, value in provenance.items():
        if key in ("source_file", "line", "given_units"):
            continue
        words.append(f"{key.replace('_', ' ')}: {value}.")
    return words


# --------------------------------------------------------------------------- reactions


def _display(expression: ExpressionSummary, preset: str, exported: bool) -> BookExpression:
    order = expression.reaction_order
    k_units, e_units = rate_unit_for(preset, order), energy_unit_for(preset)
    A = None if expression.A is None else float(rate_from_si(expression.A, k_units, order))
    return BookExpression(
        id=expression.id,
        origin=expression.origin,
        A=A,
        n=expression.n,
        Ea=float(energy_from_si(expression.Ea, e_units)),
        k_units=k_units,
        Ea_units=e_units,
        T_min=expression.T_min,
        T_max=expression.T_max,
        uncertainty_factor=expression.uncertainty_factor,
        uncertainty_g=expression.uncertainty_g if expression.uncertainty_factor else None,
        reference=expression.reference,
        recommended=expression.recommended,
        exported=exported,
        created_at=expression.created_at,
        created_by=expression.created_by,
        version=expression.version,
        provenance=provenance_words(expression.origin, expression.provenance, expression.reference),
    )


def largest_uncertainty_factor(expression: ExpressionRow) -> float | None:
    """The largest f(T) of ``expression`` over its range; f(298) when it states none.

    f(T) grows away from 298 K on either side, so the largest value over a
    range is at one of its ends.
    """
    if expression.uncertainty_factor is None:
        return None
    ends = [T for T in (expression.T_min, expression.T_max) if T is not None]
    return float(np.max(uncertainty_factor(expression, np.array([_T_298, *ends]))))


def _plot(session: Session, key: str, preset: str) -> tuple[ReactionPlotData | None, str | None]:
    """One reaction's Arrhenius plot data, or why there is none."""
    try:
        return arrhenius_plot_data(session, [key], preset=preset)[0], None
    except RatebankError as exc:
        return None, str(exc)


@dataclass(frozen=True)
class _Findings:
    """What ``check`` says, by reaction key."""

    flags: dict[str, list[Flag]]
    unchecked: dict[str, list[Unchecked]]

    @classmethod
    def of(cls, report: CheckReport) -> _Findings:
        flags: dict[str, list[Flag]] = {}
        for flag in report.flags:
            flags.setdefault(flag.key, []).append(flag)
        unchecked: dict[str, list[Unchecked]] = {}
        for item in report.unchecked:
            unchecked.setdefault(item.key, []).append(item)
        return cls(flags, unchecked)


def _book_reverse(
    session: Session, key: str, chosen: Chosen | None, preset: str
) -> tuple[ReverseRateReport | None, str | None]:
    """The reverse rate of a reaction declared reversible, at those of the book's
    temperatures inside its thermochemistry's range, or why it cannot be given."""
    reaction = queries.find_reaction(session, key)
    if reverse_rules(session, [reaction.id]).get(reaction.id) != "detailed-balance":
        return None, None
    if chosen is None:
        return None, "declared reversible, but the forward reaction has no usable expression yet"
    try:
        inputs = inputs_of(session, reaction)
        inside = [t for t in DEFAULT_TEMPERATURES if inputs.T_low <= t <= inputs.T_high]
        if not inside:
            return None, (
                f"declared reversible; none of {', '.join(f'{t:g}' for t in DEFAULT_TEMPERATURES)}"
                f" K lies in its thermochemistry's common range {inputs.T_low:g}-"
                f"{inputs.T_high:g} K"
            )
        return reverse_rate(session, key, inside, preset=preset), None
    except RatebankError as exc:
        return None, f"declared reversible, but {exc}"


def _book_reaction(
    session: Session, key: str, chosen: Chosen | None, findings: _Findings, preset: str
) -> BookReaction:
    detail = show_reaction(session, key)
    plot, plot_note = _plot(session, key, preset)
    reverse, reverse_note = _book_reverse(session, key, chosen, preset)
    exported = None if chosen is None else chosen.expression
    return BookReaction(
        key=detail.key,
        equation=detail.equation,
        order=detail.order,
        third_body=detail.third_body,
        reaction_class=detail.reaction_class,
        notes=detail.notes,
        status="gap" if exported is None else _STATUS_OF_ORIGIN[exported.origin],
        exported_id=None if exported is None else exported.id,
        exported_origin=None if exported is None else exported.origin,
        exported_rule=None if chosen is None else chosen.rule,
        uncertainty_factor=None if exported is None else largest_uncertainty_factor(exported),
        steric_factor=detail.steric_factor,
        steric_source=detail.steric_source,
        participants=detail.participants,
        sets=detail.sets,
        expressions=[
            _display(e, preset, exported is not None and e.id == exported.id)
            for e in detail.expressions
        ],
        flags=findings.flags.get(detail.key, []),
        history=detail.history,
        plot=plot,
        plot_note=plot_note,
        unchecked=findings.unchecked.get(detail.key, []),
        reverse=reverse,
        reverse_note=reverse_note,
    )


def _book_reactions(
    session: Session,
    summaries: Sequence[ReactionSummary],
    report: CheckReport,
    preset: str,
    progress: Progress,
) -> list[BookReaction]:
    """Each selected reaction's page, with the expression the export would use."""
    wanted = {s.key for s in summaries}
    rows = [r for r in queries.reactions(session) if r.key in wanted]
    chosen = {c.reaction.key: c for c in chosen_expressions(session, rows)[0]}
    findings = _Findings.of(report)
    progress.start("reading reactions", len(summaries))
    found = []
    for summary in summaries:
        found.append(
            _book_reaction(session, summary.key, chosen.get(summary.key), findings, preset)
        )
        progress.advance()
    return found


# --------------------------------------------------------------------------- species, classes


def _book_species(
    session: Session, reactions: Sequence[BookReaction], progress: Progress
) -> list[BookSpecies]:
    """A page for every species the selected reactions name."""
    names = sorted({p.species.name for r in reactions for p in r.participants})
    progress.start("reading species", len(names))
    found = []
    for name in names:
        detail = species_detail(session, name)
        found.append(
            BookSpecies(
                detail.species,
                detail.estimated_diameter,
                detail.reactions,
                species_thermo(session, name),
            )
        )
        progress.advance()
    return found


def _book_classes(session: Session, reactions: Sequence[BookReaction]) -> list[BookClass]:
    """A page for every class of the selected reactions, with its steric factors."""
    names = sorted({r.reaction_class for r in reactions if r.reaction_class})
    if not names:
        return []
    rules = {rule.reaction_class: rule for rule in list_rules(session)[0]}
    derived = {g.reaction_class: g for g in derived_steric_factors(session)}
    try:
        points = {c.reaction_class: c for c in steric_plot_data(session).classes}
    except RatebankError:  # no measured reaction implies a steric factor
        points = {}
    return [
        BookClass(
            name=name,
            reactions=[r.key for r in reactions if r.reaction_class == name],
            rule=rules.get(name),
            derived=derived.get(name),
            points=points.get(name),
        )
        for name in names
    ]


# --------------------------------------------------------------------------- gaps


def _gap_reason(reaction: BookReaction) -> str:
    if reaction.status == "estimated":
        for e in reaction.expressions:
            if e.exported:
                return e.provenance[0] if e.provenance else "collision-theory estimate"
        return "collision-theory estimate"
    if any(e.A is None for e in reaction.expressions):
        return "only an activation energy is stored; A is still to be estimated"
    if reaction.sets:
        return "measured points but no fit yet (run `ratebank fit`)"
    return "no measurement and no expression"


def _book_gaps(reactions: Sequence[BookReaction]) -> list[BookGap]:
    """Estimated reactions and those without an expression: none at all first, then the
    widest uncertainty."""
    gaps = [
        BookGap(r.key, r.equation, r.status, r.uncertainty_factor, _gap_reason(r))
        for r in reactions
        if r.status in ("estimated", "gap")
    ]
    gaps.sort(
        key=lambda g: (
            g.status != "gap",
            -(g.uncertainty_factor if g.uncertainty_factor is not None else math.inf),
            g.key,
        )
    )
    return gaps


# --------------------------------------------------------------------------- the book


def _selected(
    session: Session,
    keys: list[str] | None,
    reaction_class: str | None,
    species: str | None,
) -> list[ReactionSummary]:
    rows = list_reactions(session, species=species, reaction_class=reaction_class)
    if keys:
        wanted = {queries.find_reaction(session, key).key for key in keys}
        rows = [r for r in rows if r.key in wanted]
    if not rows:
        raise RatebankError("no reaction matches; nothing to put in the review book")
    return rows


def _selection_text(keys: list[str] | None, reaction_class: str | None, species: str | None) -> str:
    parts = []
    if keys:
        parts.append("reactions " + ", ".join(keys))
    if reaction_class:
        parts.append(f"class {reaction_class}")
    if species:
        parts.append(f"reactions of {species}")
    return "; ".join(parts) if parts else "every reaction in the store"


def gather_book(
    session: Session,
    *,
    keys: list[str] | None = None,
    reaction_class: str | None = None,
    species: str | None = None,
    preset: str = "combustion",
    store_label: str = "",
    progress: Progress | None = None,
) -> Book:
    """Read what the review book shows, for every reaction or those selected.

    Parameters
    ----------
    session : sqlalchemy.orm.Session
        An open store session (read only).
    keys : list of str, optional
        Only these reactions (keys or equations).
    reaction_class : str, optional
        Only reactions of this class.
    species : str, optional
        Only reactions this species takes part in.
    preset : str, optional
        Unit preset of the numbers shown: ``combustion``, ``atmospheric`` or ``si``.
    store_label : str, optional
        How the store is named on the pages (its address, password masked).
    progress : Progress, optional
        Told of each reaction read.

    Returns
    -------
    Book
        Plain data; nothing in it refers to the session.

    Raises
    ------
    NotFoundError
        If a key, class member or species is not in the store.
    RatebankError
        If nothing matches the selection.
    """
    progress = progress or NoProgress()
    rate_unit_for(preset, 2)  # refuses an unknown preset before any work
    summaries = _selected(session, keys, reaction_class, species)
    whole_store = not (keys or reaction_class or species)
    report = check_store(session, keys=None if whole_store else [r.key for r in summaries])
    reactions = _book_reactions(session, summaries, report, preset, progress)
    return Book(
        store_label=store_label,
        created_at=dt.datetime.now(dt.UTC),
        version=__version__,
        preset=preset,
        selection=_selection_text(keys, reaction_class, species),
        caution=CAUTION,
        reactions=reactions,
        species=_book_species(session, reactions, progress),
        classes=_book_classes(session, reactions),
        check=report,
        gaps=_book_gaps(reactions),
        releases=[],
    )
