"""Thermochemistry in: a CSV file of either layout, or the NIST-JANAF tables.

The layout of a file is told by its header: ``T_low_K``, ``low_1`` ...
``high_7`` make the coefficients layout; ``T_K``, ``Cp_J_per_mol_K`` and the
298.15 K values make the table layout (README, Import files). The NIST-JANAF
tables come with the optional ``janaf`` package (the ``thermo`` extra), which
ships them; nothing is fetched at run time.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

import numpy as np
from sqlalchemy.orm import Session

from ratebank.errors import NotFoundError, RefusedError
from ratebank.io.csv_import import CsvFileError, iter_table, read_table
from ratebank.services import thermo_validation as tv
from ratebank.services.thermo import ThermoImportReport, ThermoTable, import_thermo
from ratebank.services.thermo import store_thermo_tables as store_tables
from ratebank.services.validate import Problems

_ALL_COLUMNS = tuple(dict.fromkeys((*tv.COEFFICIENT_COLUMNS, *tv.TABLE_COLUMNS)))


def file_layout(path: str | Path) -> str:
    """``coefficients`` or ``table``, from the file's header."""
    stream = iter_table(path, _ALL_COLUMNS, ("species",), problems=Problems(), chunk_rows=1)
    try:
        header = next(stream)
    finally:
        stream.close()
    layout = tv.layout_of(header)
    if layout is None:
        raise CsvFileError(
            f"{path}:1: the header does not say which layout the file has; expected either "
            f"the coefficients layout ({', '.join(tv.COEFFICIENT_COLUMNS)}) or the table "
            f"layout ({', '.join(tv.TABLE_COLUMNS)})"
        )
    return layout


def import_thermo_file(
    session: Session,
    path: str | Path,
    *,
    dry_run: bool = False,
    replace: bool = False,
    update: bool = False,
) -> ThermoImportReport:
    """Import a thermochemistry file of either layout; all or nothing."""
    layout = file_layout(path)
    columns, required = tv.LAYOUTS[layout]
    table = read_table(path, columns, required)
    rows = [
        (line, dict(zip(table.header, row, strict=True)))
        for line, row in zip(table.lines, table.rows, strict=True)
    ]
    return import_thermo(
        session, layout, rows, source=table.path, dry_run=dry_run, replace=replace, update=update
    )


# --------------------------------------------------------------------------- NIST-JANAF


def _janaf():  # type: ignore[no-untyped-def]
    try:
        import janaf
    except ModuleNotFoundError:
        raise RefusedError(
            "the NIST-JANAF tables come with the optional package 'janaf', which is not "
            "installed; install ratebank with its thermo extra (pip install 'ratebank[thermo]')"
        ) from None
    return janaf


def read_janaf_table(index: str) -> ThermoTable:
    """One NIST-JANAF table by its index (e.g. ``H-064``), in SI units.

    The tables print H - H(298.15) and ΔfH° in kJ/mol; they are converted to J/mol.
    """
    janaf = _janaf()
    table = janaf.Table(index)
    try:
        title, formula = table.name, table.formula
    except (FileNotFoundError, OSError):
        raise NotFoundError(
            f"no NIST-JANAF table {index!r}; tables are named like H-064 (water) or H-038 "
            "(hydroxyl)"
        ) from None
    frame = table.df

    def column(name: str, scale: float = 1.0) -> np.ndarray:
        return frame[name].to_numpy().astype(float) * scale

    return ThermoTable(
        index=index,
        title=title,
        formula=formula,
        T=column("T(K)"),
        Cp=column("Cp"),
        S=column("S"),
        H_minus_H298=column("H-H(Tr)", 1e3),
        delta_f_H=column("delta-f H", 1e3),
        source=f"NIST-JANAF Thermochemical Tables, 4th ed. (Chase 1998), table {index}, "
        f"{title}, via the janaf package {janaf.__version__}",
    )


def fill_from_janaf(
    session: Session,
    tables: Mapping[str, str],
    *,
    T_range: tuple[float, float] = (200.0, 6000.0),
    replace: bool = False,
    dry_run: bool = False,
) -> ThermoImportReport:
    """Fit and store the thermochemistry of each species (name -> NIST-JANAF table index)."""
    read = {species: read_janaf_table(index) for species, index in tables.items()}
    return store_tables(session, read, T_range=T_range, replace=replace, dry_run=dry_run)
