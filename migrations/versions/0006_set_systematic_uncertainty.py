"""A measurement set's own systematic (scale) uncertainty.

``systematic_uncertainty`` is one standard deviation of the whole set's scale,
as a fraction of k (a calibration shared by every point). Fits add it to the
set's offset variance, so that a set's points cannot average it away. It is
optional; existing sets have none.

Revision ID: 0006
Revises: 0005
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0006"
down_revision: str | None = "0005"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    # ADD COLUMN with the check inline: no copy of a table that points refer to
    op.add_column(
        "measurement_set",
        sa.Column(
            "systematic_uncertainty",
            sa.Float(),
            sa.CheckConstraint(
                "systematic_uncertainty IS NULL OR systematic_uncertainty >= 0",
                name=op.f("ck_measurement_set_systematic_uncertainty_non_negative"),
            ),
            nullable=True,
        ),
    )


def downgrade() -> None:
    with op.batch_alter_table("measurement_set") as batch:
        batch.drop_constraint(
            op.f("ck_measurement_set_systematic_uncertainty_non_negative"), type_="check"
        )
        batch.drop_column("systematic_uncertainty")
