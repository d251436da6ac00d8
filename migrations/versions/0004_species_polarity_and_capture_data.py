"""What species need for polarity, the boiling-point well depth and the capture limit.

``dipole_moment`` [C m] decides whether the nonpolar diameter correlations apply;
``boiling_temperature`` [K] enables the boiling-point well-depth rule;
``polarizability`` [m^3, a polarizability volume] and ``ionization_energy``
[J mol^-1] give the dispersion-limited capture rate that ``check`` holds
bimolecular rates to. All are optional; existing species keep none.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0004"
down_revision: str | None = "0003"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

COLUMNS = ("dipole_moment", "boiling_temperature", "polarizability", "ionization_energy")
POSITIVE = ("boiling_temperature", "polarizability", "ionization_energy")


def upgrade() -> None:
    # ADD COLUMN with the check inline: no table copy, which on SQLite would drop and
    # recreate ``species`` under the foreign keys of the tables that refer to it
    for name in COLUMNS:
        rule = f"{name} >= 0" if name == "dipole_moment" else f"{name} > 0"
        check = "non_negative" if name == "dipole_moment" else "positive"
        op.add_column(
            "species",
            sa.Column(
                name,
                sa.Float(),
                sa.CheckConstraint(
                    f"{name} IS NULL OR {rule}", name=op.f(f"ck_species_{name}_{check}")
                ),
                nullable=True,
            ),
        )


def downgrade() -> None:
    with op.batch_alter_table("species") as batch:
        batch.drop_constraint(op.f("ck_species_dipole_moment_non_negative"), type_="check")
        for name in POSITIVE:
            batch.drop_constraint(op.f(f"ck_species_{name}_positive"), type_="check")
        for name in reversed(COLUMNS):
            batch.drop_column(name)
