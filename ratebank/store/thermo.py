"""Species thermochemistry, reaction stoichiometry and reverse rules, read and written.

A species' thermochemistry is one row of ``species_thermo``: the two
seven-coefficient polynomials (McBride, Gordon & Reno, NASA TM-4513, 1993)
with their range [K], how they were obtained and, for fitted ones, the
largest deviations of the fit. Values are SI: K, J mol^-1, J mol^-1 K^-1.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any, NamedTuple

from sqlalchemy import delete, insert, select, update
from sqlalchemy.orm import Session

from ratebank.store.bulk import fetch_in
from ratebank.store.models import (
    HIGH_COEFFICIENTS,
    LOW_COEFFICIENTS,
    Reaction,
    Species,
    SpeciesThermo,
    utc_now,
)


class ThermoRow(NamedTuple):
    """The stored thermochemistry of one species."""

    species_id: int
    species: str
    T_low: float
    T_mid: float
    T_high: float
    #: a1..a7 of T_low..T_mid
    low: tuple[float, ...]
    #: a1..a7 of T_mid..T_high
    high: tuple[float, ...]
    method: str
    source: str | None
    #: largest |Cp_fit / Cp - 1| [-]
    max_cp_deviation: float | None
    #: largest |H_fit - H| [J mol-1]
    max_H_deviation: float | None
    #: largest |S_fit - S| [J mol-1 K-1]
    max_S_deviation: float | None
    fit_points: int | None
    updated_at: Any
    updated_by: str | None


_THERMO_COLUMNS = (
    SpeciesThermo.species_id,
    Species.name,
    SpeciesThermo.t_low,
    SpeciesThermo.t_mid,
    SpeciesThermo.t_high,
    *(getattr(SpeciesThermo, name) for name in (*LOW_COEFFICIENTS, *HIGH_COEFFICIENTS)),
    SpeciesThermo.method,
    SpeciesThermo.source,
    SpeciesThermo.max_cp_deviation,
    SpeciesThermo.max_h_deviation,
    SpeciesThermo.max_s_deviation,
    SpeciesThermo.fit_points,
    SpeciesThermo.updated_at,
    SpeciesThermo.updated_by,
)


def _thermo_row(row: Sequence[Any]) -> ThermoRow:
    values = list(row)
    head, low, high, tail = values[:5], values[5:12], values[12:19], values[19:]
    return ThermoRow(*head, tuple(low), tuple(high), *tail)


def thermo_of(session: Session, species_ids: Iterable[int] | None = None) -> dict[int, ThermoRow]:
    """The thermochemistry of each species that has one, by species id (every species when
    ``species_ids`` is None), in the order of the species' names."""
    query = (
        select(*_THERMO_COLUMNS)
        .join(Species, Species.id == SpeciesThermo.species_id)
        .order_by(Species.name)
    )
    if species_ids is None:
        rows = list(session.execute(query))
    else:
        wanted = sorted(set(species_ids))
        rows = []
        for start in range(0, len(wanted), 500):
            chunk = wanted[start : start + 500]
            rows.extend(session.execute(query.where(SpeciesThermo.species_id.in_(chunk))))
    found = (_thermo_row(row) for row in rows)
    return {row.species_id: row for row in found}


def any_thermo(session: Session) -> bool:
    """True when some species has thermochemistry (a cheap test before the heavier reads)."""
    return session.scalar(select(SpeciesThermo.id).limit(1)) is not None


@dataclass(frozen=True)
class NewThermo:
    """Validated thermochemistry of one species, to write (SI units)."""

    species_id: int
    species: str
    T_low: float
    T_mid: float
    T_high: float
    low: Sequence[float]
    high: Sequence[float]
    method: str
    source: str | None = None
    max_cp_deviation: float | None = None
    max_H_deviation: float | None = None
    max_S_deviation: float | None = None
    fit_points: int | None = None


def write_thermo(session: Session, rows: Sequence[NewThermo]) -> list[str]:
    """Store each species' thermochemistry, replacing what it had; return the names of the
    species whose thermochemistry was replaced."""
    if not rows:
        return []
    ids = [row.species_id for row in rows]
    replaced = sorted(row.species for row in thermo_of(session, ids).values())
    session.execute(delete(SpeciesThermo).where(SpeciesThermo.species_id.in_(ids)))
    now, author = utc_now(), session.info.get("author")
    session.execute(
        insert(SpeciesThermo),
        [
            {
                "species_id": row.species_id,
                "t_low": row.T_low,
                "t_mid": row.T_mid,
                "t_high": row.T_high,
                **dict(zip(LOW_COEFFICIENTS, map(float, row.low), strict=True)),
                **dict(zip(HIGH_COEFFICIENTS, map(float, row.high), strict=True)),
                "method": row.method,
                "source": row.source,
                "max_cp_deviation": row.max_cp_deviation,
                "max_h_deviation": row.max_H_deviation,
                "max_s_deviation": row.max_S_deviation,
                "fit_points": row.fit_points,
                "updated_at": now,
                "updated_by": author,
            }
            for row in rows
        ],
    )
    return replaced


def species_ids_by_name(session: Session, names: Iterable[str]) -> dict[str, int]:
    """The id of each of ``names`` that is a stored species."""
    return {
        name: species_id
        for species_id, name in fetch_in(
            session, "SELECT id, name FROM species WHERE name IN ({marks})", sorted(set(names))
        )
    }


def species_formula(session: Session, name: str) -> str | None:
    """The formula of a stored species, or None when there is no such species."""
    return session.scalar(select(Species.formula).where(Species.name == name))


# --------------------------------------------------------------------------- reactions


class Participation(NamedTuple):
    """A species taking part in a reaction: its signed stoichiometric coefficient."""

    species_id: int
    species: str
    #: negative for a reactant, positive for a product
    nu: int


def stoichiometry(session: Session, reaction_ids: Sequence[int]) -> dict[int, list[Participation]]:
    """The species of each reaction with ν (reactants negative), in the order written.

    A third body is not a species and does not appear.
    """
    found: dict[int, list[Participation]] = {i: [] for i in reaction_ids}
    for reaction_id, species_id, name, role, coefficient in fetch_in(
        session,
        "SELECT p.reaction_id, p.species_id, s.name, p.role, p.coefficient FROM participant p "
        "JOIN species s ON s.id = p.species_id WHERE p.reaction_id IN ({marks}) "
        "ORDER BY p.reaction_id, p.id",
        list(reaction_ids),
    ):
        sign = -1 if role == "reactant" else 1
        found[reaction_id].append(Participation(species_id, name, sign * coefficient))
    return found


def reverse_rules(session: Session, reaction_ids: Sequence[int] | None = None) -> dict[int, str]:
    """The reverse rule of each reaction that has one (``detailed-balance``), by reaction id."""
    query = select(Reaction.id, Reaction.reverse).where(Reaction.reverse.is_not(None))
    rules = {reaction_id: rule for reaction_id, rule in session.execute(query)}
    if reaction_ids is None:
        return rules
    return {i: rules[i] for i in reaction_ids if i in rules}


def set_reverse_rule(session: Session, reaction_id: int, rule: str | None) -> None:
    """Store a reaction's reverse rule (None: irreversible as written)."""
    session.execute(update(Reaction).where(Reaction.id == reaction_id).values(reverse=rule))


def equation_keys(session: Session, equations: Sequence[str]) -> dict[str, tuple[int, str]]:
    """(id, key) of the stored reaction of each canonical equation that is stored."""
    return {
        equation: (reaction_id, key)
        for reaction_id, key, equation in fetch_in(
            session, "SELECT id, key, equation FROM reaction WHERE equation IN ({marks})", equations
        )
    }
