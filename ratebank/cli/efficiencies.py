"""Commands for third-body collision efficiencies."""

from __future__ import annotations

from pathlib import Path

import typer

from ratebank.cli.common import calls, opened_store, print_json, say, show
from ratebank.report.tables import efficiencies_table, efficiency_records, import_message

efficiencies_app = typer.Typer(
    help="Third-body collision efficiencies of species in a reaction's [M]_eff.\n\n"
    "Example: ratebank efficiencies import efficiencies.csv",
    no_args_is_help=True,
)


def register(app: typer.Typer) -> None:
    app.add_typer(efficiencies_app, name="efficiencies")


@efficiencies_app.command("import")
@calls("import_efficiencies")
def efficiencies_import(
    file: Path = typer.Argument(..., help="CSV file with a header row."),
    dry_run: bool = typer.Option(False, "--dry-run", help="Validate and report; write nothing."),
    update: bool = typer.Option(
        False,
        "--update",
        help="A pair already stated takes the new value when it changed (the history keeps "
        "before and after); without it such a pair is refused.",
    ),
) -> None:
    """Import third-body efficiencies (all or nothing).

    Columns: reaction (key or equation), species, efficiency (at least 0), source.
    A species without an efficiency counts 1 in [M]_eff; a pair already stated is
    refused unless --update is given.

    Example: ratebank efficiencies import efficiencies.csv --dry-run
    """
    with opened_store() as store:
        summary = store.import_efficiencies(file, dry_run=dry_run, update=update)
    say(import_message(summary))


@efficiencies_app.command("list")
@calls("efficiencies")
def efficiencies_list(
    reaction: str = typer.Option(None, "--reaction", help="Only this reaction (key or equation)."),
    as_json: bool = typer.Option(
        False, "--json", help="Print JSON (full precision) instead of a table."
    ),
) -> None:
    """List the stated third-body efficiencies.

    Example: ratebank efficiencies list --reaction h-o2-m
    """
    with opened_store() as store:
        rows = store.efficiencies(reaction=reaction)
    if as_json:
        print_json(efficiency_records(rows))
    else:
        show(efficiencies_table(rows))
