"""The rate-law form of an expressions-file row: its columns, checked and converted to SI.

The expressions file names a row's form in ``form`` (empty: the reaction's
plain form, ``arrhenius``, or ``third-body`` for a reaction written with M),
numbers the terms of a ``sum`` in ``term``, and gives the low-pressure limit
of ``falloff`` and ``activated`` in ``A_low``, ``n_low``, ``Ea_low`` (in
``k_low_units``, by default ``k_units`` with one concentration more; ``Ea_low``
in ``Ea_units``) and the broadening in ``broadening`` (``none``, ``troe`` or
``fixed-fc``) with ``Fc``, ``N``, ``troe_alpha``, ``troe_T3_K``,
``troe_T1_K``, ``troe_T2_K``. The usual ``A``, ``n``, ``Ea`` of those two forms
are the high-pressure limit.

Which form fits which reaction: a reaction written with M (``H + O2 + M ->
HO2 + M``) takes ``third-body``, ``falloff`` or ``sum``; one written without M
takes ``arrhenius``, ``sum`` or ``activated``. k0 has the order of the
equation (M counted), k_inf one concentration fewer.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

from ratebank.errors import UnitError
from ratebank.science.units import parse_energy_unit, parse_rate_unit, rate_units_by_order
from ratebank.store.expressions import Broadening, plain_form
from ratebank.store.models import BROADENINGS, FORMS

#: The form columns of the expressions file, after the columns every form has.
FORM_COLUMNS = (
    "form",
    "term",
    "A_low",
    "n_low",
    "Ea_low",
    "k_low_units",
    "broadening",
    "Fc",
    "N",
    "troe_alpha",
    "troe_T3_K",
    "troe_T1_K",
    "troe_T2_K",
)
LIMIT_FORMS = ("falloff", "activated")
_WITH_M = ("third-body", "falloff", "sum")
_WITHOUT_M = ("arrhenius", "sum", "activated")
_BROADENING_CELLS = ("Fc", "N", "troe_alpha", "troe_T3_K", "troe_T1_K", "troe_T2_K")
_BROADENING_NEEDS = {
    "none": (),
    "troe": ("troe_alpha", "troe_T3_K", "troe_T1_K"),
    "fixed-fc": ("Fc",),
}
_BROADENING_TAKES = {
    "none": (),
    "troe": ("troe_alpha", "troe_T3_K", "troe_T1_K", "troe_T2_K"),
    "fixed-fc": ("Fc", "N"),
}


@dataclass(frozen=True)
class RowForm:
    """The form of one row: its name, term number, k0 (SI) and broadening."""

    form: str
    term: int
    low: tuple[float, float, float] | None = None
    broadening: Broadening | None = None
    k_low_units: str | None = None


class FormCheck:
    """Reads the form columns of one row; problems are (column, message) pairs."""

    def __init__(self, row: Mapping[str, str | None], number) -> None:  # type: ignore[no-untyped-def]
        self.row = row
        self.number = number  # (column, what, minimum) -> float | None, reporting problems
        self.problems: list[tuple[str, str]] = []

    def cell(self, column: str) -> str | None:
        value = self.row.get(column)
        return value.strip() or None if value is not None else None

    def form(self, third_body: bool) -> str | None:
        """The row's form, or None (a problem is recorded) when it cannot be used."""
        form = self.cell("form") or plain_form(third_body)
        if form not in FORMS:
            self.problems.append(("form", f"{form!r} is not one of {', '.join(FORMS)}"))
            return None
        allowed = _WITH_M if third_body else _WITHOUT_M
        if form not in allowed:
            self.problems.append(("form", _misfit(form, third_body)))
            return None
        return form

    def term(self, form: str) -> int:
        text = self.cell("term")
        if text is None:
            return 1
        try:
            value = float(text)
        except ValueError:
            value = math.nan
        if not value.is_integer() or value < 1:
            self.problems.append(("term", f"{text!r} is not a term number 1, 2, 3, ..."))
            return 1
        if form != "sum" and value != 1:
            self.problems.append(
                ("term", f"a {form} expression has one term; term {text} is for sum")
            )
        return int(value)

    def low_pressure(self, form: str, order: int, k_units: str | None, Ea_units: str | None):  # type: ignore[no-untyped-def]
        """(k0 in SI, its unit) of a falloff or activated row; refuses k0 on other forms."""
        given = [c for c in ("A_low", "n_low", "Ea_low", "k_low_units") if self.cell(c)]
        if form not in LIMIT_FORMS:
            if given:
                self.problems.append(
                    (given[0], f"is given, but a {form} expression has no low-pressure limit")
                )
            return None, None
        A = self.number("A_low", "a low-pressure A above zero", None)
        n = self.number("n_low", "a temperature exponent", None)
        Ea = self.number("Ea_low", "an activation energy", None)
        if self.cell("A_low") is None:
            self.problems.append(("A_low", f"is empty; a {form} expression needs k0 (A_low)"))
            return None, None
        if A is not None and A <= 0:
            self.problems.append(("A_low", f"{A:g} must be greater than zero"))
            return None, None
        unit = self.cell("k_low_units") or _one_more_concentration(k_units)
        if unit is None:
            self.problems.append(
                (
                    "k_low_units",
                    f"is empty, and k_units {k_units!r} does not say the volume; "
                    "give the unit of A_low (e.g. cm3/molecule/s)",
                )
            )
            return None, None
        try:
            factor = parse_rate_unit(unit, order=order).to_si
        except UnitError as exc:
            self.problems.append(("k_low_units", str(exc)))
            return None, None
        Ea_si = 0.0
        if Ea is not None and Ea_units:
            try:
                Ea_si = Ea * parse_energy_unit(Ea_units).to_si
            except UnitError:
                return None, None  # reported with Ea_units
        if A is None or (n is None and self.cell("n_low") is not None):
            return None, None
        return (A * factor, n or 0.0, Ea_si), unit

    def broadening(self, form: str) -> Broadening | None:
        kind = self.cell("broadening")
        given = [c for c in _BROADENING_CELLS if self.cell(c)]
        if form not in LIMIT_FORMS:
            if kind or given:
                self.problems.append(
                    (
                        "broadening" if kind else given[0],
                        f"is given, but a {form} expression has no broadening",
                    )
                )
            return None
        kind = kind or "none"
        if kind not in BROADENINGS:
            self.problems.append(("broadening", f"{kind!r} is not one of {', '.join(BROADENINGS)}"))
            return None
        for column in given:
            if column not in _BROADENING_TAKES[kind]:
                self.problems.append((column, f"is given, but broadening {kind!r} does not use it"))
        for column in _BROADENING_NEEDS[kind]:
            if self.cell(column) is None:
                self.problems.append((column, f"is empty; broadening {kind!r} needs it"))
        values = {c: self.number(c, *_BROADENING_BOUNDS[c]) for c in _BROADENING_TAKES[kind]}
        Fc = values.get("Fc")
        if Fc is not None and not 0 < Fc <= 1:
            self.problems.append(("Fc", f"{Fc:g} is outside (0, 1]; expected a centre factor"))
        return Broadening(
            kind=kind,
            Fc=Fc,
            N=values.get("N"),
            alpha=values.get("troe_alpha"),
            T3=values.get("troe_T3_K"),
            T1=values.get("troe_T1_K"),
            T2=values.get("troe_T2_K"),
        )


_BROADENING_BOUNDS = {
    "Fc": ("a centre broadening factor in (0, 1]", None),
    "N": ("a width N above zero", "positive"),
    "troe_alpha": ("Troe's alpha", None),
    "troe_T3_K": ("T*** in K, above zero", "positive"),
    "troe_T1_K": ("T* in K, above zero", "positive"),
    "troe_T2_K": ("T** in K, above zero", "positive"),
}


def _misfit(form: str, third_body: bool) -> str:
    if third_body:
        hint = "; a chemically activated channel is written without M"
        return f"a reaction written with M takes third-body, falloff or sum, not {form}" + (
            hint if form == "activated" else ""
        )
    hint = "; write the equation with M (e.g. H + O2 + M -> HO2 + M)"
    return f"a reaction written without M takes arrhenius, sum or activated, not {form}" + (
        hint if form in ("falloff", "third-body") else ""
    )


def _one_more_concentration(k_units: str | None) -> str | None:
    """``k_units`` with one concentration more (cm3/molecule/s -> cm6/molecule2/s), or None
    when it does not say the volume (s-1) or is not a unit."""
    if not k_units:
        return None
    try:
        order = parse_rate_unit(k_units).order
        return rate_units_by_order(k_units).get(order + 1)
    except UnitError:
        return None


def high_pressure_order(form: str, order: int) -> int:
    """The order of A (k_inf) of a ``falloff`` or ``activated`` expression: one fewer than the
    equation's; the equation's own for every other form."""
    return order - 1 if form in LIMIT_FORMS else order
