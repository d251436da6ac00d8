"""Releases: the content of an export frozen under a name, and written again on demand.

``create_release`` reads what ``export`` would write now (the mechanism rows in
store units, SI, with their provenance; the efficiencies and species rows; the
descriptor's reverse block, the content fingerprint and the history mark), adds the
check results, and stores it as JSON text with a fingerprint of that text, who
made it and when (:mod:`ratebank.store.releases`). ``export_release`` writes
that content again as a data package: the same bytes as an SI export made
when the release was created (``export --preset si``), apart from the
creation time, whatever has changed in the store since. A release is never
edited or withdrawn; a name is used once.
"""

from __future__ import annotations

import datetime as dt
import hashlib
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from sqlalchemy.orm import Session

from ratebank.errors import BadInputError, ConflictError, NotFoundError, StoreError
from ratebank.io.export import ExportResult, PackageContent, package_content, write_package
from ratebank.services import checks, mechanism
from ratebank.services.input_rules import name_problem
from ratebank.store import audit, json_codec
from ratebank.store.releases import ReleaseRow, name_taken, release, releases, write_release

#: The layout of a release's stored content; a later layout keeps reading this one.
RELEASE_FORMAT = 1
#: The units a release freezes its rows in (the store's own).
RELEASE_PRESET = "si"


@dataclass(frozen=True)
class ReleaseView:
    """What ``release show`` shows (``release list`` without the counts and checks)."""

    name: str
    created_at: dt.datetime
    created_by: str
    fingerprint: str
    reactions: int | None = None
    rows: int | None = None
    efficiencies: int | None = None
    species: int | None = None
    left_out: list[str] = field(default_factory=list)
    store: str | None = None
    #: the content fingerprint of what the release holds (of the whole store for a release
    #: made before exports fingerprinted their own content)
    store_fingerprint: str | None = None
    #: the id of the store's newest history entry when the release was made
    history_mark: int | None = None
    #: {"clean": bool, "flags": {code: count}, "unchecked": n, "notes": {code: count}}
    checks: dict[str, Any] = field(default_factory=dict)
    #: the stored content still has the fingerprint it was stored with
    intact: bool | None = None


def _check_summary(report: checks.CheckReport) -> dict[str, Any]:
    return {
        "clean": report.clean,
        "flags": dict(sorted(Counter(f.code for f in report.flags).items())),
        "unchecked": len(report.unchecked),
        "notes": dict(sorted(Counter(f.code for f in report.notes).items())),
        "findings": [
            {"key": f.key, "code": f.code, "message": f.message, "expression_id": f.expression_id}
            for f in report.flags
        ],
    }


def _content_record(content: PackageContent, check_report: checks.CheckReport) -> dict[str, Any]:
    table = content.table
    return {
        "release_format": RELEASE_FORMAT,
        "units": RELEASE_PRESET,
        "form": table.form,
        "mechanism_fields": list(mechanism.MechanismRow._fields),
        "mechanism": [list(row) for row in table.rows],
        "left_out": list(table.left_out),
        "reverse": content.reverse,
        "efficiencies": [list(row) for row in content.efficiencies],
        "species": [list(row) for row in content.species],
        "store": content.store_label,
        "content_fingerprint": content.fingerprint,
        "history_mark": content.history_mark,
        "checks": _check_summary(check_report),
    }


def content_fingerprint(text: str) -> str:
    """``sha256:<hex>`` of a release's stored content text."""
    return "sha256:" + hashlib.sha256(text.encode("utf-8")).hexdigest()


def _checked_name(name: str) -> str:
    name = name.strip() if isinstance(name, str) else ""
    if not name:
        raise BadInputError("a release needs a name", argument="name")
    problem = name_problem(name, "release name")
    if problem is None and (name == "store" or ":" in name):
        problem = f"release name {name!r} cannot be 'store' nor hold ':' (diff reads those)"
    if problem:
        raise BadInputError(problem, argument="name")
    return name


def create_release(
    session: Session, name: str, *, leave_out_gaps: bool = False, store_label: str | None = None
) -> ReleaseView:
    """Freeze what an SI export would hold now under ``name``; the ReleaseView.

    A name in use is a ConflictError, a reaction without a usable expression an
    ExportGapsError (unless ``leave_out_gaps``); nothing is written then.
    """
    name = _checked_name(name)
    if release(session, name) is not None:
        raise ConflictError(name_taken(name))
    content = package_content(
        session,
        units=mechanism.export_units(RELEASE_PRESET),
        leave_out_gaps=leave_out_gaps,
        store_label=store_label,
    )
    text = json_codec.dumps(_content_record(content, checks.check_store(session)))
    row = write_release(session, name, content_fingerprint(text), text)
    audit.record(session, "release.create", name, fingerprint=row.fingerprint)
    return _view(row)


def _stored(session: Session, name: str) -> ReleaseRow:
    found = release(session, name)
    if found is None:
        known = sorted(r.name for r in releases(session))
        hint = f"; releases: {', '.join(known[:10])}" if known else "; the store holds none"
        raise NotFoundError(f"no release named {name!r}{hint}")
    return found


def _view(row: ReleaseRow) -> ReleaseView:
    record = json_codec.loads(row.content or "{}")
    rows = record.get("mechanism", [])
    return ReleaseView(
        row.name,
        row.created_at,
        row.created_by,
        row.fingerprint,
        reactions=len({r[0] for r in rows}),
        rows=len(rows),
        efficiencies=len(record.get("efficiencies", [])),
        species=len(record.get("species", [])),
        left_out=list(record.get("left_out", [])),
        store=record.get("store"),
        store_fingerprint=record.get("content_fingerprint") or record.get("store_fingerprint"),
        history_mark=record.get("history_mark"),
        checks=record.get("checks", {}),
        intact=content_fingerprint(row.content or "") == row.fingerprint,
    )


def show_release(session: Session, name: str) -> ReleaseView:
    """What the release ``name`` holds; NotFoundError names the releases there are."""
    return _view(_stored(session, name))


def list_releases(session: Session) -> list[ReleaseView]:
    """Every release, oldest first (name, when, who, fingerprint)."""
    return [
        ReleaseView(r.name, r.created_at, r.created_by, r.fingerprint) for r in releases(session)
    ]


def release_content(session: Session, name: str) -> PackageContent:
    """The frozen content of the release ``name``, as the export writes it."""
    row = _stored(session, name)
    if content_fingerprint(row.content or "") != row.fingerprint:
        raise StoreError(
            f"the content of release {name!r} no longer has its fingerprint {row.fingerprint}: "
            "it was changed outside ratebank; restore the store from a backup"
        )
    record = json_codec.loads(row.content or "{}")
    fields = record["mechanism_fields"]
    rows = [
        mechanism.MechanismRow(**dict(zip(fields, r, strict=True))) for r in record["mechanism"]
    ]
    table = mechanism.MechanismTable(
        rows,
        mechanism.export_units(record["units"]),
        record["form"],
        gaps=[],
        left_out=list(record["left_out"]),
    )
    legacy = "content_fingerprint" not in record
    return PackageContent(
        table,
        record["reverse"],
        [tuple(r) for r in record["efficiencies"]],
        [tuple(r) for r in record["species"]],
        record["store_fingerprint" if legacy else "content_fingerprint"],
        record["store"],
        history_mark=record.get("history_mark"),
        fingerprint_field="store_fingerprint" if legacy else "content_fingerprint",
    )


def export_release(session: Session, name: str, out: Path) -> ExportResult:
    """Write the release ``name`` as the data package folder ``out``: the bytes an SI export
    made at release time wrote, apart from the creation time."""
    content = release_content(session, name)
    return write_package(session, Path(out), content, release=name)
