"""Tables and JSON records of releases and of ``diff``."""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from ratebank.report.format import shown, sig
from ratebank.report.layout import ReportTable


def _when(at: Any) -> str:
    return at.isoformat(timespec="seconds").replace("+00:00", "Z")


def release_record(view: Any) -> dict[str, Any]:
    record = {
        "name": view.name,
        "created_at": _when(view.created_at),
        "created_by": view.created_by,
        "fingerprint": view.fingerprint,
    }
    if view.rows is not None:
        record |= {
            "reactions": view.reactions,
            "rows": view.rows,
            "efficiencies": view.efficiencies,
            "species": view.species,
            "left_out": view.left_out,
            "units": "SI",
            "store": view.store,
            "content_fingerprint": view.store_fingerprint,
            "history_mark": view.history_mark,
            "checks": view.checks,
            "intact": view.intact,
        }
    return record


def releases_table(views: Sequence[Any]) -> ReportTable:
    table = ReportTable(title=f"Releases ({len(views)})", drop=("fingerprint",))
    for header in ("name", "created (UTC)", "by", "fingerprint"):
        table.add_column(header)
    for v in views:
        table.add_row(v.name, _when(v.created_at), v.created_by, v.fingerprint)
    return table


def release_table(view: Any) -> ReportTable:
    table = ReportTable(title=f"Release {view.name} (frozen; SI units)", show_header=False)
    table.add_column("")
    table.add_column("")
    checks = view.checks or {}
    parts = [f"{code} {count}" for code, count in (checks.get("flags") or {}).items()]
    if checks.get("unchecked"):
        parts.append(f"{checks['unchecked']} expression(s) unchecked")
    summary = "clean" if checks.get("clean") else ", ".join(parts)
    rows = (
        ("created (UTC)", _when(view.created_at)),
        ("by", view.created_by),
        ("fingerprint", view.fingerprint + ("" if view.intact else " (content CHANGED since)")),
        ("reactions", str(view.reactions)),
        ("mechanism rows", str(view.rows)),
        ("efficiencies", str(view.efficiencies)),
        ("species", str(view.species)),
        ("left out", ", ".join(view.left_out) or "none"),
        ("store", view.store or ""),
        ("content fingerprint", view.store_fingerprint or ""),
        ("history mark", "" if view.history_mark is None else str(view.history_mark)),
        ("checks", summary),
    )
    for label, value in rows:
        table.add_row(label, value)
    return table


# --------------------------------------------------------------------------- diff


def _value(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def diff_record(report: Any) -> dict[str, Any]:
    return {
        "a": report.a,
        "b": report.b,
        "pressure_bar": report.pressure_bar,
        "added": [{"key": r.key, "equation": r.equation} for r in report.added],
        "removed": [{"key": r.key, "equation": r.equation} for r in report.removed],
        "changed": [
            {
                "key": c.key,
                "equation": c.equation,
                "fields": [
                    {"field": f.field, "before": _value(f.before), "after": _value(f.after)}
                    for f in c.fields
                ],
                "ratios": [
                    {"T_K": r.T, "ratio": _value(r.ratio), "factor_A": r.factor, "beyond": r.beyond}
                    for r in c.ratios
                ],
                "largest_ln_ratio": _value(c.largest_ln_ratio),
                "in_uncertainties": c.in_uncertainties,
                "beyond_uncertainty": c.beyond_uncertainty,
            }
            for c in report.changed
        ],
    }


def diff_summary(report: Any) -> str:
    if report.same:
        return f"{report.a} and {report.b} hold the same reactions with the same numbers."
    beyond = sum(1 for c in report.changed if c.beyond_uncertainty)
    return (
        f"From {report.a} to {report.b}: {len(report.added)} added, {len(report.removed)} "
        f"removed, {len(report.changed)} changed ({beyond} beyond the older uncertainty "
        f"factor; k compared at {report.pressure_bar:g} bar, efficiency 1)."
    )


def diff_tables(report: Any) -> list[ReportTable]:
    tables = []
    for title, found in (("Added", report.added), ("Removed", report.removed)):
        if found:
            table = ReportTable(title=f"{title} ({len(found)})")
            table.add_column("reaction")
            table.add_column("equation")
            for r in found:
                table.add_row(r.key, r.equation)
            tables.append(table)
    if report.changed:
        rows, note = shown(list(report.changed))
        table = ReportTable(
            title=f"Changed ({len(report.changed)}), largest change first",
            caption=note or None,
            drop=("fields",),
        )
        for header in ("reaction", "fields", "k_B/k_A at T [K]", "|ln r| / ln f_A", "beyond f_A"):
            table.add_column(header, justify="right" if header.startswith("|") else "left")
        for c in rows:
            ratios = "; ".join(f"{sig(r.T)}: {sig(r.ratio)}" for r in c.ratios)
            beyond = {True: "yes", False: "no", None: "no factor"}[c.beyond_uncertainty]
            table.add_row(
                c.key,
                ", ".join(f.field for f in c.fields),
                ratios,
                sig(c.in_uncertainties),
                beyond,
            )
        tables.append(table)
    return tables
