"""Indexes for the lookups the command line makes.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-01
"""

from __future__ import annotations

from collections.abc import Sequence

from alembic import op

revision: str = "0002"
down_revision: str | None = "0001"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

INDEXES = (
    ("ix_participant_species_id", "participant", ["species_id"]),
    ("ix_participant_reaction_id", "participant", ["reaction_id"]),
    ("ix_point_set_id", "point", ["set_id"]),
    ("ix_measurement_set_reaction_id", "measurement_set", ["reaction_id"]),
    ("ix_expression_reaction_id", "expression", ["reaction_id"]),
    ("ix_reaction_reaction_class", "reaction", ["reaction_class"]),
    ("ix_audit_at", "audit", ["at"]),
)


def upgrade() -> None:
    for name, table, columns in INDEXES:
        op.create_index(name, table, columns, unique=False)


def downgrade() -> None:
    for name, table, _columns in INDEXES:
        op.drop_index(name, table_name=table)
