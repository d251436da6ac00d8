"""ratebank: a curated store of gas-phase rate parameters.

Open a store and work with it from Python::

    import ratebank

    with ratebank.open("group.db") as store:
        store.fit(form="auto")
        report = store.rate("oh-ch4", [298.0, 1000.0], k_units="cm3/molecule/s")
        store.export("mechanism")                     # a data package folder

    package = ratebank.read_package("mechanism")      # no store needed to read it back
    k = package.rate_constants([300.0, 1000.0], P=1.0, mixture="N2:0.79,O2:0.21")

:func:`open` gives a :class:`ratebank.api.Store` whose methods mirror the
commands of the ``ratebank`` command line; :func:`init` creates or upgrades
a store; :func:`read_package` reads an exported data package into an
evaluator of k(T, P) for a modeller's own code. The package is layered (each
layer imports only those below it)::

    cli -> api -> report -> io -> services -> store -> science

``ratebank.science`` is pure numerics and can be used on its own, for example
``from ratebank.science import collision``.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from pathlib import Path

    from ratebank.api import Store
    from ratebank.io.package import MechanismPackage
    from ratebank.store.schema import InitResult

__version__ = "0.1.0"

__all__ = ["Store", "__version__", "init", "open", "read_package"]

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


def read_package(path: str | Path) -> MechanismPackage:
    """Read the data package folder ``path`` written by ``ratebank export``; a
    :class:`ratebank.io.package.MechanismPackage` whose ``rate_constants(T, P=None,
    mixture=None)`` gives {reaction key: k array} in the package's units (P in bar;
    ``pressure_unit`` for others). No store is opened."""
    from ratebank.io.package import read_package as read

    return read(path)


def __getattr__(name: str) -> Any:
    if name == "Store":
        from ratebank.api import Store

        return Store
    raise AttributeError(f"module 'ratebank' has no attribute {name!r}")
