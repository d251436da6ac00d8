"""Withdrawal of curated records, and a version on every record a curator edits.

Species, reactions, measurement sets, points and expressions may be withdrawn
with a reason: the row stays (with who withdrew it and when) and is left out of
fits, estimates, derived statistics, checks and exports until it is
reinstated. ``withdrawn_at`` empty means the record is in use, so every row
stored before this revision is in use. Species, reactions, sets and points get
the lock ``version`` that expressions already have (an edit names the version
it read), starting at 1 for every existing row.

Every column is added with ADD COLUMN: no table is copied, so SQLite keeps its
foreign keys and indexes as they are. The new columns hold no value (or only
the lock version, which the fingerprint leaves out), so the store's fingerprint
is unchanged by the upgrade.

Revision ID: 0009
Revises: 0008
Create Date: 2026-12-05
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0009"
down_revision: str | None = "0008"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

WITHDRAWABLE = ("species", "reaction", "measurement_set", "point", "expression")
#: Tables without a lock version before this revision.
NEW_VERSIONS = ("species", "reaction", "measurement_set", "point")


def upgrade() -> None:
    for table in WITHDRAWABLE:
        op.add_column(table, sa.Column("withdrawn_at", sa.DateTime(timezone=True), nullable=True))
        op.add_column(table, sa.Column("withdrawn_by", sa.String(length=200), nullable=True))
        op.add_column(table, sa.Column("withdrawn_reason", sa.Text(), nullable=True))
    for table in NEW_VERSIONS:
        op.add_column(
            table,
            sa.Column("version", sa.Integer(), nullable=False, server_default=sa.text("1")),
        )


def downgrade() -> None:
    # plain DROP COLUMN (SQLite 3.35 and later): none of these columns has a constraint
    for table in WITHDRAWABLE:
        names = ("withdrawn_at", "withdrawn_by", "withdrawn_reason")
        for name in (*names, "version") if table in NEW_VERSIONS else names:
            op.drop_column(table, name)
