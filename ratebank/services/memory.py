"""Holding off the cyclic garbage collector during bulk work.

An import, fit or estimate of a whole mechanism allocates millions of
short-lived objects (cells, rows, provenance records) that form no reference
cycles. CPython's cyclic collector would walk them again and again as they
pile up (about a sixth of a million-point import's time, more when the
process already holds a large heap). Reference counting still frees them;
the collector resumes, and runs once, afterwards.
"""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager


@contextmanager
def paused_garbage_collection() -> Iterator[None]:
    """Disable the cyclic collector for the block (restoring its state after).

    >>> with paused_garbage_collection():
    ...     gc.isenabled()
    False
    """
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()
