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

The book is written by :func:`ratebank.safe_output.write_folder`: staged whole
beside the target and swapped in as one unit, so a reader never sees half a
book; the store's own file and non-regular targets are refused, and files and
folders get the modes the umask gives. Only a new or empty folder, or an
earlier review book (a folder holding :data:`BOOK_MARK`), is ever replaced.
"""

from __future__ import annotations

import datetime as dt
import math
import os
import re
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from functools import partial
from importlib import resources
from pathlib import Path
from typing import Any, BinaryIO

from jinja2 import Environment, PackageLoader, StrictUndefined
from markupsafe import Markup, escape

from ratebank import safe_output
from ratebank.errors import RatebankError
from ratebank.report.format import sig, trange
from ratebank.report.plots import BookFigures
from ratebank.science.constants import DEBYE, ELECTRONVOLT_MOLAR
from ratebank.services.progress import NoProgress, Progress
from ratebank.services.review import Book, BookClass, BookReaction, BookSpecies

#: A file in every book's folder; only a folder holding it is ever replaced.
BOOK_MARK = ".ratebank-review-book"
ASSETS = ("book.css", "book.js")


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


def earlier_book_entries(target: Path) -> list[str]:
    """The files and subfolders of the earlier review book at ``target`` (none if none).

    Names are relative, with ``/`` between parts, as
    :func:`ratebank.safe_output.write_folder` takes them as ``replaceable``;
    anything that is not a regular file or a folder (a link, say) is left out,
    so that the write refuses it.
    """
    if not (target / BOOK_MARK).is_file():
        return []
    found: list[str] = []
    for folder, subfolders, files in os.walk(target):
        inside = Path(folder).relative_to(target).as_posix()
        prefix = "" if inside == "." else inside + "/"
        found.extend(prefix + name for name in subfolders if not (Path(folder) / name).is_symlink())
        found.extend(prefix + name for name in files)
    return found


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
        ("normal boiling temperature (K)", s.boiling_temperature, 1.0),
        ("dipole moment (D)", s.dipole_moment, 1.0 / DEBYE),
        ("polarizability (Å³)", s.polarizability, 1e30),
        ("ionization energy (eV)", s.ionization_energy, 1.0 / ELECTRONVOLT_MOLAR),
    ):
        if value is not None:
            rows.append((label, sig(value * factor), "given", False))
    return rows


# --------------------------------------------------------------------------- rendering


class _Pages:
    """The Jinja2 environment and the links between the book's pages."""

    def __init__(self, book: Book):
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


@dataclass(frozen=True)
class _Page:
    """A page rendered when the write reaches it, so the pages are never all in memory."""

    render: Callable[[], str]
    progress: Progress
    #: (what, how many) on the first page of a kind, which starts its progress report
    starts: tuple[str, int] | None = None

    def __call__(self, stream: BinaryIO) -> None:
        if self.starts is not None:
            self.progress.start(*self.starts)
        stream.write(self.render().encode("utf-8"))
        self.progress.advance()


def _pages_of(
    folder: str,
    kind: str,
    names: dict[str, str],
    entries: Sequence[Any],
    name_of: Callable[[Any], str],
    render: Callable[[Any], str],
    progress: Progress,
) -> dict[str, _Page]:
    """The pages of one kind (reactions, species or classes), by file name in the book."""
    what = f"writing {kind} pages"
    return {
        f"{folder}/{names[name_of(entry)]}": _Page(
            partial(render, entry), progress, (what, len(entries)) if number == 0 else None
        )
        for number, entry in enumerate(entries)
    }


def _book_contents(book: Book, pages: _Pages, progress: Progress) -> dict[str, Any]:
    """Every file of the book by its name inside the book's folder."""
    figures = BookFigures()

    def reaction_page(reaction: BookReaction) -> str:
        plot = figures.arrhenius(reaction.plot) if reaction.plot is not None else None
        return pages.render(
            "reaction.html",
            "../",
            r=reaction,
            plot_svg=Markup(plot.svg) if plot else None,
            # swatches are built from numbers and colour codes; labels stay escaped
            legend=[(Markup(e.swatch), e.label) for e in plot.legend] if plot else [],
            any_recommended=any(e.recommended for e in reaction.expressions),
        )

    def species_page(entry: BookSpecies) -> str:
        return pages.render("species.html", "../", s=entry, properties=_species_properties(entry))

    def class_page(entry: BookClass) -> str:
        svg = (
            figures.steric_svg(entry.points, entry.collision_model)
            if entry.points is not None
            else None
        )
        return pages.render("class.html", "../", c=entry, plot_svg=Markup(svg) if svg else None)

    contents: dict[str, Any] = {
        f"assets/{name}": resources.files("ratebank.report").joinpath("assets", name).read_bytes()
        for name in ASSETS
    }
    contents[BOOK_MARK] = (
        "A review book written by ratebank; `ratebank review` replaces this folder.\n"
    )
    for folder, kind, names, entries, name_of, render in (
        ("reactions", "reaction", pages.reactions, book.reactions, _key, reaction_page),
        ("species", "species", pages.species, book.species, _species_name, species_page),
        ("classes", "class", pages.classes, book.classes, _class_name, class_page),
    ):
        contents.update(_pages_of(folder, kind, names, entries, name_of, render, progress))
    contents["index.html"] = lambda stream: stream.write(
        pages.render("index.html", "").encode("utf-8")
    )
    return contents


def _key(reaction: BookReaction) -> str:
    return reaction.key


def _species_name(entry: BookSpecies) -> str:
    return entry.species.name


def _class_name(entry: BookClass) -> str:
    return entry.name


def render_book(
    book: Book,
    out_dir: Path | str,
    *,
    progress: Progress | None = None,
    store_path: str | Path | None = None,
) -> BookFiles:
    """Write the review book of ``book`` into the folder ``out_dir``.

    Parameters
    ----------
    book : Book
        From :func:`ratebank.services.review.gather_book`.
    out_dir : pathlib.Path or str
        The book's folder: new, empty, or an earlier book, which is replaced.
    progress : Progress, optional
        Told of each page written.
    store_path : str or pathlib.Path, optional
        The SQLite store in use, which the book must never replace.

    Returns
    -------
    BookFiles
        The folder, its index page and the number of pages.

    Raises
    ------
    BookError
        If ``out_dir`` cannot hold the book (see :func:`check_book_target`).
    OutputError
        If the folder cannot be written (see :func:`ratebank.safe_output.write_folder`).
    """
    target = check_book_target(out_dir)
    contents = _book_contents(book, _Pages(book), progress or NoProgress())
    safe_output.write_folder(
        target, contents, store_path=store_path, replaceable=earlier_book_entries(target)
    )
    pages = len(book.reactions) + len(book.species) + len(book.classes) + 1
    return BookFiles(target, target / "index.html", pages)
