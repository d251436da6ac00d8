"""Provenance common to a run, stored once.

``provenance_run`` holds what every expression written by one run (an
estimate of a whole mechanism, say) has in common: its action, when and by
whom it ran, and the common part of the provenance (JSON text). An
expression's new ``run_id`` names its run; its own ``provenance`` then holds
only what differs, and the store reads the full provenance as the run's part
updated by the row's. Existing expressions keep their whole provenance and no
run (``run_id`` empty), so their content and the store's fingerprint are
unchanged.

Revision ID: 0011
Revises: 0010
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0011"
down_revision: str | None = "0010"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "provenance_run",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("action", sa.String(length=100), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("created_by", sa.String(length=200), nullable=True),
        sa.Column("content", sa.JSON(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_provenance_run")),
    )
    # ADD COLUMN without a table copy (SQLite would otherwise rebuild ``expression`` under
    # the foreign keys that refer to it); existing rows get no run
    name = op.f("fk_expression_run_id_provenance_run")
    if op.get_bind().dialect.name == "sqlite":
        # SQLite adds a column's reference inline, never as a constraint of its own
        op.execute(
            f"ALTER TABLE expression ADD COLUMN run_id INTEGER CONSTRAINT {name} "
            "REFERENCES provenance_run (id)"
        )
    else:
        op.add_column(
            "expression",
            sa.Column("run_id", sa.Integer(), sa.ForeignKey("provenance_run.id", name=name)),
        )
    op.create_index("ix_expression_run_id", "expression", ["run_id"])


def downgrade() -> None:
    op.drop_index("ix_expression_run_id", table_name="expression")
    if op.get_bind().dialect.name == "sqlite":
        # the reference was written inline: the table copy leaves it out with its column
        with op.batch_alter_table("expression") as batch:
            batch.drop_column("run_id")
    else:
        op.drop_constraint(
            op.f("fk_expression_run_id_provenance_run"), "expression", type_="foreignkey"
        )
        op.drop_column("expression", "run_id")
    op.drop_table("provenance_run")
