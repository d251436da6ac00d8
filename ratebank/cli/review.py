"""``ratebank review``: the review book, a static HTML site of the store.

Attached to the application by :func:`register`. Jinja2, matplotlib and the
review services are imported by the command only.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import typer

from ratebank.cli.common import STATE, open_store_handle, say
from ratebank.cli.progress import progress_bar

if TYPE_CHECKING:
    from ratebank.report.book import BookFiles
    from ratebank.services.store_access import StoreHandle


def register(app: typer.Typer) -> None:
    """Add ``review`` to ``app``."""
    app.command("review")(review)


def write_review_book(
    store: StoreHandle,
    out_dir: Path,
    *,
    keys: list[str] | None = None,
    reaction_class: str | None = None,
    species: str | None = None,
    preset: str = "combustion",
) -> BookFiles:
    """Gather the book from ``store`` and write it to ``out_dir`` (with a progress bar)."""
    from ratebank.report.book import check_book_target, render_book
    from ratebank.services.review import gather_book

    check_book_target(out_dir)
    with progress_bar(STATE.quiet) as progress:
        with store.session() as session:
            book = gather_book(
                session,
                keys=keys,
                reaction_class=reaction_class,
                species=species,
                preset=preset,
                store_label=store.display_url,
                progress=progress,
            )
        return render_book(book, out_dir, progress=progress, store_path=_store_file(store))


def _store_file(store: StoreHandle) -> str | None:
    """The SQLite file of the store (which the book must never replace), or None."""
    engine = store.engine
    return engine.url.database if engine.dialect.name == "sqlite" else None


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
    from ratebank.report.book import check_book_target

    check_book_target(out_dir)
    store = open_store_handle()
    try:
        result = write_review_book(
            store,
            out_dir,
            keys=keys or None,
            reaction_class=reaction_class,
            species=species,
            preset=preset,
        )
    finally:
        store.close()
    say(f"Wrote the review book ({result.pages} pages) to {result.folder}; open its index:")
    say(str(result.index))
