"""The front door: ``ratebank.open(path_or_url)`` and the :class:`Store` it returns.

Every command of the ``ratebank`` command line is a thin call of one method of
:class:`Store` (``tests/cli/test_commands.py`` walks them all), so the library
and the command line cannot drift apart. Methods take and return plain typed
values (dataclasses, named tuples, numpy arrays) in SI units unless a unit is
named, and raise the errors of :mod:`ratebank.errors`.

>>> import ratebank
>>> with ratebank.open("group.db") as store:          # doctest: +SKIP
...     report = store.fit(form="auto")
...     k = store.rate("oh-ch4", [298.0, 1000.0], k_units="cm3/molecule/s")

Start-up stays fast: a method loads the services it needs when it is first
called (:func:`_service`, the one place of lazy loading), so that a listing
does not import the numerics it does not use.
"""

from __future__ import annotations

import importlib
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path
from types import ModuleType
from typing import Any

from sqlalchemy.orm import Session

from ratebank.services.progress import Progress
from ratebank.services.store_access import StoreHandle, init_store, open_store

__all__ = ["Store", "init", "open"]


def _service(name: str) -> ModuleType:
    """The service module ``ratebank.services.<name>``, imported on first use."""
    return importlib.import_module(f"ratebank.services.{name}")


def _module(name: str) -> ModuleType:
    """A module of ``ratebank`` imported on first use (io and science, for the same reason)."""
    return importlib.import_module(f"ratebank.{name}")


class Store:
    """An open ratebank store (a SQLite file or a PostgreSQL database).

    Use :func:`ratebank.open` to get one; close it with :meth:`close` or a
    ``with`` block. Each method runs in one transaction of its own: a method
    that writes either writes everything or nothing.
    """

    def __init__(self, handle: StoreHandle):
        self._handle = handle

    # ------------------------------------------------------------------ the store

    @property
    def address(self) -> str:
        """The store's path or URL, with any password masked."""
        return self._handle.display_url

    @property
    def author(self) -> str:
        """The name recorded in the history for this store's changes."""
        return self._handle.author

    def close(self) -> None:
        self._handle.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def __repr__(self) -> str:
        return f"<ratebank.Store {self.address}>"

    @contextmanager
    def session(self, *, write: bool = False) -> Iterator[Session]:
        """One transaction on the store, for code that composes the services itself."""
        with self._handle.session(write=write) as session:
            yield session

    def _read(self, service: str, function: str, *args: Any, **kwargs: Any) -> Any:
        with self._handle.session() as session:
            return getattr(_service(service), function)(session, *args, **kwargs)

    def _write(self, service: str, function: str, *args: Any, **kwargs: Any) -> Any:
        with self._handle.session(write=True) as session:
            return getattr(_service(service), function)(session, *args, **kwargs)

    # ------------------------------------------------------------------ kinetics

    def fit(
        self,
        keys: Sequence[str] | None = None,
        *,
        form: str = "auto",
        fixed_n: float | None = None,
        progress: Progress | None = None,
    ) -> Any:
        """Fit the measured sets of the reactions (all measured ones by default); a FitReport."""
        return self._write(
            "fitting", "fit_reactions", list(keys) if keys else None,
            form=form, fixed_n=fixed_n, progress=progress,
        )  # fmt: skip

    def estimate(
        self,
        keys: Sequence[str] | None = None,
        *,
        steric: float | None = None,
        T_ref: float | None = None,
        collision: str = "hard-sphere",
        reaction_class: str | None = None,
        fallback_steric: float | None = None,
        uncertainty_factor: float | None = None,
        T_range: tuple[float, float] | None = None,
        keep_going: bool = False,
        progress: Progress | None = None,
    ) -> Any:
        """Fill missing A factors from collision theory times a steric factor; an
        EstimateReport (RefusedEstimateError when some cannot be estimated, unless
        ``keep_going``)."""
        return self._write(
            "estimation",
            "estimate",
            list(keys) if keys else None,
            steric=steric,
            T_ref=T_ref,
            collision=collision,
            reaction_class=reaction_class,
            fallback_steric=fallback_steric,
            uncertainty_factor=uncertainty_factor,
            T_range=T_range,
            keep_going=keep_going,
            progress=progress,
        )

    def check(
        self,
        keys: Sequence[str] | None = None,
        *,
        T_range: tuple[float, float] | None = None,
        ignore: Sequence[str] | None = None,
    ) -> Any:
        """Check every expression against physical limits; a CheckReport."""
        return self._read(
            "checks", "check_store",
            T_range=T_range, ignore=list(ignore) if ignore else None,
            keys=list(keys) if keys else None,
        )  # fmt: skip

    def rate(
        self,
        key: str,
        temperatures: Sequence[float],
        *,
        k_units: str | None = None,
        preset: str = "combustion",
    ) -> Any:
        """k at the temperatures [K] from the expression that would be exported; a RateReport."""
        return self._read(
            "mechanism", "rate", key, list(temperatures), k_units=k_units, preset=preset
        )

    def recommend(self, key: str, expression_id: int) -> Any:
        """Mark the expression the export should use for a reaction."""
        return self._write("selection", "recommend", key, expression_id)

    def mechanism_table(
        self,
        *,
        preset: str | None = "combustion",
        k_units: str | None = None,
        e_units: str | None = None,
        form: str = "modified",
        linearise_at: float | None = None,
        leave_out_gaps: bool = False,
    ) -> Any:
        """The rows the export would write, in the chosen units (nothing is written)."""
        mechanism = _service("mechanism")
        units = mechanism.export_units(preset, k_units, e_units)
        return self._read(
            "mechanism", "mechanism_table",
            units=units, form=form, linearise_at=linearise_at, leave_out_gaps=leave_out_gaps,
        )  # fmt: skip

    def export(
        self,
        out: str | Path,
        *,
        preset: str | None = "combustion",
        k_units: str | None = None,
        e_units: str | None = None,
        form: str = "modified",
        linearise_at: float | None = None,
        leave_out_gaps: bool = False,
    ) -> Any:
        """Write the mechanism table and its descriptor; an ExportResult."""
        export = _module("io.export")
        mechanism = _service("mechanism")
        units = mechanism.export_units(preset, k_units, e_units)
        with self._handle.session() as session:
            return export.export_mechanism(
                session,
                Path(out),
                units=units,
                form=form,
                linearise_at=linearise_at,
                leave_out_gaps=leave_out_gaps,
                store_url=self._handle.display_url,
            )

    # ------------------------------------------------------------------ steric factors

    def steric_rules(self) -> Any:
        """(class rules, per-reaction steric factors)."""
        return self._read("steric", "list_rules")

    def set_class_steric(
        self,
        reaction_class: str,
        steric_factor: float,
        *,
        uncertainty_factor: float | None = None,
        source: str | None = None,
        note: str | None = None,
        expected_version: int | None = None,
    ) -> Any:
        """Create or change a reaction class's steric factor (optimistic version check)."""
        return self._write(
            "steric", "set_class_rule", reaction_class, steric_factor,
            uncertainty_factor=uncertainty_factor, source=source, note=note,
            expected_version=expected_version,
        )  # fmt: skip

    def clear_class_steric(self, reaction_class: str) -> None:
        """Remove a reaction class's steric factor."""
        self._write("steric", "remove_class_rule", reaction_class)

    def set_reaction_steric(
        self, key: str, steric_factor: float | None, *, source: str | None = None
    ) -> Any:
        """Store (or with None, clear) one reaction's steric factor."""
        return self._write("steric", "set_reaction_steric", key, steric_factor, source=source)

    def derived_steric_factors(
        self, *, model: str = "hard-sphere", reaction_class: str | None = None
    ) -> Any:
        """Steric factors implied by the measured fits, by class."""
        return self._read(
            "steric", "derived_steric_factors", model=model, reaction_class=reaction_class
        )


def open(db: str | Path | None = None, *, author: str | None = None) -> Store:
    """Open the store at ``db`` (a SQLite path or a database URL).

    Without ``db``, the store named by ``RATEBANK_DB`` is used, or else
    ``./ratebank.db``. A store whose schema is not this ratebank's is refused
    with a message saying how to upgrade it (:func:`init`).
    """
    return Store(open_store(None if db is None else str(db), author=author))


def init(db: str | Path | None = None, *, author: str | None = None) -> tuple[Store, Any]:
    """Create the store, or upgrade it to this ratebank's schema; (store, what was done)."""
    handle, result = init_store(None if db is None else str(db), author=author)
    return Store(handle), result
