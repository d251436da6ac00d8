"""Compare two states of a mechanism: releases, stores and exported data packages.

Each side of :func:`diff_sides` is read as a data package, in the form
``export`` writes (:mod:`ratebank.io.package` reads it, whatever its units):

- ``store``: what an export of the current store would hold now (reactions
  without a usable expression left out);
- ``release:NAME``, or ``NAME`` when the store holds a release of that name: the
  release's frozen content (:mod:`ratebank.io.releases`);
- a folder holding ``datapackage.json`` (or that file): an exported package;
- a SQLite file, or a ``postgresql://`` URL: what an export of that store would
  hold now.

Reactions are matched by key. A reaction present on one side only is added or
removed. For one on both sides, the fields that differ are listed (numbers in
SI, compared to 1e-12 relative: a package's unit conversion is not a change),
and the ratio k_B/k_A at each temperature is given with the older (A) row's
uncertainty factor f_A(T) = f(298) exp|g (1/T - 1/298)|; a change is beyond
the uncertainty when |ln(k_B/k_A)| > ln f_A(T). k is the effective k(T, P)
(:func:`ratebank.io.package.si_rate_at_pressure`, through
:func:`ratebank.science.rate_laws.rate_law`) at the stated pressure in a bath
gas of efficiency 1, so that a fall-off and a third-body reaction compare too.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, NotFoundError
from ratebank.io.export import DESCRIPTOR, PackageContent, package_content, package_files
from ratebank.io.package import (
    MechanismPackage,
    PackageReaction,
    package_of_files,
    read_package,
    si_rate_at_pressure,
)
from ratebank.io.releases import RELEASE_PRESET, release_content
from ratebank.science.pressure import bath_gas_concentration, pressure_to_si
from ratebank.science.uncertainty import panel_uncertainty_factor
from ratebank.services import mechanism
from ratebank.services.store_access import open_store
from ratebank.store.releases import release

#: Temperatures of the ratios when none are asked for [K] (with each row's range ends).
DEFAULT_TEMPERATURES = (300.0, 1000.0)
#: Numbers closer than this (relative) are the same number (a unit conversion's rounding).
SAME = 1e-12
#: Text columns of mechanism.csv compared as they are.
_TEXT_FIELDS = ("origin", "references", "reverse")
_NUMBER_FIELDS = ("uncertainty_f298", "uncertainty_g_K")
_BROADENING_FIELDS = ("Fc", "N", "troe_alpha", "troe_T3_K", "troe_T1_K", "troe_T2_K")


@dataclass(frozen=True)
class FieldChange:
    """One field of a reaction that differs: numbers in SI (A in its k unit, Ea J/mol)."""

    field: str
    before: Any
    after: Any


@dataclass(frozen=True)
class RatioAt:
    """k_B / k_A at one temperature, against the A row's uncertainty factor there."""

    T: float
    ratio: float
    #: f_A(T), or None when the A row states no uncertainty
    factor: float | None
    #: |ln ratio| > ln f_A(T); None without a factor
    beyond: bool | None


@dataclass(frozen=True)
class ReactionChange:
    key: str
    equation: str
    fields: list[FieldChange]
    ratios: list[RatioAt]
    #: largest |ln(k_B/k_A)| over the temperatures
    largest_ln_ratio: float
    #: largest |ln(k_B/k_A)| / ln f_A(T); None without a factor
    in_uncertainties: float | None

    @property
    def beyond_uncertainty(self) -> bool | None:
        """True when some |ln(k_B/k_A)| exceeds ln f_A(T); None when A states no factor."""
        if self.in_uncertainties is None:
            return None
        return self.in_uncertainties > 1.0


@dataclass(frozen=True)
class SideReaction:
    key: str
    equation: str


@dataclass(frozen=True)
class DiffReport:
    """What changed from side A to side B."""

    a: str
    b: str
    #: the pressure of the comparison [bar]
    pressure_bar: float
    added: list[SideReaction]
    removed: list[SideReaction]
    #: sorted by the change in uncertainties, then by the largest |ln ratio|
    changed: list[ReactionChange]

    @property
    def same(self) -> bool:
        return not (self.added or self.removed or self.changed)


# --------------------------------------------------------------------------- sides


def _content_package(label: str, content: PackageContent) -> MechanismPackage | None:
    if not content.table.rows:
        return None  # nothing to read: an empty side
    files, _ = package_files(content, label, "")
    return package_of_files(label, files)


def _store_content(session: Session, label: str) -> PackageContent:
    return package_content(
        session,
        units=mechanism.export_units(RELEASE_PRESET),
        leave_out_gaps=True,
        store_label=label,
    )


@contextmanager
def _other_session(address: str) -> Iterator[tuple[Session, str]]:
    """A read session of another store (refused when its schema is not this ratebank's)."""
    handle = open_store(address)
    try:
        with handle.session() as session:
            yield session, handle.display_url
    finally:
        handle.close()


def load_side(session: Session, spec: str) -> tuple[str, MechanismPackage | None]:
    """(a label, the side as a package; None when it holds no reaction) for ``spec``."""
    spec = spec.strip()
    if spec == "store":
        return "store", _content_package("store", _store_content(session, "store"))
    name = spec[len("release:") :] if spec.startswith("release:") else None
    if name is None and release(session, spec) is not None:
        name = spec
    if name is not None:
        label = f"release:{name}"
        return label, _content_package(label, release_content(session, name))
    if spec.startswith(("postgresql://", "postgresql+psycopg://")):
        return _other_store(spec)
    path = Path(spec).expanduser()
    if path.is_dir() or path.name == DESCRIPTOR:
        return str(path), read_package(path)
    if path.is_file():
        return _other_store(str(path))
    raise NotFoundError(
        f"{spec!r} is no release of this store, nor a store, nor an exported package; a side "
        "is store, release:NAME, a release's name, a store's path or URL, or a package folder"
    )


def _other_store(address: str) -> tuple[str, MechanismPackage | None]:
    with _other_session(address) as (other, label):
        return label, _content_package(label, _store_content(other, label))


# --------------------------------------------------------------------------- fields


def _number(text: str | None) -> float | None:
    text = (text or "").strip()
    return float(text) if text else None


def _text(cell: str | None) -> str:
    cell = cell or ""
    return cell[1:] if cell.startswith("'") else cell


def reaction_fields(r: PackageReaction, rows: Sequence[dict[str, str]]) -> dict[str, Any]:
    """The compared fields of a reaction, numbers in SI (A in the SI unit of its order)."""
    found: dict[str, Any] = {"equation": r.equation, "form": r.form}
    many = len(r.terms) > 1
    for number, ((A, n, Ea), row) in enumerate(zip(r.terms, rows, strict=True), start=1):
        suffix = f" (term {number})" if many else ""
        found |= {f"A{suffix}": A, f"n{suffix}": n, f"Ea{suffix}": Ea}
        found[f"T_min_K{suffix}"] = _number(row.get("T_min_K"))
        found[f"T_max_K{suffix}"] = _number(row.get("T_max_K"))
    if r.low is not None:
        found |= dict(zip(("A_low", "n_low", "Ea_low"), r.low, strict=True))
        first = rows[0]
        found["broadening"] = (first.get("broadening") or "none").strip()
        found |= {c: _number(first.get(c)) for c in _BROADENING_FIELDS}
    first = rows[0]
    found |= {c: _text(first.get(c)) for c in _TEXT_FIELDS}
    found |= {c: _number(first.get(c)) for c in _NUMBER_FIELDS}
    found["efficiencies"] = dict(sorted(r.efficiencies.items())) if r.third_body else {}
    return found


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return a == b or math.isclose(a, b, rel_tol=SAME, abs_tol=0.0)
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(_same(a[k], b[k]) for k in a)
    return a == b


def field_changes(before: dict[str, Any], after: dict[str, Any]) -> list[FieldChange]:
    names = list(before) + [name for name in after if name not in before]
    return [
        FieldChange(name, before.get(name), after.get(name))
        for name in names
        if not _same(before.get(name), after.get(name))
    ]


# --------------------------------------------------------------------------- ratios


def _range(fields: dict[str, Any]) -> tuple[float, float] | None:
    lows = [v for k, v in fields.items() if k.startswith("T_min_K") and v is not None]
    highs = [v for k, v in fields.items() if k.startswith("T_max_K") and v is not None]
    return (min(lows), max(highs)) if lows and highs else None


def temperatures_of(
    before: dict[str, Any], after: dict[str, Any], asked: Sequence[float] | None
) -> list[float]:
    """The temperatures asked for; by default 300 K, 1000 K and both rows' range ends, those
    inside either row's range (all of them when a row states none)."""
    if asked:
        return sorted(set(asked))
    ranges = [_range(before), _range(after)]
    ends = [T for found in ranges if found is not None for T in found]
    candidates = sorted(set(DEFAULT_TEMPERATURES) | set(ends))
    if any(found is None for found in ranges):
        return candidates
    return [T for T in candidates if any(lo <= T <= hi for lo, hi in ranges)]  # type: ignore[misc]


def ratios(
    a: PackageReaction,
    b: PackageReaction,
    fields_a: dict[str, Any],
    temperatures: Sequence[float],
    pressure_pa: float,
) -> list[RatioAt]:
    T = np.asarray(temperatures, dtype=float)
    M = bath_gas_concentration(pressure_pa, T)
    k_a = si_rate_at_pressure(a, T, M)
    k_b = si_rate_at_pressure(b, T, M)
    # k of different orders (a changed equation) has no ratio
    ratio = k_b / k_a if a.effective_order() == b.effective_order() else np.full(T.shape, np.nan)
    f298 = fields_a.get("uncertainty_f298")
    factors = None
    if f298 is not None and f298 > 1.0:
        factors = panel_uncertainty_factor(T, f298, fields_a.get("uncertainty_g_K") or 0.0)
    found = []
    for i, temperature in enumerate(T):
        factor = None if factors is None else float(factors[i])
        value = float(ratio[i])
        beyond = None
        if factor is not None and math.isfinite(value):
            beyond = abs(math.log(value)) > math.log(factor)
        found.append(RatioAt(float(temperature), value, factor, beyond))
    return found


def _change(
    a: PackageReaction,
    b: PackageReaction,
    fields: tuple[dict[str, Any], dict[str, Any]],
    temperatures: Sequence[float] | None,
    pressure_pa: float,
) -> ReactionChange:
    at = temperatures_of(fields[0], fields[1], temperatures)
    found = ratios(a, b, fields[0], at, pressure_pa)
    logs = [abs(math.log(r.ratio)) for r in found if math.isfinite(r.ratio)]
    largest = max(logs, default=math.inf if found else 0.0)
    scaled = [
        abs(math.log(r.ratio)) / math.log(r.factor)
        for r in found
        if r.factor is not None and math.isfinite(r.ratio)
    ]
    return ReactionChange(
        b.key, b.equation, field_changes(*fields), found, largest, max(scaled, default=None)
    )


def _sort_key(change: ReactionChange) -> tuple[float, float, str]:
    scaled = change.in_uncertainties
    return (-(scaled if scaled is not None else -1.0), -change.largest_ln_ratio, change.key)


def compare(
    sides: tuple[tuple[str, MechanismPackage | None], tuple[str, MechanismPackage | None]],
    *,
    temperatures: Sequence[float] | None = None,
    pressure_bar: float = 1.0,
) -> DiffReport:
    """What changed from the first side to the second (see the module docstring)."""
    (label_a, a), (label_b, b) = sides
    reactions_a = a.reactions if a is not None else {}
    reactions_b = b.reactions if b is not None else {}
    pressure_pa = float(pressure_to_si(pressure_bar, "bar"))
    changed = []
    for key in reactions_b.keys() & reactions_a.keys():
        ra, rb = reactions_a[key], reactions_b[key]
        fields = (reaction_fields(ra, a.rows[key]), reaction_fields(rb, b.rows[key]))  # type: ignore[union-attr]
        if field_changes(*fields):
            changed.append(_change(ra, rb, fields, temperatures, pressure_pa))
    return DiffReport(
        label_a,
        label_b,
        pressure_bar,
        added=[SideReaction(k, r.equation) for k, r in reactions_b.items() if k not in reactions_a],
        removed=[
            SideReaction(k, r.equation) for k, r in reactions_a.items() if k not in reactions_b
        ],
        changed=sorted(changed, key=_sort_key),
    )


def _checked(temperatures: Sequence[float] | None, pressure_bar: float) -> None:
    for T in temperatures or ():
        if not (math.isfinite(T) and T > 0):
            raise BadInputError(f"temperature {T!r} K: expected above 0 K", argument="temperatures")
    if not (math.isfinite(pressure_bar) and pressure_bar > 0):
        raise BadInputError(f"pressure {pressure_bar!r} bar: expected above 0", argument="pressure")


def diff_sides(
    session: Session,
    a: str,
    b: str,
    *,
    temperatures: Sequence[float] | None = None,
    pressure_bar: float = 1.0,
) -> DiffReport:
    """Compare the sides ``a`` and ``b`` (see the module docstring); a DiffReport."""
    _checked(temperatures, pressure_bar)
    sides = (load_side(session, a), load_side(session, b))
    return compare(sides, temperatures=temperatures, pressure_bar=pressure_bar)
