"""Write the mechanism as a data package: a folder written as one unit.

``export OUT`` writes the folder ``OUT``, a Frictionless Data Package (the
open Data Package and Table Schema standards):

- ``OUT/datapackage.json``: the descriptor: each table's Table Schema, the
  units, the rate-law convention, the forms and their formulas, the store's
  content fingerprint, the creation time, the tool version and the caution;
- ``OUT/mechanism.csv``: the mechanism table (one row per reaction, one per
  term of a ``sum``; :mod:`ratebank.services.mechanism`);
- ``OUT/efficiencies.csv``: the third-body efficiencies of the exported
  reactions (``reaction, species, efficiency, source``; a species not listed
  counts 1);
- ``OUT/species.csv``: every species with what the store holds about it.

The folder is written by :func:`ratebank.safe_output.write_folder` (staged
beside the target, synced, swapped in by one atomic exchange): a reader sees
the earlier package or the new one, never a mix. An existing folder is
replaced only when it holds nothing but a package's files; the store's own
file and non-regular targets are refused. :func:`ratebank.io.package.read_package`
reads a package back.

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
import hashlib
import io
import os
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from operator import itemgetter
from pathlib import Path
from typing import Any, BinaryIO

import orjson
from sqlalchemy.orm import Session

from ratebank import __version__, safe_output
from ratebank.caution import CAUTION
from ratebank.errors import RatebankError
from ratebank.services import mechanism
from ratebank.services.memory import paused_garbage_collection
from ratebank.services.reverse import REVERSE_ORIGIN, descriptor_block
from ratebank.store import audit, json_codec, queries
from ratebank.store.efficiencies import DEFAULT_EFFICIENCY, efficiencies

#: The files of a package, inside its folder.
DESCRIPTOR = "datapackage.json"
MECHANISM = "mechanism.csv"
EFFICIENCIES = "efficiencies.csv"
SPECIES = "species.csv"
#: What the descriptor's ``ratebank.package`` says the package is (the reader checks it).
PACKAGE_KIND = "ratebank mechanism package"
PACKAGE_FORMAT = 1

#: Each form's formula, as the descriptor states it.
FORM_FORMULAS = {
    "arrhenius": "k = A * T**n * exp(-Ea / (R * T)); for a reaction written with M, this k "
    "is a third-body coefficient and the rate constant is k * [M]_eff",
    "sum": "k = sum over the reaction's rows (term 1, 2, ...) of A * T**n * exp(-Ea / (R * T)), "
    "each term stated for its own T_min_K..T_max_K; for a reaction written with M the sum is "
    "a third-body coefficient and the rate constant is that sum * [M]_eff",
    "third-body": "k = k0 * [M]_eff, k0 = A * T**n * exp(-Ea / (R * T)) in k_units (the "
    "equation's order, M counted)",
    "falloff": "k = k_inf * Pr / (1 + Pr) * F, Pr = k0 * [M]_eff / k_inf; k_inf = A * T**n * "
    "exp(-Ea / (R * T)) in k_units (one order fewer than the equation's), k0 = A_low * "
    "T**n_low * exp(-Ea_low / (R * T)) in k_low_units (the equation's order, M counted)",
    "activated": "k = k0 / (1 + Pr) * F, Pr = k0 * [M]_eff / k_inf; k0 = A_low * T**n_low * "
    "exp(-Ea_low / (R * T)) in k_low_units (the equation's order), k_inf = A * T**n * "
    "exp(-Ea / (R * T)) in k_units (one order fewer)",
}
BROADENING_FORMULAS = {
    "none": "F = 1 (Lindemann)",
    "troe": "Fc = (1 - troe_alpha) * exp(-T / troe_T3_K) + troe_alpha * exp(-T / troe_T1_K) "
    "+ exp(-troe_T2_K / T) (the last term only when troe_T2_K is given); c = -0.4 - 0.67 * "
    "log10(Fc), N = 0.75 - 1.27 * log10(Fc), d = 0.14; log10(F) = log10(Fc) / (1 + "
    "((log10(Pr) + c) / (N - d * (log10(Pr) + c)))**2) (Gilbert, Luther & Troe, Ber. "
    "Bunsenges. Phys. Chem. 1983, 87, 169)",
    "fixed-fc": "log10(F) = log10(Fc) / (1 + (log10(Pr) / N)**2), N = 0.75 - 1.27 * log10(Fc) "
    "when N is empty (the evaluation panels' form)",
}
THIRD_BODY_RULE = (
    "[M]_eff = sum_i eps_i * [X_i] over the gas mixture, [X_i] = x_i * p / (R * T) in the "
    "concentration unit of k_units; eps_i from efficiencies.csv for the row's reaction, "
    f"{DEFAULT_EFFICIENCY:g} for a species not listed there"
)


class ExportError(RatebankError):
    """The package cannot be written where it was asked to."""


@dataclass
class ExportResult:
    #: the package's folder
    folder: Path
    #: the mechanism table and the descriptor inside it
    table_path: Path
    descriptor_path: Path
    table: mechanism.MechanismTable
    fingerprint: str
    #: the descriptor as written, apart from ``ratebank.chosen_by`` (one entry per reaction,
    #: in the file only: it is encoded straight into the file's bytes)
    descriptor: dict[str, Any]


def _field_descriptions(units: mechanism.ExportUnits) -> list[dict[str, Any]]:
    origins = ["measured-fit", "literature", "collision-estimate", "manual", REVERSE_ORIGIN]
    return [
        {
            "name": "key",
            "type": "string",
            "description": "reaction key in the store (a sum has one row per term)",
            "constraints": {"required": True},
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
            "description": "pre-exponential factor in k_units times K^-n: of the one term, of "
            "this term of a sum, of k0 of third-body, of k_inf of falloff and activated",
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
        {
            "name": "k_units",
            "type": "string",
            "description": "unit of the row's A: of the equation's order (M counted), one order "
            "fewer for k_inf of falloff and activated",
        },
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
        *_form_fields(units),
    ]


def _form_fields(units: mechanism.ExportUnits) -> list[dict[str, Any]]:
    """The form columns of the mechanism table (the expressions file's names)."""
    return [
        {
            "name": "form",
            "type": "string",
            "description": "how the row's numbers make k (see ratebank.forms)",
            "constraints": {"required": True, "enum": list(FORM_FORMULAS)},
        },
        {
            "name": "term",
            "type": "integer",
            "description": "term number of a sum (1, 2, ...); 1 for every other form",
            "constraints": {"required": True, "minimum": 1},
        },
        {
            "name": "A_low",
            "type": "number",
            "description": "k0 of falloff and activated: pre-exponential factor in k_low_units "
            "times K^-n_low",
        },
        {"name": "n_low", "type": "number", "description": "temperature exponent of k0"},
        {
            "name": "Ea_low",
            "type": "number",
            "description": f"activation energy of k0 in Ea_units ({units.e_units})",
        },
        {
            "name": "k_low_units",
            "type": "string",
            "description": "unit of k0: of the equation's order, M counted",
        },
        {
            "name": "broadening",
            "type": "string",
            "description": "F of falloff and activated (see ratebank.broadenings)",
            "constraints": {"enum": list(BROADENING_FORMULAS)},
        },
        {"name": "Fc", "type": "number", "description": "fixed-fc: the centre factor, (0, 1]"},
        {
            "name": "N",
            "type": "number",
            "description": "fixed-fc: the width; empty for 0.75 - 1.27 log10 Fc",
        },
        {"name": "troe_alpha", "type": "number", "description": "troe: alpha"},
        {"name": "troe_T3_K", "type": "number", "description": "troe: T*** [K]"},
        {"name": "troe_T1_K", "type": "number", "description": "troe: T* [K]"},
        {
            "name": "troe_T2_K",
            "type": "number",
            "description": "troe: T** [K]; empty when the term exp(-T**/T) is left out",
        },
    ]


EFFICIENCY_FIELDS: list[dict[str, Any]] = [
    {
        "name": "reaction",
        "type": "string",
        "description": "key of the reaction (mechanism.csv)",
        "constraints": {"required": True},
    },
    {
        "name": "species",
        "type": "string",
        "description": "the collider (species.csv)",
        "constraints": {"required": True},
    },
    {
        "name": "efficiency",
        "type": "number",
        "description": "eps in [M]_eff = sum_i eps_i [X_i]; a species not listed counts "
        f"{DEFAULT_EFFICIENCY:g}",
        "constraints": {"required": True, "minimum": 0},
    },
    {"name": "source", "type": "string", "description": "where the efficiency comes from"},
]

#: The species table: (column, SpeciesRow field, type, description).
SPECIES_COLUMNS: tuple[tuple[str, str, str, str], ...] = (
    ("name", "name", "string", "species name as the equations write it"),
    ("formula", "formula", "string", "chemical formula"),
    ("molar_mass_kg_mol", "molar_mass", "number", "molar mass [kg/mol]"),
    ("molar_mass_source", "molar_mass_source", "string", "given, or how it was computed"),
    ("diameter_m", "diameter", "number", "collision diameter [m]"),
    ("diameter_kind", "diameter_kind", "string", "hard-sphere or lennard-jones"),
    ("diameter_method", "diameter_method", "string", "given, or the correlation used"),
    ("well_depth_K", "well_depth", "number", "Lennard-Jones well depth epsilon/k_B [K]"),
    ("well_depth_method", "well_depth_method", "string", "given, or the correlation used"),
    ("critical_temperature_K", "critical_temperature", "number", "critical temperature [K]"),
    ("critical_pressure_Pa", "critical_pressure", "number", "critical pressure [Pa]"),
    ("acentric_factor", "acentric_factor", "number", "acentric factor [-]"),
    ("boiling_volume_m3_mol", "boiling_volume", "number", "molar volume at the normal "
     "boiling point [m3/mol]"),
    ("boiling_temperature_K", "boiling_temperature", "number", "normal boiling point [K]"),
    ("dipole_moment_C_m", "dipole_moment", "number", "permanent dipole moment [C m]"),
    ("polarizability_m3", "polarizability", "number", "polarizability volume [m3]"),
    ("ionization_energy_J_mol", "ionization_energy", "number", "first ionization energy "
     "[J/mol]"),
    ("source", "source", "string", "where the species data come from"),
)  # fmt: skip


def _species_fields() -> list[dict[str, Any]]:
    fields = [
        {"name": name, "type": kind, "description": text} for name, _, kind, text in SPECIES_COLUMNS
    ]
    fields[0]["constraints"] = {"required": True, "unique": True}
    return fields


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


def _text_columns(fields: Sequence[dict[str, Any]]) -> list[int]:
    return [index for index, field in enumerate(fields) if field["type"] == "string"]


def _csv_text(header: Sequence[str], rows: list[Sequence[Any]], text_columns: list[int]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    # The csv module writes a float as its repr, the shortest text that reads back as
    # the same float (full precision), and None as an empty cell.
    leading = FORMULA_LEADING
    if rows and not _formula_like(rows, text_columns):
        writer.writerows(rows)  # no cell to protect (the common case, found column-wise)
        return buffer.getvalue()
    for position, row in enumerate(rows):
        if any(isinstance(row[i], str) and row[i][:1] in leading for i in text_columns):
            rows[position] = tuple(
                neutralised_text(cell) if i in text_columns and isinstance(cell, str) else cell
                for i, cell in enumerate(row)
            )
    writer.writerows(rows)
    return buffer.getvalue()


#: A line that begins as a formula-like cell does (FORMULA_LEADING).
_FORMULA_LINE = re.compile("(?:^|\n)[" + re.escape("".join(sorted(FORMULA_LEADING))) + "]")


def _formula_like(rows: list[Sequence[Any]], text_columns: list[int]) -> bool:
    """False when no text cell of ``rows`` can begin as a formula, found a column at a time
    without a Python step per cell: each column's texts joined by newlines and searched
    once. True when one may (a text holding a newline can give a false alarm; the rows are
    then looked at one by one)."""
    for i in text_columns:
        try:
            joined = "\n".join(filter(None, map(itemgetter(i), rows)))
        except TypeError:  # a value that is not text: the rows are looked at one by one
            return True
        if _FORMULA_LINE.search(joined):
            return True
    return False


def _table_text(table: mechanism.MechanismTable, fields: Sequence[dict[str, Any]]) -> str:
    # rows start with the table's columns
    rows = list(map(itemgetter(slice(0, len(mechanism.COLUMNS))), table.rows))
    return _csv_text(mechanism.COLUMNS, rows, _text_columns(fields))


def _table_writer(
    table: mechanism.MechanismTable, fields: Sequence[dict[str, Any]]
) -> Callable[[BinaryIO], None]:
    """A function that writes the mechanism table to a file, a slice of rows at a time: the
    same bytes as :func:`_table_text`, without the whole text in memory."""
    text_columns = _text_columns(fields)
    columns = itemgetter(slice(0, len(mechanism.COLUMNS)))

    def write(stream: BinaryIO) -> None:
        # the slices of rows as they are kept (packed rows are unpacked one slice at a time)
        first = True
        for part in mechanism.tuple_slices(table.rows):
            text = _csv_text(mechanism.COLUMNS, list(map(columns, part)), text_columns)
            if not first:
                text = text.split("\n", 1)[1]  # the header once
            first = False
            stream.write(text.encode("utf-8"))
        if first:
            stream.write(_csv_text(mechanism.COLUMNS, [], text_columns).encode("utf-8"))

    return write


def _efficiency_rows(session: Session, table: mechanism.MechanismTable) -> list[tuple[Any, ...]]:
    keys = set(mechanism.row_keys(table.rows))
    return [
        (e.reaction_key, e.species, e.efficiency, e.source)
        for e in efficiencies(session)
        if e.reaction_key in keys
    ]


def _efficiencies_text(rows: Sequence[Sequence[Any]]) -> str:
    header = [f["name"] for f in EFFICIENCY_FIELDS]
    return _csv_text(header, list(rows), _text_columns(EFFICIENCY_FIELDS))


def _species_rows(session: Session) -> list[tuple[Any, ...]]:
    return [
        tuple(getattr(s, attribute) for _, attribute, _, _ in SPECIES_COLUMNS)
        for s in queries.all_species(session)
    ]


def _species_text(rows: Sequence[Sequence[Any]]) -> str:
    fields = _species_fields()
    header = [name for name, *_ in SPECIES_COLUMNS]
    return _csv_text(header, list(rows), _text_columns(fields))


def _store_file(session: Session) -> str | None:
    """The SQLite file of the store (which an export must never replace), or None."""
    bind = session.get_bind()
    return bind.url.database if bind.dialect.name == "sqlite" else None


def _check_out(out: Path, store_file: str | None) -> None:
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise ExportError(f"folder {folder} does not exist; create it or choose another output")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise ExportError(f"folder {folder} is not writable; nothing was written")
    if out.is_symlink() or not out.is_dir():
        # the store, its side files, a pipe or a device are refused as such
        safe_output.check_target(out, store_path=store_file)
        if out.exists():
            raise ExportError(
                f"{out} exists and is not a folder; choose another output; nothing was written"
            )
    if out.suffix.lower() in (".csv", ".json"):
        raise ExportError(
            f"{out.name} names a file, but an export is a folder (a data package holding "
            f"{DESCRIPTOR}, {MECHANISM}, {EFFICIENCIES} and {SPECIES}); give a folder name "
            f"such as {out.stem or 'mechanism'}"
        )


def _resource(name: str, path: str, title: str, schema: dict[str, Any]) -> dict[str, Any]:
    return {
        "name": name,
        "path": path,
        "profile": "tabular-data-resource",
        "title": title,
        "format": "csv",
        "mediatype": "text/csv",
        "encoding": "utf-8",
        "dialect": {"delimiter": ",", "header": True, "doubleQuote": True},
        "schema": {**schema, "missingValues": [""]},
    }


def _resources(units: mechanism.ExportUnits) -> list[dict[str, Any]]:
    return [
        _resource(
            "mechanism",
            MECHANISM,
            "Mechanism table: one row per reaction, one per term of a sum",
            {"fields": _field_descriptions(units), "primaryKey": ["key", "term"]},
        ),
        _resource(
            "efficiencies",
            EFFICIENCIES,
            "Third-body efficiencies of the exported reactions",
            {
                "fields": EFFICIENCY_FIELDS,
                "primaryKey": ["reaction", "species"],
                "foreignKeys": [
                    {"fields": "species", "reference": {"resource": "species", "fields": "name"}}
                ],
            },
        ),
        _resource(
            "species",
            SPECIES,
            "Species and what the store holds about each (SI units)",
            {"fields": _species_fields(), "primaryKey": ["name"]},
        ),
    ]


def _ratebank_block(content: PackageContent, created: str) -> dict[str, Any]:
    table = content.table
    units = table.units
    return {
        "package": PACKAGE_KIND,
        "package_format": PACKAGE_FORMAT,
        "version": __version__,
        "created": created,
        "store": content.store_label,
        content.fingerprint_field: content.fingerprint,
        "history_mark": content.history_mark,
        "rows": len(table.rows),
        "rate_expression": "k = A * T**n * exp(-Ea / (R * T)), T in K, A in k_units times K**-n "
        "(for each form see forms)",
        "gas_constant": "R = 8.31446261815324 J/(mol K) (CODATA 2018, exact); with Ea_units K, "
        "Ea is Ea/R",
        "rate_law_convention": mechanism.RATE_LAW_CONVENTION,
        "forms": FORM_FORMULAS,
        "broadenings": BROADENING_FORMULAS,
        "third_body": THIRD_BODY_RULE,
        "pressure": "[M] = p / (R * T) (ideal gas); the package's reader takes p in bar",
        "units": {
            "preset": units.label,
            "k_units_by_order": {str(k): v for k, v in sorted(units.k_units.items())},
            "Ea_units": units.e_units,
            "calorie": "thermochemical, 4.184 J",
        },
        "form": table.form,
        "linearised": [
            {"key": key, "at_K": at_K} for key, at_K in mechanism.linearised(table.rows)
        ],
        "left_out": table.left_out,
        # one entry per reaction: written into the descriptor's bytes by _chosen_by_bytes
        "chosen_by": {},
        "caution": CAUTION,
        "text_cells": TEXT_CELL_RULE,
        "reverse": content.reverse,
    }


@dataclass
class PackageContent:
    """Everything a package holds apart from its name and creation time."""

    table: mechanism.MechanismTable
    #: the descriptor's ``ratebank.reverse`` block
    reverse: dict[str, Any]
    efficiencies: list[tuple[Any, ...]]
    species: list[tuple[Any, ...]]
    #: the content fingerprint (:func:`content_fingerprint`)
    fingerprint: str
    store_label: str | None
    #: the id of the store's newest history entry when the content was read (None: no entry)
    history_mark: int | None = None
    #: the descriptor's name of ``fingerprint``: ``store_fingerprint`` for a release made
    #: before exports fingerprinted their own content (a fingerprint of the whole store)
    fingerprint_field: str = "content_fingerprint"


def content_fingerprint(
    table: mechanism.MechanismTable,
    reverse: dict[str, Any],
    efficiencies: Sequence[Sequence[Any]],
    species: Sequence[Sequence[Any]],
) -> str:
    """``sha256:<hex>`` of what a package holds and the records it derives from.

    It covers the units and form of the table, every mechanism row (all its
    columns, with the expression id and the rule that chose it), the rows left
    out, the reverse block, the efficiency and species rows, and the chosen
    expressions as stored (numbers in SI, further terms, full provenance:
    ``table.source_digest``). Any change to an exported number, unit or
    provenance changes it; a change elsewhere in the store (a history entry, a
    record not exported) does not. Nothing is read from the store here.
    """
    option = orjson.OPT_SORT_KEYS | orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS
    units = table.units
    digest = hashlib.sha256(b"ratebank package content 1\n")
    head = {
        "units": [units.label, sorted(units.k_units.items()), units.e_units],
        "form": table.form,
        "fields": list(mechanism.MechanismRow._fields),
        "left_out": table.left_out,
        "reverse": reverse,
        "sources": table.source_digest,
    }
    digest.update(orjson.dumps(head, option=option))
    for part in mechanism.tuple_slices(table.rows):  # mechanism.ROW_SLICE rows at a time
        digest.update(orjson.dumps(part, option=option))
    digest.update(orjson.dumps([list(map(list, efficiencies)), list(map(list, species))]))
    return "sha256:" + digest.hexdigest()


def package_content(
    session: Session,
    *,
    units: mechanism.ExportUnits,
    form: str = "modified",
    linearise_at: float | None = None,
    leave_out_gaps: bool = False,
    reverse_as_fit: bool = False,
    store_label: str | None = None,
) -> PackageContent:
    """What an export of the store would hold now (nothing is written)."""
    table = mechanism.mechanism_table(
        session,
        units=units,
        form=form,
        linearise_at=linearise_at,
        leave_out_gaps=leave_out_gaps,
        reverse_as_fit=reverse_as_fit,
    )
    reverse = descriptor_block(table.reverse)
    efficiency_rows = _efficiency_rows(session, table)
    species_rows = _species_rows(session)
    return PackageContent(
        table,
        reverse,
        efficiency_rows,
        species_rows,
        content_fingerprint(table, reverse, efficiency_rows, species_rows),
        store_label,
        history_mark=audit.newest_entry_id(session),
    )


def package_files(
    content: PackageContent, name: str, created: str
) -> tuple[dict[str, str], dict[str, Any]]:
    """({file name: text} of the package, its descriptor), nothing written."""
    files, descriptor = _package_parts(content, name, created)
    fields = descriptor["resources"][0]["schema"]["fields"]
    texts = {
        name: data.decode("utf-8") if isinstance(data, bytes) else data
        for name, data in files.items()
    }
    return {MECHANISM: _table_text(content.table, fields), **texts}, descriptor


def _package_parts(
    content: PackageContent, name: str, created: str
) -> tuple[dict[str, str | bytes], dict[str, Any]]:
    """({file name: text, or bytes for the descriptor} of every file but the mechanism
    table, the descriptor)."""
    descriptor: dict[str, Any] = {
        "profile": "tabular-data-package",
        "name": _slug(name),
        "title": "Mechanism exported by ratebank",
        "description": "A reaction mechanism: the mechanism table (k of each row by its form, "
        "see ratebank.forms), third-body efficiencies and species. " + CAUTION,
        "created": created,
        "resources": _resources(content.table.units),
        "ratebank": _ratebank_block(content, created),
    }
    files = {
        EFFICIENCIES: _efficiencies_text(content.efficiencies),
        SPECIES: _species_text(content.species),
        DESCRIPTOR: _descriptor_bytes(descriptor, content.table.rows),
    }
    return files, descriptor


_INDENTED = orjson.OPT_SERIALIZE_NUMPY | orjson.OPT_NON_STR_KEYS | orjson.OPT_INDENT_2
#: How the empty ``chosen_by`` of the descriptor's ``ratebank`` block is encoded.
_CHOSEN_BY_EMPTY = b'\n    "chosen_by": {},\n'


def _descriptor_bytes(descriptor: dict[str, Any], rows: Sequence[mechanism.MechanismRow]) -> bytes:
    """The descriptor as UTF-8 JSON indented by two spaces, its ``ratebank.chosen_by`` (the
    expression and rule behind each key) filled from ``rows``: the bytes of encoding the
    whole mapping as one object, without a dictionary per reaction in memory.

    The descriptor's bytes are encoded by the C encoder in one buffer; the entries are
    encoded a slice of rows at a time, indented to their depth, and put in its place.
    """
    text = json_codec.indented_line_bytes(descriptor)
    if not rows:
        return text
    at = text.find(_CHOSEN_BY_EMPTY)
    assert at >= 0 and text.find(_CHOSEN_BY_EMPTY, at + 1) < 0
    parts = [text[: at + len(_CHOSEN_BY_EMPTY) - 4], b"{\n"]
    key_at = mechanism.COLUMNS.index("key")
    id_at, rule_at = len(mechanism.COLUMNS), len(mechanism.COLUMNS) + 1
    last = None
    first = True
    for part in mechanism.tuple_slices(rows):
        entries: dict[str, dict[str, Any]] = {}
        for row in part:
            key = row[key_at]
            if key != last and key not in entries:  # the rows of a sum share one entry
                entries[key] = {"expression_id": row[id_at], "rule": row[rule_at]}
            last = key
        if not entries:
            continue
        # the encoding of json_codec.indented_line_bytes, without the object's braces
        body = orjson.dumps(entries, option=_INDENTED)[2:-2]
        if not first:
            parts.append(b",\n")
        first = False
        parts.append(b"    " + body.replace(b"\n", b"\n    "))
    parts.append(b"\n    },\n")
    parts.append(text[at + len(_CHOSEN_BY_EMPTY) :])
    return b"".join(parts)


def _now() -> str:
    return dt.datetime.now(dt.UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")


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
    """Write the data package folder ``out`` (see the module docstring); with
    ``reverse_as_fit``, the reverse of each reversible reaction as a row of its own."""
    out = Path(out)
    _check_out(out, _store_file(session))
    units = mechanism.export_units(preset, k_units, e_units)
    content = package_content(
        session,
        units=units,
        form=form,
        linearise_at=linearise_at,
        leave_out_gaps=leave_out_gaps,
        reverse_as_fit=reverse_as_fit,
        store_label=store_label,
    )
    return write_package(session, out, content)


def write_package(
    session: Session, out: Path, content: PackageContent, **audit_detail: Any
) -> ExportResult:
    """Write ``content`` as the package folder ``out`` and record the export in the history."""
    out = Path(out)
    store_file = _store_file(session)
    _check_out(out, store_file)
    texts, descriptor = _package_parts(content, out.name, _now())
    fields = descriptor["resources"][0]["schema"]["fields"]
    # the mechanism table is streamed to its file, never held as one text
    files: dict[str, safe_output.Content] = {
        MECHANISM: _table_writer(content.table, fields),
        **texts,
    }
    safe_output.write_folder(out, files, store_path=store_file)
    table = content.table
    audit.record(
        session,
        "export",
        str(out.absolute()),
        rows=len(table.rows),
        left_out=len(table.left_out),
        units=table.units.label,
        fingerprint=content.fingerprint,
        history_mark=content.history_mark,
        **audit_detail,
    )
    target = Path(out).expanduser().absolute()
    return ExportResult(
        target, target / MECHANISM, target / DESCRIPTOR, table, content.fingerprint, descriptor
    )
