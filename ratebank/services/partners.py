"""Collision partners of bimolecular reactions: masses, diameters, well depths.

A missing diameter (or, for the Lennard-Jones model, well depth) is estimated
from the species' critical constants or boiling-point volume with a named
correlation. The estimate is marked as such everywhere it is used, and the
estimating command stores it on the species with its method.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from functools import cached_property
from typing import NamedTuple

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, DiameterError
from ratebank.science import diameters
from ratebank.science.collision import COLLISION_MODELS
from ratebank.store import listings, queries
from ratebank.store.estimate_reads import reactant_table
from ratebank.store.listings import SpeciesDetail, SpeciesSummary
from ratebank.store.partner_data import store_species_estimates
from ratebank.store.queries import ReactionRow, SpeciesRow


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
    #: True when a given diameter is paired with an estimated well depth (or the
    #: reverse): the two do not come from one source, so both count as estimated
    mixed_sources: bool = False
    polarizability: float | None = None  # m3
    ionization_energy: float | None = None  # J/mol

    @cached_property  # asked for every reaction the partner takes part in
    def diameter_estimated(self) -> bool:
        if self.mixed_sources:
            return True
        return self.diameter is not None and self.diameter_method not in (None, "given")

    @cached_property
    def well_depth_estimated(self) -> bool:
        if self.mixed_sources:
            return True
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
            "diameter_and_well_depth_from_different_sources": self.mixed_sources,
        }


#: The estimated diameters of a pair with none: one list shared by every such pair (read
#: only; a mechanism's estimates hold one each).
_NO_ESTIMATED_DIAMETERS: list[str] = []


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
            return _NO_ESTIMATED_DIAMETERS
        return sorted({p.name for p in (self.a, self.b) if p.diameter_estimated})

    def as_record(self, cache: dict[int, dict[str, object]] | None = None) -> dict[str, object]:
        """The pair for a provenance record; ``cache`` shares one record per partner.

        Partners are shared objects across a whole mechanism's pairs, so a
        record per partner (keyed by object identity) is built once.
        """
        if cache is None:
            return {"identical": self.identical, "a": self.a.as_record(), "b": self.b.as_record()}
        found = []
        for partner in (self.a, self.b):
            record = cache.get(id(partner))
            if record is None:
                record = cache[id(partner)] = partner.as_record()
            found.append(record)
        return {"identical": self.identical, "a": found[0], "b": found[1]}


@dataclass(frozen=True)
class PairColumns:
    """The partners of many pairs as arrays, the arguments of the collision-rate functions."""

    diameter_a: np.ndarray
    diameter_b: np.ndarray
    molar_mass_a: np.ndarray
    molar_mass_b: np.ndarray
    well_depth_a: np.ndarray
    well_depth_b: np.ndarray
    identical: np.ndarray
    polarizability_a: np.ndarray
    polarizability_b: np.ndarray
    ionization_energy_a: np.ndarray
    ionization_energy_b: np.ndarray

    @classmethod
    def of(cls, pairs: Sequence[CollisionPair]) -> PairColumns:
        def column(side: str, name: str) -> np.ndarray:
            values = [getattr(getattr(p, side), name) for p in pairs]
            return np.array([np.nan if v is None else v for v in values], dtype=float)

        return cls(
            column("a", "diameter"),
            column("b", "diameter"),
            column("a", "molar_mass"),
            column("b", "molar_mass"),
            column("a", "well_depth"),
            column("b", "well_depth"),
            np.array([p.identical for p in pairs], dtype=bool),
            column("a", "polarizability"),
            column("b", "polarizability"),
            column("a", "ionization_energy"),
            column("b", "ionization_energy"),
        )

    @classmethod
    def of_partners(
        cls,
        a: Sequence[PartnerData],
        b: Sequence[PartnerData],
        identical: Sequence[bool],
    ) -> PairColumns:
        """The columns of the pairs (``a[i]``, ``b[i]``), read once per partner: pairs share
        their partners' objects (:func:`collision_pair_table`), so each partner's values are
        read once and spread by index."""
        position: dict[int, int] = {}
        partners: list[PartnerData] = []

        def indices(side: Sequence[PartnerData]) -> np.ndarray:
            found = np.empty(len(side), dtype=np.intp)
            for i, partner in enumerate(side):
                at = position.get(id(partner))
                if at is None:
                    at = position[id(partner)] = len(partners)
                    partners.append(partner)
                found[i] = at
            return found

        index_a, index_b = indices(a), indices(b)

        def column(index: np.ndarray, name: str) -> np.ndarray:
            values = [getattr(p, name) for p in partners]
            table = np.array([np.nan if v is None else v for v in values], dtype=float)
            return table[index] if len(table) else np.empty(len(index), dtype=float)

        return cls(
            column(index_a, "diameter"),
            column(index_b, "diameter"),
            column(index_a, "molar_mass"),
            column(index_b, "molar_mass"),
            column(index_a, "well_depth"),
            column(index_b, "well_depth"),
            np.array(identical, dtype=bool).reshape(len(index_a)),
            column(index_a, "polarizability"),
            column(index_b, "polarizability"),
            column(index_a, "ionization_energy"),
            column(index_b, "ionization_energy"),
        )

    @property
    def has_capture_data(self) -> np.ndarray:
        """Pairs whose partners both carry a polarizability and an ionization energy."""
        return np.isfinite(
            self.polarizability_a
            + self.polarizability_b
            + self.ionization_energy_a
            + self.ionization_energy_b
        )

    def rate_arguments(self, model: str) -> dict[str, object]:
        """Keyword arguments of :func:`ratebank.science.collision.collision_rate`."""
        arguments: dict[str, object] = {
            "diameter_a": self.diameter_a,
            "diameter_b": self.diameter_b,
            "molar_mass_a": self.molar_mass_a,
            "molar_mass_b": self.molar_mass_b,
            "identical": self.identical,
            "model": model,
        }
        if model == "lennard-jones":
            arguments.update(well_depth_a=self.well_depth_a, well_depth_b=self.well_depth_b)
        return arguments


def _partner(species: SpeciesRow) -> PartnerData:
    return PartnerData(
        name=species.name,
        formula=species.formula,
        molar_mass=species.molar_mass,
        diameter=species.diameter,
        diameter_method=species.diameter_method if species.diameter is not None else None,
        well_depth=species.well_depth,
        well_depth_method=species.well_depth_method if species.well_depth is not None else None,
        polarizability=species.polarizability,
        ionization_energy=species.ionization_energy,
    )


def _diameter_estimate(species: SpeciesRow | SpeciesSummary) -> diameters.DiameterEstimate:
    """The correlation's diameter for ``species`` (DiameterError when it has no data)."""
    return diameters.estimate_diameter(
        Tc=species.critical_temperature,
        Pc=species.critical_pressure,
        omega=species.acentric_factor,
        boiling_volume=species.boiling_volume,
        formula=species.formula,
        dipole_moment=species.dipole_moment,
    )


def _with_diameter(partner: PartnerData, species: SpeciesRow) -> PartnerData | str:
    if partner.diameter is not None:
        return partner
    reason = diameters.outside_correlations(species.formula, species.dipole_moment)
    if reason:
        return f"{species.name} has no diameter, and {reason}"
    try:
        estimate = _diameter_estimate(species)
    except DiameterError:
        return (
            f"{species.name} has no collision diameter and no critical constants or "
            "boiling-point volume to estimate one"
        )
    return replace(partner, diameter=estimate.diameter, diameter_method=estimate.method)


def estimated_diameter(
    species: SpeciesRow | SpeciesSummary,
) -> diameters.DiameterEstimate | None:
    """The diameter estimate collision theory would use for a species that has none.

    Returns the :class:`ratebank.science.diameters.DiameterEstimate` that
    :func:`collision_pairs` would make, or None when the species has a
    diameter or none can be estimated. Nothing is stored.
    """
    if species.diameter is not None:
        return None
    if diameters.outside_correlations(species.formula, species.dipole_moment):
        return None
    try:
        return _diameter_estimate(species)
    except DiameterError:
        return None


def species_detail(session: Session, name: str) -> SpeciesDetail:
    """One species, the reactions it takes part in, and the diameter estimate it would get.

    For a species without a diameter, ``estimated_diameter`` is what
    :func:`estimated_diameter` gives (not stored); otherwise None.
    """
    detail = listings.species_detail(session, name)
    return replace(detail, estimated_diameter=estimated_diameter(detail.species))


def _with_well_depth(partner: PartnerData, species: SpeciesRow) -> PartnerData | str:
    if partner.well_depth is not None:
        return partner
    try:
        estimate = diameters.estimate_well_depth(
            Tc=species.critical_temperature,
            omega=species.acentric_factor,
            Tb=species.boiling_temperature,
            formula=species.formula,
            dipole_moment=species.dipole_moment,
        )
    except DiameterError as exc:
        if "do not apply" in str(exc):
            return f"{species.name} has no Lennard-Jones well depth, and {exc}"
        return (
            f"{species.name} has no Lennard-Jones well depth and no critical or boiling "
            "temperature to estimate one"
        )
    return replace(partner, well_depth=estimate.well_depth, well_depth_method=estimate.method)


def _completed(species: SpeciesRow, model: str) -> PartnerData | str:
    """The partner with a missing diameter (and well depth for LJ) estimated; or why not."""
    partner = _with_diameter(_partner(species), species)
    if isinstance(partner, str) or model != "lennard-jones":
        return partner
    partner = _with_well_depth(partner, species)
    if isinstance(partner, str):
        return partner
    estimated = [
        m not in (None, "given") for m in (partner.diameter_method, partner.well_depth_method)
    ]
    return replace(partner, mixed_sources=estimated[0] != estimated[1])


def check_model(model: str) -> None:
    if model not in COLLISION_MODELS:
        raise BadInputError(
            f"unknown collision model {model!r}; expected one of {', '.join(COLLISION_MODELS)}",
            argument="collision",
        )


@dataclass(frozen=True)
class PairTable:
    """The collision pairs of many reactions as columns, by the reactions' positions: the two
    partners (one shared object per species), whether they are one species, and why a
    reaction has no pair (``a`` and ``b`` are None there). No object per reaction."""

    a: list[PartnerData | None]
    b: list[PartnerData | None]
    identical: list[bool]
    reasons: dict[int, str]


def collision_pair_table(
    session: Session, reactions: Sequence[ReactionRow], *, model: str = "hard-sphere"
) -> PairTable:
    """The collision pair of each bimolecular reaction as columns (:class:`PairTable`), or
    the reason there is none.

    Missing diameters and well depths are estimated here but not stored (see
    :func:`store_estimated_partners`).
    """
    check_model(model)
    # the reactants as two columns; each reaction's first two found by bisection, as arrays
    ids = np.array([r.id for r in reactions], dtype=np.int64)
    by_reaction, by_species = reactant_table(session, ids)
    species = queries.species_by_id(session, set(np.unique(by_species).tolist()))
    first = np.searchsorted(by_reaction, ids, side="left")
    counts = np.searchsorted(by_reaction, ids, side="right") - first
    last = max(len(by_species) - 1, 0)
    a_ids = by_species[np.minimum(first, last)].tolist() if len(by_species) else [0] * len(ids)
    b_ids = by_species[np.minimum(first + 1, last)].tolist() if len(by_species) else a_ids
    identical_flags = (counts == 1).tolist()
    del ids, first, counts
    completed: dict[int, PartnerData | str] = {}
    column_a: list[PartnerData | None] = [None] * len(reactions)
    column_b: list[PartnerData | None] = [None] * len(reactions)
    reasons: dict[int, str] = {}
    for i, reaction in enumerate(reactions):
        if not reaction.bimolecular:
            kind = "a third-body reaction" if reaction.third_body else f"of order {reaction.order}"
            reasons[i] = f"not bimolecular ({kind}); collision theory does not apply"
            continue
        a_id = a_ids[i]
        b_id = a_id if identical_flags[i] else b_ids[i]
        a = completed.get(a_id)
        if a is None:
            a = completed[a_id] = _completed(species[a_id], model)
        b = completed.get(b_id)
        if b is None:
            b = completed[b_id] = _completed(species[b_id], model)
        if isinstance(a, str) or isinstance(b, str):
            reasons[i] = a if isinstance(a, str) else b  # type: ignore[assignment]
            continue
        column_a[i] = a
        column_b[i] = b
    return PairTable(column_a, column_b, identical_flags, reasons)


def collision_pairs(
    session: Session, reactions: Sequence[ReactionRow], *, model: str = "hard-sphere"
) -> dict[int, CollisionPair | str]:
    """The collision pair of each bimolecular reaction, or the reason there is none.

    Missing diameters and well depths are estimated here but not stored (see
    :func:`store_estimated_partners`).
    """
    table = collision_pair_table(session, reactions, model=model)
    result: dict[int, CollisionPair | str] = {}
    for i, reaction in enumerate(reactions):
        reason = table.reasons.get(i)
        if reason is not None:
            result[reaction.id] = reason
            continue
        a, b = table.a[i], table.b[i]
        assert a is not None and b is not None
        result[reaction.id] = CollisionPair(reaction.id, reaction.key, a, b, table.identical[i])
    return result


def store_estimated_partners(
    session: Session, pairs: Sequence[CollisionPair], *, used: Iterable[PartnerData] = ()
) -> None:
    """Write the estimated diameters and well depths these pairs (and the partners ``used``)
    use onto their species.

    Only species that have no value yet are changed; each change is recorded
    in the history with the correlation that produced it.
    """
    partners: dict[str, PartnerData] = {}
    for partner in (*(p for pair in pairs for p in (pair.a, pair.b)), *used):
        if partner.diameter_estimated or partner.well_depth_estimated:
            partners[partner.name] = partner
    stored = queries.species_by_name(session, partners)
    for name, partner in sorted(partners.items()):
        species = stored.get(name)
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
            store_species_estimates(session, species.id, name, changed)


def species_pair(
    reaction_id: int,
    key: str,
    a: SpeciesRow,
    b: SpeciesRow,
    *,
    model: str = "hard-sphere",
) -> CollisionPair | str:
    """The collision pair of two given species (the products of a reaction's reverse, say),
    with a missing diameter estimated as for reactants; or why there is none."""
    check_model(model)
    first = _completed(a, model)
    second = first if b.id == a.id else _completed(b, model)
    problem = next((p for p in (first, second) if isinstance(p, str)), None)
    if problem is not None:
        return problem
    assert isinstance(first, PartnerData) and isinstance(second, PartnerData)
    return CollisionPair(reaction_id, key, first, second, b.id == a.id)
