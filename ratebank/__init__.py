"""ratebank: a curated store of gas-phase rate parameters.

Open a store and work with it from Python::

    import ratebank

    with ratebank.open("group.db") as store:
        store.fit(form="auto")
        report = store.rate("oh-ch4", [298.0, 1000.0], k_units="cm3/molecule/s")

:func:`open` gives a :class:`ratebank.api.Store` whose methods mirror the
commands of the ``ratebank`` command line; :func:`init` creates or upgrades
a store. The package is layered (each layer imports only those below it)::

    cli -> api -> report -> io -> services -> store -> science

``ratebank.science`` is pure numerics and can be used on its own, for example
``from ratebank.science import collision``.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from pathlib import Path

    from ratebank.api import Store
    from ratebank.store.schema import InitResult

__version__ = "0.1.0"

__all__ = ["Store", "__version__", "init", "open"]

# The front door imports ratebank.api (and with it SQLAlchemy) only when it is used: `import
# ratebank` stays cheap for `ratebank.science` users and for the command line's start-up,
# which reads __version__ from here.


def open(db: str | Path | None = None, *, author: str | None = None) -> Store:
    """Open the store at ``db`` (a SQLite path or a database URL); a :class:`ratebank.api.Store`.

    Without ``db``, the store named by ``RATEBANK_DB`` is used, or else
    ``./ratebank.db``. ``author`` is the name the history records. A store whose
    schema is not this ratebank's is refused (:func:`init` upgrades it). Use it in a
    ``with`` block, or call ``close()``.
    """
    from ratebank import api

    return api.open(db, author=author)


def init(db: str | Path | None = None, *, author: str | None = None) -> tuple[Store, InitResult]:
    """Create the store at ``db``, or upgrade it to this ratebank's schema (a no-op when up to
    date); (the open :class:`ratebank.api.Store`, an InitResult saying what was done)."""
    from ratebank import api

    return api.init(db, author=author)


def __getattr__(name: str) -> Any:
    if name == "Store":
        from ratebank.api import Store

        return Store
    raise AttributeError(f"module 'ratebank' has no attribute {name!r}")
