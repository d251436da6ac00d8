"""The temperature dependence of an expression's uncertainty factor.

Every expression's uncertainty is f(T) = f(298 K) exp|g (1/T - 1/298 K)|, the
evaluation panels' form: ``uncertainty_factor`` holds f(298 K) and the new
``uncertainty_g`` holds g [K]; an empty g means 0. Existing expressions had one
factor for every temperature, which is g = 0, so they are left as they are; a
measured fit's covering (f(298), g) pair is computed from its covariance when
it is next fitted.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0003"
down_revision: str | None = "0002"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("expression") as batch:
        batch.add_column(sa.Column("uncertainty_g", sa.Float(), nullable=True))
        batch.create_check_constraint(
            op.f("ck_expression_uncertainty_g_non_negative"),
            "uncertainty_g IS NULL OR uncertainty_g >= 0",
        )


def downgrade() -> None:
    with op.batch_alter_table("expression") as batch:
        batch.drop_constraint(op.f("ck_expression_uncertainty_g_non_negative"), type_="check")
        batch.drop_column("uncertainty_g")
