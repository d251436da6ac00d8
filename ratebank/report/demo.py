"""The demo's closing summary."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from ratebank.caution import CAUTION
from ratebank.report.layout import ReportTable
from ratebank.report.tables import import_message

if TYPE_CHECKING:  # types only: a report module must stay light to import
    from ratebank.io.demo import DemoResult


def demo_summary(result: DemoResult) -> list[Any]:
    parts: list[Any] = [
        f"Demo store built at {result.db} from an invented scenario; every rate number in it "
        "is synthetic."
    ]
    parts += [import_message(s) for s in result.imports]
    steps = ReportTable(title="What the demo did")
    steps.add_column("step")
    steps.add_column("result", overflow="fold")
    if result.fit is not None:
        forms: dict[str, int] = {}
        for row in result.fit.rows:
            if row.form:
                forms[row.form] = forms.get(row.form, 0) + 1
        steps.add_row(
            "fit --form auto",
            f"{result.fit.stored} reactions fitted ("
            + ", ".join(f"{n} {form}" for form, n in sorted(forms.items()))
            + f"); {result.fit.failed} failed",
        )
    if result.estimate is not None:
        steps.add_row(
            "estimate --keep-going",
            f"{len(result.estimate.rows)} A factors estimated from collision theory; "
            f"{len(result.estimate.skipped)} could not be",
        )
    if result.check is not None:
        codes: dict[str, int] = {}
        for flag in result.check.flags:
            codes[flag.code] = codes.get(flag.code, 0) + 1
        steps.add_row(
            "check",
            ", ".join(f"{n} {code}" for code, n in sorted(codes.items())) or "clean",
        )
    for export in result.exports:
        steps.add_row(
            f"export --preset {export.table.units.label}",
            f"{len({row.key for row in export.table.rows})} reactions to the data package "
            f"{export.folder}",
        )
    parts.append(steps)
    if result.exports:
        origins = ReportTable(title="Where the exported numbers come from")
        origins.add_column("origin")
        origins.add_column("reactions")
        for origin, count in sorted(result.origins.items()):
            origins.add_row(origin, str(count))
        origins.add_row(
            "left out (no usable expression)", str(len(result.exports[0].table.left_out))
        )
        parts.append(origins)
    if result.estimate is not None and result.estimate.skipped:
        skipped = ReportTable(title="Not estimated, and why")
        skipped.add_column("reaction")
        skipped.add_column("reason", overflow="fold")
        for s in result.estimate.skipped:
            skipped.add_row(s.key, s.reason)
        parts.append(skipped)
    parts.append(f"Caution: {CAUTION}")
    parts.append(
        f"Next: ratebank --db {result.db} check   |   ratebank --db {result.db} reactions show "
        "oh-ch4"
    )
    return parts
