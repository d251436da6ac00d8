"""Alembic environment and revisions of the ratebank store (installed as ratebank._migrations)."""
