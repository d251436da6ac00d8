"""The life of a curated record: find it by kind, edit it under a version check, withdraw it,
reinstate it, remove it for good.

Kinds are ``species`` (by name), ``reaction`` (by key or any spelling of its
equation), ``set`` (by name), ``point`` (by number) and ``expression`` (by
number). A record is *in use* while ``withdrawn_at`` is empty; the reads of the
store (:mod:`ratebank.store.points`, :mod:`ratebank.store.queries`,
:mod:`ratebank.store.listings`) leave out what is not in use, with the
conditions defined here, so no service has to know.

What a withdrawal implies for the records that refer to it:

- a withdrawn **reaction** is left out with everything of it: its sets, points and
  expressions stay as they are but take no part in fits, estimates, checks,
  derived statistics or exports while it is withdrawn;
- a withdrawn **set** leaves out its points; a withdrawn **point** only itself;
- a **species** can be withdrawn only once no reaction in use involves it or
  states an efficiency for it (withdraw those reactions first), and a reaction
  is reinstated only while all its species are in use, so no reaction in use
  ever refers to a withdrawn species.

Every write here names the version it read (``WHERE version = read``) and raises
:class:`~ratebank.errors.StaleEditError` when the row moved on meanwhile.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Any

from sqlalchemy import Table, delete, exists, func, select, update
from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, ConflictError, NotFoundError, StaleEditError
from ratebank.store.engine import concurrent_edit_message
from ratebank.store.in_use import reaction_in_use
from ratebank.store.models import (
    AuditEntry,
    Expression,
    ExpressionTerm,
    MeasurementSet,
    Participant,
    Point,
    Reaction,
    Species,
    SpeciesThermo,
    ThirdBodyEfficiency,
    utc_now,
)
from ratebank.store.queries import find_reaction

#: The kinds of record a curator can edit, withdraw, reinstate and remove.
KINDS = ("species", "reaction", "set", "point", "expression")
MODELS: dict[str, Any] = {
    "species": Species,
    "reaction": Reaction,
    "set": MeasurementSet,
    "point": Point,
    "expression": Expression,
}

# --------------------------------------------------------------------------- find


@dataclass(frozen=True)
class StoredRecord:
    """A record as a lifecycle command reads it."""

    kind: str
    id: int
    #: how messages name it: ``species 'OH'``, ``point 12 of set 'big'``, ...
    label: str
    #: the history target it is recorded under (species name, reaction key, set name; a
    #: point under its set, an expression under its reaction)
    target: str
    version: int
    withdrawn_at: dt.datetime | None
    withdrawn_by: str | None
    withdrawn_reason: str | None
    #: the reaction a set, point or expression belongs to (its id), else None
    reaction_id: int | None = None

    @property
    def withdrawn(self) -> bool:
        return self.withdrawn_at is not None


def kind_of(kind: str) -> str:
    """``kind`` checked against :data:`KINDS`."""
    if kind not in KINDS:
        raise BadInputError(
            f"unknown kind of record {kind!r}; expected one of {', '.join(KINDS)}",
            argument="kind",
        )
    return kind


def _number(kind: str, ident: object) -> int:
    text = str(ident).strip()
    if not text.isdigit():
        raise BadInputError(
            f"a {kind} is named by its number; {ident!r} is not one", argument="record"
        )
    return int(text)


def _row(session: Session, model: Any, condition: Any, *extra: Any) -> Any:
    query = select(
        model.id, model.version, model.withdrawn_at, model.withdrawn_by, model.withdrawn_reason,
        *extra,
    ).where(condition)  # fmt: skip
    if session.get_bind().dialect.name == "postgresql":
        query = query.with_for_update(of=model.__table__)
    return session.execute(query).first()


def find_record(session: Session, kind: str, ident: object) -> StoredRecord:
    """The record of ``kind`` named ``ident``, read afresh (locked where the database can);
    NotFoundError when there is none."""
    kind = kind_of(kind)
    if kind == "species":
        row = _row(session, Species, Species.name == str(ident))
        if row is None:
            raise NotFoundError(f"no species {ident!r} in the store")
        return StoredRecord(kind, row[0], f"species {ident!r}", str(ident), *row[1:5])
    if kind == "reaction":
        key = find_reaction(session, str(ident)).key
        row = _row(session, Reaction, Reaction.key == key)
        return StoredRecord(kind, row[0], f"reaction {key!r}", key, *row[1:5], row[0])
    if kind == "set":
        row = _row(
            session, MeasurementSet, MeasurementSet.name == str(ident), MeasurementSet.reaction_id
        )
        if row is None:
            raise NotFoundError(f"no measurement set {ident!r} in the store")
        return StoredRecord(kind, row[0], f"set {ident!r}", str(ident), *row[1:6])
    number = _number(kind, ident)
    if kind == "point":
        row = _row(session, Point, Point.id == number, Point.set_id)
        if row is None:
            raise NotFoundError(f"no point {number} in the store")
        name, reaction_id = session.execute(
            select(MeasurementSet.name, MeasurementSet.reaction_id).where(
                MeasurementSet.id == row[5]
            )
        ).one()
        return StoredRecord(
            kind, number, f"point {number} of set {name!r}", name, *row[1:5], reaction_id
        )
    row = _row(session, Expression, Expression.id == number, Expression.reaction_id)
    if row is None:
        raise NotFoundError(f"no expression {number} in the store")
    key = session.scalar(select(Reaction.key).where(Reaction.id == row[5]))
    return StoredRecord(kind, number, f"expression {number} of {key!r}", key, *row[1:6])


# --------------------------------------------------------------------------- versions


def check_version(session: Session, record: StoredRecord, expected: int | None) -> None:
    """Refuse (StaleEditError) when the curator read another version than the stored one."""
    if expected is None or expected == record.version:
        return
    raise stale_error(session, record, expected)


def stale_error(session: Session, record: StoredRecord, version_read: int) -> StaleEditError:
    """The refusal of a write based on ``version_read``: a version that never existed, or who
    changed it since and when (from the history)."""
    if version_read > record.version:
        return StaleEditError(
            f"version {version_read} never existed; {record.label} is at version "
            f"{record.version}; nothing was written"
        )
    last = session.execute(
        select(AuditEntry.author, AuditEntry.at)
        .where(AuditEntry.target == record.target)
        .order_by(AuditEntry.id.desc())
        .limit(1)
    ).first()
    return StaleEditError(
        concurrent_edit_message(record.label, version_read, record.version, *(last or (None, None)))
    )


def write_changes(session: Session, record: StoredRecord, values: dict[str, Any]) -> int:
    """Write ``values`` (column names, SI) to the record and raise its version; the new
    version. A row that moved on since it was read is refused (StaleEditError)."""
    table: Table = MODELS[record.kind].__table__
    result = session.execute(
        update(table)
        .where(table.c.id == record.id, table.c.version == record.version)
        .values(**values, version=record.version + 1)
    )
    if result.rowcount != 1:
        session.rollback()
        current = _current_version(session, record)
        if current is None:
            raise StaleEditError(
                concurrent_edit_message(record.label, record.version, None, None, None)
            )
        raise stale_error(session, _replace_version(record, current), record.version)
    return record.version + 1


def _current_version(session: Session, record: StoredRecord) -> int | None:
    table: Table = MODELS[record.kind].__table__
    return session.scalar(select(table.c.version).where(table.c.id == record.id))


def _replace_version(record: StoredRecord, version: int) -> StoredRecord:
    from dataclasses import replace

    return replace(record, version=version)


# --------------------------------------------------------------------------- withdraw


def withdraw(session: Session, record: StoredRecord, reason: str) -> int:
    """Withdraw the record with ``reason``; its new version. Refused (ConflictError) when it
    is withdrawn already, or for a species that a reaction in use still needs."""
    if record.withdrawn:
        raise ConflictError(
            f"{record.label} is already withdrawn ({record.withdrawn_reason}); nothing was written"
        )
    if record.kind == "species":
        users = species_users(session, record.id)
        if users:
            raise ConflictError(
                f"{record.label} takes part in reactions in use ({', '.join(users[:5])}"
                f"{', ...' if len(users) > 5 else ''}); withdraw them first; nothing was written"
            )
    values = {
        "withdrawn_at": utc_now(),
        "withdrawn_by": session.info.get("author") or "unknown",
        "withdrawn_reason": reason,
    }
    return write_changes(session, record, values)


def reinstate(session: Session, record: StoredRecord) -> int:
    """Put a withdrawn record back in use; its new version. Refused (ConflictError) when it
    is in use, or for a reaction one of whose species is withdrawn."""
    if not record.withdrawn:
        raise ConflictError(f"{record.label} is not withdrawn; nothing was written")
    if record.kind == "reaction":
        withdrawn = list(
            session.scalars(
                select(Species.name)
                .join(Participant, Participant.species_id == Species.id)
                .where(Participant.reaction_id == record.id, Species.withdrawn_at.is_not(None))
                .order_by(Species.name)
            )
        )
        if withdrawn:
            raise ConflictError(
                f"{record.label} involves withdrawn species ({', '.join(withdrawn)}); reinstate "
                "them first; nothing was written"
            )
    values = {"withdrawn_at": None, "withdrawn_by": None, "withdrawn_reason": None}
    return write_changes(session, record, values)


def species_users(session: Session, species_id: int) -> list[str]:
    """Keys of the reactions in use that involve the species or state an efficiency for it."""
    involved = exists().where(
        Participant.reaction_id == Reaction.id, Participant.species_id == species_id
    )
    efficient = exists().where(
        ThirdBodyEfficiency.reaction_id == Reaction.id,
        ThirdBodyEfficiency.species_id == species_id,
    )
    return list(
        session.scalars(
            select(Reaction.key)
            .where(reaction_in_use(), involved | efficient)
            .order_by(Reaction.key)
        )
    )


# --------------------------------------------------------------------------- remove


def referrers(session: Session, record: StoredRecord) -> list[str]:
    """What refers to the record (so that it cannot be removed for good), in words."""
    found: list[str] = []

    def count(what: str, model: Any, condition: Any) -> None:
        n = session.scalar(select(func.count()).select_from(model).where(condition)) or 0
        if n:
            found.append(f"{n} {what}")

    if record.kind == "species":
        count("reaction participations", Participant, Participant.species_id == record.id)
        count("efficiencies", ThirdBodyEfficiency, ThirdBodyEfficiency.species_id == record.id)
        count("thermochemistry", SpeciesThermo, SpeciesThermo.species_id == record.id)
    elif record.kind == "reaction":
        count("measurement sets", MeasurementSet, MeasurementSet.reaction_id == record.id)
        count("expressions", Expression, Expression.reaction_id == record.id)
        count("efficiencies", ThirdBodyEfficiency, ThirdBodyEfficiency.reaction_id == record.id)
    elif record.kind in ("set", "point"):
        set_id = record.id if record.kind == "set" else _set_of_point(session, record.id)
        fits = _fits_naming_set(session, record.reaction_id, set_id)
        if fits:
            found.append(f"measured fits {', '.join(map(str, fits))}")
    return found


def _set_of_point(session: Session, point_id: int) -> int:
    return session.scalar(select(Point.set_id).where(Point.id == point_id))


def _fits_naming_set(session: Session, reaction_id: int | None, set_id: int) -> list[int]:
    rows = session.execute(
        select(Expression.id, Expression.provenance, Expression.run_id).where(
            Expression.reaction_id == reaction_id, Expression.origin == "measured-fit"
        )
    ).all()
    from ratebank.store.runs import RunCache

    provenances = RunCache(session)
    named = []
    for expression_id, provenance, run_id in rows:
        if set_id in (provenances.full(provenance, run_id).get("set_ids") or []):
            named.append(expression_id)
    return named


def remove(session: Session, record: StoredRecord) -> None:
    """Delete the record for good (a reaction with its participants, a set with its points,
    an expression with its terms); ConflictError while anything refers to it."""
    found = referrers(session, record)
    if found:
        raise ConflictError(
            f"{record.label} cannot be removed: {'; '.join(found)} refer to it (withdraw it "
            "instead); nothing was written"
        )
    if record.kind == "reaction":
        session.execute(delete(Participant).where(Participant.reaction_id == record.id))
    elif record.kind == "set":
        session.execute(delete(Point).where(Point.set_id == record.id))
    elif record.kind == "expression":
        session.execute(delete(ExpressionTerm).where(ExpressionTerm.expression_id == record.id))
    table: Table = MODELS[record.kind].__table__
    session.execute(delete(table).where(table.c.id == record.id))


def stored_values(session: Session, record: StoredRecord) -> dict[str, Any]:
    """Every column of the record's row, by column name (SI), for the history."""
    table: Table = MODELS[record.kind].__table__
    row = session.execute(select(table).where(table.c.id == record.id)).mappings().one()
    return {
        name: value.isoformat() if isinstance(value, dt.datetime) else value
        for name, value in row.items()
        if value is not None and name not in ("provenance",)
    }
