"""Read an exported data package back into an evaluator of k(T, P) for a modeller's code.

:func:`read_package` reads the folder ``ratebank export`` writes (its
``datapackage.json``, ``mechanism.csv`` and ``efficiencies.csv``; see
:mod:`ratebank.io.export`), checks the descriptor, and returns a
:class:`MechanismPackage`. Its :meth:`~MechanismPackage.rate_constants`
gives k of every reaction as numpy arrays, vectorised over T, in the
package's own units::

    package = ratebank.read_package("mechanism")
    k = package.rate_constants([300.0, 1000.0], P=1.0, mixture="N2:0.78,O2:0.21")
    k["h-o2-m"]                  # array of two k, in package.k_units(pressure=True)["h-o2-m"]

Every number goes through :func:`ratebank.science.rate_laws.rate_law`, the one
formula of each form that ``ratebank rate`` uses too: the package's numbers
are converted to SI (its ``k_units``, ``k_low_units`` and ``Ea_units``),
evaluated, and k converted back to the package's unit of its order.

Which k a reaction gives:

- with a pressure ``P``: the effective k(T, P). A reaction written with M
  (``third-body``, ``falloff``, a ``sum`` of third-body coefficients) gives k
  [M]_eff folded in, of one order fewer than its equation; an ``activated``
  channel gives k of its equation's order; ``arrhenius`` and a ``sum``
  without M ignore P. [M] = P/(R T) (ideal gas), [M]_eff = [M] sum_i eps_i
  x_i with the reaction's efficiencies (1 for a species not listed).
- without ``P``: the k each form states on its own: the plain k, the
  third-body coefficient k0 (the equation's order, M counted); a ``falloff``
  or ``activated`` reaction cannot be evaluated without a pressure and is an
  error that names it (ask for the other reactions with ``keys``).

The units of each reaction's k are :meth:`MechanismPackage.k_units`.
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ratebank.errors import BadInputError, RatebankError
from ratebank.io.export import (
    DESCRIPTOR,
    EFFICIENCIES,
    MECHANISM,
    PACKAGE_FORMAT,
    PACKAGE_KIND,
)
from ratebank.science.equation import parse_equation
from ratebank.science.falloff import FixedCentreBroadening, TroeBroadening
from ratebank.science.pressure import (
    bath_gas_concentration,
    collision_efficiencies,
    effective_third_body_concentration,
    parse_mixture,
    pressure_to_si,
)
from ratebank.science.rate_laws import rate_law
from ratebank.science.units import energy_to_si, rate_from_si, rate_to_si, rate_units_by_order

__all__ = ["MechanismPackage", "PackageError", "PackageReaction", "read_package"]

#: The mechanism table's columns the reader needs.
_NEEDED = ("key", "equation", "order", "A", "n", "Ea", "k_units", "Ea_units", "form", "term")
_LIMIT_FORMS = ("falloff", "activated")
_FORMS = ("arrhenius", "sum", "third-body", "falloff", "activated")

Triple = tuple[float, float, float]


class PackageError(RatebankError):
    """A data package that cannot be read: one line saying where and what."""


@dataclass(frozen=True)
class PackageReaction:
    """One reaction of a package, its numbers in SI (A [k unit in SI times K^-n], Ea [J/mol])."""

    key: str
    equation: str
    order: int
    form: str
    third_body: bool
    terms: tuple[Triple, ...]
    low: Triple | None
    broadening: Any
    efficiencies: dict[str, float] = field(default_factory=dict)
    #: k units of the package: (of the pressure-free k, of k at a pressure)
    units: tuple[str, str] = ("", "")

    @property
    def pressure_dependent(self) -> bool:
        """True when k needs a pressure (falloff, activated)."""
        return self.form in _LIMIT_FORMS

    def effective_order(self) -> int:
        """The order of k at a pressure: one fewer than the equation's for a reaction written
        with M, the equation's own otherwise."""
        return self.order - 1 if self.third_body else self.order


class MechanismPackage:
    """The reactions of a data package, evaluated by :meth:`rate_constants`.

    ``keys`` lists the reactions in the order of the mechanism table;
    ``descriptor`` is the package's ``datapackage.json`` as read.
    """

    def __init__(
        self,
        path: Path,
        reactions: Sequence[PackageReaction],
        descriptor: dict,
        rows: Mapping[str, Sequence[Mapping[str, str]]] | None = None,
    ):
        self.path = path
        self.reactions = {r.key: r for r in reactions}
        self.keys = tuple(self.reactions)
        self.descriptor = descriptor
        #: {key: the reaction's rows of mechanism.csv as read (text cells)}
        self.rows = dict(rows or {})

    def k_units(self, *, pressure: bool = True) -> dict[str, str]:
        """{key: unit of the k that :meth:`rate_constants` gives}, with or without ``P``."""
        return {key: r.units[1 if pressure else 0] for key, r in self.reactions.items()}

    def rate_constants(
        self,
        T,
        P=None,
        mixture: str | Mapping[str, float] | None = None,
        *,
        pressure_unit: str = "bar",
        keys: Iterable[str] | None = None,
    ) -> dict[str, np.ndarray]:
        """k of every reaction (of ``keys`` when given) at the temperatures ``T`` [K].

        Parameters
        ----------
        T : array_like
            Temperatures [K], positive; any shape.
        P : array_like, optional
            Pressure in ``pressure_unit`` (bar by default; Pa, kPa, atm, Torr, mbar
            accepted), broadcast against T. Required by ``falloff`` and ``activated``.
        mixture : str or mapping, optional
            Mole fractions of the bath gas, ``"N2:0.78,O2:0.21"`` or ``{"N2": 0.78, ...}``
            (summing to 1 within 1 %); each reaction's efficiencies weight them. None: a
            bath gas of efficiency 1.
        keys : iterable of str, optional
            The reactions to evaluate (default: all).

        Returns
        -------
        dict of str to numpy.ndarray
            k in the units :meth:`k_units` names (``pressure=P is not None``), with the
            broadcast shape of T and P.
        """
        T = np.asarray(T, dtype=float)
        if T.size == 0 or not np.all(np.isfinite(T) & (T > 0)):
            raise BadInputError("T must hold temperatures above 0 K", argument="T")
        wanted = self._wanted(keys)
        if P is None:
            if mixture is not None:
                raise BadInputError("a mixture needs a pressure P", argument="mixture")
            needing = [key for key in wanted if self.reactions[key].pressure_dependent]
            if needing:
                raise BadInputError(
                    f"{', '.join(needing[:10])} {'is' if len(needing) == 1 else 'are'} "
                    "pressure-dependent (falloff or activated): give a pressure P, or leave "
                    "them out with keys",
                    argument="P",
                )
            return {key: self._pressure_free(self.reactions[key], T) for key in wanted}
        M = bath_gas_concentration(pressure_to_si(P, pressure_unit), T)
        names, fractions = _mixture(mixture)
        return {
            key: self._at_pressure(self.reactions[key], T, M, names, fractions) for key in wanted
        }

    def _wanted(self, keys: Iterable[str] | None) -> list[str]:
        if keys is None:
            return list(self.keys)
        wanted = [keys] if isinstance(keys, str) else list(keys)
        unknown = [key for key in wanted if key not in self.reactions]
        if unknown:
            raise BadInputError(
                f"no reaction {unknown[0]!r} in the package {self.path}", argument="keys"
            )
        return wanted

    @staticmethod
    def _pressure_free(r: PackageReaction, T: np.ndarray) -> np.ndarray:
        k = rate_law(T, r.form, r.terms).k
        return np.asarray(rate_from_si(k, r.units[0], r.order), dtype=float)

    @staticmethod
    def _at_pressure(r, T, M, names, fractions) -> np.ndarray:  # type: ignore[no-untyped-def]
        k = si_rate_at_pressure(r, T, M, names, fractions)
        return np.asarray(rate_from_si(k, r.units[1], r.effective_order()), dtype=float)


def si_rate_at_pressure(
    r: PackageReaction,
    T: np.ndarray,
    M: np.ndarray,
    names: Sequence[str] = (),
    fractions: np.ndarray | None = None,
) -> np.ndarray:
    """k(T, [M]) of one reaction in SI (its order at a pressure, see the module docstring);
    without ``names``, a bath gas of efficiency 1."""
    if not r.third_body and r.form in ("arrhenius", "sum"):
        return rate_law(T, r.form, r.terms).k * np.ones(np.shape(M))
    eps = collision_efficiencies(names, r.efficiencies) if names else None
    weights = fractions if names and fractions is not None else np.ones(1)
    M_eff = effective_third_body_concentration(M, weights, eps)
    return rate_law(T, r.form, r.terms, low=r.low, broadening=r.broadening, M=M_eff).k


def _mixture(mixture: str | Mapping[str, float] | None) -> tuple[tuple[str, ...], np.ndarray]:
    if mixture is None:
        return (), np.ones(1)
    if isinstance(mixture, Mapping):
        text = ",".join(f"{name}:{float(x)!r}" for name, x in mixture.items())
    else:
        text = mixture
    found = parse_mixture(text)
    return found.names, found.fractions


# --------------------------------------------------------------------------- reading


def read_package(path: str | Path) -> MechanismPackage:
    """Read the data package folder ``path`` (or its ``datapackage.json``); a
    :class:`MechanismPackage`. A package that is not a ratebank export, or a row
    that cannot be read, is a :class:`PackageError` naming the file, line and column."""
    folder = Path(path).expanduser()
    if folder.name == DESCRIPTOR:
        folder = folder.parent
    descriptor = _descriptor(folder)
    efficiencies = _efficiencies(folder / _resource_path(descriptor, "efficiencies", folder))
    table = folder / _resource_path(descriptor, "mechanism", folder)
    rows = _mechanism_rows(table)
    return MechanismPackage(
        folder, _reactions(table, rows, efficiencies), descriptor, _rows_by_key(rows)
    )


def package_of_files(label: str | Path, files: Mapping[str, str]) -> MechanismPackage:
    """The package whose files (``{file name: text}``, as the export makes them) are in
    memory; ``label`` stands for its folder in messages."""
    folder = Path(label)
    descriptor = json.loads(files[DESCRIPTOR])
    efficiencies = _efficiencies(folder / EFFICIENCIES, files[EFFICIENCIES])
    rows = _mechanism_rows(folder / MECHANISM, files[MECHANISM])
    return MechanismPackage(
        folder, _reactions(folder / MECHANISM, rows, efficiencies), descriptor, _rows_by_key(rows)
    )


def _rows_by_key(rows: list[tuple[int, dict[str, str]]]) -> dict[str, list[dict[str, str]]]:
    grouped: dict[str, list[dict[str, str]]] = {}
    for _, row in rows:
        grouped.setdefault(_text(row["key"]), []).append(row)
    return grouped


def _descriptor(folder: Path) -> dict[str, Any]:
    where = folder / DESCRIPTOR
    if not where.is_file():
        raise PackageError(f"{where}: not found; expected the folder ratebank export writes")
    try:
        descriptor = json.loads(where.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise PackageError(f"{where}: cannot be read as JSON ({exc})") from None
    block = descriptor.get("ratebank") if isinstance(descriptor, dict) else None
    if not isinstance(block, dict) or block.get("package") != PACKAGE_KIND:
        raise PackageError(f"{where}: ratebank.package: expected {PACKAGE_KIND!r}")
    if block.get("package_format") != PACKAGE_FORMAT:
        raise PackageError(
            f"{where}: ratebank.package_format: {block.get('package_format')!r} is not "
            f"{PACKAGE_FORMAT}, the format this ratebank reads"
        )
    return descriptor


def _resource_path(descriptor: dict[str, Any], name: str, folder: Path) -> str:
    for resource in descriptor.get("resources") or []:
        if isinstance(resource, dict) and resource.get("name") == name:
            path = resource.get("path")
            if not isinstance(path, str) or "/" in path or path.startswith("."):
                raise PackageError(f"{folder / DESCRIPTOR}: resource {name}: bad path {path!r}")
            return path
    expected = {"mechanism": MECHANISM, "efficiencies": EFFICIENCIES}[name]
    raise PackageError(f"{folder / DESCRIPTOR}: resources: no {name!r} resource ({expected})")


def _csv_rows(
    path: Path, needed: Sequence[str], text: str | None = None
) -> list[tuple[int, dict[str, str]]]:
    try:
        source = io.StringIO(text, newline="") if text is not None else None
        with source or path.open(encoding="utf-8", newline="") as handle:
            reader = csv.DictReader(handle)
            header = reader.fieldnames or []
            missing = [c for c in needed if c not in header]
            if missing:
                raise PackageError(f"{path}:1: {missing[0]}: column missing from the header")
            return [(reader.line_num, row) for row in reader]
    except (OSError, UnicodeDecodeError, csv.Error) as exc:
        raise PackageError(f"{path}: cannot be read ({exc})") from None


def _efficiencies(path: Path, text: str | None = None) -> dict[str, dict[str, float]]:
    found: dict[str, dict[str, float]] = {}
    for line, row in _csv_rows(path, ("reaction", "species", "efficiency"), text):
        value = _number(path, line, row, "efficiency")
        if value is None or value < 0:
            raise PackageError(f"{path}:{line}: efficiency: expected a number not below 0")
        found.setdefault(_text(row["reaction"]), {})[_text(row["species"])] = value
    return found


def _text(cell: str | None) -> str:
    """A text cell as stored: one leading apostrophe (the export's protection) removed."""
    cell = cell or ""
    return cell[1:] if cell.startswith("'") else cell


def _number(path: Path, line: int, row: Mapping[str, str], column: str) -> float | None:
    text = (row.get(column) or "").strip()
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not math.isfinite(value):
        raise PackageError(f"{path}:{line}: {column}: {text!r} is not a finite number")
    return value


def _mechanism_rows(path: Path, text: str | None = None) -> list[tuple[int, dict[str, str]]]:
    rows = _csv_rows(path, _NEEDED, text)
    if not rows:
        raise PackageError(f"{path}: holds no reactions")
    return rows


def _reactions(
    path: Path, rows: list[tuple[int, dict[str, str]]], efficiencies: dict[str, dict[str, float]]
) -> list[PackageReaction]:
    grouped: dict[str, list[tuple[int, dict[str, str]]]] = {}
    for line, row in rows:
        grouped.setdefault(_text(row["key"]), []).append((line, row))
    return [
        _reaction(path, key, found, efficiencies.get(key, {})) for key, found in grouped.items()
    ]


def _si_term(path, line, row, prefix: str, units_column: str, order: int) -> Triple:  # type: ignore[no-untyped-def]
    A = _number(path, line, row, "A" + prefix)
    if A is None or A <= 0:
        raise PackageError(f"{path}:{line}: A{prefix}: expected a number above 0")
    n = _number(path, line, row, "n" + prefix) or 0.0
    Ea = _number(path, line, row, "Ea" + prefix) or 0.0
    try:
        A_si = float(rate_to_si(A, row.get(units_column) or "", order))
        Ea_si = float(energy_to_si(Ea, row.get("Ea_units") or ""))
    except BadInputError as exc:
        raise PackageError(f"{path}:{line}: {units_column}: {exc}") from None
    return (A_si, n, Ea_si)


def _reaction(path: Path, key: str, rows, efficiencies: dict[str, float]) -> PackageReaction:  # type: ignore[no-untyped-def]
    line, first = rows[0]
    form = (first.get("form") or "").strip()
    if form not in _FORMS:
        raise PackageError(f"{path}:{line}: form: {form!r} is not one of {', '.join(_FORMS)}")
    order = _number(path, line, first, "order")
    if order is None or not order.is_integer() or not 1 <= order <= 3:
        raise PackageError(f"{path}:{line}: order: expected 1, 2 or 3")
    order = int(order)
    equation = _text(first.get("equation"))
    try:
        third_body = parse_equation(equation).third_body
    except BadInputError as exc:
        raise PackageError(f"{path}:{line}: equation: {exc}") from None
    if len(rows) > 1 and form != "sum":
        raise PackageError(f"{path}:{rows[1][0]}: key: {key!r} appears twice (only a sum does)")
    high_order = order - 1 if form in _LIMIT_FORMS else order
    terms = tuple(_si_term(path, n, row, "", "k_units", high_order) for n, row in rows)
    low = None
    if form in _LIMIT_FORMS:
        low = _si_term(path, line, first, "_low", "k_low_units", order)
    broadening = _broadening(path, line, first) if form in _LIMIT_FORMS else None
    return PackageReaction(
        key=key,
        equation=equation,
        order=order,
        form=form,
        third_body=third_body,
        terms=terms,
        low=low,
        broadening=broadening,
        efficiencies=efficiencies,
        units=_units(path, line, first, form, third_body, order),
    )


def _units(path: Path, line: int, row, form: str, third_body: bool, order: int) -> tuple[str, str]:  # type: ignore[no-untyped-def]
    """(the unit of k without a pressure, at a pressure): the package's own units."""
    k_units = row.get("k_units") or ""
    free = "" if form in _LIMIT_FORMS else k_units
    if form == "activated":
        return free, row.get("k_low_units") or ""
    if form == "falloff" or not third_body:
        return free, k_units
    try:
        return free, rate_units_by_order(k_units)[order - 1]
    except (BadInputError, KeyError):
        raise PackageError(
            f"{path}:{line}: k_units: {k_units!r} has no unit of order {order - 1}"
        ) from None


def _broadening(path: Path, line: int, row: Mapping[str, str]):  # type: ignore[no-untyped-def]
    kind = (row.get("broadening") or "none").strip()
    values = {c: _number(path, line, row, c) for c in ("Fc", "N", "troe_alpha", "troe_T3_K")}
    values.update({c: _number(path, line, row, c) for c in ("troe_T1_K", "troe_T2_K")})
    try:
        if kind == "troe":
            return TroeBroadening(
                values["troe_alpha"], values["troe_T3_K"], values["troe_T1_K"], values["troe_T2_K"]
            )
        if kind == "fixed-fc":
            return FixedCentreBroadening(values["Fc"], values["N"])
    except (BadInputError, TypeError, ValueError) as exc:
        raise PackageError(f"{path}:{line}: broadening: {exc}") from None
    if kind != "none":
        raise PackageError(f"{path}:{line}: broadening: {kind!r} is not none, troe or fixed-fc")
    return None
