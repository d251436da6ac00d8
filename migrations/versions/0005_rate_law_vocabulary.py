"""One vocabulary for the rate law in Python and in SQL: A, n, Ea, T_min, T_max.

The expression columns ``pre_exponential``, ``temperature_exponent`` and
``activation_energy`` become ``a``, ``n`` and ``ea`` (SQL folds unquoted names
to lower case, so ``SELECT A, n, Ea, T_min, T_max FROM expression`` reads them
on SQLite and PostgreSQL alike). ``RENAME COLUMN`` keeps every row and rewrites
the check constraints that name the columns (SQLite 3.25 and later, PostgreSQL);
the constraints keep their names.

Revision ID: 0005
Revises: 0004
Create Date: 2026-12-02
"""

from __future__ import annotations

from collections.abc import Sequence

from alembic import op

revision: str = "0005"
down_revision: str | None = "0004"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

RENAMED = (("pre_exponential", "a"), ("temperature_exponent", "n"), ("activation_energy", "ea"))


def upgrade() -> None:
    for old, new in RENAMED:
        op.execute(f"ALTER TABLE expression RENAME COLUMN {old} TO {new}")


def downgrade() -> None:
    for old, new in RENAMED:
        op.execute(f"ALTER TABLE expression RENAME COLUMN {new} TO {old}")
