"""Species thermochemistry, reversible reactions and Evans-Polanyi class relations.

``species_thermo`` holds one pair of seven-coefficient polynomials per species
(McBride, Gordon & Reno, NASA TM-4513, 1993) as fourteen float columns named
like the import file's (``low_1`` ... ``high_7``), with their range, where they
came from and, for fitted ones, the largest deviations of the fit. Typed
columns rather than JSON arrays: the database refuses a missing coefficient,
every coefficient is stored and fingerprinted as its exact IEEE-754 value on
both dialects, and a coefficient can be read with plain SQL.

``reaction.reverse`` says how a reaction's reverse is obtained: empty (the
default, and every existing reaction) means irreversible as written,
``detailed-balance`` means k_r = k_f / Kc. "Not reversible" is stored as an
empty cell rather than the word, so that the content of a store whose
reactions are all irreversible (and its fingerprint) does not change with the
upgrade.

``evans_polanyi_rule`` holds the relation Ea = E0 + alpha ΔrH°(298.15 K) a
curator set for a reaction class (E0 in J mol^-1).

Revision ID: 0007
Revises: 0006
Create Date: 2026-12-03
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0007"
down_revision: str | None = "0006"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

COEFFICIENTS = [f"{side}_{i}" for side in ("low", "high") for i in range(1, 8)]


def upgrade() -> None:
    # ADD COLUMN with the check inline: no copy of ``reaction``, which on SQLite would drop
    # and recreate it under the foreign keys of the tables that refer to it
    op.add_column(
        "reaction",
        sa.Column(
            "reverse",
            sa.String(length=30),
            sa.CheckConstraint(
                "reverse IS NULL OR reverse IN ('detailed-balance')",
                name=op.f("ck_reaction_reverse_known"),
            ),
            nullable=True,
        ),
    )
    op.create_table(
        "species_thermo",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("species_id", sa.Integer(), nullable=False),
        sa.Column("t_low", sa.Float(), nullable=False),
        sa.Column("t_mid", sa.Float(), nullable=False),
        sa.Column("t_high", sa.Float(), nullable=False),
        *(sa.Column(name, sa.Float(), nullable=False) for name in COEFFICIENTS),
        sa.Column("method", sa.String(length=200), nullable=False),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("max_cp_deviation", sa.Float(), nullable=True),
        sa.Column("max_h_deviation", sa.Float(), nullable=True),
        sa.Column("max_s_deviation", sa.Float(), nullable=True),
        sa.Column("fit_points", sa.Integer(), nullable=True),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("updated_by", sa.String(length=200), nullable=True),
        sa.CheckConstraint(
            "t_low > 0 AND t_low < t_mid AND t_mid < t_high",
            name=op.f("ck_species_thermo_range_ordered"),
        ),
        sa.CheckConstraint(
            "max_cp_deviation IS NULL OR max_cp_deviation >= 0",
            name=op.f("ck_species_thermo_cp_deviation_non_negative"),
        ),
        sa.CheckConstraint(
            "max_h_deviation IS NULL OR max_h_deviation >= 0",
            name=op.f("ck_species_thermo_h_deviation_non_negative"),
        ),
        sa.CheckConstraint(
            "max_s_deviation IS NULL OR max_s_deviation >= 0",
            name=op.f("ck_species_thermo_s_deviation_non_negative"),
        ),
        sa.ForeignKeyConstraint(
            ["species_id"],
            ["species.id"],
            name=op.f("fk_species_thermo_species_id_species"),
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_species_thermo")),
        sa.UniqueConstraint("species_id", name=op.f("uq_species_thermo_species_id")),
    )
    op.create_table(
        "evans_polanyi_rule",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reaction_class", sa.String(length=200), nullable=False),
        sa.Column("intrinsic_barrier", sa.Float(), nullable=False),
        sa.Column("alpha", sa.Float(), nullable=False),
        sa.Column("spread", sa.Float(), nullable=True),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("updated_by", sa.String(length=200), nullable=True),
        sa.CheckConstraint(
            "spread IS NULL OR spread >= 0", name=op.f("ck_evans_polanyi_rule_spread_non_negative")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_evans_polanyi_rule")),
        sa.UniqueConstraint("reaction_class", name=op.f("uq_evans_polanyi_rule_reaction_class")),
    )


def downgrade() -> None:
    op.drop_table("evans_polanyi_rule")
    op.drop_table("species_thermo")
    with op.batch_alter_table("reaction") as batch:
        batch.drop_constraint(op.f("ck_reaction_reverse_known"), type_="check")
        batch.drop_column("reverse")
