"""`release create/list/show`, `export --release` and `diff` on the real command line: what
each prints, and every refusal one line with nothing written.

Every rate number here is synthetic (an invented mechanism).
"""

from __future__ import annotations

import json
import math
import re

import pytest
from helpers.cli import run, snapshot, write

R = 8.31446261815324  # J/(mol K), CODATA 2018 (exact)

SPECIES = "name,formula\nOH,HO\nCH4,CH4\nCH3,CH3\nH2O,H2O\nH2O2,H2O2\nO,O\nO2,O2\nH,H\n"
REACTIONS = "key,equation\noh-ch4,OH + CH4 -> CH3 + H2O\nh2o2-dec,H2O2 -> OH + OH\n"
HEADER = "reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,reference,f298,g_K\n"
EXPRESSIONS = HEADER + (
    "oh-ch4,1.0e-18,2.0,1000,K,cm3/molecule/s,200,2000,syn a,1.2,0\n"
    "h2o2-dec,2.0e13,0,200,kJ/mol,s-1,800,1500,syn b,3,0\n"
)
# a week later: a second oh-ch4 expression, recommended, with A tripled and Ea 1100 K
NEWER = HEADER + "oh-ch4,3.0e-18,2.0,1100,K,cm3/molecule/s,200,2000,syn c,1.2,0\n"


def ok(db: str, *args: str):
    outcome = run(db, *args)
    assert outcome.exit_code == 0, outcome.stderr
    return outcome


@pytest.fixture
def store(db_url, tmp_path):
    ok(db_url, "init")
    for command, name, text in (
        ("species", "sp.csv", SPECIES),
        ("reactions", "rx.csv", REACTIONS),
        ("expressions", "ex.csv", EXPRESSIONS),
    ):
        ok(db_url, command, "import", str(write(tmp_path / name, text)))
    return db_url


def _recommend_newer(db: str, tmp_path) -> None:
    ok(db, "expressions", "import", str(write(tmp_path / "newer.csv", NEWER)))
    rows = json.loads(ok(db, "expressions", "list", "--reaction", "oh-ch4", "--json").stdout)
    newest = max(r["id"] for r in rows)
    ok(db, "recommend", "oh-ch4", str(newest))


def test_release_create_list_show(store):
    made = ok(store, "release", "create", "v1")
    assert re.fullmatch(
        r"Release v1: 2 reactions \(2 rows\), 0 efficiencies, 8 species; fingerprint "
        r"sha256:[0-9a-f]{64}\. Write it with: ratebank export OUT --release v1\n",
        made.stdout,
    )
    (listed,) = json.loads(ok(store, "release", "list", "--json").stdout)
    assert listed["name"] == "v1" and listed["fingerprint"] in made.stdout
    assert listed["created_at"].endswith("Z")
    shown = json.loads(ok(store, "release", "show", "v1", "--json").stdout)
    assert (shown["reactions"], shown["rows"], shown["species"], shown["units"]) == (2, 2, 8, "SI")
    assert shown["checks"]["clean"] in (True, False)
    table = ok(store, "release", "show", "v1").stdout
    assert "Release v1" in table and listed["fingerprint"][:20] in table


def test_export_of_a_release_a_week_later(store, tmp_path):
    ok(store, "export", str(tmp_path / "then"), "--preset", "si")
    ok(store, "release", "create", "v1")
    _recommend_newer(store, tmp_path)
    (tmp_path / "later").mkdir()
    ok(store, "export", str(tmp_path / "later" / "then"), "--release", "v1")
    for name in ("mechanism.csv", "efficiencies.csv", "species.csv"):
        assert (tmp_path / "later" / "then" / name).read_bytes() == (
            tmp_path / "then" / name
        ).read_bytes()
    pattern = re.compile(r'"created": "[^"]*"')
    original = pattern.sub("", (tmp_path / "then" / "datapackage.json").read_text())
    again = pattern.sub("", (tmp_path / "later" / "then" / "datapackage.json").read_text())
    assert again == original


def _k(A: float, n: float, Ea_K: float, T: float) -> float:
    """k = A T^n exp(-Ea/(R T)) with Ea given in K (Ea/R), written out here."""
    return A * T**n * math.exp(-Ea_K / T)


def test_diff_text_and_json(store, tmp_path):
    ok(store, "release", "create", "v1")
    _recommend_newer(store, tmp_path)
    outcome = ok(store, "diff", "release:v1", "store", "--json")
    report = json.loads(outcome.stdout)
    assert (report["a"], report["b"], report["added"], report["removed"]) == (
        "release:v1",
        "store",
        [],
        [],
    )
    (changed,) = report["changed"]
    assert changed["key"] == "oh-ch4"
    assert [f["field"] for f in changed["fields"]] == ["A", "Ea", "references"]
    assert [r["T_K"] for r in changed["ratios"]] == [200.0, 300.0, 1000.0, 2000.0]
    for r in changed["ratios"]:
        T = r["T_K"]
        expected = _k(3.0e-18, 2.0, 1100, T) / _k(1.0e-18, 2.0, 1000, T)
        assert r["ratio"] == pytest.approx(expected, rel=1e-12)
        assert r["beyond"] is (abs(math.log(expected)) > math.log(1.2))
    assert changed["beyond_uncertainty"] is True
    text = ok(store, "diff", "v1", "store", "-T", "400").stdout
    assert text.startswith(
        "From release:v1 to store: 0 added, 0 removed, 1 changed (1 beyond the older "
        "uncertainty factor; k compared at 1 bar, efficiency 1)."
    )
    assert "oh-ch4" in text and "400: " in text


def test_a_store_and_its_export_are_the_same(store, tmp_path):
    ok(store, "export", str(tmp_path / "mechanism"))
    outcome = ok(store, "diff", "store", str(tmp_path / "mechanism"))
    assert outcome.stdout.startswith("store and ")
    assert outcome.stdout.rstrip().endswith("hold the same reactions with the same numbers.")


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        (("release", "show", "nope"), "Error: no release named 'nope'; releases: v1\n"),
        (
            ("release", "create", "v1"),
            "Error: a release named 'v1' exists already; a release cannot be replaced or "
            "changed: choose another name; nothing was written\n",
        ),
        (
            ("export", "OUT", "--release", "v1", "--preset", "atmospheric"),
            "Error: a release is written as it was frozen (SI units, modified form); preset "
            "does not apply to it; nothing was written (option --preset)\n",
        ),
        (
            ("diff", "v1", "nowhere"),
            "Error: 'nowhere' is no release of this store, nor a store, nor an exported "
            "package; a side is store, release:NAME, a release's name, a store's path or URL, "
            "or a package folder\n",
        ),
        (
            ("diff", "v1", "store", "-P", "0"),
            "Error: pressure 0.0 bar: expected above 0 (option --pressure)\n",
        ),
    ],
)
def test_refusals_are_one_line_and_write_nothing(store, tmp_path, arguments, message):
    ok(store, "release", "create", "v1")
    before = snapshot(store)
    arguments = tuple(str(tmp_path / "out") if a == "OUT" else a for a in arguments)
    outcome = run(store, *arguments)
    assert outcome.exit_code != 0
    assert outcome.stderr == message
    assert snapshot(store) == before
    assert not (tmp_path / "out").exists()


def test_a_release_with_gaps_is_refused_unless_asked(store, tmp_path):
    ok(
        store,
        "reactions",
        "import",
        str(write(tmp_path / "gap.csv", "key,equation\no-oh,O + OH -> O2 + H\n")),
    )
    before = snapshot(store)
    outcome = run(store, "release", "create", "v1")
    assert outcome.exit_code != 0
    assert outcome.stderr.startswith("Error: ") and outcome.stderr.count("\n") == 1
    assert "o-oh" in outcome.stderr
    assert snapshot(store) == before
    made = ok(store, "release", "create", "v1", "--leave-out-gaps")
    assert made.stdout.startswith("Release v1: 2 reactions (2 rows)")
    assert json.loads(ok(store, "release", "show", "v1", "--json").stdout)["left_out"] == ["o-oh"]
    history = json.loads(ok(store, "history", "--json").stdout)
    assert any(h["action"] == "release.create" and h["target"] == "v1" for h in history)
