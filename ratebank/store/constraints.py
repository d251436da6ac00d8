"""Constraint violations told as sentences about the record, not about the constraint.

The store's constraints are named by the convention of
:data:`ratebank.store.models.NAMING_CONVENTION` (``uq_species_name``,
``fk_point_set_id_measurement_set``, ``ck_species_molar_mass_positive``). When
the database refuses a change (almost always because another curator changed
the same record at the same moment, since validation checks everything else
first), :func:`explain_integrity_error` names the kind of record and what was
wrong with it, and never shows the database's own text.

>>> explain_constraint("uq_steric_rule_reaction_class", None)
'a steric rule for this reaction class is already in the store (someone may have added it \
at the same moment); nothing was written; look again and repeat the command if it is still \
needed'
"""

from __future__ import annotations

import re

#: What a row of each table is called in a sentence.
RECORDS = {
    "species": "species",
    "reaction": "reaction",
    "participant": "reaction participant",
    "measurement_set": "measurement set",
    "point": "measured point",
    "expression": "expression",
    "steric_rule": "steric rule",
    "audit": "history entry",
}
#: Unique columns, by table, and how a duplicate is described.
UNIQUE = {
    ("species", "name"): "a species with this name",
    ("reaction", "key"): "a reaction with this key",
    ("reaction", "equation"): "a reaction with this equation",
    ("measurement_set", "name"): "a measurement set with this name",
    ("steric_rule", "reaction_class"): "a steric rule for this reaction class",
    ("participant", "reaction_id"): "this species on the same side of this reaction",
}
#: Check constraints, by name (without the ``ck_<table>_`` prefix).
CHECKS = {
    "molar_mass_positive": "its molar mass must be greater than zero",
    "diameter_positive": "its collision diameter must be greater than zero",
    "well_depth_positive": "its well depth must be greater than zero",
    "critical_temperature_positive": "its critical temperature must be greater than zero",
    "critical_pressure_positive": "its critical pressure must be greater than zero",
    "boiling_volume_positive": "its boiling-point volume must be greater than zero",
    "order_range": "its order must be 1, 2 or 3",
    "steric_factor_positive": "its steric factor must be greater than zero",
    "coefficient_positive": "a coefficient must be at least 1",
    "role_known": "a participant is a reactant or a product",
    "temperature_positive": "its temperature must be greater than zero",
    "rate_constant_positive": "its rate constant must be greater than zero",
    "uncertainty_positive": "its uncertainty must be greater than zero",
    "pressure_positive": "its pressure must be greater than zero",
    "pre_exponential_positive": "its pre-exponential factor must be greater than zero",
    "origin_known": "its origin must be one of the known ones",
    "t_min_positive": "its lower temperature must be greater than zero",
    "t_range_ordered": "its upper temperature must not be below its lower one",
    "uncertainty_factor_range": "its uncertainty factor must be at least 1",
}
_NOTHING = "nothing was written"
_SQLITE_UNIQUE = re.compile(r"UNIQUE constraint failed: (?P<table>\w+)\.(?P<column>\w+)")
_SQLITE_CHECK = re.compile(r"CHECK constraint failed: (?P<name>\w+)")
_SQLITE_NOT_NULL = re.compile(r"NOT NULL constraint failed: (?P<table>\w+)\.(?P<column>\w+)")


def explain_integrity_error(exc: BaseException) -> str:
    """A sentence about the record for a database's refusal (SQLAlchemy's or the driver's)."""
    orig = getattr(exc, "orig", None) or exc
    diag = getattr(orig, "diag", None)
    if diag is not None:  # psycopg: the server names the constraint and the table
        name = getattr(diag, "constraint_name", None)
        table = getattr(diag, "table_name", None)
        column = getattr(diag, "column_name", None)
        if name:
            return explain_constraint(name, table)
        if column and table:
            return _missing(table, column)
        return _unknown(table)
    message = str(orig).splitlines()[0] if str(orig) else ""
    if match := _SQLITE_UNIQUE.search(message):
        return _duplicate(match["table"], match["column"])
    if match := _SQLITE_CHECK.search(message):
        return explain_constraint(match["name"], None)
    if match := _SQLITE_NOT_NULL.search(message):
        return _missing(match["table"], match["column"])
    if "FOREIGN KEY constraint failed" in message:
        return _reference(None)
    return _unknown(None)


def explain_constraint(name: str, table: str | None) -> str:
    """The sentence for the constraint called ``name`` (on ``table`` if known)."""
    for prefix, explain in (("uq_", _unique_named), ("ck_", _check_named), ("fk_", _fk_named)):
        if name.startswith(prefix):
            return explain(name[len(prefix) :], table)
    if name.startswith("pk_"):
        return _duplicate(name[3:], "id")
    if name in CHECKS:  # a check named without the convention's prefix
        return _check(table, name)
    return _unknown(table)


def _unique_named(rest: str, table: str | None) -> str:
    if rest.startswith("participant_"):
        return _duplicate("participant", "reaction_id")
    for known_table, column in UNIQUE:
        if rest == f"{known_table}_{column}":
            return _duplicate(known_table, column)
    return _duplicate(table, None)


def _check_named(rest: str, table: str | None) -> str:
    for known_table in sorted(RECORDS, key=len, reverse=True):
        if rest.startswith(known_table + "_") and rest[len(known_table) + 1 :] in CHECKS:
            return _check(known_table, rest[len(known_table) + 1 :])
    return _check(table, rest)


def _fk_named(rest: str, table: str | None) -> str:
    for known_table in sorted(RECORDS, key=len, reverse=True):
        if rest.startswith(known_table + "_"):
            return _reference(known_table)
    return _reference(table)


def _record(table: str | None) -> str:
    return RECORDS.get(table or "", "record")


def _duplicate(table: str | None, column: str | None) -> str:
    what = UNIQUE.get((table or "", column or ""))
    if what is None:
        what = f"a {_record(table)} with the same {column or 'values'}"
    return (
        f"{what} is already in the store (someone may have added it at the same moment); "
        f"{_NOTHING}; look again and repeat the command if it is still needed"
    )


def _check(table: str | None, name: str) -> str:
    rule = CHECKS.get(name, "one of its values is outside what the store accepts")
    return f"the store refused a {_record(table)}: {rule}; {_NOTHING}"


def _missing(table: str, column: str) -> str:
    return (
        f"the store refused a {_record(table)} without its {column.replace('_', ' ')}; {_NOTHING}"
    )


def _reference(table: str | None) -> str:
    record = f"a {_record(table)}" if table else "a record"
    return (
        f"the store refused {record} that refers to a species, reaction or measurement set "
        "that is not there, or the removal of a record that others still refer to (someone "
        f"may have changed it at the same moment); {_NOTHING}; look again and repeat the "
        "command if it is still needed"
    )


def _unknown(table: str | None) -> str:
    return (
        f"the store refused a {_record(table)} that would contradict its rules (someone may "
        f"have changed it at the same moment); {_NOTHING}; look again and repeat the command"
    )
