"""The review book opened in a real browser: headless Chromium over its DevTools protocol.

Skipped only where Chromium is not installed (CI installs Debian's ``chromium``).
The demo store is the invented demo scenario (every rate number synthetic); the
hostile store's numbers are the tests' own.
"""

from __future__ import annotations

import io
from pathlib import Path
from urllib.parse import unquote, urlsplit

import numpy as np
import pytest
from helpers.browser import Chromium, chromium_executable
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV
from PIL import Image

pytestmark = pytest.mark.skipif(
    chromium_executable() is None, reason="chromium is not installed (CI installs it)"
)

HOSTILE = "<script>alert('stored')</script>"

VISIBLE_ROWS = "Array.from(document.querySelectorAll('#reactions tbody tr')).filter(r => !r.hidden)"


@pytest.fixture(scope="module")
def demo_index(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("browser-demo")
    outcome = run(str(folder / "demo.db"), "demo", "--out", str(folder / "out"))
    assert outcome.exit_code == 0, outcome.stderr
    return Path(outcome.stdout.strip().splitlines()[-1])


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    with Chromium(tmp_path_factory.mktemp("chromium-profile")) as chromium:
        yield chromium


def test_every_page_loads_from_disk_without_errors_or_requests_out(demo_index, browser):
    root = demo_index.parent.resolve()
    pages = sorted(root.rglob("*.html"))
    assert len(pages) > 100
    links = 0
    for page in pages:
        report = browser.load(page.as_uri())
        assert report.clean, report
        # every link the browser sees points at a file of the book
        for href in browser.evaluate(
            "Array.from(document.querySelectorAll('a[href], link[href], script[src]'))"
            ".map(e => e.href || e.src)"
        ):
            parts = urlsplit(href)
            assert parts.scheme == "file", href
            target = Path(unquote(parts.path))
            assert target.is_file() and target.resolve().is_relative_to(root), href
            links += 1
    assert links > 500


def _not_blank(png: bytes) -> None:
    image = np.asarray(Image.open(io.BytesIO(png)).convert("L"), dtype=float)
    assert image.shape[0] >= 500 and image.shape[1] >= 1000
    assert image.std() > 10.0, "the screenshot is (nearly) one colour"
    # ink as well as paper: some dark pixels (text, axes), mostly light ones
    dark = (image < 100).mean()
    assert 0.005 < dark < 0.5


def test_screenshots_of_the_index_and_a_reaction_page_are_not_blank(demo_index, browser, tmp_path):
    assert browser.load(demo_index.as_uri()).clean
    index_png = browser.screenshot()
    _not_blank(index_png)
    page = demo_index.parent / "reactions" / "oh-ch4.html"
    assert browser.load(page.as_uri()).clean
    browser.evaluate("document.getElementById('plot').scrollIntoView()")
    reaction_png = browser.screenshot()
    _not_blank(reaction_png)
    # the plot is drawn: a band of the page with the figure has many colours of ink
    plot = np.asarray(Image.open(io.BytesIO(reaction_png)).convert("RGB"))
    colours = {tuple(c) for c in plot.reshape(-1, 3)[::7]}
    assert len(colours) > 50
    (tmp_path / "index.png").write_bytes(index_png)


def test_the_filter_narrows_the_reaction_table(demo_index, browser):
    assert browser.load(demo_index.as_uri()).clean
    total = browser.evaluate("document.querySelectorAll('#reactions tbody tr').length")
    assert browser.evaluate(f"{VISIBLE_ROWS}.length") == total > 20
    # typed into the box
    shown = browser.evaluate(
        "(() => { const box = document.getElementById('filter'); box.value = 'h-abstraction';"
        " box.dispatchEvent(new Event('input')); "
        f"return {VISIBLE_ROWS}.map(r => r.textContent); }})()"
    )
    assert 0 < len(shown) < total
    assert all("h-abstraction" in text for text in shown)
    assert browser.evaluate("document.getElementById('shown-count').textContent") == (
        f"{len(shown)} of {total}"
    )
    # given in the address, as a colleague's bookmark would
    report = browser.load(demo_index.as_uri() + "?filter=oh-ch4")
    assert report.clean, report
    keys = browser.evaluate(f"{VISIBLE_ROWS}.map(r => r.cells[0].textContent.trim())")
    assert keys == ["oh-ch4"]


def test_the_reaction_table_sorts_by_a_column(demo_index, browser):
    assert browser.load(demo_index.as_uri()).clean
    values = browser.evaluate(
        "(() => { const th = document.querySelectorAll('#reactions thead th')[7]; th.click();"
        f" return {VISIBLE_ROWS}.map(r => Number(r.cells[7].dataset.value)); }})()"
    )
    assert values == sorted(values) and values[0] < values[-1]
    values = browser.evaluate(
        "(() => { document.querySelectorAll('#reactions thead th')[7].click();"
        f" return {VISIBLE_ROWS}.map(r => Number(r.cells[7].dataset.value)); }})()"
    )
    assert values == sorted(values, reverse=True)


@pytest.fixture
def hostile_book(tmp_path) -> Path:
    """A store whose texts hold markup: a species source, a note, a set reference."""
    db = str(tmp_path / "store.db")
    assert run(db, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", SPECIES_CSV.replace("Svehla 1962 (from memory)", HOSTILE)),
        ("reactions", "r.csv", REACTIONS_CSV.replace("self-reaction", HOSTILE)),
        ("data", "m.csv", MEASUREMENTS_CSV.replace("test lab A", HOSTILE)),
        ("expressions", "e.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    assert run(db, "fit").exit_code == 0
    outcome = run(db, "review", str(tmp_path / "book"))
    assert outcome.exit_code == 0, outcome.stderr
    return tmp_path / "book"


def test_stored_script_is_shown_as_text(hostile_book, browser):
    for page, where in (
        (hostile_book / "species" / "OH.html", "main"),
        (hostile_book / "reactions" / "ho2-ho2.html", "main"),
        (hostile_book / "reactions" / "oh-ch4.html", "#data"),
    ):
        report = browser.load(page.as_uri())
        assert report.clean, report  # no alert dialog, no error
        assert browser.evaluate("document.scripts.length") == 0
        text = browser.evaluate(f"document.querySelector('{where}').innerText")
        assert HOSTILE in text, page.name
    report = browser.load((hostile_book / "index.html").as_uri())
    assert report.clean, report
    assert browser.evaluate("Array.from(document.scripts).map(s => s.src.split('/').pop())") == [
        "book.js"
    ]
