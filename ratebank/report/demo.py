"""The demo's closing summary."""

from __future__ import annotations

from typing import Any

from rich.table import Table

from ratebank.io.demo import DemoResult
from ratebank.report.tables import import_message
from ratebank.services.curate import STATUS_HELP


def demo_summary(result: DemoResult) -> list[Any]:
    lines = [f"Demo store built at {result.db} (every rate number in it is synthetic)."]
    lines += [import_message(s) for s in result.imports]
    table = Table(title="Reactions by what the store knows")
    table.add_column("status")
    table.add_column("reactions")
    table.add_column("meaning")
    for status, meaning in STATUS_HELP.items():
        table.add_row(status, str(result.statuses.get(status, 0)), meaning)
    closing = f"Try: ratebank --db {result.db} reactions list --status ea-only"
    return [*lines, table, closing]
