"""Releases: the content an export held when a curator froze it.

``release`` holds one row per release: its unique name, when and by whom it
was made, the fingerprint of its content and the content itself (JSON text,
stored verbatim). Nothing else changes: no existing row, column or
fingerprint.

Revision ID: 0010
Revises: 0009
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0010"
down_revision: str | None = "0009"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "release",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=200), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("created_by", sa.String(length=200), nullable=False),
        sa.Column("fingerprint", sa.String(length=100), nullable=False),
        sa.Column("content", sa.Text(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_release")),
        sa.UniqueConstraint("name", name=op.f("uq_release_name")),
    )


def downgrade() -> None:
    op.drop_table("release")
