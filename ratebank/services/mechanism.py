"""The mechanism table: one row per reaction, in the units the modeller needs.

The table's columns (the README (Import files)), in order::

    key, equation, order, A, n, Ea, k_units, Ea_units, T_min_K, T_max_K,
    origin, steric_factor, uncertainty_factor, references, uncertainty_f298,
    uncertainty_g_K, linearised_at_K, linearisation_max_ln_deviation, reverse,
    reverse_max_relative_deviation, form, term, A_low, n_low, Ea_low,
    k_low_units, broadening, Fc, N, troe_alpha, troe_T3_K, troe_T1_K, troe_T2_K

``A`` is in ``k_units`` times K^-n; k = A T^n exp(-Ea/RT) with T in K. The
``form`` says how the row's numbers make k: ``A``, ``n``, ``Ea`` are the one
term of ``arrhenius``, term ``term`` of a ``sum`` (one row per term), the
coefficient k0 of ``third-body`` and the high-pressure limit k_inf of
``falloff`` and ``activated`` (in the unit of one order fewer than the
equation's), whose low-pressure limit k0 is ``A_low``, ``n_low``, ``Ea_low``
in ``k_low_units`` (the equation's order, M counted).
"""

from __future__ import annotations

import math
import pickle
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any, NamedTuple, overload

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, ExportGapsError, UnitError
from ratebank.numbers import round_significant
from ratebank.science.arrhenius import local_activation_energy, local_pre_exponential
from ratebank.science.uncertainty import (
    linearize_modified_arrhenius,
    linearized_panel_factor,
    panel_uncertainty_factor,
)
from ratebank.science.unit_presets import ENERGY_PRESETS, PRESETS
from ratebank.science.units import (
    canonical_energy_unit,
    energy_from_si,
    parse_energy_unit,
    rate_from_si,
    rate_units_by_order,
)
from ratebank.services.form_validation import FORM_COLUMNS, high_pressure_order
from ratebank.services.reverse import ReverseInfo, with_reverse
from ratebank.services.selection import ChosenRow, ChosenStream
from ratebank.store.expressions import form_of
from ratebank.store.queries import ExpressionRow

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
    "uncertainty_f298",
    "uncertainty_g_K",
    "linearised_at_K",
    "linearisation_max_ln_deviation",
    "reverse",
    "reverse_max_relative_deviation",
    *FORM_COLUMNS,
)
FORMS = ("modified", "arrhenius")
RATE_LAW_CONVENTION = (
    "k is defined by the rate of reaction r = k * prod([X_i]^nu_i) over the reactants "
    "(and [M] for a third body). For a self-reaction A + A -> products, r = k[A]^2 and "
    "d[A]/dt = -2 r; a code that writes d[A]/dt = -k[A]^2 needs twice this k."
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


def export_units(
    preset: str | None = "combustion", k_units: str | None = None, e_units: str | None = None
) -> ExportUnits:
    """Units from a preset, overridden by explicit ``k_units`` and ``e_units``."""
    if preset is not None and preset not in PRESETS:
        raise UnitError(f"unknown unit preset {preset!r}; expected one of {', '.join(PRESETS)}")
    base = preset or "si"
    k_map = dict(PRESETS[base])
    e = ENERGY_PRESETS[base]
    if k_units:
        k_map = rate_units_by_order(k_units)
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
    uncertainty_f298: float | None
    uncertainty_g_K: float | None
    linearised_at_K: float | None
    linearisation_max_ln_deviation: float | None
    reverse: str
    reverse_max_relative_deviation: float | None
    form: str
    term: int
    A_low: float | None
    n_low: float | None
    Ea_low: float | None
    k_low_units: str | None
    broadening: str | None
    Fc: float | None
    N: float | None
    troe_alpha: float | None
    troe_T3_K: float | None
    troe_T1_K: float | None
    troe_T2_K: float | None
    expression_id: int
    chosen_by: str

    def values(self) -> list[Any]:
        return [getattr(self, c) for c in COLUMNS]


_LINEARISED_AT = MechanismRow._fields.index("linearised_at_K")

#: Mechanism rows kept together as one packed slice (and hashed and written at a time).
ROW_SLICE = 10_000


class PackedRows(Sequence[MechanismRow]):
    """Mechanism rows kept packed: each slice of :data:`ROW_SLICE` rows is one pickled
    list of plain tuples (about a third of the memory of the rows as objects), unpacked
    when it is read. Rows are appended in order; every slice but the last is full."""

    def __init__(self, rows: Iterable[MechanismRow] = ()) -> None:
        self._packed: list[bytes] = []
        self._open: list[tuple[Any, ...]] = []
        self._length = 0
        #: each row's key, in order (kept beside the packed slices: the readers that need
        #: only the keys unpack nothing)
        self.keys: list[str] = []
        #: (key, linearised_at_K) of each row linearised, in order (kept beside them too)
        self.linearised: list[tuple[str, float]] = []
        self.extend(rows)

    def append(self, row: Sequence[Any]) -> None:
        self._open.append(tuple(row))
        self.keys.append(row[0])
        if row[_LINEARISED_AT] is not None:
            self.linearised.append((row[0], row[_LINEARISED_AT]))
        self._length += 1
        if len(self._open) >= ROW_SLICE:
            self._packed.append(pickle.dumps(self._open, pickle.HIGHEST_PROTOCOL))
            self._open = []

    def extend(self, rows: Iterable[Sequence[Any]]) -> None:
        for row in rows:
            self.append(row)

    def tuple_slices(self) -> Iterator[list[tuple[Any, ...]]]:
        """The rows as plain tuples (the fields in order), a slice at a time."""
        for packed in self._packed:
            yield pickle.loads(packed)
        if self._open:
            yield list(self._open)

    def __len__(self) -> int:
        return self._length

    def __iter__(self) -> Iterator[MechanismRow]:
        make = MechanismRow._make
        for part in self.tuple_slices():
            yield from map(make, part)

    @overload
    def __getitem__(self, index: int) -> MechanismRow: ...
    @overload
    def __getitem__(self, index: slice) -> list[MechanismRow]: ...
    def __getitem__(self, index: int | slice) -> MechanismRow | list[MechanismRow]:
        if isinstance(index, slice):
            return list(self)[index]
        if index < 0:
            index += self._length
        if not 0 <= index < self._length:
            raise IndexError("mechanism row index out of range")
        number, within = divmod(index, ROW_SLICE)
        part = pickle.loads(self._packed[number]) if number < len(self._packed) else self._open
        return MechanismRow._make(part[within])


def row_keys(rows: Sequence[MechanismRow]) -> list[str]:
    """The key of each row, in order (packed or listed rows; nothing unpacked)."""
    if isinstance(rows, PackedRows):
        return rows.keys
    return [row[0] for row in rows]


def linearised(rows: Sequence[MechanismRow]) -> list[tuple[str, float]]:
    """(key, linearised_at_K) of each linearised row, in order (nothing unpacked)."""
    if isinstance(rows, PackedRows):
        return rows.linearised
    at = _LINEARISED_AT
    return [(row[0], row[at]) for row in rows if row[at] is not None]


def tuple_slices(rows: Sequence[MechanismRow]) -> Iterator[list[tuple[Any, ...]]]:
    """``rows`` as plain tuples, :data:`ROW_SLICE` at a time (packed or listed rows)."""
    if isinstance(rows, PackedRows):
        yield from rows.tuple_slices()
        return
    for start in range(0, len(rows), ROW_SLICE):
        yield [tuple(row) for row in rows[start : start + ROW_SLICE]]


@dataclass
class MechanismTable:
    #: a list, or (for a table read from the store) :class:`PackedRows`
    rows: Sequence[MechanismRow]
    units: ExportUnits
    form: str
    gaps: list[str]
    left_out: list[str] = field(default_factory=list)
    reverse: ReverseInfo = field(default_factory=ReverseInfo)
    #: ``sha256:<hex>`` of the expressions the rows are made of, as stored (numbers in SI,
    #: further terms, full provenance); empty for a table read back from a release
    source_digest: str = ""

    @property
    def reaction_count(self) -> int:
        """How many reactions the rows hold (a sum has one row per term)."""
        return len(set(row_keys(self.rows)))


def _check_form_options(form: str, linearise_at: float | None) -> None:
    if form not in FORMS:
        raise BadInputError(
            f"unknown form {form!r}; expected one of {', '.join(FORMS)}", argument="form"
        )
    if linearise_at is not None and (not math.isfinite(linearise_at) or linearise_at <= 0):
        raise BadInputError(
            "the linearisation temperature must be above 0 K", argument="linearise_at"
        )
    if linearise_at is not None and form != "arrhenius":
        raise BadInputError(
            "a linearisation temperature applies only to the arrhenius form",
            argument="linearise_at",
        )


class _Linearised(NamedTuple):
    A: float
    Ea: float
    T_lin: float
    max_ln_deviation: float | None
    f298: float | None


def _linearised(c: ChosenRow, linearise_at: float | None) -> _Linearised | str:
    """The row's two-parameter form inside its own range, or why it cannot have one."""
    if c.T_min is None or c.T_max is None:
        if linearise_at is None:
            return f"{c.reaction_key} (no valid range: give a linearisation temperature)"
        A = float(local_pre_exponential(linearise_at, c.A, c.n))
        Ea = float(local_activation_energy(linearise_at, c.n, c.Ea))
        return _Linearised(A, Ea, linearise_at, None, c.uncertainty_factor)
    if linearise_at is not None and not (
        c.T_min * (1 - 1e-12) <= linearise_at <= c.T_max * (1 + 1e-12)
    ):
        return f"{c.reaction_key} ({linearise_at:g} K is outside {c.T_min:g}-{c.T_max:g} K)"
    found = linearize_modified_arrhenius(c.A, c.n, c.Ea, c.T_min, c.T_max, linearise_at)
    deviation = float(found.max_ln_deviation)
    f298 = None
    if c.uncertainty_factor is not None:
        f298 = float(
            linearized_panel_factor(c.uncertainty_factor, c.uncertainty_g or 0.0, deviation).f298
        )
    return _Linearised(float(found.A), float(found.Ea), float(found.T_lin), deviation, f298)


def _largest_factor(c: ChosenRow, f298: float | None) -> float | None:
    """The largest f(T) over the row's range (f(298) when it states no range)."""
    if f298 is None:
        return None
    g = c.uncertainty_g or 0.0
    if c.T_min is None or c.T_max is None or g == 0.0:
        return f298
    return float(np.max(panel_uncertainty_factor(np.array([c.T_min, c.T_max, 298.0]), f298, g)))


def mechanism_table(
    session: Session,
    *,
    units: ExportUnits,
    form: str = "modified",
    linearise_at: float | None = None,
    leave_out_gaps: bool = False,
    reverse_as_fit: bool = False,
) -> MechanismTable:
    """Build the rows of the mechanism table (nothing is written here).

    With ``form="arrhenius"`` a row whose n is not 0 is replaced by its local
    two-parameter form (A T^n e^n, Ea + nRT) inside its own range: at
    ``linearise_at`` when given (refused for a row whose range does not hold
    it), else at the geometric middle of the range; only one-term rows
    (``arrhenius``, ``third-body``) are linearised, the other forms keep
    their n. The row records the
    temperature and the largest |ln k| deviation over its range, and its
    uncertainty factor includes that deviation. The reverse of a reversible
    reaction is described, or with ``reverse_as_fit`` written as a row of its
    own (:func:`ratebank.services.reverse.with_reverse`).
    """
    _check_form_options(form, linearise_at)
    factors = _Factors(units)
    energy_factor = float(energy_from_si(1.0, units.e_units))
    # the chosen expressions stream past: only the rows made of them are kept
    stream = ChosenStream(session)
    # each reaction's row as a plain tuple (a list of them for a sum), at its place in the
    # table's order (the stream comes by reaction id)
    placed: list[Any] = [None] * len(stream.keys)
    refused: dict[str, str] = {}
    for c in stream:
        linear = None
        if form == "arrhenius" and c.n != 0 and _form(c) in LINEARISED_FORMS:
            found = _linearised(c, linearise_at)
            if isinstance(found, str):
                refused[c.reaction_key] = found
                continue
            linear = found
        first = _row(c, linear, units, factors, energy_factor)
        if c.expression is not None and c.expression.terms:
            placed[c.at] = _rows(c, first, factors, energy_factor)  # type: ignore[index]
        else:
            placed[c.at] = first  # type: ignore[index]
    gaps = stream.gaps
    if gaps and not leave_out_gaps:
        raise ExportGapsError(gaps)
    if refused:
        reasons = [refused[key] for key in stream.keys if key in refused]
        raise BadInputError(
            f"{len(reasons)} expression(s) with n != 0 cannot be written as two-parameter "
            f"rows: {'; '.join(reasons[:20])}",
            argument="linearise_at",
        )
    rows = PackedRows()
    append = rows.append
    for at, found_rows in enumerate(placed):
        if found_rows is None:
            continue
        placed[at] = None
        if isinstance(found_rows, list):
            rows.extend(found_rows)
        else:
            append(found_rows)
    del placed
    rows, reverse = with_reverse(session, rows, units, as_fit=reverse_as_fit)
    left_out = gaps if leave_out_gaps else []
    return MechanismTable(
        rows, units, form, gaps, left_out=left_out, reverse=reverse, source_digest=stream.digest
    )


class _Factors(dict[int, float]):
    """The factor from SI to the table's k unit of each reaction order, found when needed."""

    def __init__(self, units: ExportUnits) -> None:
        super().__init__()
        self._units = units

    def __missing__(self, order: int) -> float:
        factor = self[order] = float(rate_from_si(1.0, self._units.k_unit(order), order))
        return factor


#: The forms whose row is one Arrhenius term, which a two-parameter export linearises.
LINEARISED_FORMS = ("arrhenius", "third-body")


def _form(c: ChosenRow) -> str:
    """The row's form by name (the reaction's plain form when stored empty)."""
    stored = c.expression.form if c.expression is not None else None
    return form_of(stored, c.third_body)


def _limit_columns(
    e: ExpressionRow | None, order: int, units: ExportUnits, factors: dict[int, float], ef: float
) -> dict[str, Any]:
    """k0 in the units of the reaction's order and the broadening of a falloff or activated
    expression (every column empty for the other forms)."""
    empty: dict[str, Any] = dict.fromkeys(FORM_COLUMNS[2:])
    if e is None or e.A_low is None:
        return empty
    kind = e.broadening or "none"
    return {
        **empty,
        "A_low": round_significant(e.A_low * factors[order]),
        "n_low": float(e.n_low or 0.0),
        "Ea_low": round_significant((e.Ea_low or 0.0) * ef),
        "k_low_units": units.k_unit(order),
        "broadening": kind,
        "Fc": e.Fc if kind == "fixed-fc" else None,
        "N": e.N if kind == "fixed-fc" else None,
        "troe_alpha": e.troe_alpha if kind == "troe" else None,
        "troe_T3_K": e.troe_T3 if kind == "troe" else None,
        "troe_T1_K": e.troe_T1 if kind == "troe" else None,
        "troe_T2_K": e.troe_T2 if kind == "troe" else None,
    }


#: The form columns of a row whose expression has one limit (all but ``form`` and ``term``).
_NO_LIMIT = (None,) * (len(FORM_COLUMNS) - 2)


def _rows(
    c: ChosenRow, first: tuple[Any, ...], factors: dict[int, float], energy_factor: float
) -> list[tuple[Any, ...]]:
    """The rows of a ``sum``: ``first`` (term 1), then one per further term."""
    assert c.expression is not None
    factor = factors[c.order]
    head = MechanismRow._make(first)
    return [first] + [
        tuple(
            head._replace(
                term=t.term,
                A=round_significant(t.A * factor),
                n=float(t.n),
                Ea=round_significant(t.Ea * energy_factor),
                T_min_K=t.T_min,
                T_max_K=t.T_max,
            )
        )
        for t in c.expression.terms
    ]


def _row(
    c: ChosenRow,
    linear: _Linearised | None,
    units: ExportUnits,
    factors: dict[int, float],
    energy_factor: float,
) -> tuple[Any, ...]:
    """The (first) row of one reaction, as a plain tuple of the :class:`MechanismRow`
    fields."""
    A, n, Ea, f298 = c.A, c.n, c.Ea, c.uncertainty_factor
    if linear is not None:
        A, n, Ea, f298 = linear.A, 0.0, linear.Ea, linear.f298
    e = c.expression
    form = form_of(e.form if e is not None else None, c.third_body)
    # A of falloff and activated is k_inf, one concentration fewer than the equation
    order = high_pressure_order(form, c.order)
    limits = (
        _NO_LIMIT
        if e is None or e.A_low is None
        else tuple(_limit_columns(e, c.order, units, factors, energy_factor).values())
    )
    return (
        c.reaction_key,
        c.equation,
        c.order,
        # unit conversion is a pure factor (k and A scale alike; K^-n is unchanged),
        # rounded to 15 digits so that a value given in these units reads back as given
        round_significant(A * factors[order]),
        float(n),
        round_significant(Ea * energy_factor),
        units.k_unit(order),
        units.e_units,
        c.T_min,
        c.T_max,
        c.origin,
        c.steric_factor,
        _largest_factor(c, f298),
        c.reference or "",
        f298,
        (c.uncertainty_g or 0.0) if f298 is not None else None,
        linear.T_lin if linear is not None else None,
        linear.max_ln_deviation if linear is not None else None,
        "none",  # the reverse, filled by services.reverse
        None,
        form,
        1,
        *limits,
        c.expression_id,
        c.rule,
    )
