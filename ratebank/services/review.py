"""Everything the review book shows, gathered from the store into plain dataclasses.

The review book (``ratebank review``) is a static HTML site for colleagues who
review a mechanism by looking rather than through the terminal. This module
reads the store through the other services' read functions and returns a
:class:`Book`; ``ratebank.report.book`` turns a Book into files and never
touches the store. Keeping the reading in this one function lets the way the
store is queried change without touching the pages.

A reaction's status in the book follows the expression that would be
exported (:mod:`ratebank.services.selection`): ``measured`` for a measured fit,
``literature`` for a literature or hand-entered expression, ``estimated`` for
a collision-theory estimate, and ``gap`` when there is no complete expression.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank import __version__
from ratebank.errors import RatebankError
from ratebank.services import curate
from ratebank.services.checks import CheckReport, Flag, check_store
from ratebank.services.curate import HistoryEntry, ParticipantInfo, SetSummary, SpeciesSummary
from ratebank.services.mechanism import CAUTION
from ratebank.services.plot_data import ReactionPlotData, StericClassPoints, arrhenius_plot_data
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.selection import ChosenRow, chosen_rows
from ratebank.services.steric import ClassSteric, RuleView, derived_steric_factors, list_rules

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


@dataclass(frozen=True)
class BookExpression:
    """One stored expression, in the book's units, with its provenance in words.

    ``A`` is in ``k_units`` times K^-n (None when A is still to be estimated),
    ``Ea`` in ``Ea_units``; ``exported`` marks the one the export uses.
    """

    id: int
    origin: str
    A: float | None
    n: float
    Ea: float
    k_units: str
    Ea_units: str
    t_min: float | None
    t_max: float | None
    uncertainty_factor: float | None
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
    #: uncertainty factor of the exported expression (the largest over its range for a fit)
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
    words: list[str] = []
    if origin == "measured-fit":
        points, sets = provenance.get("n_points"), provenance.get("n_sets")
        form = provenance.get("form") or "?"
        words.append(
            f"Fitted ({provenance.get('method') or 'least squares'}, {form} form) to "
            f"{points} measured point(s) in {sets} set(s)."
        )
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
    elif origin == "collision-estimate":
        words.append(
            f"Estimated from {provenance.get('collision_model') or 'hard-sphere'} collision "
            f"theory times a steric factor P = {_number(provenance.get('steric_factor'), 3)}."
        )
        if provenance.get("steric_rule"):
            words.append(f"P from: {provenance['steric_rule']}.")
        energy = provenance.get("activation_energy_J_per_mol")
        if energy is not None:
            words.append(
                f"Activation energy {_number(energy / 1000.0)} kJ/mol (expression "
                f"{provenance.get('activation_energy_expression_id')}) at T_ref "
                f"{_number(provenance.get('T_ref'))} K."
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
    else:
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
    if not words:
        words.append("No provenance was recorded.")
    return words


# --------------------------------------------------------------------------- gathering


def _display(expression: curate.ExpressionSummary, preset: str, exported: bool) -> BookExpression:
    from ratebank.science.unit_presets import energy_unit_for, rate_unit_for
    from ratebank.science.units import energy_from_si, rate_from_si

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
        t_min=expression.t_min,
        t_max=expression.t_max,
        uncertainty_factor=expression.uncertainty_factor,
        reference=expression.reference,
        recommended=expression.recommended,
        exported=exported,
        created_at=expression.created_at,
        created_by=expression.created_by,
        version=expression.version,
        provenance=provenance_words(expression.origin, expression.provenance, expression.reference),
    )


def _exported_factor(plot: ReactionPlotData | None, chosen: ChosenRow | None) -> float | None:
    """The largest uncertainty factor of the exported expression over its range."""
    import numpy as np

    if plot is not None and plot.chosen is not None:
        curve = plot.chosen
        with np.errstate(divide="ignore", invalid="ignore"):
            factor = curve.k_high / curve.k
        where = curve.inside if curve.inside.any() else np.ones(factor.shape, dtype=bool)
        values = factor[where & np.isfinite(factor)]
        if values.size:
            return float(values.max())
    return None if chosen is None else chosen.uncertainty_factor


def _selected(
    session: Session,
    keys: list[str] | None,
    reaction_class: str | None,
    species: str | None,
) -> list[curate.ReactionSummary]:
    rows = curate.list_reactions(session, species=species, reaction_class=reaction_class)
    if keys:
        wanted: list[str] = []
        for key in keys:
            found = curate.find_reaction(session, key).key
            if found not in wanted:
                wanted.append(found)
        chosen = set(wanted)
        rows = [r for r in rows if r.key in chosen]
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
    from ratebank.science.unit_presets import rate_unit_for
    from ratebank.services.plot_data import steric_plot_data

    progress = progress or NoProgress()
    rate_unit_for(preset, 2)  # refuses an unknown preset before any work
    summaries = _selected(session, keys, reaction_class, species)
    selected_keys = [r.key for r in summaries]
    whole_store = not (keys or reaction_class or species)
    exported_rows, _gaps = chosen_rows(session)
    exported = {row.reaction_key: row for row in exported_rows}
    report = check_store(session, keys=None if whole_store else selected_keys)
    flags: dict[str, list[Flag]] = {}
    for flag in report.flags:
        flags.setdefault(flag.key, []).append(flag)

    progress.start("reading reactions", len(summaries))
    reactions: list[BookReaction] = []
    for summary in summaries:
        detail = curate.show_reaction(session, summary.key)
        chosen = exported.get(summary.key)
        try:
            plot: ReactionPlotData | None = arrhenius_plot_data(
                session, [summary.key], preset=preset
            )[0]
            plot_note = None
        except RatebankError as exc:
            plot, plot_note = None, str(exc)
        status = "gap" if chosen is None else _STATUS_OF_ORIGIN[chosen.origin]
        reactions.append(
            BookReaction(
                key=detail.key,
                equation=detail.equation,
                order=detail.order,
                third_body=detail.third_body,
                reaction_class=detail.reaction_class,
                notes=detail.notes,
                status=status,
                exported_id=None if chosen is None else chosen.expression_id,
                exported_origin=None if chosen is None else chosen.origin,
                exported_rule=None if chosen is None else chosen.rule,
                uncertainty_factor=_exported_factor(plot, chosen),
                steric_factor=detail.steric_factor,
                steric_source=detail.steric_source,
                participants=detail.participants,
                sets=detail.sets,
                expressions=[
                    _display(e, preset, chosen is not None and e.id == chosen.expression_id)
                    for e in detail.expressions
                ],
                flags=flags.get(detail.key, []),
                history=detail.history,
                plot=plot,
                plot_note=plot_note,
            )
        )
        progress.advance()

    names = sorted({p.species.name for r in reactions for p in r.participants})
    progress.start("reading species", len(names))
    book_species = []
    for name in names:
        species_detail = curate.show_species(session, name)
        book_species.append(
            BookSpecies(
                species_detail.species,
                species_detail.estimated_diameter,
                species_detail.reactions,
            )
        )
        progress.advance()

    class_names = sorted({r.reaction_class for r in reactions if r.reaction_class})
    rules = {rule.reaction_class: rule for rule in list_rules(session)[0]}
    derived = {g.reaction_class: g for g in derived_steric_factors(session)}
    try:
        class_points = {c.reaction_class: c for c in steric_plot_data(session).classes}
    except RatebankError:  # no measured reaction implies a steric factor
        class_points = {}
    classes = [
        BookClass(
            name=name,
            reactions=[r.key for r in reactions if r.reaction_class == name],
            rule=rules.get(name),
            derived=derived.get(name),
            points=class_points.get(name),
        )
        for name in class_names
    ]

    gaps = [
        BookGap(
            r.key,
            r.equation,
            r.status,
            r.uncertainty_factor,
            _gap_reason(r),
        )
        for r in reactions
        if r.status in ("estimated", "gap")
    ]
    # no estimate at all first, then the widest uncertainty
    gaps.sort(
        key=lambda g: (
            g.status != "gap",
            -(g.uncertainty_factor if g.uncertainty_factor is not None else math.inf),
            g.key,
        )
    )
    return Book(
        store_label=store_label,
        created_at=dt.datetime.now(dt.UTC),
        version=__version__,
        preset=preset,
        selection=_selection_text(keys, reaction_class, species),
        caution=CAUTION,
        reactions=reactions,
        species=book_species,
        classes=classes,
        check=report,
        gaps=gaps,
        releases=[],
    )


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
