"""Collision partners of bimolecular reactions: masses, diameters, well depths.

A missing diameter (or, for the Lennard-Jones model, well depth) is estimated
from the species' critical constants or boiling-point volume with a named
correlation. The estimate is marked as such everywhere it is used, and the
estimating command stores it on the species with its method.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from functools import cached_property
from typing import Any, NamedTuple

from sqlalchemy import select
from sqlalchemy.orm import Session

from ratebank.errors import DiameterError, RatebankError
from ratebank.store import audit
from ratebank.store.bulk import fetch_in
from ratebank.store.models import Species

COLLISION_MODELS = ("hard-sphere", "lennard-jones")


@dataclass(frozen=True)
class PartnerData:
    """One collision partner, SI units."""

    name: str
    formula: str
    molar_mass: float  # kg/mol
    diameter: float | None  # m
    diameter_method: str | None
    well_depth: float | None  # K
    well_depth_method: str | None

    @cached_property  # asked for every reaction the partner takes part in
    def diameter_estimated(self) -> bool:
        return self.diameter is not None and self.diameter_method not in (None, "given")

    @cached_property
    def well_depth_estimated(self) -> bool:
        return self.well_depth is not None and self.well_depth_method not in (None, "given")

    def as_record(self) -> dict[str, object]:
        return {
            "species": self.name,
            "molar_mass_kg_per_mol": self.molar_mass,
            "diameter_m": self.diameter,
            "diameter_method": self.diameter_method,
            "diameter_estimated": self.diameter_estimated,
            "well_depth_K": self.well_depth,
            "well_depth_method": self.well_depth_method,
            "well_depth_estimated": self.well_depth_estimated,
        }


class CollisionPair(NamedTuple):
    """The two reactants of a bimolecular reaction."""

    reaction_id: int
    key: str
    a: PartnerData
    b: PartnerData
    identical: bool

    @property
    def uses_estimated_diameter(self) -> bool:
        return self.a.diameter_estimated or self.b.diameter_estimated

    @property
    def estimated_diameters(self) -> list[str]:
        """Names of the partners whose diameter is an estimate, sorted."""
        if not self.uses_estimated_diameter:
            return []
        return sorted({p.name for p in (self.a, self.b) if p.diameter_estimated})

    def collision_rate(self, T, model: str = "hard-sphere"):  # type: ignore[no-untyped-def]
        """z(T) [m3 mol-1 s-1] under ``model``."""
        from ratebank.science import collision

        if model == "lennard-jones":
            return collision.lennard_jones_collision_rate_constant(
                T,
                self.a.diameter,
                self.b.diameter,
                self.a.molar_mass,
                self.b.molar_mass,
                self.a.well_depth,
                self.b.well_depth,
                identical=self.identical,
            )
        return collision.collision_rate_constant(
            T,
            self.a.diameter,
            self.b.diameter,
            self.a.molar_mass,
            self.b.molar_mass,
            identical=self.identical,
        )

    def collision_activation_energy(self, T, model: str = "hard-sphere"):  # type: ignore[no-untyped-def]
        """E_z(T) = -R d ln z/d(1/T) [J/mol] of the chosen model."""
        from ratebank.science import collision

        if model == "lennard-jones":
            return collision.collision_rate_activation_energy(
                T,
                model="lennard-jones",
                well_depth_a=self.a.well_depth,
                well_depth_b=self.b.well_depth,
            )
        return collision.collision_rate_activation_energy(T, model="hard-sphere")

    def as_record(self, cache: dict[int, dict[str, object]] | None = None) -> dict[str, object]:
        """The pair for a provenance record; ``cache`` shares one record per partner.

        Partners are shared objects across a whole mechanism's pairs, so a
        record per partner (keyed by object identity) is built once.
        """
        if cache is None:
            return {"identical": self.identical, "a": self.a.as_record(), "b": self.b.as_record()}
        records = []
        for partner in (self.a, self.b):
            record = cache.get(id(partner))
            if record is None:
                record = cache[id(partner)] = partner.as_record()
            records.append(record)
        return {"identical": self.identical, "a": records[0], "b": records[1]}


class PartnerProblem(RatebankError):
    """A reaction's collision partners lack the data collision theory needs."""


def _partner(species: Any) -> PartnerData:
    return PartnerData(
        name=species.name,
        formula=species.formula,
        molar_mass=species.molar_mass,
        diameter=species.diameter,
        diameter_method=species.diameter_method if species.diameter is not None else None,
        well_depth=species.well_depth,
        well_depth_method=species.well_depth_method if species.well_depth is not None else None,
    )


def _complete(partner: PartnerData, species: Any, model: str) -> tuple[PartnerData, str | None]:
    """Fill a missing diameter (and well depth for LJ) by estimate; or say why not."""
    from ratebank.science import diameters

    if partner.diameter is None:
        reason = diameters.outside_correlations(species.formula)
        if reason:
            return partner, f"{species.name} has no diameter, and {reason}"
        try:
            estimate = diameters.estimate_diameter(
                Tc=species.critical_temperature,
                Pc=species.critical_pressure,
                omega=species.acentric_factor,
                boiling_volume=species.boiling_volume,
                formula=species.formula,
            )
        except DiameterError:
            return partner, (
                f"{species.name} has no collision diameter and no critical constants or "
                "boiling-point volume to estimate one"
            )
        partner = replace(partner, diameter=estimate.diameter, diameter_method=estimate.method)
    if model == "lennard-jones" and partner.well_depth is None:
        try:
            estimate = diameters.estimate_well_depth(
                Tc=species.critical_temperature,
                omega=species.acentric_factor,
                formula=species.formula,
            )
        except DiameterError:
            return partner, (
                f"{species.name} has no Lennard-Jones well depth and no critical temperature "
                "to estimate one"
            )
        partner = replace(
            partner, well_depth=estimate.well_depth, well_depth_method=estimate.method
        )
    return partner, None


def estimated_diameter(species: Any):  # type: ignore[no-untyped-def]
    """The diameter estimate collision theory would use for a species that has none.

    ``species`` is anything with the species' ``formula``, ``diameter``,
    ``critical_temperature``, ``critical_pressure``, ``acentric_factor`` and
    ``boiling_volume`` (SI). Returns the
    :class:`ratebank.science.diameters.DiameterEstimate` that
    :func:`collision_pairs` would make, or None when the species has a
    diameter or none can be estimated. Nothing is stored.
    """
    from ratebank.science import diameters

    if species.diameter is not None or diameters.outside_correlations(species.formula):
        return None
    try:
        return diameters.estimate_diameter(
            Tc=species.critical_temperature,
            Pc=species.critical_pressure,
            omega=species.acentric_factor,
            boiling_volume=species.boiling_volume,
            formula=species.formula,
        )
    except DiameterError:
        return None


class SpeciesRow(NamedTuple):
    """The species columns collision theory reads."""

    id: int
    name: str
    formula: str
    molar_mass: float
    diameter: float | None
    diameter_method: str | None
    well_depth: float | None
    well_depth_method: str | None
    critical_temperature: float | None
    critical_pressure: float | None
    acentric_factor: float | None
    boiling_volume: float | None


def collision_pairs(
    session: Session,
    reactions: Sequence[Any],
    *,
    model: str = "hard-sphere",
) -> dict[int, CollisionPair | str]:
    """The collision pair of each bimolecular reaction, or the reason there is none.

    ``reactions`` are stored reactions (ORM objects or rows with ``id``,
    ``key``, ``reaction_order`` and ``third_body``). Missing diameters and
    well depths are estimated here but not stored (see
    :func:`store_estimated_partners`).
    """
    if model not in COLLISION_MODELS:
        raise RatebankError(
            f"unknown collision model {model!r}; expected one of {', '.join(COLLISION_MODELS)}"
        )
    # light rows, not ORM objects: fitting or estimating a whole mechanism
    # asks for tens of thousands of reactions
    ids = [r.id for r in reactions]
    reactants: dict[int, list[tuple[int, int]]] = {i: [] for i in ids}
    for reaction_id, species_id, coefficient in fetch_in(
        session,
        "SELECT reaction_id, species_id, coefficient FROM participant "
        "WHERE role = 'reactant' AND reaction_id IN ({marks}) ORDER BY reaction_id, id",
        ids,
    ):
        reactants[reaction_id].append((species_id, coefficient))
    species_ids = sorted({sid for rows in reactants.values() for sid, _ in rows})
    query = f"SELECT {', '.join(SpeciesRow._fields)} FROM species WHERE id IN ({{marks}})"
    species = {row[0]: SpeciesRow(*row) for row in fetch_in(session, query, species_ids)}
    completed: dict[int, tuple[PartnerData, str | None]] = {}
    result: dict[int, CollisionPair | str] = {}
    for reaction in reactions:
        if reaction.reaction_order != 2 or reaction.third_body:
            kind = (
                "a third-body reaction"
                if reaction.third_body
                else (f"of order {reaction.reaction_order}")
            )
            result[reaction.id] = f"not bimolecular ({kind}); collision theory does not apply"
            continue
        rows = reactants[reaction.id]
        if len(rows) == 1:
            (sid, _), identical = rows[0], True
            pair_ids = (sid, sid)
        else:
            pair_ids = (rows[0][0], rows[1][0])
            identical = False
        partners = []
        problem = None
        for sid in pair_ids:
            if sid not in completed:
                completed[sid] = _complete(_partner(species[sid]), species[sid], model)
            partner, why = completed[sid]
            if why and problem is None:
                problem = why
            partners.append(partner)
        if problem:
            result[reaction.id] = problem
            continue
        result[reaction.id] = CollisionPair(
            reaction.id, reaction.key, partners[0], partners[1], identical
        )
    return result


def store_estimated_partners(session: Session, pairs: list[CollisionPair]) -> None:
    """Write the estimated diameters and well depths these pairs use onto their species.

    Only species that have no value yet are changed; each change is audited
    with the correlation that produced it.
    """
    from sqlalchemy import update

    partners: dict[str, PartnerData] = {}
    for pair in pairs:
        for partner in (pair.a, pair.b):
            if partner.diameter_estimated or partner.well_depth_estimated:
                partners[partner.name] = partner
    for name, partner in sorted(partners.items()):
        species = session.scalar(select(Species).where(Species.name == name))
        if species is None:
            continue
        changed: dict[str, object] = {}
        if species.diameter is None and partner.diameter_estimated:
            changed.update(
                diameter=partner.diameter,
                diameter_kind="lennard-jones",
                diameter_method=partner.diameter_method,
            )
        if species.well_depth is None and partner.well_depth_estimated:
            changed.update(
                well_depth=partner.well_depth, well_depth_method=partner.well_depth_method
            )
        if changed:
            session.execute(update(Species).where(Species.id == species.id).values(**changed))
            audit.record(session, "species.estimate", name, **changed)
