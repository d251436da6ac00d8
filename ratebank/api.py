"""The front door: ``ratebank.open(path_or_url)`` and the :class:`Store` it returns.

Every command of the ``ratebank`` command line is a thin call of one method of
:class:`Store`, or of one of the module's functions for what works on a store
that cannot be opened yet (:func:`init`, :func:`backup`, :func:`restore`,
:func:`demo`), so the library and the command line cannot drift apart.
Methods take and return plain typed values (dataclasses, named tuples, numpy
arrays) in SI units unless a unit is named, and raise the errors of
:mod:`ratebank.errors`.

>>> import ratebank
>>> with ratebank.open("group.db") as store:          # doctest: +SKIP
...     report = store.fit(form="auto")
...     k = store.rate("oh-ch4", [298.0, 1000.0], k_units="cm3/molecule/s")

Start-up stays fast: a method loads the modules it needs when it is first
called (:func:`_service` and :func:`_module`, the one place of lazy loading),
so that a listing does not import the numerics it does not use.
"""

from __future__ import annotations

import importlib
import numbers
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from types import ModuleType
from typing import TYPE_CHECKING, Any, Generic, TypeVar

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError
from ratebank.services.progress import Progress
from ratebank.services.store_access import StoreHandle, init_store, open_store

if TYPE_CHECKING:
    from ratebank.io.demo import DemoResult
    from ratebank.io.export import ExportResult
    from ratebank.report.book import BookFiles
    from ratebank.report.plots import PlotFile
    from ratebank.services.backup import BackupResult, RestoreResult
    from ratebank.services.checks import CheckReport
    from ratebank.services.curation import LifecycleChange, RecordEdit
    from ratebank.services.estimation import EstimateReport
    from ratebank.services.expressions import ExpressionEdit
    from ratebank.services.falloff_fit import PressureFitReport
    from ratebank.services.fitting import FitReport
    from ratebank.services.low_pressure import LowPressureReport
    from ratebank.services.mechanism import MechanismTable
    from ratebank.services.overview import ReactionOverview
    from ratebank.services.plot_data import ReactionPlotData, StericPlotData
    from ratebank.services.set_detail import SetDetail
    from ratebank.services.steric import ClassSteric, ReactionStericView, RuleView
    from ratebank.services.validate import ImportSummary
    from ratebank.store.listings import (
        ExpressionSummary,
        HistoryEntry,
        ReactionDetail,
        SetSummary,
        SpeciesDetail,
        SpeciesSummary,
    )
    from ratebank.store.queries import ExpressionRow, ReactionRow
    from ratebank.store.quick_listings import ReactionSummary
    from ratebank.store.schema import InitResult

__all__ = ["PlotResult", "Store", "backup", "demo", "init", "open", "restore"]


def _service(name: str) -> ModuleType:
    """The service module ``ratebank.services.<name>``, imported on first use."""
    return importlib.import_module(f"ratebank.services.{name}")


def _module(name: str) -> ModuleType:
    """A module of ``ratebank`` imported on first use (io and report, for the same reason)."""
    return importlib.import_module(f"ratebank.{name}")


def _keys(keys: Sequence[str] | None) -> list[str] | None:
    # A lone string is one key, not a sequence of one-letter keys.
    if isinstance(keys, str):
        return [keys]
    return list(keys) if keys else None


def _cell(value: object) -> str | None:
    """A keyword value as the species file would hold it (numbers at full precision)."""
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        return repr(float(value))
    raise BadInputError(f"{value!r} is neither a number nor text")


Data = TypeVar("Data")


@dataclass(frozen=True)
class PlotResult(Generic[Data]):
    """A written plot and the numbers drawn in it.

    Attributes
    ----------
    file : ratebank.report.plots.PlotFile
        The file written: path, format and size.
    data : list of ReactionPlotData, or StericPlotData
        What was drawn, as :meth:`Store.arrhenius_plot_data` or
        :meth:`Store.steric_plot_data` give it.
    """

    file: PlotFile
    data: Data


@dataclass(frozen=True)
class SpeciesPage:
    """What ``species show`` shows: the species with its reactions, and its thermochemistry
    (None when it has none)."""

    species: SpeciesDetail
    thermochemistry: Any


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
    def _store_file(self) -> str | None:
        """The SQLite file of the store, which no output may replace; None for a server."""
        url = self._handle.engine.url
        return url.database if url.get_backend_name() == "sqlite" else None

    @property
    def author(self) -> str:
        """The name recorded in the history for this store's changes."""
        return self._handle.author

    def close(self) -> None:
        """Release the store's connections; the object cannot be used afterwards."""
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

    def _import(self, function: str, path: str | Path, *, dry_run: bool, **kwargs: Any) -> Any:
        """An import file read by ``ratebank.io.csv_import.<function>``; a dry run writes
        nothing and takes no write lock."""
        reader = getattr(_module("io.csv_import"), function)
        with self._handle.session(write=not dry_run) as session:
            summary = reader(session, Path(path).absolute(), dry_run=dry_run, **kwargs)
            if dry_run:
                session.rollback()
        return summary

    # ------------------------------------------------------------------ species

    def import_species(
        self,
        path: str | Path,
        *,
        dry_run: bool = False,
        update: bool = False,
        progress: Progress | None = None,
    ) -> ImportSummary:
        """Import species from a CSV file, all or nothing; an ImportSummary.

        ImportValidationError lists every problem of the file (nothing is written).
        ``update=True`` compares rows that match stored records with them: changed ones are
        updated (the history keeps before and after in the file's units), new ones added,
        identical ones left alone; the summary counts each. Without it such rows are refused.
        """
        return self._import(
            "import_species_file", path, dry_run=dry_run, update=update, progress=progress
        )

    def add_species(self, name: str, formula: str, **fields: float | str | None) -> ImportSummary:
        """Add one species, checked exactly as an imported one; an ImportSummary.

        ``fields`` are the species file's columns, whose names carry the unit
        (``molar_mass_g_per_mol``, ``diameter_angstrom``, ``diameter_kind``,
        ``well_depth_K``, ``critical_temperature_K``, ``critical_pressure_bar``,
        ``acentric_factor``, ``boiling_volume_cm3_per_mol``, ``source``).
        """
        columns = [c for c in _service("validate").SPECIES_COLUMNS if c not in ("name", "formula")]
        unknown = sorted(set(fields) - set(columns))
        if unknown:
            expected = ", ".join(columns)
            raise BadInputError(
                f"unknown species field {unknown[0]!r}; expected some of {expected}",
                argument=unknown[0],
            )
        cells = {column: _cell(value) for column, value in fields.items()}
        return self._write("species", "add_species", name=name, formula=formula, **cells)

    def species(
        self,
        *,
        missing_diameter: bool | None = None,
        name_contains: str | None = None,
        include_withdrawn: bool = False,
    ) -> list[SpeciesSummary]:
        """Species in use by name (withdrawn ones too with ``include_withdrawn``); only those
        without (True) or with (False) a diameter, or whose name contains ``name_contains``,
        when given; a list of SpeciesSummary (SI units)."""
        return self._read(
            "species", "list_species",
            missing_diameter=missing_diameter, name_contains=name_contains,
            include_withdrawn=include_withdrawn,
        )  # fmt: skip

    def edit_species(
        self, name: str, *, expected_version: int, **fields: float | str | None
    ) -> RecordEdit:
        """Change fields of a species; ``fields`` are the species file's columns, whose names
        carry the unit (``formula``, ``molar_mass_g_per_mol``, ``diameter_angstrom``,
        ``diameter_kind``, ``well_depth_K``, ...); None leaves a field as it is. Refused
        with StaleEditError unless ``expected_version`` is the version read; a RecordEdit
        with each changed field's (before, after, unit) in the units given."""
        return self._write(
            "curation", "edit_species", name, expected_version=expected_version, **fields
        )

    def species_detail(
        self, name: str, *, temperatures: Sequence[float] | None = None
    ) -> SpeciesPage:
        """One species, the reactions it takes part in, and its thermochemistry (Cp°, H°, S°
        at ``temperatures`` [K], or the usual ones); a SpeciesPage. For a species without a
        diameter, ``species.estimated_diameter`` is the estimate collision theory would use
        (not stored)."""
        with self._handle.session() as session:
            return SpeciesPage(
                _service("partners").species_detail(session, name),
                _service("thermo").species_thermo(session, name, temperatures),
            )

    # ------------------------------------------------------------------ reactions

    def import_reactions(
        self,
        path: str | Path,
        *,
        dry_run: bool = False,
        update: bool = False,
        progress: Progress | None = None,
    ) -> ImportSummary:
        """Import reactions from a CSV file, all or nothing; an ImportSummary.

        ``update=True`` compares rows that match stored records with them: changed ones are
        updated (the history keeps before and after in the file's units), new ones added,
        identical ones left alone; the summary counts each. Without it such rows are refused.
        A stored reaction's equation changes only while no data refer to it.
        """
        return self._import(
            "import_reactions_file", path, dry_run=dry_run, update=update, progress=progress
        )

    def add_reaction(
        self,
        key: str,
        equation: str,
        *,
        reaction_class: str | None = None,
        notes: str | None = None,
    ) -> ReactionRow:
        """Add one reaction, checked for known species and element balance; the stored
        reaction (with its canonical equation)."""
        with self._handle.session(write=True) as session:
            _service("reactions").add_reaction(
                session, key, equation, reaction_class=reaction_class, notes=notes
            )
            return _module("store.queries").find_reaction(session, key)

    def reactions(
        self,
        *,
        species: str | None = None,
        reaction_class: str | None = None,
        status: str | None = None,
        include_withdrawn: bool = False,
    ) -> list[ReactionSummary]:
        """Reactions in use by key (withdrawn ones too with ``include_withdrawn``), with what
        the store knows of each; only those involving ``species``, of ``reaction_class``, or
        of ``status`` (``measured``, ``complete``, ``ea-only``, ``nothing``), when given; a
        list of ReactionSummary."""
        return self._read(
            "quick_listings", "list_reactions",
            species=species, reaction_class=reaction_class, status=status,
            include_withdrawn=include_withdrawn,
        )  # fmt: skip

    def edit_reaction(
        self,
        key_or_equation: str,
        *,
        expected_version: int,
        reaction_class: str | None = None,
        notes: str | None = None,
        equation: str | None = None,
    ) -> RecordEdit:
        """Change a reaction's class, notes, or its equation while no measurement set,
        expression or efficiency depends on it; an empty text clears class or notes. Refused
        with StaleEditError unless ``expected_version`` is the version read."""
        return self._write(
            "curation", "edit_reaction", key_or_equation,
            expected_version=expected_version, reaction_class=reaction_class, notes=notes,
            equation=equation,
        )  # fmt: skip

    def reaction(self, key_or_equation: str) -> ReactionDetail:
        """One reaction, found by its key or any spelling of its equation, with its
        participants, measurement sets, expressions and recent history; a ReactionDetail."""
        return self._read("reactions", "show_reaction", key_or_equation)

    def reaction_overview(
        self, key_or_equation: str, *, temperatures: Sequence[float] | None = None
    ) -> ReactionOverview:
        """One reaction with k [SI] of each complete expression at ``temperatures`` [K]
        (default: a grid over its ranges), its steric factors and check flags; a
        ReactionOverview."""
        return self._read(
            "overview", "reaction_overview", key_or_equation,
            temperatures=None if temperatures is None else list(temperatures),
        )  # fmt: skip

    # ------------------------------------------------------------------ efficiencies

    def import_efficiencies(
        self, path: str | Path, *, dry_run: bool = False, update: bool = False
    ) -> ImportSummary:
        """Import third-body efficiencies (reaction, species, efficiency, source) from a CSV
        file, all or nothing; an ImportSummary. A pair already stated is refused unless
        ``update=True``: then a changed value replaces it (with before and after in the
        history)."""
        return self._import("import_efficiencies_file", path, dry_run=dry_run, update=update)

    def efficiencies(self, *, reaction: str | None = None) -> list[Any]:
        """The stated third-body efficiencies (a species not listed counts 1), by reaction and
        species; those of ``reaction`` when given; a list of EfficiencyRow."""
        return self._read("efficiencies", "list_efficiencies", reaction=reaction)

    # ------------------------------------------------------------------ measurements

    def import_measurements(
        self,
        path: str | Path,
        *,
        k_units: str | None = None,
        dry_run: bool = False,
        update: bool = False,
        progress: Progress | None = None,
        fill_uncertainty: str | None = None,
    ) -> ImportSummary:
        """Import measured k(T) points from a CSV file, all or nothing; an ImportSummary.

        ``k_units`` is the unit of k for rows whose ``k_units`` cell is empty. A set that
        states an uncertainty for some points but not others is refused unless
        ``fill_uncertainty="median"``: then the missing ones take the median of the set's
        stated relative uncertainties, and the summary and history record it.

        ``update=True``: a set whose name is stored is compared with it as a whole (metadata
        and points, in SI); a changed one is rewritten (its id stays; fits that used it stay
        as they are until the next fit), an identical one left alone. The summary then counts
        sets (``added``, ``changed``, ``unchanged``); without it a stored name is refused.
        """
        return self._import(
            "import_measurements_file",
            path,
            dry_run=dry_run,
            update=update,
            k_units=k_units,
            progress=progress,
            fill_uncertainty=fill_uncertainty,
        )

    def measurement_set(self, name: str) -> SetDetail:
        """One measurement set: its metadata (reaction, reference, method, bath gas,
        pressures, systematic uncertainty, the unit k was given in), its points (SI, and k in
        the set's own unit), the fits whose provenance names it, and whether it or any of its
        points is withdrawn; a SetDetail. NotFoundError when no set has this name."""
        return self._read("set_detail", "show_set", name)

    def measurement_sets(
        self, *, reaction: str | None = None, include_withdrawn: bool = False
    ) -> list[SetSummary]:
        """Measurement sets in use (withdrawn ones too with ``include_withdrawn``) with their
        point counts and temperature ranges [K]; only those of ``reaction`` (a key or
        equation) when given; a list of SetSummary."""
        return self._read(
            "measurements", "list_sets", reaction=reaction, include_withdrawn=include_withdrawn
        )

    def edit_set(
        self,
        name: str,
        *,
        expected_version: int,
        reference: str | None = None,
        method: str | None = None,
        bath_gas: str | None = None,
        systematic_uncertainty: float | None = None,
        pressure: float | None = None,
        pressure_units: str = "bar",
    ) -> RecordEdit:
        """Change a measurement set's reference, method, bath gas, systematic uncertainty (a
        fraction of k) or the pressure of all its points (in ``pressure_units``). Refused
        with StaleEditError unless ``expected_version`` is the version read."""
        return self._write(
            "curation", "edit_set", name,
            expected_version=expected_version, reference=reference, method=method,
            bath_gas=bath_gas, systematic_uncertainty=systematic_uncertainty,
            pressure=pressure, pressure_units=pressure_units,
        )  # fmt: skip

    def edit_point(
        self,
        point_id: int,
        *,
        expected_version: int,
        T: float | None = None,
        k: float | None = None,
        k_units: str | None = None,
        uncertainty: float | None = None,
    ) -> RecordEdit:
        """Change a measured point's T [K], k (in ``k_units``, by default its set's unit) or
        relative uncertainty (a fraction of k). Refused with StaleEditError unless
        ``expected_version`` is the version read."""
        return self._write(
            "curation", "edit_point", point_id,
            expected_version=expected_version, T=T, k=k, k_units=k_units,
            uncertainty=uncertainty,
        )  # fmt: skip

    # ------------------------------------------------------------------ lifecycle

    def withdraw(self, kind: str, record: str | int, *, reason: str) -> LifecycleChange:
        """Withdraw a record (``kind`` one of ``species``, ``reaction``, ``set``, ``point``,
        ``expression``; ``record`` its name, key, set name or number) with a reason: it
        stays in the store and the history, and is left out of fits, estimates, derived
        statistics, checks and exports until reinstated."""
        return self._write("curation", "withdraw_record", kind, record, reason=reason)

    def reinstate(self, kind: str, record: str | int) -> LifecycleChange:
        """Put a withdrawn record back in use."""
        return self._write("curation", "reinstate_record", kind, record)

    def remove(self, kind: str, record: str | int) -> LifecycleChange:
        """Delete a record for good; refused (ConflictError) while anything refers to it.
        The history keeps its values."""
        return self._write("curation", "remove_record", kind, record)

    # ------------------------------------------------------------------ expressions

    def import_expressions(
        self,
        path: str | Path,
        *,
        dry_run: bool = False,
        update: bool = False,
        progress: Progress | None = None,
    ) -> ImportSummary:
        """Import literature or hand-entered expressions from a CSV file, all or nothing;
        an ImportSummary.

        A row matches the stored literature or manual expression of its reaction, reference,
        origin and form. Without ``update`` such a row is refused; with ``update=True`` a
        changed one gets the new numbers (its version rises), an identical one is left alone.
        """
        return self._import(
            "import_expressions_file", path, dry_run=dry_run, update=update, progress=progress
        )

    def expressions(
        self,
        *,
        reaction: str | None = None,
        origin: str | None = None,
        include_withdrawn: bool = False,
    ) -> list[ExpressionSummary]:
        """Stored expressions in use (withdrawn ones too with ``include_withdrawn``) in SI
        units; only those of ``reaction`` (a key or equation) or of ``origin``
        (``measured-fit``, ``literature``, ``collision-estimate``, ``manual``) when given; a
        list of ExpressionSummary."""
        return self._read(
            "expressions", "list_expressions",
            reaction=reaction, origin=origin, include_withdrawn=include_withdrawn,
        )  # fmt: skip

    def edit_expression(
        self,
        expression_id: int,
        *,
        expected_version: int,
        A: float | None = None,
        k_units: str | None = None,
        n: float | None = None,
        Ea: float | None = None,
        Ea_units: str | None = None,
        T_min: float | None = None,
        T_max: float | None = None,
        uncertainty_factor: float | None = None,
        reference: str | None = None,
    ) -> ExpressionEdit:
        """Change a literature or hand-entered expression; None leaves a field as it is.

        ``A`` is in ``k_units`` times K^-n, ``Ea`` in ``Ea_units``, ``T_min`` and
        ``T_max`` in K. Refused with StaleEditError unless ``expected_version`` is
        the version read. Returns an ExpressionEdit: the new version and each
        changed field's (before, after) in SI units.
        """
        return self._write(
            "expressions", "edit_expression", expression_id,
            expected_version=expected_version, A=A, n=n, Ea=Ea, Ea_units=Ea_units,
            k_units=k_units, T_min=T_min, T_max=T_max,
            uncertainty_factor=uncertainty_factor, reference=reference,
        )  # fmt: skip

    def history(
        self, *, limit: int = 50, target: str | None = None, author: str | None = None
    ) -> list[HistoryEntry]:
        """The newest ``limit`` audit entries, newest first; only those about ``target`` (a file
        or key) or by ``author`` when given; a list of HistoryEntry."""
        return self._read("history", "list_history", limit=limit, target=target, author=author)

    # ------------------------------------------------------------------ kinetics

    def fit(
        self,
        keys: Sequence[str] | None = None,
        *,
        form: str = "auto",
        fixed_n: float | None = None,
        pool_pressures: bool = False,
        broadening: str = "none",
        free: Sequence[str] = (),
        fixed: Mapping[str, float] | None = None,
        progress: Progress | None = None,
    ) -> FitReport | PressureFitReport:
        """Fit the measured sets of the reactions (all measured ones by default) and store each
        fit; a FitReport (SI units).

        ``form`` ``arrhenius``, ``modified`` or ``auto`` fits k(T); a reaction written with
        M whose points lie at different pressures is refused unless ``pool_pressures``
        (other reactions are pooled, and the fit says so). ``falloff`` or ``activated``
        fits one reaction across T and P instead (:meth:`fit_pressure_dependence`, with
        ``broadening``, ``free`` and ``fixed``) and gives a PressureFitReport.
        """
        if form in ("falloff", "activated"):
            names = _keys(keys) or []
            if len(names) != 1:
                raise BadInputError(
                    f"a {form} fit takes one reaction; got {len(names)}", argument="keys"
                )
            return self.fit_pressure_dependence(
                names[0], form=form, broadening=broadening, free=free, fixed=fixed
            )
        return self._write(
            "fitting", "fit_reactions", _keys(keys),
            form=form, fixed_n=fixed_n, pool_pressures=pool_pressures, progress=progress,
        )  # fmt: skip

    def fit_pressure_dependence(
        self,
        key: str,
        *,
        form: str = "falloff",
        broadening: str = "none",
        free: Sequence[str] = (),
        fixed: Mapping[str, float] | None = None,
    ) -> PressureFitReport:
        """Fit k0, k_inf and the broadening of one reaction to all its points across T and P
        by weighted nonlinear least squares, and store the fit; a PressureFitReport (SI).

        ``form`` is ``falloff`` (written with M) or ``activated`` (written without M);
        ``broadening`` ``none``, ``troe`` or ``fixed-fc``; ``fixed`` holds parameters
        (A0, n0, Ea0, A_inf, n_inf, Ea_inf, Fc, N, alpha, T3, T1, T2; SI) at a value;
        ``free`` fits optional ones too (N, T2). Data that cannot determine what was
        asked (one pressure, too few temperatures) are refused, saying what is missing.
        """
        return self._write(
            "falloff_fit", "fit_pressure_dependence", key,
            form=form, broadening=broadening, free=tuple(free), fixed=dict(fixed or {}),
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
        low_pressure: bool = False,
        oscillators: float | None = None,
        collision_efficiency: float | None = None,
        bath: str | None = None,
        threshold_energy: float | None = None,
        threshold_units: str | None = None,
    ) -> EstimateReport | LowPressureReport:
        """Fill missing A factors from collision theory times a steric factor; an
        EstimateReport (RefusedEstimateError when some cannot be estimated, unless
        ``keep_going``). k_inf of an association's falloff expression whose A is empty
        is estimated the same way, keeping its k0 and broadening.

        ``T_ref`` [K] is where the activation energies hold; without it, the middle of
        each activation energy's stated range.

        With ``low_pressure``, k0 of each named decomposition written with M from
        Hinshelwood's strong-collision formula instead (order-of-magnitude guidance,
        uncertainty factor 10 unless ``uncertainty_factor``): ``oscillators`` s,
        ``collision_efficiency`` beta_c in (0, 1], ``bath`` the bath-gas species, and
        ``threshold_energy`` in ``threshold_units`` (default J/mol; default: the stored
        activation energy) over
        ``T_range`` (default: that activation energy's range); a LowPressureReport.
        """
        hinshelwood = {
            "oscillators": oscillators,
            "collision_efficiency": collision_efficiency,
            "bath": bath,
            "threshold_energy": threshold_energy,
        }
        stray = [name for name, value in hinshelwood.items() if value is not None]
        if stray and not low_pressure:
            raise BadInputError(
                f"{', '.join(stray)} only apply to a low-pressure estimate (low_pressure)",
                argument=stray[0],
            )
        if low_pressure:
            ignored = {
                "steric": steric,
                "T_ref": T_ref,
                "reaction_class": reaction_class,
                "fallback_steric": fallback_steric,
                "keep_going": keep_going or None,
            }
            given = [name for name, value in ignored.items() if value is not None]
            if collision != "hard-sphere":
                given.append("collision")
            if given:
                raise BadInputError(
                    f"{', '.join(given)} do not apply to a low-pressure estimate",
                    argument=given[0],
                )
            return self._write(
                "low_pressure", "estimate_low_pressure", _keys(keys),
                oscillators=oscillators, collision_efficiency=collision_efficiency, bath=bath,
                threshold_energy=threshold_energy, threshold_units=threshold_units,
                T_range=T_range,
                uncertainty_factor=uncertainty_factor,
            )  # fmt: skip
        return self._write(
            "estimation", "estimate", _keys(keys),
            steric=steric, T_ref=T_ref, collision=collision, reaction_class=reaction_class,
            fallback_steric=fallback_steric, uncertainty_factor=uncertainty_factor,
            T_range=T_range, keep_going=keep_going, progress=progress,
        )  # fmt: skip

    def check(
        self,
        keys: Sequence[str] | None = None,
        *,
        T_range: tuple[float, float] | None = None,
        ignore: Sequence[str] | None = None,
        collision: str | None = None,
    ) -> CheckReport:
        """Check the expressions (of ``keys``, default all) against physical limits; a
        CheckReport (``clean`` when nothing is flagged and everything was checked)."""
        return self._read(
            "checks", "check_store",
            T_range=T_range, ignore=list(ignore) if ignore else None,
            keys=_keys(keys), collision=collision,
        )  # fmt: skip

    def rate(
        self,
        key: str,
        temperatures: Sequence[float],
        *,
        k_units: str | None = None,
        preset: str = "combustion",
        reverse: bool = False,
        pressure: float | None = None,
        pressure_units: str = "bar",
        bath: str | None = None,
        mixture: str | None = None,
    ) -> Any:
        """k at the temperatures [K] from the expression that would be exported, in
        ``k_units`` (default: the preset's unit for the order of k); a RateReport.

        At ``pressure`` (in ``pressure_units``: Pa, kPa, bar, atm, Torr, mbar, ...) of the
        ``bath`` gas or the ``mixture`` ("N2:0.78,O2:0.21,H2O:0.01"), a reaction written
        with M gives its effective k = k0 [M]_eff (or the fall-off k), and a fall-off or
        chemically activated one also k0, k_inf, Pr and F; those two need a pressure.
        With ``reverse``, the reverse rate k_f / Kc by detailed balance (a ReverseRateReport)."""
        if reverse:
            if pressure is not None or bath is not None or mixture is not None:
                raise BadInputError(
                    "the reverse rate is given without a pressure", argument="pressure"
                )
            return self._read(
                "reverse", "reverse_rate", key, list(temperatures), k_units=k_units, preset=preset
            )
        return self._read(
            "rates", "rate", key, list(temperatures), k_units=k_units, preset=preset,
            pressure=pressure, pressure_units=pressure_units, bath=bath, mixture=mixture,
        )  # fmt: skip

    def recommend(self, key: str, expression_id: int) -> ExpressionRow:
        """Mark the expression the export should use for a reaction; the ExpressionRow."""
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
    ) -> MechanismTable:
        """The rows the export would write, in the chosen units (nothing is written); a
        MechanismTable."""
        units = _service("mechanism").export_units(preset, k_units, e_units)
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
        reverse_as_fit: bool = False,
        release: str | None = None,
    ) -> ExportResult:
        """Write the data package folder ``out`` (``datapackage.json``, ``mechanism.csv``,
        ``efficiencies.csv``, ``species.csv``) as one unit, and record the export in the
        history; an ExportResult (ExportGapsError when a reaction has no usable expression,
        unless ``leave_out_gaps``). :func:`ratebank.read_package` reads the folder back.

        With ``release``, that release's frozen content is written again, in the SI units
        it was frozen in: the bytes an SI export wrote when it was made, apart from the
        creation time, whatever changed since. The unit and form arguments do not apply
        then and are refused (``preset`` may stay at its default or be ``si``)."""
        if release is not None:
            _release_only(preset, k_units, e_units, form, linearise_at, leave_out_gaps,
                          reverse_as_fit)  # fmt: skip
            with self._handle.session(write=True) as session:
                return _module("io.releases").export_release(session, release, Path(out))
        export = _module("io.export")
        with self._handle.session(write=True) as session:
            return export.export_mechanism(
                session,
                Path(out),
                preset=preset,
                k_units=k_units,
                e_units=e_units,
                form=form,
                linearise_at=linearise_at,
                leave_out_gaps=leave_out_gaps,
                store_label=self._handle.display_url,
                reverse_as_fit=reverse_as_fit,
            )

    # ------------------------------------------------------------------ releases

    def create_release(self, name: str, *, leave_out_gaps: bool = False) -> Any:
        """Freeze what an export would hold now (rows in SI with their provenance,
        efficiencies, species, the check results and a fingerprint of it all) under the new
        ``name``, with who made it and when; a ReleaseView. A name in use is a ConflictError;
        a release is never changed afterwards."""
        with self._handle.session(write=True) as session:
            return _module("io.releases").create_release(
                session, name, leave_out_gaps=leave_out_gaps, store_label=self._handle.display_url
            )

    def releases(self) -> list[Any]:
        """Every release, oldest first (name, when, who, fingerprint); ReleaseViews."""
        with self._handle.session() as session:
            return _module("io.releases").list_releases(session)

    def release(self, name: str) -> Any:
        """What the release ``name`` holds (counts, fingerprint, who and when, the check
        summary); a ReleaseView (NotFoundError when there is none of that name)."""
        with self._handle.session() as session:
            return _module("io.releases").show_release(session, name)

    def diff(
        self,
        a: str,
        b: str,
        *,
        temperatures: Sequence[float] | None = None,
        pressure: float = 1.0,
    ) -> Any:
        """What changed from ``a`` to ``b``; a DiffReport (reactions added, removed and
        changed: the fields, k_B/k_A at ``temperatures`` [K] (default 300 K, 1000 K and
        the rows' range ends) at ``pressure`` [bar] with efficiency 1, and whether the change
        exceeds the older row's uncertainty factor).

        Each side is ``"store"`` (this store now), ``"release:NAME"`` or a release's name, a
        store's path or URL, or an exported package folder."""
        with self._handle.session() as session:
            return _module("io.compare").diff_sides(
                session,
                a,
                b,
                temperatures=None if temperatures is None else [float(T) for T in temperatures],
                pressure_bar=float(pressure),
            )

    # ------------------------------------------------------------------ review book

    def review(
        self,
        out_dir: str | Path,
        *,
        keys: Sequence[str] | None = None,
        reaction_class: str | None = None,
        species: str | None = None,
        preset: str = "combustion",
        progress: Progress | None = None,
    ) -> BookFiles:
        """Write the review book, a static HTML site of the store (or of the reactions
        selected by ``keys``, ``reaction_class`` or ``species``), into the folder ``out_dir``;
        a BookFiles (the folder, its index and the page count).

        The folder must be new, empty or an earlier review book (replaced whole); it is
        checked before the store is read, and written whole, then moved into place.
        """
        book_files = _module("report.book")
        book_files.check_book_target(out_dir)
        with self._handle.session() as session:
            book = _service("review").gather_book(
                session,
                keys=None if keys is None else list(keys),
                reaction_class=reaction_class,
                species=species,
                preset=preset,
                store_label=self._handle.display_url,
                progress=progress,
            )
        return book_files.render_book(book, out_dir, progress=progress, store_path=self._store_file)

    # ------------------------------------------------------------------ steric factors

    def steric_rules(self) -> tuple[list[RuleView], list[ReactionStericView]]:
        """The stored steric factors: (class rules, per-reaction values)."""
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
        definition: str = "local",
    ) -> RuleView:
        """Create or change a reaction class's steric factor; the stored rule.

        ``definition`` is ``local`` (ratebank's P) or ``textbook`` (A / z, converted
        to the local P). With ``expected_version``, a rule changed since is refused
        (StaleEditError).
        """
        return self._write(
            "steric", "set_class_rule", reaction_class, steric_factor,
            uncertainty_factor=uncertainty_factor, source=source, note=note,
            expected_version=expected_version, definition=definition,
        )  # fmt: skip

    def clear_class_steric(self, reaction_class: str) -> None:
        """Remove a reaction class's steric factor."""
        self._write("steric", "remove_class_rule", reaction_class)

    def set_reaction_steric(
        self,
        key: str,
        steric_factor: float,
        *,
        source: str | None = None,
        definition: str = "local",
    ) -> ReactionStericView | None:
        """Store a steric factor on one reaction (it takes precedence over its class); the
        stored value."""
        return self._write(
            "steric", "set_reaction_steric", key, steric_factor,
            source=source, definition=definition,
        )  # fmt: skip

    def clear_reaction_steric(self, key: str) -> None:
        """Remove the steric factor stored on one reaction."""
        self._write("steric", "set_reaction_steric", key, None)

    def derived_steric_factors(
        self, *, collision: str = "hard-sphere", reaction_class: str | None = None
    ) -> list[ClassSteric]:
        """Steric factors implied by the measured fits, by class (geometric mean, spread,
        count); a list of ClassSteric."""
        return self._read(
            "steric", "derived_steric_factors", model=collision, reaction_class=reaction_class
        )

    # ------------------------------------------------------------------ plots

    def arrhenius_plot_data(
        self,
        keys: Sequence[str],
        *,
        preset: str = "combustion",
        k_units: str | None = None,
        T_range: tuple[float, float] | None = None,
    ) -> list[ReactionPlotData]:
        """The numbers of an Arrhenius plot of each reaction, in the display unit (numpy
        arrays); a list of ReactionPlotData."""
        return self._read(
            "plot_data", "arrhenius_plot_data", _keys(keys) or [],
            preset=preset, k_units=k_units, t_range=T_range,
        )  # fmt: skip

    def steric_plot_data(
        self, *, collision: str = "hard-sphere", reaction_class: str | None = None
    ) -> StericPlotData:
        """The steric factors implied by the measured fits as arrays, by class; a
        StericPlotData."""
        return self._read("plot_data", "steric_plot_data", collision, reaction_class=reaction_class)

    def plot(
        self,
        keys: Sequence[str],
        out: str | Path,
        *,
        preset: str = "combustion",
        k_units: str | None = None,
        T_range: tuple[float, float] | None = None,
        panels: bool = False,
        width: float | None = None,
        height: float | None = None,
        dpi: float = 150.0,
    ) -> PlotResult[list[ReactionPlotData]]:
        """Write an Arrhenius plot (log10 k against 1000/T) of the reactions to ``out``
        (``.png``, ``.svg`` or ``.pdf``); a PlotResult (the file and the plotted data).

        ``width`` and ``height`` are in inches (default: 7 by 5, or a grid of panels that
        grows with the count); the target is checked before the store is read.
        """
        plots = _module("report.plots")
        size = plots.arrhenius_figure_size(len(set(keys)), panels, width, height)
        plots.check_plot_target(out, *size, dpi, self._store_file)
        data = self.arrhenius_plot_data(keys, preset=preset, k_units=k_units, T_range=T_range)
        written = plots.render_arrhenius(
            data, out, panels=panels, width=width, height=height, dpi=dpi,
            store_path=self._store_file,
        )  # fmt: skip
        return PlotResult(written, data)

    def steric_plot(
        self,
        out: str | Path,
        *,
        collision: str = "hard-sphere",
        reaction_class: str | None = None,
        width: float | None = None,
        height: float | None = None,
        dpi: float = 150.0,
    ) -> PlotResult[StericPlotData]:
        """Write the derived steric factors per class on a log scale to ``out``; a PlotResult
        (the file and the plotted data). The width [in] grows with the classes unless given."""
        plots = _module("report.plots")
        default_width, default_height = plots.DEFAULT_SIZE
        plots.check_plot_target(
            out, width or default_width, height or default_height, dpi, self._store_file
        )
        data = self.steric_plot_data(collision=collision, reaction_class=reaction_class)
        written = plots.render_steric(
            data, out, width=width, height=height, dpi=dpi, store_path=self._store_file
        )
        return PlotResult(written, data)

    # ------------------------------------------------------------------ keeping it safe

    def backup(self, target: str | Path, *, force: bool = False) -> BackupResult:
        """Write a consistent copy of this SQLite store to ``target``; a BackupResult (see
        :func:`backup`)."""
        return _service("backup").backup_store(self._handle.url, target, force=force)

    # ------------------------------------------------------------------ thermochemistry

    def import_thermochemistry(
        self,
        path: str | Path,
        *,
        replace: bool = False,
        dry_run: bool = False,
        update: bool = False,
    ) -> Any:
        """Import species thermochemistry (coefficients or Cp-table layout), all or nothing;
        with ``update``, polynomials already stored are compared, the same ones left alone
        and changed ones replaced with their before and after in the history."""
        with self._handle.session(write=not dry_run) as session:
            report = _module("io.thermo_files").import_thermo_file(
                session, Path(path).absolute(), dry_run=dry_run, replace=replace, update=update
            )
            if dry_run:
                session.rollback()
            return report

    def fill_thermochemistry_from_janaf(
        self,
        tables: dict[str, str],
        *,
        T_range: tuple[float, float] = (200.0, 6000.0),
        replace: bool = False,
        dry_run: bool = False,
    ) -> Any:
        """Fit polynomials to NIST-JANAF tables (``{species: table}``) and store them."""
        with self._handle.session(write=not dry_run) as session:
            report = _module("io.thermo_files").fill_from_janaf(
                session, tables, T_range=T_range, replace=replace, dry_run=dry_run
            )
            if dry_run:
                session.rollback()
            return report

    def thermochemistry(self) -> Any:
        """The species that have thermochemistry, with range, method and fit deviations."""
        return self._read("thermo", "list_thermo")

    def reaction_thermochemistry(self, key: str, temperatures: Sequence[float]) -> Any:
        """ΔrH°, ΔrS°, ΔrG°, Kp and Kc of a reaction at the temperatures [K]."""
        return self._read("thermo", "reaction_thermo", key, list(temperatures))

    def set_reverse(self, key: str, rule: str) -> Any:
        """Declare how a reaction's reverse is obtained: ``none`` or ``detailed-balance``."""
        return self._write("thermo", "set_reverse", key, rule)

    def derived_evans_polanyi(self, *, reaction_class: str | None = None) -> Any:
        """Evans-Polanyi relations fitted per class to reactions with thermochemistry."""
        return self._read("evans_polanyi", "derived_relations", reaction_class=reaction_class)

    def evans_polanyi_rules(self) -> Any:
        """The Evans-Polanyi relations set for classes."""
        return self._read("evans_polanyi", "list_relations")

    def set_class_evans_polanyi(
        self,
        reaction_class: str,
        E0: float,
        alpha: float,
        *,
        E0_units: str = "kJ/mol",
        spread: float | None = None,
        source: str | None = None,
        expected_version: int | None = None,
    ) -> Any:
        """Set a class's relation Ea = E0 + alpha ΔrH°(298.15 K) (optimistic version check)."""
        return self._write(
            "evans_polanyi", "set_class_relation", reaction_class, E0, alpha,
            E0_units=E0_units, spread=spread, source=source, expected_version=expected_version,
        )  # fmt: skip

    def clear_class_evans_polanyi(self, reaction_class: str) -> None:
        """Remove a class's Evans-Polanyi relation."""
        self._write("evans_polanyi", "remove_class_relation", reaction_class)


def _release_only(
    preset: str | None,
    k_units: str | None,
    e_units: str | None,
    form: str,
    linearise_at: float | None,
    leave_out_gaps: bool,
    reverse_as_fit: bool,
) -> None:
    """Refuse export arguments that a release's frozen content cannot honour."""
    given = [
        name
        for name, used in (
            ("preset", preset not in (None, "si", "combustion")),
            ("k_units", k_units is not None),
            ("e_units", e_units is not None),
            ("form", form != "modified"),
            ("linearise_at", linearise_at is not None),
            ("leave_out_gaps", leave_out_gaps),
            ("reverse_as_fit", reverse_as_fit),
        )
        if used
    ]
    if given:
        raise BadInputError(
            f"a release is written as it was frozen (SI units, modified form); {given[0]} does "
            "not apply to it; nothing was written",
            argument=given[0],
        )


def open(db: str | Path | None = None, *, author: str | None = None) -> Store:
    """Open the store at ``db`` (a SQLite path or a database URL); a :class:`Store`.

    Without ``db``, the store named by ``RATEBANK_DB`` is used, or else
    ``./ratebank.db``. ``author`` is the name the history records (default:
    ``RATEBANK_AUTHOR``, else the login name). A store whose schema is not this
    ratebank's is refused with StoreRevisionError (:func:`init` upgrades it).
    """
    return Store(open_store(None if db is None else str(db), author=author))


def init(db: str | Path | None = None, *, author: str | None = None) -> tuple[Store, InitResult]:
    """Create the store, or upgrade it to this ratebank's schema (a no-op when up to date);
    (the open :class:`Store`, an InitResult saying what was done)."""
    handle, result = init_store(None if db is None else str(db), author=author)
    return Store(handle), result


def backup(db: str | Path | None, target: str | Path, *, force: bool = False) -> BackupResult:
    """Write a consistent copy of the SQLite store ``db`` to ``target``, safe while others use
    it; a BackupResult (path, size, revision, counts, content fingerprint).

    A store of an earlier schema revision is backed up as it is (before an upgrade is
    the time for it), which is why this takes an address rather than an open Store.
    PostgreSQL stores are refused (use the server's pg_dump); an existing ``target`` is
    refused unless ``force``.
    """
    return _service("backup").backup_store(None if db is None else str(db), target, force=force)


def restore(
    db: str | Path | None, source: str | Path, *, author: str | None = None
) -> RestoreResult:
    """Copy the backup ``source`` into the empty store ``db`` (a new file, or a database
    after :func:`init`); a RestoreResult. A store that holds data is refused."""
    return _service("backup").restore_store(None if db is None else str(db), source, author=author)


def read_package(path: str | Path) -> Any:
    """Read an exported data package folder into an evaluator of k(T, P); a
    :class:`ratebank.io.package.MechanismPackage` (see :func:`ratebank.read_package`)."""
    return _module("io.package").read_package(path)


def demo(
    db: str | Path,
    out: str | Path,
    *,
    author: str | None = None,
    book: bool = True,
    progress: Progress | None = None,
) -> DemoResult:
    """Build the demo store at ``db`` from the invented scenario (every rate number in it is
    synthetic), fit, estimate, check and export it into the folder ``out``, and write its
    review book to ``out/review`` unless ``book`` is False; a DemoResult (``book`` holds the
    BookFiles). Only an earlier demo store, and an earlier book, are replaced."""
    out = Path(out)
    book_folder = out / "review"
    if book and out.is_dir():
        _module("report.book").check_book_target(book_folder)
    result = _module("io.demo").run_demo(Path(db), out, author=author)
    if book:
        with open(result.db, author=author) as store:
            result.book = store.review(book_folder, progress=progress)
    return result
