"""What an import that updates has in common: how a change is told, counted and recorded.

An update import (``update=True``) sorts the rows of a file that match stored
records into changed and unchanged ones. Identical means identical after the
conversion to SI: floats are compared exactly as stored, since the same text
read again gives the same float. Each change is recorded in the history with
its before and after in the units the file used, for example
``A: 1e-12 -> 2e-12 cm3/molecule/s``.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from ratebank.numbers import round_significant
from ratebank.services.validate import ImportSummary
from ratebank.store import audit

#: How a field is shown in the history: its file column, the factor that turns the file's
#: unit into SI (None: text, compared as it is) and the unit's name.
Shown = tuple[str, float | None, str]


def shown_value(value: Any, factor: float | None) -> str:
    """A stored value in the file's unit, as the history shows it ("empty" for none)."""
    if value is None or (isinstance(value, float) and value != value):
        return "empty"
    if factor is None or isinstance(value, str):
        return repr(value) if isinstance(value, str) else str(value)
    return short_number(round_significant(float(value) / factor))


def short_number(value: float) -> str:
    """A number as briefly as it reads back exactly, with an exponent outside 1e-4 to 1e6.

    >>> short_number(2e13), short_number(1.5e-13), short_number(987.0), short_number(14.5)
    ('2e+13', '1.5e-13', '987', '14.5')
    """
    text = repr(value)
    if value != 0 and ("e" in text or not 1e-4 <= abs(value) < 1e6):
        mantissa, exponent = f"{value:.14e}".split("e")
        return f"{mantissa.rstrip('0').rstrip('.')}e{exponent}"
    return text.removesuffix(".0")


def change_text(label: str, before: Any, after: Any, factor: float | None, unit: str) -> str:
    """One change in the units of the file, e.g. ``A: 1e-12 -> 2e-12 cm3/molecule/s``.

    >>> change_text("T_max_K", 1000.0, 1500.0, 1.0, "K")
    'T_max_K: 1000 -> 1500 K'
    >>> change_text("A", 6.02214076e5, 1.204428152e6, 6.02214076e17, "cm3/molecule/s")
    'A: 1e-12 -> 2e-12 cm3/molecule/s'
    >>> change_text("class", None, "abstraction", None, "")
    "class: empty -> 'abstraction'"
    """
    text = f"{label}: {shown_value(before, factor)} -> {shown_value(after, factor)}"
    return f"{text} {unit}" if unit else text


def differs(before: Any, after: Any) -> bool:
    """Whether a stored value and a new one differ (floats exactly, NaN equal to None).

    >>> differs(1e-12, 1e-12), differs(None, float("nan")), differs(1.0, 1.0000000000000002)
    (False, False, True)
    """
    if _empty(before) and _empty(after):
        return False
    return before != after


def _empty(value: Any) -> bool:
    return value is None or (isinstance(value, float) and value != value)


def changed_fields(
    stored: Mapping[str, Any], new: Mapping[str, Any], shown: Mapping[str, Shown]
) -> tuple[dict[str, Any], list[str]]:
    """The fields of ``new`` that differ from ``stored``, and the history's text of each (in
    the file's units by ``shown``; a field not in ``shown`` changes silently with another)."""
    values: dict[str, Any] = {}
    texts: list[str] = []
    for name, after in new.items():
        before = stored.get(name)
        if not differs(before, after):
            continue
        values[name] = after
        if name in shown:
            column, factor, unit = shown[name]
            texts.append(change_text(column, before, after, factor, unit))
    return values, texts


@dataclass
class UpdatePlan:
    """What an update import will do: how many rows are new, changed and unchanged, and the
    history entry (target, changes in the file's units) of each changed record."""

    added: int = 0
    unchanged: int = 0
    changes: list[tuple[str, list[str]]] = field(default_factory=list)

    @property
    def changed(self) -> int:
        return len(self.changes)

    def details(self) -> dict[str, int]:
        return {"changed": self.changed, "unchanged": self.unchanged}


def record_changes(
    session: Session,
    action: str,
    source: str,
    changes: Sequence[tuple[str, list[str]]],
    extra: Mapping[str, Mapping[str, Any]] | None = None,
) -> None:
    """One history entry per changed record (its key or name as the target) naming the file
    and each change, before and after, in the file's units."""
    audit.record_many(
        session,
        action,
        [
            (target, {"source": source, "changed": texts, **(extra or {}).get(target, {})})
            for target, texts in changes
        ],
    )


@dataclass(frozen=True)
class RecordKind:
    """How an import writes one kind of record: what it is called in the summary and the
    history, and how its new records are inserted and named."""

    #: the summary's word, e.g. ``species``
    summary: str
    #: the history's action of the new records and of each changed one
    added_action: str
    changed_action: str
    #: the detail that names the first new records (``names``, ``keys``) and each one's name
    names_detail: str
    name_of: Callable[[Any], str]
    #: writes the new records
    insert: Callable[[Session, Sequence[Any]], None]


def apply_import(
    session: Session,
    kind: RecordKind,
    new: Sequence[Any],
    plan: UpdatePlan,
    write_changes: Callable[[], None],
    source: str,
    rows: Sequence[Any],
    *,
    dry_run: bool,
    update: bool,
) -> ImportSummary:
    """The one way an import of species or reactions writes: unless ``dry_run``, the new
    records (one history entry naming the first 20), then the changed ones
    (``write_changes``, one history entry each); what the import of ``rows`` did or would
    do."""
    plan.added = len(new)
    if not dry_run:
        if new:
            kind.insert(session, new)
            names = [kind.name_of(record) for record in new[:20]]
            audit.record(
                session, kind.added_action, source, count=len(new), **{kind.names_detail: names}
            )
        write_changes()
        record_changes(session, kind.changed_action, source, plan.changes)
    return ImportSummary(
        kind.summary,
        source,
        len(rows),
        len(new),
        dry_run,
        update=update,
        changed=plan.changed,
        unchanged=plan.unchanged,
    )
