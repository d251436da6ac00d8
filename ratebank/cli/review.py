"""``ratebank review``: the review book, a static HTML site of the store.

Attached to the application by :func:`register`. Jinja2, matplotlib and the
review services are imported by the command only.
"""

from __future__ import annotations

from pathlib import Path

import typer

from ratebank.cli.common import STATE, calls, opened_store, say
from ratebank.cli.progress import progress_bar


def register(app: typer.Typer) -> None:
    """Add ``review`` to ``app``."""
    app.command("review")(review)


@calls("review")
def review(
    out_dir: Path = typer.Argument(
        ..., help="Folder for the book: new, empty, or an earlier review book (replaced)."
    ),
    keys: list[str] = typer.Option(
        None, "--key", help="Only this reaction (key or equation; repeatable)."
    ),
    reaction_class: str = typer.Option(None, "--class", help="Only reactions of this class."),
    species: str = typer.Option(None, "--species", help="Only reactions of this species."),
    preset: str = typer.Option(
        "combustion", "--units", help="Unit preset of the pages: combustion, atmospheric or si."
    ),
) -> None:
    """Write the review book: a static HTML site of the store to open from a shared folder.

    An index (counts by status, check findings, gaps ranked by uncertainty, releases,
    a table of every reaction to sort and filter), a page per reaction with its
    Arrhenius plot, data, expressions and their provenance, history and findings,
    and a page per species and per reaction class. Nothing in it is fetched from
    the network. The folder is written whole, then moved into place.

    Example: ratebank review review-book --class h-abstraction
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        result = store.review(
            out_dir,
            keys=keys or None,
            reaction_class=reaction_class,
            species=species,
            preset=preset,
            progress=progress,
        )
    say(f"Wrote the review book ({result.pages} pages) to {result.folder}; open its index:")
    say(str(result.index))
