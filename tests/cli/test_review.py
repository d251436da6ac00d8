"""``ratebank review`` and the demo's review book, read as files (no browser here).

The demo store is the invented demo scenario (every rate number synthetic); the
other stores are the tests' own, with invented numbers.
"""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser
from pathlib import Path
from urllib.parse import unquote, urlsplit

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import EXPRESSIONS_CSV, MEASUREMENTS_CSV, REACTIONS_CSV, SPECIES_CSV

HOSTILE = '<script>alert("stored")</script>'


class _Links(HTMLParser):
    """Every href and src of a page, and its inline script elements."""

    def __init__(self) -> None:
        super().__init__()
        self.targets: list[str] = []
        self.scripts: list[dict[str, str | None]] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        for name, value in attrs:
            if name in ("href", "src", "xlink:href") and value is not None:
                self.targets.append(value)
        if tag == "script":
            self.scripts.append(dict(attrs))


def links_of(page: Path) -> _Links:
    parser = _Links()
    parser.feed(page.read_text(encoding="utf-8"))
    return parser


def species_in(equation: str) -> set[str]:
    """Species names of an equation written as ratebank writes them (``2 A + B -> C + M``)."""
    names = set()
    for side in equation.split("->"):
        for term in side.split(" + "):
            words = term.strip().split()
            name = words[-1]
            if name != "M":
                names.add(name)
    return names


@pytest.fixture(scope="module")
def demo_book(tmp_path_factory):
    """The demo store and the review book the demo writes beside its exports."""
    folder = tmp_path_factory.mktemp("demo")
    db = folder / "demo.db"
    outcome = run(str(db), "demo", "--out", str(folder / "out"))
    assert outcome.exit_code == 0, outcome.stderr
    index = Path(outcome.stdout.strip().splitlines()[-1])
    return db, index


def test_demo_prints_the_index_of_its_book(demo_book):
    db, index = demo_book
    assert index.name == "index.html" and index.is_file()
    assert index.parent == db.parent / "out" / "review"


def test_demo_book_has_a_page_per_reaction_species_and_class(demo_book):
    db, index = demo_book
    reactions = json.loads(run(str(db), "reactions", "list", "--json").stdout)
    classes = {r["class"] for r in reactions if r["class"]}
    species = set().union(*(species_in(r["equation"]) for r in reactions))
    pages = sorted(index.parent.rglob("*.html"))
    assert len(pages) == len(reactions) + len(species) + len(classes) + 1
    assert len(list((index.parent / "reactions").glob("*.html"))) == len(reactions)
    assert len(list((index.parent / "species").glob("*.html"))) == len(species)
    assert len(list((index.parent / "classes").glob("*.html"))) == len(classes)


def test_each_plot_has_a_marker_per_measured_point(demo_book):
    db, index = demo_book
    sets = json.loads(run(str(db), "data", "list", "--json").stdout)
    points: dict[str, int] = {}
    for s in sets:
        points[s["reaction"]] = points.get(s["reaction"], 0) + s["points"]
    assert points, "the demo has measured sets"
    for key, expected in points.items():
        page = (index.parent / "reactions" / f"{key}.html").read_text(encoding="utf-8")
        groups = re.findall(r'<g id="measured-points-\d+">(.*?)</g>', page, flags=re.S)
        markers = sum(group.count("<use ") for group in groups)
        assert markers == expected, key


def test_every_link_in_the_book_resolves_to_a_file_in_it(demo_book):
    _, index = demo_book
    root = index.parent.resolve()
    checked = 0
    for page in root.rglob("*.html"):
        for target in links_of(page).targets:
            parts = urlsplit(target)
            if not parts.path and parts.fragment:
                continue  # a place on the same page (SVG clip paths and markers)
            assert not parts.scheme and not parts.netloc, f"{page.name} links out: {target}"
            resolved = (page.parent / unquote(parts.path)).resolve()
            assert resolved.is_file(), f"{page.relative_to(root)}: {target}"
            assert resolved.is_relative_to(root), f"{page.name}: {target} is outside the book"
            checked += 1
    assert checked > 500


def test_the_index_and_every_reaction_page_carry_the_caution(demo_book):
    _, index = demo_book
    for page in [index, *(index.parent / "reactions").glob("*.html")]:
        text = page.read_text(encoding="utf-8")
        assert "Caution." in text and "licensed practice decide" in text, page.name
        assert "must be validated" in text


def test_the_index_shows_counts_findings_gaps_and_an_empty_releases_section(demo_book):
    db, index = demo_book
    text = index.read_text(encoding="utf-8")
    check = json.loads(run(str(db), "check", "--json").stdout)
    assert f"Check findings ({len(check['flags'])})" in text
    for status in ("measured", "literature", "estimated", "gap"):
        assert f'<span class="word">{status}</span>' in text
    releases = text.split('<section id="releases">', 1)[1].split("</section>", 1)[0]
    assert "No releases have been recorded" in releases
    assert 'id="reactions"' in text and 'id="filter"' in text
    # gaps: no usable expression first, then estimates by falling uncertainty factor
    gaps = text.split('<section id="gaps">', 1)[1].split("</section>", 1)[0]
    statuses = re.findall(r'badge status-(\w+)">', gaps)
    assert statuses == sorted(statuses, key=lambda s: s != "gap")
    factors = [float(f) for f in re.findall(r'<td class="num factor">([0-9.e+]+)</td>', gaps) if f]
    assert factors == sorted(factors, reverse=True)


def test_pages_use_only_their_own_assets(demo_book):
    _, index = demo_book
    for page in index.parent.rglob("*.html"):
        # namespace names are identifiers, never fetched
        text = re.sub(r'xmlns(:\w+)?="[^"]*"', "", page.read_text(encoding="utf-8"))
        assert "http://" not in text and "https://" not in text, page.name
        assert "@import" not in text, page.name
        # url() only to a place in the page itself (an SVG clip path)
        assert all(target.startswith("#") for target in re.findall(r"url\(([^)]*)\)", text))
        for script in links_of(page).scripts:
            assert script.get("src", "").endswith("assets/book.js")


# --------------------------------------------------------------------------- a store of our own


@pytest.fixture
def store(tmp_path):
    db = str(tmp_path / "store.db")
    assert run(db, "init").exit_code == 0
    species = SPECIES_CSV.replace("Svehla 1962 (from memory)", HOSTILE)
    reactions = REACTIONS_CSV.replace("self-reaction", HOSTILE.replace(",", " "))
    points = MEASUREMENTS_CSV.replace("test lab A", HOSTILE.replace('"', "'")).replace(
        "test lab B", "lab $B$ (cost $5)"
    )
    for command, name, text in (
        ("species", "s.csv", species),
        ("reactions", "r.csv", reactions),
        ("data", "m.csv", points),
        ("expressions", "e.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    assert run(db, "fit").exit_code == 0
    return db


def test_stored_markup_is_shown_as_text(store, tmp_path):
    outcome = run(store, "review", str(tmp_path / "book"))
    assert outcome.exit_code == 0, outcome.stderr
    book = tmp_path / "book"
    for page in book.rglob("*.html"):
        text = page.read_text(encoding="utf-8")
        assert "<script>alert" not in text, page.name
        assert all(s.get("src") for s in links_of(page).scripts), page.name
    assert "&lt;script&gt;alert(" in (book / "species" / "OH.html").read_text(encoding="utf-8")
    assert "&lt;script&gt;alert(" in (book / "reactions" / "ho2-ho2.html").read_text(
        encoding="utf-8"
    )
    oh = (book / "reactions" / "oh-ch4.html").read_text(encoding="utf-8")
    assert "&lt;script&gt;alert(" in oh
    assert "lab $B$ (cost $5)" in oh  # shown as written, not typeset as mathematics


def test_review_limited_by_key_class_or_species(store, tmp_path):
    by_key = run(store, "review", str(tmp_path / "a"), "--key", "oh-ch4", "--key", "h2o2-dec")
    assert by_key.exit_code == 0, by_key.stderr
    assert sorted(p.name for p in (tmp_path / "a" / "reactions").iterdir()) == [
        "h2o2-dec.html",
        "oh-ch4.html",
    ]
    by_class = run(store, "review", str(tmp_path / "b"), "--class", "ho2-self")
    assert by_class.exit_code == 0, by_class.stderr
    assert [p.name for p in (tmp_path / "b" / "reactions").iterdir()] == ["ho2-ho2.html"]
    assert [p.name for p in (tmp_path / "b" / "classes").iterdir()] == ["ho2-self.html"]
    by_species = run(store, "review", str(tmp_path / "c"), "--species", "H2O2")
    assert by_species.exit_code == 0, by_species.stderr
    assert sorted(p.name for p in (tmp_path / "c" / "reactions").iterdir()) == [
        "h2o2-dec.html",
        "ho2-ho2.html",
    ]


def test_review_replaces_an_earlier_book(store, tmp_path):
    book = tmp_path / "book"
    assert run(store, "review", str(book)).exit_code == 0
    assert run(store, "review", str(book), "--key", "oh-ch4").exit_code == 0
    assert [p.name for p in (book / "reactions").iterdir()] == ["oh-ch4.html"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".book")]


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--key", "no-such"], "Error: no reaction with key 'no-such' in the store"),
        (["--class", "no-such"], "Error: no reaction matches; nothing to put in the review book"),
        (["--species", "Xe"], "Error: no species 'Xe' in the store"),
        (["--units", "imperial"], "Error: unknown"),
    ],
)
def test_review_refuses_a_bad_selection_and_writes_nothing(store, tmp_path, args, message):
    before = snapshot(store)
    outcome = run(store, "review", str(tmp_path / "book"), *args)
    assert outcome.exit_code == 1
    assert outcome.stderr.startswith(message)
    assert len(outcome.stderr.strip().splitlines()) == 1
    assert "Traceback" not in outcome.stderr
    assert not (tmp_path / "book").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".book")]
    assert snapshot(store) == before


def test_review_refuses_a_folder_that_is_not_a_book(store, tmp_path):
    other = tmp_path / "papers"
    other.mkdir()
    (other / "draft.txt").write_text("keep me")
    outcome = run(store, "review", str(other))
    assert outcome.exit_code == 1
    assert "holds other files, not an earlier review book" in outcome.stderr
    assert (other / "draft.txt").read_text() == "keep me"
    a_file = tmp_path / "file.html"
    a_file.write_text("x")
    outcome = run(store, "review", str(a_file))
    assert outcome.exit_code == 1
    assert "exists and is not a folder" in outcome.stderr
    outcome = run(store, "review", str(tmp_path / "missing" / "book"))
    assert outcome.exit_code == 1
    assert "does not exist; create it first" in outcome.stderr


REVERSIBLE_REACTIONS = """key,equation,class,reverse
h-o2,H + O2 -> OH + O,branching,detailed-balance
oh-h2,OH + H2 -> H2O + H,abstraction,
"""
#: synthetic rate parameters
REVERSIBLE_EXPRESSIONS = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,reference
h-o2,3.5e15,-0.4,72,kJ/mol,cm3/mol/s,300,2500,synthetic
oh-h2,2.2e8,1.5,14.4,kJ/mol,cm3/mol/s,300,2500,synthetic
"""


def _table_row(page: str, first_cell: str) -> list[str]:
    """The cells of the table row whose first cell reads ``first_cell``."""
    for row in re.findall(r"<tr>(.*?)</tr>", page, flags=re.S):
        cells = [re.sub(r"<[^>]+>", "", c).strip() for c in re.findall(r"<td[^>]*>(.*?)</td>", row)]
        if cells and cells[0] == first_cell:
            return cells
    raise AssertionError(f"no row starting {first_cell!r}")


def test_the_book_shows_reverse_rates_and_thermochemistry(db_url, tmp_path):
    """The reverse rate on the page is the one `rate --reverse` gives, and the species page
    holds the Cp°, H°, S° `species show` gives (thermochemistry fitted to the NIST-JANAF
    tables of the janaf package)."""
    from helpers.thermo import thermo_store

    db = thermo_store(db_url, tmp_path, REVERSIBLE_REACTIONS, REVERSIBLE_EXPRESSIONS)
    outcome = run(db, "review", str(tmp_path / "book"))
    assert outcome.exit_code == 0, outcome.stderr
    page = (tmp_path / "book" / "reactions" / "h-o2.html").read_text(encoding="utf-8")
    assert "Reverse rate by detailed balance" in page
    rate = json.loads(run(db, "rate", "h-o2", "-T", "1000", "--reverse", "--json").stdout)
    (row,) = rate["rates"]
    cells = _table_row(page, "1000")
    assert float(cells[2]) == pytest.approx(row["k_reverse"], rel=1e-3)
    assert cells[3] == "yes"
    irreversible = (tmp_path / "book" / "reactions" / "oh-h2.html").read_text(encoding="utf-8")
    assert "Reverse rate" not in irreversible
    oh = (tmp_path / "book" / "species" / "OH.html").read_text(encoding="utf-8")
    shown = json.loads(run(db, "species", "show", "OH", "-T", "1000", "--json").stdout)
    (props,) = shown["thermochemistry"]["values"]
    cells = _table_row(oh, "1000")
    assert float(cells[1]) == pytest.approx(props["Cp_J_per_mol_K"], rel=1e-3)
    assert float(cells[2]) == pytest.approx(props["H_kJ_per_mol"], rel=1e-3)
    assert float(cells[3]) == pytest.approx(props["S_J_per_mol_K"], rel=1e-3)


def test_a_reversible_reaction_without_thermochemistry_says_why(db_url, tmp_path):
    from helpers.thermo import thermo_store

    db = thermo_store(db_url, tmp_path, REVERSIBLE_REACTIONS, REVERSIBLE_EXPRESSIONS, species=())
    outcome = run(db, "review", str(tmp_path / "book"))
    assert outcome.exit_code == 0, outcome.stderr
    page = (tmp_path / "book" / "reactions" / "h-o2.html").read_text(encoding="utf-8")
    assert "declared reversible, but" in page
    assert "thermochemistry" in page.split("Reverse rate by detailed balance")[1]
    assert "Thermochemistry" not in (tmp_path / "book" / "species" / "OH.html").read_text(
        encoding="utf-8"
    )
