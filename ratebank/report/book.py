"""The review book: a static, offline HTML site made from a :class:`~ratebank.services.review.Book`.

Pure rendering: a Book in, files out; nothing here reads the store. The pages
are Jinja2 templates shipped with the package (``report/templates``), with
autoescaping on, so no stored text (a note, a reference, a species name) can
put markup into a page. The one style sheet and the few lines of script that
sort and filter the index's table are copied from ``report/assets``; nothing is
fetched from the network.

Layout of a book::

    index.html                counts, check findings, gaps, releases, all reactions
    reactions/<key>.html      one per reaction, with its Arrhenius plot (inline SVG)
    species/<name>.html       one per species
    classes/<class>.html      one per reaction class, with its steric-factor plot
    assets/book.css, book.js

The book is built in a temporary folder beside the target and renamed into
place (:func:`write_folder_atomically`), so a reader never sees half a book.
"""

from __future__ import annotations

import datetime as dt
import math
import os
import re
import shutil
import tempfile
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from importlib import resources
from pathlib import Path
from typing import Any, TypeVar

from ratebank.errors import RatebankError
from ratebank.report.format import sig, trange
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.review import Book, BookSpecies

#: A file in every book's folder; only a folder holding it is ever replaced.
BOOK_MARK = ".ratebank-review-book"
ASSETS = ("book.css", "book.js")
_T = TypeVar("_T")


class BookError(RatebankError):
    """The review book cannot be written where it was asked to."""


@dataclass(frozen=True)
class BookFiles:
    """A written review book."""

    folder: Path
    index: Path
    pages: int


# --------------------------------------------------------------------------- the target


def check_book_target(out_dir: Path | str) -> Path:
    """Refuse a folder the book cannot be written to, before any work is done.

    The folder may be new, empty, or an earlier review book (which is replaced
    as a whole); anything else is left alone.
    """
    target = Path(out_dir).expanduser().absolute()
    parent = target.parent
    if not parent.is_dir():
        raise BookError(f"folder {str(parent)!r} does not exist; create it first")
    if not os.access(parent, os.W_OK | os.X_OK):
        raise BookError(f"cannot write to folder {str(parent)!r}: Permission denied")
    if target.exists() or target.is_symlink():
        if not target.is_dir() or target.is_symlink():
            raise BookError(f"{str(target)!r} exists and is not a folder; choose another place")
        if any(target.iterdir()) and not (target / BOOK_MARK).is_file():
            raise BookError(
                f"{str(target)!r} is a folder that holds other files, not an earlier review "
                "book; choose a new or empty folder"
            )
    return target


def write_folder_atomically(target: Path, fill: Callable[[Path], _T]) -> _T:
    """Let ``fill`` write a folder's content, then put the folder at ``target`` in one step.

    The content is written into a new temporary folder beside ``target``; only
    when ``fill`` has returned is it renamed to ``target`` (an earlier folder
    there is moved aside first and removed afterwards). If anything fails,
    the temporary folder is removed and ``target`` is as it was.
    """
    staging = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent))
    try:
        result = fill(staging)
        os.chmod(staging, 0o777 & ~_umask())
        old = None
        if target.exists():
            old = target.with_name(f".{target.name}.old-{os.getpid()}")
            shutil.rmtree(old, ignore_errors=True)
            os.replace(target, old)
        try:
            os.replace(staging, target)
        except BaseException:
            if old is not None:
                os.replace(old, target)
            raise
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
    return result


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


# --------------------------------------------------------------------------- helpers


def page_names(names: Iterable[str]) -> dict[str, str]:
    """A distinct, portable file name for each name (unique even ignoring case).

    >>> page_names(["oh-ch4", "CO", "Co", "a/b c"])
    {'oh-ch4': 'oh-ch4.html', 'CO': 'CO.html', 'Co': 'Co-2.html', 'a/b c': 'a_b_c.html'}
    """
    used: set[str] = set()
    result: dict[str, str] = {}
    for name in names:
        base = re.sub(r"[^A-Za-z0-9._-]+", "_", name).strip("._")[:80] or "page"
        slug, number = base, 2
        while slug.lower() in used or slug.lower() in ("index",):
            slug, number = f"{base}-{number}", number + 1
        used.add(slug.lower())
        result[name] = f"{slug}.html"
    return result


def _when(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, dt.datetime):
        if value.tzinfo is not None:
            value = value.astimezone(dt.UTC)
        return f"{value:%Y-%m-%d %H:%M:%S}"
    return str(value)


def _detail(detail: dict[str, Any]) -> str:
    parts = []
    for key, value in detail.items():
        if isinstance(value, list):
            value = ", ".join(str(v) for v in value[:5]) + (", ..." if len(value) > 5 else "")
        elif isinstance(value, float):
            value = sig(value)
        parts.append(f"{key}={value}")
    return "; ".join(parts)


def _point_rows(points: Any) -> list[tuple[float, float, float | None]]:
    rows = []
    for T, k, high in zip(points.T, points.k, points.k_high, strict=True):
        u = math.log(high / k) if math.isfinite(high) and k > 0 else None
        rows.append((float(T), float(k), u))
    return rows


def _species_properties(entry: BookSpecies) -> list[tuple[str, str, str, bool]]:
    """(property, value, where it comes from, estimated?) rows of a species page."""
    s = entry.species
    rows: list[tuple[str, str, str, bool]] = [("formula", s.formula, "", False)]
    mass_from = "given" if s.molar_mass_source == "given" else s.molar_mass_source
    rows.append(("molar mass (g/mol)", sig(s.molar_mass * 1e3), mass_from, False))
    if s.diameter is not None:
        rows.append(
            (
                "collision diameter (Å)",
                sig(s.diameter * 1e10),
                f"{s.diameter_method or 'given'} ({s.diameter_kind or 'kind not stated'})",
                s.diameter_is_estimated,
            )
        )
    elif entry.estimated_diameter is not None:
        guess = entry.estimated_diameter
        rows.append(
            (
                "collision diameter (Å)",
                sig(guess.diameter * 1e10),
                f"{guess.method}, not stored: the estimate collision theory would use",
                True,
            )
        )
    else:
        rows.append(("collision diameter (Å)", "—", "none, and none can be estimated", False))
    for label, value, factor in (
        ("well depth ε/k (K)", s.well_depth, 1.0),
        ("critical temperature (K)", s.critical_temperature, 1.0),
        ("critical pressure (bar)", s.critical_pressure, 1e-5),
        ("acentric factor", s.acentric_factor, 1.0),
        ("boiling-point molar volume (cm³/mol)", s.boiling_volume, 1e6),
    ):
        if value is not None:
            rows.append((label, sig(value * factor), "given", False))
    return rows


# --------------------------------------------------------------------------- rendering


class _Pages:
    """The Jinja2 environment and the links between the book's pages."""

    def __init__(self, book: Book):
        from jinja2 import Environment, PackageLoader, StrictUndefined

        self.book = book
        self.env = Environment(
            loader=PackageLoader("ratebank.report", "templates"),
            autoescape=True,
            undefined=StrictUndefined,
            trim_blocks=True,
            lstrip_blocks=True,
        )
        self.reactions = page_names(r.key for r in book.reactions)
        self.species = page_names(s.species.name for s in book.species)
        self.classes = page_names(c.name for c in book.classes)
        self.created = _when(book.created_at) + " UTC"

    def _link(self, folder: str, pages: dict[str, str], name: str, root: str):  # type: ignore[no-untyped-def]
        from markupsafe import Markup, escape

        page = pages.get(name)
        if page is None:
            return escape(name)
        return Markup('<a href="{}">{}</a>').format(f"{root}{folder}/{page}", name)

    def render(self, template: str, root: str, **context: Any) -> str:
        return self.env.get_template(template).render(
            book=self.book,
            root=root,
            created=self.created,
            sig=sig,
            trange=trange,
            when=_when,
            detail=_detail,
            point_rows=_point_rows,
            reaction_link=lambda key: self._link("reactions", self.reactions, key, root),
            species_link=lambda name: self._link("species", self.species, name, root),
            class_link=lambda name: self._link("classes", self.classes, name, root),
            **context,
        )


def render_book(book: Book, out_dir: Path | str, *, progress: Progress | None = None) -> BookFiles:
    """Write the review book of ``book`` into the folder ``out_dir``.

    Parameters
    ----------
    book : Book
        From :func:`ratebank.services.review.gather_book`.
    out_dir : pathlib.Path or str
        The book's folder: new, empty, or an earlier book, which is replaced.
    progress : Progress, optional
        Told of each plot drawn and each page written.

    Returns
    -------
    BookFiles
        The folder, its index page and the number of pages.

    Raises
    ------
    BookError
        If ``out_dir`` cannot hold the book (see :func:`check_book_target`).
    """
    from markupsafe import Markup

    from ratebank.report.plots import BookFigures

    target = check_book_target(out_dir)
    progress = progress or NoProgress()
    pages = _Pages(book)

    def fill(folder: Path) -> int:
        for sub in ("reactions", "species", "classes", "assets"):
            (folder / sub).mkdir()
        for name in ASSETS:
            source = resources.files("ratebank.report").joinpath("assets", name)
            (folder / "assets" / name).write_bytes(source.read_bytes())
        (folder / BOOK_MARK).write_text(
            "A review book written by ratebank; `ratebank review` replaces this folder.\n",
            encoding="utf-8",
        )
        figures = BookFigures()
        written = 0
        progress.start("writing reaction pages", len(book.reactions))
        for reaction in book.reactions:
            plot = figures.arrhenius(reaction.plot) if reaction.plot is not None else None
            text = pages.render(
                "reaction.html",
                "../",
                r=reaction,
                plot_svg=Markup(plot.svg) if plot else None,
                # swatches are built from numbers and colour codes; labels stay escaped
                legend=[(Markup(e.swatch), e.label) for e in plot.legend] if plot else [],
                any_recommended=any(e.recommended for e in reaction.expressions),
            )
            _write(folder / "reactions" / pages.reactions[reaction.key], text)
            written += 1
            progress.advance()
        progress.start("writing species pages", len(book.species))
        for entry in book.species:
            text = pages.render(
                "species.html", "../", s=entry, properties=_species_properties(entry)
            )
            _write(folder / "species" / pages.species[entry.species.name], text)
            written += 1
            progress.advance()
        for entry in book.classes:
            svg = (
                figures.steric_svg(entry.points, entry.collision_model)
                if entry.points is not None
                else None
            )
            text = pages.render("class.html", "../", c=entry, plot_svg=Markup(svg) if svg else None)
            _write(folder / "classes" / pages.classes[entry.name], text)
            written += 1
        _write(folder / "index.html", pages.render("index.html", ""))
        return written + 1

    count = write_folder_atomically(target, fill)
    return BookFiles(target, target / "index.html", count)


def _write(path: Path, text: str) -> None:
    path.write_text(text, encoding="utf-8")
