"""Rate-law forms: summed channels, third-body, fall-off and chemically activated expressions.

``expression.form`` names the rate law; empty means the reaction's plain form
(``arrhenius``, or ``third-body`` for a reaction written with M), so every
expression stored before this revision keeps its meaning, and its content (and
the store's fingerprint) is unchanged by the upgrade. ``falloff`` and
``activated`` expressions keep their high-pressure limit in ``a``, ``n``,
``ea`` and add the low-pressure limit (``a_low``, ``n_low``, ``ea_low``), the
broadening function and its parameters. A ``sum`` keeps its first term in the
expression row and its further terms in ``expression_term``.
``third_body_efficiency`` holds the collision efficiency of a species in one
reaction's effective third-body concentration (absent: 1).

Revision ID: 0008
Revises: 0007
Create Date: 2026-12-04
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0008"
down_revision: str | None = "0007"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

_PLAIN_FLOATS = ("n_low", "ea_low", "fc", "fc_width", "troe_alpha", "troe_t3", "troe_t1", "troe_t2")


def upgrade() -> None:
    # ADD COLUMN with the checks inline: no copy of ``expression`` on SQLite
    op.add_column(
        "expression",
        sa.Column(
            "form",
            sa.String(length=20),
            sa.CheckConstraint(
                "form IS NULL OR form IN ('arrhenius', 'sum', 'third-body', 'falloff', "
                "'activated')",
                name=op.f("ck_expression_form_known"),
            ),
            nullable=True,
        ),
    )
    op.add_column(
        "expression",
        sa.Column(
            "a_low",
            sa.Float(),
            sa.CheckConstraint(
                "a_low IS NULL OR a_low > 0", name=op.f("ck_expression_a_low_positive")
            ),
            nullable=True,
        ),
    )
    op.add_column(
        "expression",
        sa.Column(
            "broadening",
            sa.String(length=20),
            sa.CheckConstraint(
                "broadening IS NULL OR broadening IN ('none', 'troe', 'fixed-fc')",
                name=op.f("ck_expression_broadening_known"),
            ),
            nullable=True,
        ),
    )
    for name in _PLAIN_FLOATS:
        op.add_column("expression", sa.Column(name, sa.Float(), nullable=True))
    op.create_table(
        "expression_term",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("expression_id", sa.Integer(), nullable=False),
        sa.Column("term", sa.Integer(), nullable=False),
        sa.Column("a", sa.Float(), nullable=False),
        sa.Column("n", sa.Float(), nullable=False),
        sa.Column("ea", sa.Float(), nullable=False),
        sa.Column("t_min", sa.Float(), nullable=True),
        sa.Column("t_max", sa.Float(), nullable=True),
        sa.CheckConstraint("term >= 2", name=op.f("ck_expression_term_term_after_first")),
        sa.CheckConstraint("a > 0", name=op.f("ck_expression_term_a_positive")),
        sa.CheckConstraint(
            "t_min IS NULL OR t_min > 0", name=op.f("ck_expression_term_t_min_positive")
        ),
        sa.CheckConstraint(
            "t_min IS NULL OR t_max IS NULL OR t_max >= t_min",
            name=op.f("ck_expression_term_t_range_ordered"),
        ),
        sa.ForeignKeyConstraint(
            ["expression_id"],
            ["expression.id"],
            name=op.f("fk_expression_term_expression_id_expression"),
            ondelete="CASCADE",
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_expression_term")),
        sa.UniqueConstraint("expression_id", "term", name="uq_expression_term_term"),
    )
    op.create_index(
        "ix_expression_term_expression_id", "expression_term", ["expression_id"], unique=False
    )
    op.create_table(
        "third_body_efficiency",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reaction_id", sa.Integer(), nullable=False),
        sa.Column("species_id", sa.Integer(), nullable=False),
        sa.Column("efficiency", sa.Float(), nullable=False),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("updated_by", sa.String(length=200), nullable=True),
        sa.CheckConstraint(
            "efficiency >= 0", name=op.f("ck_third_body_efficiency_efficiency_non_negative")
        ),
        sa.ForeignKeyConstraint(
            ["reaction_id"],
            ["reaction.id"],
            name=op.f("fk_third_body_efficiency_reaction_id_reaction"),
        ),
        sa.ForeignKeyConstraint(
            ["species_id"],
            ["species.id"],
            name=op.f("fk_third_body_efficiency_species_id_species"),
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_third_body_efficiency")),
        sa.UniqueConstraint("reaction_id", "species_id", name="uq_third_body_efficiency_pair"),
    )
    op.create_index(
        "ix_third_body_efficiency_reaction_id",
        "third_body_efficiency",
        ["reaction_id"],
        unique=False,
    )


def downgrade() -> None:
    op.drop_index("ix_third_body_efficiency_reaction_id", table_name="third_body_efficiency")
    op.drop_table("third_body_efficiency")
    op.drop_index("ix_expression_term_expression_id", table_name="expression_term")
    op.drop_table("expression_term")
    with op.batch_alter_table("expression") as batch:
        batch.drop_constraint(op.f("ck_expression_form_known"), type_="check")
        batch.drop_constraint(op.f("ck_expression_a_low_positive"), type_="check")
        batch.drop_constraint(op.f("ck_expression_broadening_known"), type_="check")
        for name in ("form", "a_low", "broadening", *_PLAIN_FLOATS):
            batch.drop_column(name)
