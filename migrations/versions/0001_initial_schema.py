"""Initial schema: species, reactions, measurements, expressions, steric rules, audit.

Revision ID: 0001
Revises:
Create Date: 2026-12-01
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0001"
down_revision: str | None = None
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "audit",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("author", sa.String(length=200), nullable=False),
        sa.Column("action", sa.String(length=100), nullable=False),
        sa.Column("target", sa.Text(), nullable=True),
        sa.Column("detail", sa.JSON(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_audit")),
    )
    op.create_table(
        "reaction",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("key", sa.String(length=200), nullable=False),
        sa.Column("equation", sa.String(length=1000), nullable=False),
        sa.Column("reaction_order", sa.Integer(), nullable=False),
        sa.Column("third_body", sa.Boolean(), nullable=False),
        sa.Column("reaction_class", sa.String(length=200), nullable=True),
        sa.Column("notes", sa.Text(), nullable=True),
        sa.Column("steric_factor", sa.Float(), nullable=True),
        sa.Column("steric_source", sa.Text(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "reaction_order >= 1 AND reaction_order <= 3", name=op.f("ck_reaction_order_range")
        ),
        sa.CheckConstraint(
            "steric_factor IS NULL OR steric_factor > 0",
            name=op.f("ck_reaction_steric_factor_positive"),
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_reaction")),
        sa.UniqueConstraint("equation", name=op.f("uq_reaction_equation")),
        sa.UniqueConstraint("key", name=op.f("uq_reaction_key")),
    )
    op.create_table(
        "species",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=200), nullable=False),
        sa.Column("formula", sa.String(length=200), nullable=False),
        sa.Column("molar_mass", sa.Float(), nullable=False),
        sa.Column("molar_mass_source", sa.String(length=100), nullable=False),
        sa.Column("diameter", sa.Float(), nullable=True),
        sa.Column("diameter_kind", sa.String(length=20), nullable=True),
        sa.Column("diameter_method", sa.String(length=100), nullable=True),
        sa.Column("well_depth", sa.Float(), nullable=True),
        sa.Column("well_depth_method", sa.String(length=100), nullable=True),
        sa.Column("critical_temperature", sa.Float(), nullable=True),
        sa.Column("critical_pressure", sa.Float(), nullable=True),
        sa.Column("acentric_factor", sa.Float(), nullable=True),
        sa.Column("boiling_volume", sa.Float(), nullable=True),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "boiling_volume IS NULL OR boiling_volume > 0",
            name=op.f("ck_species_boiling_volume_positive"),
        ),
        sa.CheckConstraint(
            "critical_pressure IS NULL OR critical_pressure > 0",
            name=op.f("ck_species_critical_pressure_positive"),
        ),
        sa.CheckConstraint(
            "critical_temperature IS NULL OR critical_temperature > 0",
            name=op.f("ck_species_critical_temperature_positive"),
        ),
        sa.CheckConstraint(
            "diameter IS NULL OR diameter > 0", name=op.f("ck_species_diameter_positive")
        ),
        sa.CheckConstraint("molar_mass > 0", name=op.f("ck_species_molar_mass_positive")),
        sa.CheckConstraint(
            "well_depth IS NULL OR well_depth > 0", name=op.f("ck_species_well_depth_positive")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_species")),
        sa.UniqueConstraint("name", name=op.f("uq_species_name")),
    )
    op.create_table(
        "steric_rule",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reaction_class", sa.String(length=200), nullable=False),
        sa.Column("steric_factor", sa.Float(), nullable=False),
        sa.Column("uncertainty_factor", sa.Float(), nullable=True),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("note", sa.Text(), nullable=True),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("updated_by", sa.String(length=200), nullable=True),
        sa.CheckConstraint("steric_factor > 0", name=op.f("ck_steric_rule_steric_factor_positive")),
        sa.CheckConstraint(
            "uncertainty_factor IS NULL OR uncertainty_factor >= 1",
            name=op.f("ck_steric_rule_uncertainty_factor_range"),
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_steric_rule")),
        sa.UniqueConstraint("reaction_class", name=op.f("uq_steric_rule_reaction_class")),
    )
    op.create_table(
        "expression",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reaction_id", sa.Integer(), nullable=False),
        sa.Column("origin", sa.String(length=30), nullable=False),
        sa.Column("pre_exponential", sa.Float(), nullable=True),
        sa.Column("temperature_exponent", sa.Float(), nullable=False),
        sa.Column("activation_energy", sa.Float(), nullable=False),
        sa.Column("t_min", sa.Float(), nullable=True),
        sa.Column("t_max", sa.Float(), nullable=True),
        sa.Column("uncertainty_factor", sa.Float(), nullable=True),
        sa.Column("reference", sa.Text(), nullable=True),
        sa.Column("provenance", sa.JSON(), nullable=False),
        sa.Column("recommended", sa.Boolean(), nullable=False),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("created_by", sa.String(length=200), nullable=True),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("updated_by", sa.String(length=200), nullable=True),
        sa.CheckConstraint(
            "origin IN ('measured-fit', 'literature', 'collision-estimate', 'manual')",
            name=op.f("ck_expression_origin_known"),
        ),
        sa.CheckConstraint(
            "pre_exponential IS NULL OR pre_exponential > 0",
            name=op.f("ck_expression_pre_exponential_positive"),
        ),
        sa.CheckConstraint(
            "t_min IS NULL OR t_max IS NULL OR t_max >= t_min",
            name=op.f("ck_expression_t_range_ordered"),
        ),
        sa.CheckConstraint("t_min IS NULL OR t_min > 0", name=op.f("ck_expression_t_min_positive")),
        sa.CheckConstraint(
            "uncertainty_factor IS NULL OR uncertainty_factor >= 1",
            name=op.f("ck_expression_uncertainty_factor_range"),
        ),
        sa.ForeignKeyConstraint(
            ["reaction_id"], ["reaction.id"], name=op.f("fk_expression_reaction_id_reaction")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_expression")),
    )
    op.create_table(
        "measurement_set",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=200), nullable=False),
        sa.Column("reaction_id", sa.Integer(), nullable=False),
        sa.Column("reference", sa.Text(), nullable=True),
        sa.Column("method", sa.Text(), nullable=True),
        sa.Column("bath_gas", sa.String(length=200), nullable=True),
        sa.Column("original_k_units", sa.String(length=100), nullable=False),
        sa.Column("source_file", sa.Text(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.ForeignKeyConstraint(
            ["reaction_id"], ["reaction.id"], name=op.f("fk_measurement_set_reaction_id_reaction")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_measurement_set")),
        sa.UniqueConstraint("name", name=op.f("uq_measurement_set_name")),
    )
    op.create_table(
        "participant",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reaction_id", sa.Integer(), nullable=False),
        sa.Column("species_id", sa.Integer(), nullable=False),
        sa.Column("role", sa.String(length=10), nullable=False),
        sa.Column("coefficient", sa.Integer(), nullable=False),
        sa.CheckConstraint(
            "role IN ('reactant', 'product')", name=op.f("ck_participant_role_known")
        ),
        sa.CheckConstraint("coefficient >= 1", name=op.f("ck_participant_coefficient_positive")),
        sa.ForeignKeyConstraint(
            ["reaction_id"],
            ["reaction.id"],
            name=op.f("fk_participant_reaction_id_reaction"),
            ondelete="CASCADE",
        ),
        sa.ForeignKeyConstraint(
            ["species_id"], ["species.id"], name=op.f("fk_participant_species_id_species")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_participant")),
        sa.UniqueConstraint("reaction_id", "species_id", "role", name="uq_participant_role"),
    )
    op.create_table(
        "point",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("set_id", sa.Integer(), nullable=False),
        sa.Column("temperature", sa.Float(), nullable=False),
        sa.Column("rate_constant", sa.Float(), nullable=False),
        sa.Column("relative_uncertainty", sa.Float(), nullable=True),
        sa.Column("pressure", sa.Float(), nullable=True),
        sa.CheckConstraint(
            "pressure IS NULL OR pressure > 0", name=op.f("ck_point_pressure_positive")
        ),
        sa.CheckConstraint("rate_constant > 0", name=op.f("ck_point_rate_constant_positive")),
        sa.CheckConstraint(
            "relative_uncertainty IS NULL OR relative_uncertainty > 0",
            name=op.f("ck_point_uncertainty_positive"),
        ),
        sa.CheckConstraint("temperature > 0", name=op.f("ck_point_temperature_positive")),
        sa.ForeignKeyConstraint(
            ["set_id"],
            ["measurement_set.id"],
            name=op.f("fk_point_set_id_measurement_set"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_point")),
    )


def downgrade() -> None:
    op.drop_table("point")
    op.drop_table("participant")
    op.drop_table("measurement_set")
    op.drop_table("expression")
    op.drop_table("steric_rule")
    op.drop_table("species")
    op.drop_table("reaction")
    op.drop_table("audit")
