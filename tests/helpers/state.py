"""What a store holds, to compare before and after something that must not change it."""

from __future__ import annotations

from helpers.cli import snapshot
from ratebank.services.store_access import open_store, store_counts
from ratebank.store.fingerprint import store_fingerprint


def store_state(db: str):
    """Content fingerprint, row counts and every row (audit included) of the store ``db``."""
    store = open_store(db)
    try:
        with store.session() as session:
            fingerprint = store_fingerprint(session)
            counts = store_counts(session)
    finally:
        store.close()
    return fingerprint, counts, snapshot(db)
