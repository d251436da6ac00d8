"""Write the mechanism table and its descriptor, atomically.

``OUT.csv`` holds the table (the README's column names); ``OUT.resource.json``
describes it as a Frictionless Tabular Data Resource (the open Table Schema
standard), with the units, the rate-law convention, the store's content
fingerprint, the creation time, the tool version and the caution text.

Both files are written as one unit by :mod:`ratebank.safe_output` (staged
beside the targets, synced, committed, renamed into place; the store's own
file and non-regular targets are refused; see there for what a crash leaves).

A text cell that a spreadsheet would read as a formula (one that begins with
``=``, ``+``, ``-``, ``@``, a tab or a carriage return) is written with an
apostrophe in front, the usual protection against formula injection; a text
cell that already begins with an apostrophe gets one more, so that removing
one leading apostrophe always gives the stored text back. The descriptor says
so. Numbers are written as they are.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import os
import re
from dataclasses import dataclass
from operator import itemgetter
from pathlib import Path
from typing import Any

from sqlalchemy.orm import Session

from ratebank import __version__, safe_output
from ratebank.caution import CAUTION
from ratebank.errors import RatebankError
from ratebank.services import mechanism
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.reverse import REVERSE_ORIGIN, descriptor_block
from ratebank.store import json_codec
from ratebank.store.fingerprint import store_fingerprint


class ExportError(RatebankError):
    """The table cannot be written where it was asked to."""


@dataclass
class ExportResult:
    table_path: Path
    descriptor_path: Path
    table: mechanism.MechanismTable
    fingerprint: str
    descriptor: dict[str, Any]


def descriptor_path_for(out: Path) -> Path:
    name = out.name[: -len(".csv")] if out.name.lower().endswith(".csv") else out.name
    return out.with_name(name + ".resource.json")


def _field_descriptions(units: mechanism.ExportUnits) -> list[dict[str, Any]]:
    origins = ["measured-fit", "literature", "collision-estimate", "manual", REVERSE_ORIGIN]
    return [
        {
            "name": "key",
            "type": "string",
            "description": "reaction key in the store",
            "constraints": {"required": True, "unique": True},
        },
        {
            "name": "equation",
            "type": "string",
            "description": "canonical equation; M is a third body",
        },
        {
            "name": "order",
            "type": "integer",
            "description": "overall reaction order",
            "constraints": {"required": True, "minimum": 1, "maximum": 3},
        },
        {
            "name": "A",
            "type": "number",
            "description": "pre-exponential factor in k_units times K^-n",
            "constraints": {"required": True},
        },
        {
            "name": "n",
            "type": "number",
            "description": "temperature exponent (T in K)",
            "constraints": {"required": True},
        },
        {
            "name": "Ea",
            "type": "number",
            "description": f"activation energy in Ea_units ({units.e_units})",
            "constraints": {"required": True},
        },
        {"name": "k_units", "type": "string", "description": "unit of k for this row's order"},
        {"name": "Ea_units", "type": "string", "description": "unit of Ea"},
        {"name": "T_min_K", "type": "number", "description": "lower end of the valid range, K"},
        {"name": "T_max_K", "type": "number", "description": "upper end of the valid range, K"},
        {
            "name": "origin",
            "type": "string",
            "description": "where the numbers come from",
            "constraints": {"required": True, "enum": origins},
        },
        {
            "name": "steric_factor",
            "type": "number",
            "description": "the local steric factor P = k / (z exp(-E0/RT)) behind an estimate, "
            "or implied by a fit; for hard spheres P = A_local / (e^(1/2) z), so a textbook "
            "A / z is e^(1/2) times larger",
        },
        {
            "name": "uncertainty_factor",
            "type": "number",
            "description": "the largest uncertainty factor f(T) over the row's range (one "
            "standard deviation of ln k; see uncertainty_f298 and uncertainty_g_K)",
        },
        {
            "name": "references",
            "type": "string",
            "description": "measurement sets or sources behind the numbers",
        },
        {
            "name": "uncertainty_f298",
            "type": "number",
            "description": "f(298 K) of the uncertainty factor f(T) = f(298 K) exp|g (1/T - "
            "1/298 K)|, one standard deviation of ln k (the evaluation panels' form)",
        },
        {
            "name": "uncertainty_g_K",
            "type": "number",
            "description": "g of that form [K]; 0 means the same factor at every temperature",
        },
        {
            "name": "linearised_at_K",
            "type": "number",
            "description": "for a two-parameter export of a curved expression: the temperature "
            "inside the row's range where its local Arrhenius form was taken",
        },
        {
            "name": "linearisation_max_ln_deviation",
            "type": "number",
            "description": "the largest |ln(k_row / k_expression)| over the row's range; it is "
            "included in uncertainty_f298",
        },
        {
            "name": "reverse",
            "type": "string",
            "description": "the reverse of the reaction: none (irreversible as written), "
            "detailed-balance (reversible: the modeller computes k_r = k_f / Kc from the "
            "thermochemistry, see ratebank.reverse) or fitted-row (reversible, and its reverse "
            "is the next row, key '<key>:reverse', origin detailed-balance-fit)",
            "constraints": {
                "required": True,
                "enum": ["none", "detailed-balance", "fitted-row"],
            },
        },
        {
            "name": "reverse_max_relative_deviation",
            "type": "number",
            "description": "for a detailed-balance-fit row: the largest |k_row / (k_f / Kc) - 1| "
            "over the row's range; its uncertainty factors are the forward row's times "
            "(1 + this deviation), the thermochemistry's own uncertainty not included",
        },
    ]


def _slug(text: str) -> str:
    slug = re.sub(r"[^a-z0-9._-]+", "-", text.lower()).strip("-._")
    return slug or "mechanism"


#: First characters that make a spreadsheet read a text cell as a formula; the
#: apostrophe is included so that the protection can always be undone exactly.
FORMULA_LEADING = frozenset("=+-@\t\r'")
#: What the descriptor says about text cells.
TEXT_CELL_RULE = (
    "A text cell that begins with =, +, -, @, a tab, a carriage return or an apostrophe "
    "is written with one apostrophe in front, so that a spreadsheet shows it as text and "
    "never runs it as a formula; remove that one leading apostrophe to get the stored text. "
    "Numbers are written as they are."
)


def neutralised_text(cell: str) -> str:
    """``cell`` as written in a text column: an apostrophe before a formula-like start.

    >>> neutralised_text("=HYPERLINK(0)"), neutralised_text("oh-ch4"), neutralised_text("'a")
    ("'=HYPERLINK(0)", 'oh-ch4', "''a")
    """
    return "'" + cell if cell and cell[0] in FORMULA_LEADING else cell


def _text_columns(units: mechanism.ExportUnits) -> list[int]:
    return [
        index for index, field in enumerate(_field_descriptions(units)) if field["type"] == "string"
    ]


def _table_text(table: mechanism.MechanismTable, text_columns: list[int]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(mechanism.COLUMNS)
    # Rows start with the table's columns. The csv module writes a float as its
    # repr, the shortest text that reads back as the same float (full
    # precision), and None as an empty cell.
    rows = list(map(itemgetter(slice(0, len(mechanism.COLUMNS))), table.rows))
    leading = FORMULA_LEADING
    for position, row in enumerate(rows):
        if any(isinstance(row[i], str) and row[i][:1] in leading for i in text_columns):
            rows[position] = tuple(
                neutralised_text(cell) if i in text_columns and isinstance(cell, str) else cell
                for i, cell in enumerate(row)
            )
    writer.writerows(rows)
    return buffer.getvalue()


def _store_file(session: Session) -> str | None:
    """The SQLite file of the store (which an export must never replace), or None."""
    bind = session.get_bind()
    return bind.url.database if bind.dialect.name == "sqlite" else None


@paused_garbage_collection()
def export_mechanism(
    session: Session,
    out: Path,
    *,
    preset: str | None = "combustion",
    k_units: str | None = None,
    e_units: str | None = None,
    form: str = "modified",
    linearise_at: float | None = None,
    leave_out_gaps: bool = False,
    store_label: str | None = None,
    reverse_as_fit: bool = False,
) -> ExportResult:
    """Write ``out`` (CSV) and its ``.resource.json`` descriptor; with ``reverse_as_fit``,
    the reverse of each reversible reaction as a row of its own."""
    out = Path(out)
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise ExportError(f"folder {folder} does not exist; create it or choose another output")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise ExportError(f"folder {folder} is not writable; nothing was written")
    if out.is_dir():
        raise ExportError(f"{out} is a folder; give a file name such as mechanism.csv")
    store_file = _store_file(session)
    for target in (out, descriptor_path_for(out)):
        safe_output.check_target(target, store_path=store_file)
    units = mechanism.export_units(preset, k_units, e_units)
    table = mechanism.mechanism_table(
        session,
        units=units,
        form=form,
        linearise_at=linearise_at,
        leave_out_gaps=leave_out_gaps,
        reverse_as_fit=reverse_as_fit,
    )
    fingerprint = store_fingerprint(session)
    descriptor_path = descriptor_path_for(out)
    created = dt.datetime.now(dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")
    descriptor: dict[str, Any] = {
        "profile": "tabular-data-resource",
        "name": _slug(out.stem),
        "title": "Mechanism table exported by ratebank",
        "description": "One row per reaction: k = A T^n exp(-Ea/(R T)), T in K. " + CAUTION,
        "path": out.name,
        "format": "csv",
        "mediatype": "text/csv",
        "encoding": "utf-8",
        "dialect": {"delimiter": ",", "header": True, "doubleQuote": True},
        "created": created,
        "schema": {
            "fields": _field_descriptions(units),
            "primaryKey": ["key"],
            "missingValues": [""],
        },
        "ratebank": {
            "version": __version__,
            "created": created,
            "store": store_label,
            "store_fingerprint": fingerprint,
            "rows": len(table.rows),
            "rate_expression": "k = A * T**n * exp(-Ea / (R * T)), T in K, "
            "A in k_units times K**-n",
            "rate_law_convention": mechanism.RATE_LAW_CONVENTION,
            "units": {
                "preset": units.label,
                "k_units_by_order": {str(k): v for k, v in sorted(units.k_units.items())},
                "Ea_units": units.e_units,
                "calorie": "thermochemical, 4.184 J",
            },
            "form": form,
            "linearised": [
                {"key": r.key, "at_K": r.linearised_at_K}
                for r in table.rows
                if r.linearised_at_K is not None
            ],
            "left_out": table.left_out,
            "chosen_by": {
                r.key: {"expression_id": r.expression_id, "rule": r.chosen_by} for r in table.rows
            },
            "caution": CAUTION,
            "text_cells": TEXT_CELL_RULE,
            "reverse": descriptor_block(table.reverse),
        },
    }
    safe_output.write_files(
        {
            out: _table_text(table, _text_columns(units)),
            # a mechanism's descriptor lists every reaction: the C encoder, not json's
            descriptor_path: json_codec.dumps_indented(descriptor) + "\n",
        },
        store_path=store_file,
    )
    from ratebank.store import audit

    audit.record(
        session,
        "export",
        str(out.absolute()),
        rows=len(table.rows),
        left_out=len(table.left_out),
        units=units.label,
        fingerprint=fingerprint,
    )
    return ExportResult(out, descriptor_path, table, fingerprint, descriptor)
