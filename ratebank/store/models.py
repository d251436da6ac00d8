"""Typed SQLAlchemy 2.0 models of the ratebank store.

Everything is stored in SI-molar units (README, Units and the rate-law convention): k in
(m3 mol-1)^(order-1) s-1, energies in J mol-1, T in K, lengths in m, molar
masses in kg mol-1, pressures in Pa. Conversion happens only at the
boundaries (import, display, export).

The schema is created and changed only by the Alembic revisions in
``migrations/versions``; a test checks that these models and the head
revision agree.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from sqlalchemy import (
    JSON,
    Boolean,
    CheckConstraint,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Text,
    UniqueConstraint,
    text,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship

#: Constraint names are fixed by convention so that Alembic batch migrations on
#: SQLite can find and alter them.
NAMING_CONVENTION = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}

#: Where an expression's numbers come from; the same words appear in exports.
ORIGINS = ("measured-fit", "literature", "collision-estimate", "manual")
DIAMETER_KINDS = ("hard-sphere", "lennard-jones")
PARTICIPANT_ROLES = ("reactant", "product")
#: How a reaction's reverse is obtained: NULL means none (irreversible as written).
REVERSE_RULES = ("detailed-balance",)
#: Rate-law forms a stored expression can have. An empty form is the reaction's plain form:
#: ``arrhenius``, or ``third-body`` for a reaction written with M (so that every expression
#: stored before the forms existed keeps its meaning and its content).
FORMS = ("arrhenius", "sum", "third-body", "falloff", "activated")
#: Broadening functions of a ``falloff`` or ``activated`` expression.
BROADENINGS = ("none", "troe", "fixed-fc")
#: The seven coefficients of each polynomial range, as the columns and import file name them.
LOW_COEFFICIENTS = tuple(f"low_{i}" for i in range(1, 8))
HIGH_COEFFICIENTS = tuple(f"high_{i}" for i in range(1, 8))


def utc_now() -> dt.datetime:
    return dt.datetime.now(dt.UTC)


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING_CONVENTION)


class Withdrawable:
    """The columns of a record that can be withdrawn (revision 0009): empty ``withdrawn_at``
    means the record is in use."""

    withdrawn_at: Mapped[dt.datetime | None] = mapped_column(DateTime(timezone=True))
    withdrawn_by: Mapped[str | None] = mapped_column(String(200))
    withdrawn_reason: Mapped[str | None] = mapped_column(Text)


class Species(Withdrawable, Base):
    """A chemical species with the physical data collision theory needs."""

    __tablename__ = "species"
    __table_args__ = (
        CheckConstraint("molar_mass > 0", name="molar_mass_positive"),
        CheckConstraint("diameter IS NULL OR diameter > 0", name="diameter_positive"),
        CheckConstraint("well_depth IS NULL OR well_depth > 0", name="well_depth_positive"),
        CheckConstraint(
            "critical_temperature IS NULL OR critical_temperature > 0",
            name="critical_temperature_positive",
        ),
        CheckConstraint(
            "critical_pressure IS NULL OR critical_pressure > 0",
            name="critical_pressure_positive",
        ),
        CheckConstraint(
            "boiling_volume IS NULL OR boiling_volume > 0", name="boiling_volume_positive"
        ),
        CheckConstraint(
            "dipole_moment IS NULL OR dipole_moment >= 0", name="dipole_moment_non_negative"
        ),
        CheckConstraint(
            "boiling_temperature IS NULL OR boiling_temperature > 0",
            name="boiling_temperature_positive",
        ),
        CheckConstraint(
            "polarizability IS NULL OR polarizability > 0", name="polarizability_positive"
        ),
        CheckConstraint(
            "ionization_energy IS NULL OR ionization_energy > 0",
            name="ionization_energy_positive",
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    formula: Mapped[str] = mapped_column(String(200))
    #: kg mol-1
    molar_mass: Mapped[float] = mapped_column(Float)
    #: "given" when the curator entered it, else how it was computed.
    molar_mass_source: Mapped[str] = mapped_column(String(100))
    #: collision diameter [m]
    diameter: Mapped[float | None] = mapped_column(Float)
    diameter_kind: Mapped[str | None] = mapped_column(String(20))
    #: "given", or the name of the correlation that estimated it.
    diameter_method: Mapped[str | None] = mapped_column(String(100))
    #: Lennard-Jones well depth as epsilon/k_B [K]
    well_depth: Mapped[float | None] = mapped_column(Float)
    well_depth_method: Mapped[str | None] = mapped_column(String(100))
    #: [K]
    critical_temperature: Mapped[float | None] = mapped_column(Float)
    #: [Pa]
    critical_pressure: Mapped[float | None] = mapped_column(Float)
    acentric_factor: Mapped[float | None] = mapped_column(Float)
    #: molar volume at the normal boiling point [m3 mol-1]
    boiling_volume: Mapped[float | None] = mapped_column(Float)
    #: permanent dipole moment [C m]
    dipole_moment: Mapped[float | None] = mapped_column(Float)
    #: normal boiling temperature [K]
    boiling_temperature: Mapped[float | None] = mapped_column(Float)
    #: polarizability volume [m3]
    polarizability: Mapped[float | None] = mapped_column(Float)
    #: first ionization energy [J mol-1]
    ionization_energy: Mapped[float | None] = mapped_column(Float)
    source: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    #: lock version: an edit names the version it read (revision 0009)
    version: Mapped[int] = mapped_column(Integer, default=1, server_default=text("1"))

    @property
    def diameter_is_estimated(self) -> bool:
        return self.diameter is not None and self.diameter_method not in (None, "given")


class Reaction(Withdrawable, Base):
    """An elementary reaction, identified by a key and a canonical equation."""

    __tablename__ = "reaction"
    __table_args__ = (
        CheckConstraint("reaction_order >= 1 AND reaction_order <= 3", name="order_range"),
        CheckConstraint(
            "steric_factor IS NULL OR steric_factor > 0", name="steric_factor_positive"
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    key: Mapped[str] = mapped_column(String(200), unique=True)
    #: canonical text, independent of the order in which species were written
    equation: Mapped[str] = mapped_column(String(1000), unique=True)
    reaction_order: Mapped[int] = mapped_column(Integer)
    third_body: Mapped[bool] = mapped_column(Boolean, default=False)
    reaction_class: Mapped[str | None] = mapped_column(String(200))
    notes: Mapped[str | None] = mapped_column(Text)
    #: steric factor the curator stored for this reaction (precedence 2)
    steric_factor: Mapped[float | None] = mapped_column(Float)
    steric_source: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    #: lock version: an edit names the version it read (revision 0009)
    version: Mapped[int] = mapped_column(Integer, default=1, server_default=text("1"))
    #: "detailed-balance" when k_r = k_f / Kc; empty (the default) when the reaction is
    #: irreversible as written
    reverse: Mapped[str | None] = mapped_column(
        String(30),
        CheckConstraint("reverse IS NULL OR reverse IN ('detailed-balance')", name="reverse_known"),
    )

    participants: Mapped[list[Participant]] = relationship(
        back_populates="reaction", cascade="all, delete-orphan", order_by="Participant.id"
    )
    measurement_sets: Mapped[list[MeasurementSet]] = relationship(
        back_populates="reaction", order_by="MeasurementSet.id"
    )
    expressions: Mapped[list[Expression]] = relationship(
        back_populates="reaction", order_by="Expression.id"
    )


class Participant(Base):
    """A species taking part in a reaction, with its role and coefficient."""

    __tablename__ = "participant"
    __table_args__ = (
        UniqueConstraint("reaction_id", "species_id", "role", name="uq_participant_role"),
        CheckConstraint("coefficient >= 1", name="coefficient_positive"),
        CheckConstraint("role IN ('reactant', 'product')", name="role_known"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    reaction_id: Mapped[int] = mapped_column(ForeignKey("reaction.id", ondelete="CASCADE"))
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id"))
    role: Mapped[str] = mapped_column(String(10))
    coefficient: Mapped[int] = mapped_column(Integer)

    reaction: Mapped[Reaction] = relationship(back_populates="participants")
    species: Mapped[Species] = relationship()


class MeasurementSet(Withdrawable, Base):
    """One measured k(T) data set of one reaction, from one source."""

    __tablename__ = "measurement_set"
    __table_args__ = (
        CheckConstraint(
            "systematic_uncertainty IS NULL OR systematic_uncertainty >= 0",
            name="systematic_uncertainty_non_negative",
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    reaction_id: Mapped[int] = mapped_column(ForeignKey("reaction.id"))
    reference: Mapped[str | None] = mapped_column(Text)
    method: Mapped[str | None] = mapped_column(Text)
    bath_gas: Mapped[str | None] = mapped_column(String(200))
    #: the k unit the data were given in (values are stored in SI)
    original_k_units: Mapped[str] = mapped_column(String(100))
    #: one standard deviation of the whole set's scale, as a fraction of k
    systematic_uncertainty: Mapped[float | None] = mapped_column(Float)
    source_file: Mapped[str | None] = mapped_column(Text)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    #: lock version: an edit names the version it read (revision 0009)
    version: Mapped[int] = mapped_column(Integer, default=1, server_default=text("1"))

    reaction: Mapped[Reaction] = relationship(back_populates="measurement_sets")
    points: Mapped[list[Point]] = relationship(
        back_populates="measurement_set", order_by="Point.id", cascade="all, delete-orphan"
    )


class Point(Withdrawable, Base):
    """One measured rate constant at one temperature (SI units)."""

    __tablename__ = "point"
    __table_args__ = (
        CheckConstraint("temperature > 0", name="temperature_positive"),
        CheckConstraint("rate_constant > 0", name="rate_constant_positive"),
        CheckConstraint(
            "relative_uncertainty IS NULL OR relative_uncertainty > 0",
            name="uncertainty_positive",
        ),
        CheckConstraint("pressure IS NULL OR pressure > 0", name="pressure_positive"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    set_id: Mapped[int] = mapped_column(ForeignKey("measurement_set.id", ondelete="CASCADE"))
    #: [K]
    temperature: Mapped[float] = mapped_column(Float)
    #: [(m3 mol-1)^(order-1) s-1]
    rate_constant: Mapped[float] = mapped_column(Float)
    #: one standard uncertainty of k as a fraction of k (absolute input is converted)
    relative_uncertainty: Mapped[float | None] = mapped_column(Float)
    #: [Pa]
    pressure: Mapped[float | None] = mapped_column(Float)
    #: lock version: an edit names the version it read (revision 0009)
    version: Mapped[int] = mapped_column(Integer, default=1, server_default=text("1"))

    measurement_set: Mapped[MeasurementSet] = relationship(back_populates="points")


class ProvenanceRun(Base):
    """What every expression written by one run (an estimate of a mechanism, say) has in
    common: the common part of their provenance, stored once (revision 0011).

    An expression of the run names it in ``run_id`` and keeps only what differs in its own
    ``provenance``; the store reads the full provenance as this ``content`` updated by the
    row's own part (:mod:`ratebank.store.runs`).
    """

    __tablename__ = "provenance_run"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    action: Mapped[str] = mapped_column(String(100))
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    created_by: Mapped[str | None] = mapped_column(String(200))
    content: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)


class Expression(Withdrawable, Base):
    """A rate expression k = A T^n exp(-Ea/RT) of a reaction, with its origin.

    ``A`` may be empty: an activation energy whose pre-exponential factor is
    still to be estimated. ``A`` is in the reaction's SI k unit times K^-n.
    """

    __tablename__ = "expression"
    __table_args__ = (
        # (constraint names are those of the first revision; the columns were renamed since)
        CheckConstraint("a IS NULL OR a > 0", name="pre_exponential_positive"),
        CheckConstraint(
            "origin IN ('measured-fit', 'literature', 'collision-estimate', 'manual')",
            name="origin_known",
        ),
        CheckConstraint("t_min IS NULL OR t_min > 0", name="t_min_positive"),
        CheckConstraint("t_min IS NULL OR t_max IS NULL OR t_max >= t_min", name="t_range_ordered"),
        CheckConstraint(
            "uncertainty_factor IS NULL OR uncertainty_factor >= 1",
            name="uncertainty_factor_range",
        ),
        CheckConstraint(
            "uncertainty_g IS NULL OR uncertainty_g >= 0", name="uncertainty_g_non_negative"
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    reaction_id: Mapped[int] = mapped_column(ForeignKey("reaction.id"))
    origin: Mapped[str] = mapped_column(String(30))
    #: [SI k unit times K^-n]
    A: Mapped[float | None] = mapped_column("a", Float)
    n: Mapped[float] = mapped_column("n", Float, default=0.0)
    #: [J mol-1]
    Ea: Mapped[float] = mapped_column("ea", Float)
    #: [K]
    T_min: Mapped[float | None] = mapped_column("t_min", Float)
    T_max: Mapped[float | None] = mapped_column("t_max", Float)
    #: f(298 K) of f(T) = f(298) exp|g (1/T - 1/298 K)|, one standard deviation of ln k
    uncertainty_factor: Mapped[float | None] = mapped_column(Float)
    #: g [K] of that form (empty or 0: the same factor at every temperature)
    uncertainty_g: Mapped[float | None] = mapped_column(Float)
    reference: Mapped[str | None] = mapped_column(Text)
    #: every input behind the numbers (fit covariance, set ids, P rule, ...)
    provenance: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)
    recommended: Mapped[bool] = mapped_column(Boolean, default=False)
    version: Mapped[int] = mapped_column(Integer, default=1)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    created_by: Mapped[str | None] = mapped_column(String(200))
    updated_at: Mapped[dt.datetime | None] = mapped_column(DateTime(timezone=True))
    updated_by: Mapped[str | None] = mapped_column(String(200))

    #: the rate law (FORMS); empty for the reaction's plain form (revision 0008)
    form: Mapped[str | None] = mapped_column(
        String(20),
        CheckConstraint(
            "form IS NULL OR form IN ('arrhenius', 'sum', 'third-body', 'falloff', 'activated')",
            name="form_known",
        ),
    )
    #: low-pressure limit k0 of ``falloff`` and ``activated`` [SI k unit of the reaction's
    #: order times K^-n_low]; ``A``, ``n``, ``Ea`` are then the high-pressure limit
    A_low: Mapped[float | None] = mapped_column(
        "a_low", Float, CheckConstraint("a_low IS NULL OR a_low > 0", name="a_low_positive")
    )
    n_low: Mapped[float | None] = mapped_column("n_low", Float)
    #: [J mol-1]
    Ea_low: Mapped[float | None] = mapped_column("ea_low", Float)
    #: BROADENINGS; empty for forms without one
    broadening: Mapped[str | None] = mapped_column(
        String(20),
        CheckConstraint(
            "broadening IS NULL OR broadening IN ('none', 'troe', 'fixed-fc')",
            name="broadening_known",
        ),
    )
    #: centre broadening factor of ``fixed-fc`` [-] and its width N [-] (empty: 0.75 - 1.27
    #: log10 Fc)
    Fc: Mapped[float | None] = mapped_column("fc", Float)
    N: Mapped[float | None] = mapped_column("fc_width", Float)
    #: Troe's alpha [-] and T***, T*, T** [K] (T** optional)
    troe_alpha: Mapped[float | None] = mapped_column(Float)
    troe_T3: Mapped[float | None] = mapped_column("troe_t3", Float)
    troe_T1: Mapped[float | None] = mapped_column("troe_t1", Float)
    troe_T2: Mapped[float | None] = mapped_column("troe_t2", Float)
    #: the run whose common provenance this row's own ``provenance`` completes (revision
    #: 0011); empty when ``provenance`` is whole
    run_id: Mapped[int | None] = mapped_column(ForeignKey("provenance_run.id"))

    reaction: Mapped[Reaction] = relationship(back_populates="expressions")

    __mapper_args__ = {"version_id_col": version}  # noqa: RUF012


class ExpressionTerm(Base):
    """A further Arrhenius term (2, 3, ...) of a ``sum`` expression; term 1 is the
    expression's own A, n, Ea and range."""

    __tablename__ = "expression_term"
    __table_args__ = (
        UniqueConstraint("expression_id", "term", name="uq_expression_term_term"),
        CheckConstraint("term >= 2", name="term_after_first"),
        CheckConstraint("a > 0", name="a_positive"),
        CheckConstraint("t_min IS NULL OR t_min > 0", name="t_min_positive"),
        CheckConstraint("t_min IS NULL OR t_max IS NULL OR t_max >= t_min", name="t_range_ordered"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    expression_id: Mapped[int] = mapped_column(ForeignKey("expression.id", ondelete="CASCADE"))
    term: Mapped[int] = mapped_column(Integer)
    #: [SI k unit times K^-n]
    A: Mapped[float] = mapped_column("a", Float)
    n: Mapped[float] = mapped_column("n", Float)
    #: [J mol-1]
    Ea: Mapped[float] = mapped_column("ea", Float)
    T_min: Mapped[float | None] = mapped_column("t_min", Float)
    T_max: Mapped[float | None] = mapped_column("t_max", Float)


class ThirdBodyEfficiency(Base):
    """How much more (or less) than an average collider a species counts in [M]_eff of one
    reaction; species without a row count 1."""

    __tablename__ = "third_body_efficiency"
    __table_args__ = (
        UniqueConstraint("reaction_id", "species_id", name="uq_third_body_efficiency_pair"),
        CheckConstraint("efficiency >= 0", name="efficiency_non_negative"),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    reaction_id: Mapped[int] = mapped_column(ForeignKey("reaction.id"))
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id"))
    efficiency: Mapped[float] = mapped_column(Float)
    source: Mapped[str | None] = mapped_column(Text)
    updated_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    updated_by: Mapped[str | None] = mapped_column(String(200))


class StericRule(Base):
    """A steric factor the curator chose for a whole reaction class."""

    __tablename__ = "steric_rule"
    __table_args__ = (
        CheckConstraint("steric_factor > 0", name="steric_factor_positive"),
        CheckConstraint(
            "uncertainty_factor IS NULL OR uncertainty_factor >= 1",
            name="uncertainty_factor_range",
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    reaction_class: Mapped[str] = mapped_column(String(200), unique=True)
    steric_factor: Mapped[float] = mapped_column(Float)
    uncertainty_factor: Mapped[float | None] = mapped_column(Float)
    source: Mapped[str | None] = mapped_column(Text)
    note: Mapped[str | None] = mapped_column(Text)
    version: Mapped[int] = mapped_column(Integer, default=1)
    updated_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    updated_by: Mapped[str | None] = mapped_column(String(200))

    __mapper_args__ = {"version_id_col": version}  # noqa: RUF012


class SpeciesThermo(Base):
    """A species' standard-state (1 bar) thermochemistry as two seven-coefficient polynomials.

    Cp°/R = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4, H°/RT and S°/R as in
    McBride, Gordon & Reno (NASA TM-4513, 1993), T in K; ``low_1..low_7`` hold
    for T_low..T_mid and ``high_1..high_7`` for T_mid..T_high.
    """

    __tablename__ = "species_thermo"
    __table_args__ = (
        CheckConstraint("t_low > 0 AND t_low < t_mid AND t_mid < t_high", name="range_ordered"),
        CheckConstraint(
            "max_cp_deviation IS NULL OR max_cp_deviation >= 0", name="cp_deviation_non_negative"
        ),
        CheckConstraint(
            "max_h_deviation IS NULL OR max_h_deviation >= 0", name="h_deviation_non_negative"
        ),
        CheckConstraint(
            "max_s_deviation IS NULL OR max_s_deviation >= 0", name="s_deviation_non_negative"
        ),
    )

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    species_id: Mapped[int] = mapped_column(ForeignKey("species.id"), unique=True)
    #: [K]
    t_low: Mapped[float] = mapped_column(Float)
    t_mid: Mapped[float] = mapped_column(Float)
    t_high: Mapped[float] = mapped_column(Float)
    low_1: Mapped[float] = mapped_column(Float)
    low_2: Mapped[float] = mapped_column(Float)
    low_3: Mapped[float] = mapped_column(Float)
    low_4: Mapped[float] = mapped_column(Float)
    low_5: Mapped[float] = mapped_column(Float)
    low_6: Mapped[float] = mapped_column(Float)
    low_7: Mapped[float] = mapped_column(Float)
    high_1: Mapped[float] = mapped_column(Float)
    high_2: Mapped[float] = mapped_column(Float)
    high_3: Mapped[float] = mapped_column(Float)
    high_4: Mapped[float] = mapped_column(Float)
    high_5: Mapped[float] = mapped_column(Float)
    high_6: Mapped[float] = mapped_column(Float)
    high_7: Mapped[float] = mapped_column(Float)
    #: "given coefficients", "fitted to tabulated Cp" or "NIST-JANAF table <index> (<name>)"
    method: Mapped[str] = mapped_column(String(200))
    source: Mapped[str | None] = mapped_column(Text)
    #: largest |Cp_fit / Cp - 1| over the fitted points [-] (fitted polynomials only)
    max_cp_deviation: Mapped[float | None] = mapped_column(Float)
    #: largest |H_fit - H| [J mol-1] over tabulated H (a NIST-JANAF fit)
    max_h_deviation: Mapped[float | None] = mapped_column(Float)
    #: largest |S_fit - S| [J mol-1 K-1] over tabulated S (a NIST-JANAF fit)
    max_s_deviation: Mapped[float | None] = mapped_column(Float)
    #: number of Cp points fitted
    fit_points: Mapped[int | None] = mapped_column(Integer)
    updated_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    updated_by: Mapped[str | None] = mapped_column(String(200))


class EvansPolanyiRule(Base):
    """The Evans-Polanyi relation Ea = E0 + alpha ΔrH°(298.15 K) a curator set for a class."""

    __tablename__ = "evans_polanyi_rule"
    __table_args__ = (CheckConstraint("spread IS NULL OR spread >= 0", name="spread_non_negative"),)

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    reaction_class: Mapped[str] = mapped_column(String(200), unique=True)
    #: [J mol-1]
    E0: Mapped[float] = mapped_column("intrinsic_barrier", Float)
    alpha: Mapped[float] = mapped_column(Float)
    #: one standard deviation of Ea about the line [J mol-1], when the curator knows it
    spread: Mapped[float | None] = mapped_column(Float)
    source: Mapped[str | None] = mapped_column(Text)
    version: Mapped[int] = mapped_column(Integer, default=1)
    updated_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    updated_by: Mapped[str | None] = mapped_column(String(200))

    __mapper_args__ = {"version_id_col": version}  # noqa: RUF012


class Release(Base):
    """What an export held when a curator froze it: never edited, never withdrawn.

    ``content`` is the frozen package content as JSON text, stored verbatim
    (rows in SI units with their provenance, efficiencies, species, the check
    results); ``fingerprint`` is ``sha256:<hex>`` of that text.
    """

    __tablename__ = "release"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(200), unique=True)
    created_at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    created_by: Mapped[str] = mapped_column(String(200))
    fingerprint: Mapped[str] = mapped_column(String(100))
    content: Mapped[str] = mapped_column(Text)


class AuditEntry(Base):
    """Who changed what, when."""

    __tablename__ = "audit"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    at: Mapped[dt.datetime] = mapped_column(DateTime(timezone=True), default=utc_now)
    author: Mapped[str] = mapped_column(String(200))
    action: Mapped[str] = mapped_column(String(100))
    target: Mapped[str | None] = mapped_column(Text)
    detail: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)


# Indexes for the lookups the command line makes (revision 0002).
Index("ix_participant_species_id", Participant.species_id)
Index("ix_participant_reaction_id", Participant.reaction_id)
Index("ix_point_set_id", Point.set_id)
Index("ix_measurement_set_reaction_id", MeasurementSet.reaction_id)
Index("ix_expression_reaction_id", Expression.reaction_id)
Index("ix_reaction_reaction_class", Reaction.reaction_class)
Index("ix_audit_at", AuditEntry.at)
Index("ix_expression_term_expression_id", ExpressionTerm.expression_id)
Index("ix_third_body_efficiency_reaction_id", ThirdBodyEfficiency.reaction_id)
Index("ix_expression_run_id", Expression.run_id)
