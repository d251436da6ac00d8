"""Releases and diff through the library: a release exported a week later gives the bytes of
the export made when it was frozen; diff of two releases lists exactly what changed, with
ratios computed here from the Arrhenius formula; a store against its own export is the same.

Every rate number here is synthetic (an invented mechanism).
"""

from __future__ import annotations

import math
import os
import re
from pathlib import Path

import pytest
from helpers.cli import snapshot

import ratebank
from ratebank.errors import BadInputError, ConflictError, NotFoundError
from ratebank.store.expressions import remove_expressions

R = 8.31446261815324  # J/(mol K), CODATA 2018 (exact)

SPECIES = """name,formula
OH,HO
CH4,CH4
CH3,CH3
H2O,H2O
H,H
O2,O2
HO2,HO2
O,O
H2O2,H2O2
N2,N2
"""
REACTIONS = """key,equation
oh-ch4,OH + CH4 -> CH3 + H2O
h2o2-dec,H2O2 -> OH + OH
h-o2-m,H + O2 + M -> HO2 + M
oh-oh-m,OH + OH + M -> H2O2 + M
"""
HEADER = (
    "reaction,form,term,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,"
    "Fc,N,troe_alpha,troe_T3_K,troe_T1_K,troe_T2_K,T_min_K,T_max_K,reference,f298,g_K\n"
)
EXPRESSIONS = HEADER + (
    "oh-ch4,arrhenius,,1.0e-18,2.0,1000,K,cm3/molecule/s,,,,,,,,,,,,200,2000,syn a,1.2,0\n"
    "h2o2-dec,arrhenius,,2.0e13,0,200,kJ/mol,s-1,,,,,,,,,,,,800,1500,syn b,3,0\n"
    "h-o2-m,falloff,,4.65e12,0.44,0,kJ/mol,cm3/mol/s,6.37e20,-1.72,2.19,cm6/mol2/s,troe,,,"
    "0.5,30,90000,90000,300,2500,syn troe,,\n"
    "oh-oh-m,third-body,,6.9e-31,-0.8,0,kJ/mol,cm6/molecule2/s,,,,,,,,,,,,200,400,syn tb,,\n"
)
EFFICIENCIES = "reaction,species,efficiency,source\nh-o2-m,H2O,12,syn\n"
ADDED_REACTION = "key,equation\no-oh,O + OH -> O2 + H\n"
ADDED_EXPRESSION = (
    HEADER + "o-oh,arrhenius,,2.0e-11,0,-100,K,cm3/molecule/s,,,,,,,,,,,,200,400,syn c,,\n"
)


def _write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture
def store(db_url, tmp_path):
    """A store holding a small synthetic mechanism of four reactions (every form kind)."""
    ratebank.init(db_url, author="tester")[0].close()
    with ratebank.open(db_url, author="tester") as opened:
        opened.import_species(_write(tmp_path, "sp.csv", SPECIES))
        opened.import_reactions(_write(tmp_path, "rx.csv", REACTIONS))
        opened.import_expressions(_write(tmp_path, "ex.csv", EXPRESSIONS))
        opened.import_efficiencies(_write(tmp_path, "eff.csv", EFFICIENCIES))
        yield opened


def _expression(store, key: str):
    (found,) = store.expressions(reaction=key)
    return found


def _files(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def _without_created(descriptor: bytes) -> bytes:
    return re.sub(rb'"created": "[^"]*"', b'"created": ""', descriptor)


def _change_after_release(store, tmp_path):
    """A week of curation: A of oh-ch4 doubled, the range of h2o2-dec widened, a reaction
    added, the expression of oh-oh-m removed."""
    e = _expression(store, "oh-ch4")
    store.edit_expression(e.id, expected_version=e.version, A=2.0e-18, k_units="cm3/molecule/s")
    e = _expression(store, "h2o2-dec")
    store.edit_expression(e.id, expected_version=e.version, T_min=600.0)
    store.import_reactions(_write(tmp_path, "rx2.csv", ADDED_REACTION))
    store.import_expressions(_write(tmp_path, "ex2.csv", ADDED_EXPRESSION))
    with store.session(write=True) as session:
        remove_expressions(session, [_expression(store, "oh-oh-m").id])


def test_a_release_exported_a_week_later_gives_the_bytes_of_its_first_export(store, tmp_path):
    first = store.export(tmp_path / "mechanism", preset="si").folder
    made = store.create_release("2026-12", leave_out_gaps=False)
    original = _files(first)
    _change_after_release(store, tmp_path)
    now = store.export(tmp_path / "now", preset="si", leave_out_gaps=True).folder
    assert _files(now)["mechanism.csv"] != original["mechanism.csv"]  # the store did change
    (tmp_path / "later").mkdir()
    again = store.export(tmp_path / "later" / "mechanism", release="2026-12").folder
    reproduced = _files(again)
    assert sorted(reproduced) == sorted(original)
    for name in ("mechanism.csv", "efficiencies.csv", "species.csv"):
        assert reproduced[name] == original[name], name
    assert _without_created(reproduced["datapackage.json"]) == _without_created(
        original["datapackage.json"]
    )
    shown = store.release("2026-12")
    assert (shown.name, shown.created_by, shown.fingerprint) == (
        "2026-12",
        "tester",
        made.fingerprint,
    )
    assert (shown.reactions, shown.rows, shown.efficiencies, shown.species) == (4, 4, 1, 10)
    assert shown.fingerprint.startswith("sha256:") and len(shown.fingerprint) == 71
    assert shown.created_at.tzinfo is not None
    assert set(shown.checks) >= {"clean", "flags", "unchecked", "notes"}
    assert [r.name for r in store.releases()] == ["2026-12"]


def test_a_release_keeps_its_fingerprint_and_a_name_is_used_once(store, tmp_path, db_url):
    first = store.create_release("v1")
    _change_after_release(store, tmp_path)
    before = snapshot(db_url)
    with pytest.raises(ConflictError, match="a release named 'v1' exists already"):
        store.create_release("v1", leave_out_gaps=True)
    assert snapshot(db_url) == before
    second = store.create_release("v2", leave_out_gaps=True)
    assert second.fingerprint != first.fingerprint
    assert store.release("v1").fingerprint == first.fingerprint
    assert [r.name for r in store.releases()] == ["v1", "v2"]


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        ({"preset": "atmospheric"}, "preset does not apply"),
        ({"k_units": "cm3/mol/s"}, "k_units does not apply"),
        ({"form": "arrhenius"}, "form does not apply"),
        ({"reverse_as_fit": True}, "reverse_as_fit does not apply"),
    ],
)
def test_a_release_export_refuses_units_it_was_not_frozen_in(store, tmp_path, arguments, message):
    store.create_release("v1")
    with pytest.raises(BadInputError, match=message):
        store.export(tmp_path / "out", release="v1", **arguments)
    assert not (tmp_path / "out").exists()


def test_refusals_write_nothing(store, tmp_path, db_url):
    before = snapshot(db_url)
    with pytest.raises(NotFoundError, match="no release named 'nope'; the store holds none"):
        store.export(tmp_path / "out", release="nope")
    with pytest.raises(NotFoundError, match="no release named 'nope'"):
        store.release("nope")
    with pytest.raises(BadInputError, match="cannot be 'store'"):
        store.create_release("store")
    with pytest.raises(BadInputError, match="a release needs a name"):
        store.create_release("  ")
    with pytest.raises(NotFoundError, match="'missing' is no release of this store"):
        store.diff("store", "missing")
    with pytest.raises(BadInputError, match=r"temperature -5\.0 K"):
        store.diff("store", "store", temperatures=[-5.0])
    assert snapshot(db_url) == before
    assert not (tmp_path / "out").exists()


def _k(A: float, n: float, Ea: float, T: float) -> float:
    """Modified Arrhenius k = A T^n exp(-Ea/RT) (SI), written out here."""
    return A * T**n * math.exp(-Ea / (R * T))


def test_diff_of_two_releases_lists_every_change(store, tmp_path):
    store.create_release("v1")
    _change_after_release(store, tmp_path)
    store.create_release("v2", leave_out_gaps=True)
    report = store.diff("release:v1", "v2")
    assert (report.a, report.b, report.pressure_bar) == ("release:v1", "release:v2", 1.0)
    assert [(r.key, r.equation) for r in report.added] == [("o-oh", "O + OH -> H + O2")]
    assert [(r.key, r.equation) for r in report.removed] == [("oh-oh-m", "OH + OH + M -> H2O2 + M")]
    assert [c.key for c in report.changed] == ["oh-ch4", "h2o2-dec"]
    oh_ch4, h2o2 = report.changed

    # oh-ch4: A 1e-18 -> 2e-18 cm3/molecule/s (SI: times N_A / 1e6), n 2, Ea 1000 K
    n_a = 6.02214076e23  # mol-1, exact (2019 SI)
    assert [f.field for f in oh_ch4.fields] == ["A"]
    assert oh_ch4.fields[0].before == pytest.approx(1.0e-18 * n_a / 1e6, rel=1e-14)
    assert oh_ch4.fields[0].after == pytest.approx(2.0e-18 * n_a / 1e6, rel=1e-14)
    assert [r.T for r in oh_ch4.ratios] == [200.0, 300.0, 1000.0, 2000.0]
    for at in oh_ch4.ratios:
        expected = _k(2.0e-18, 2.0, 1000 * R, at.T) / _k(1.0e-18, 2.0, 1000 * R, at.T)
        assert at.ratio == pytest.approx(expected, rel=1e-12)
        assert at.factor == pytest.approx(1.2, rel=1e-12)  # g = 0: f(T) = f(298)
        assert at.beyond is True  # ln 2 > ln 1.2
    assert oh_ch4.beyond_uncertainty is True
    assert oh_ch4.in_uncertainties == pytest.approx(math.log(2) / math.log(1.2), rel=1e-12)

    # h2o2-dec: the range 800-1500 K became 600-1500 K; k itself did not change
    assert [(f.field, f.before, f.after) for f in h2o2.fields] == [("T_min_K", 800.0, 600.0)]
    assert [r.T for r in h2o2.ratios] == [600.0, 800.0, 1000.0, 1500.0]
    for at in h2o2.ratios:
        assert at.ratio == pytest.approx(1.0, rel=1e-14)
        assert at.factor == pytest.approx(3.0, rel=1e-12)
        assert at.beyond is False
    assert h2o2.beyond_uncertainty is False


def test_diff_at_chosen_temperatures_and_pressure(store, tmp_path):
    store.create_release("v1")
    _change_after_release(store, tmp_path)
    report = store.diff("v1", "store", temperatures=[500.0, 250.0], pressure=0.1)
    assert report.b == "store" and report.pressure_bar == 0.1
    oh_ch4 = next(c for c in report.changed if c.key == "oh-ch4")
    assert [r.T for r in oh_ch4.ratios] == [250.0, 500.0]
    assert [r.ratio for r in oh_ch4.ratios] == pytest.approx([2.0, 2.0], rel=1e-12)


def test_a_store_against_its_own_export_or_release_is_the_same(store, tmp_path):
    folder = store.export(tmp_path / "mechanism").folder  # combustion units
    store.create_release("v1")
    for a, b in (("store", str(folder)), (str(folder), "store"), ("v1", "store")):
        report = store.diff(a, b)
        assert report.same, (a, b, report)
    reversed_report = store.diff(str(folder / "datapackage.json"), "store")
    assert reversed_report.same


def test_diff_against_another_store(store, tmp_path, other_url):
    with ratebank.init(other_url)[0] as copy:
        copy.import_species(_write(tmp_path, "sp.csv", SPECIES))
        copy.import_reactions(_write(tmp_path, "rx.csv", REACTIONS))
        copy.import_expressions(_write(tmp_path, "ex.csv", EXPRESSIONS))
        copy.import_efficiencies(_write(tmp_path, "eff.csv", EFFICIENCIES))
        copy.import_reactions(_write(tmp_path, "rx2.csv", ADDED_REACTION))
        copy.import_expressions(_write(tmp_path, "ex2.csv", ADDED_EXPRESSION))
        label = copy.address
    report = store.diff("store", other_url)
    assert report.b == label
    assert [r.key for r in report.added] == ["o-oh"]
    assert not report.removed and not report.changed
    assert store.diff(other_url, "store").removed[0].key == "o-oh"


FALLOFF_REACTION = "key,equation\nh-oh-m,H + OH + M -> H2O + M\n"
FALLOFF = HEADER + (
    "h-oh-m,falloff,,1.0e13,0,0,kJ/mol,cm3/mol/s,{A_low},-2,0,cm6/mol2/s,none,,,,,,,"
    "300,3000,{reference},1.5,0\n"
)


def test_diff_of_a_falloff_reaction_at_a_stated_pressure(store, tmp_path):
    store.import_reactions(_write(tmp_path, "rx3.csv", FALLOFF_REACTION))
    store.import_expressions(
        _write(tmp_path, "f1.csv", FALLOFF.format(A_low="1.0e22", reference="syn f1"))
    )
    store.create_release("v1")
    store.import_expressions(
        _write(tmp_path, "f2.csv", FALLOFF.format(A_low="2.0e22", reference="syn f2"))
    )
    newest = max(e.id for e in store.expressions(reaction="h-oh-m"))
    store.recommend("h-oh-m", newest)
    report = store.diff("v1", "store", temperatures=[300.0, 1000.0], pressure=0.5)
    (change,) = report.changed
    assert [f.field for f in change.fields] == ["A_low", "references"]

    def lindemann(A_low_cgs: float, T: float, p: float = 0.5e5) -> float:
        """k = k_inf Pr / (1 + Pr), Pr = k0 [M] / k_inf, [M] = p / (R T) (Lindemann)."""
        k_inf = 1.0e13 * 1e-6  # cm3/mol/s -> m3/mol/s
        k0 = A_low_cgs * T**-2 * 1e-12  # cm6/mol2/s -> m6/mol2/s
        M = p / (R * T)
        Pr = k0 * M / k_inf
        return k_inf * Pr / (1 + Pr)

    for at in change.ratios:
        expected = lindemann(2.0e22, at.T) / lindemann(1.0e22, at.T)
        assert at.ratio == pytest.approx(expected, rel=1e-12)
        assert 1.0 < at.ratio < 2.0  # between the low-pressure and the high-pressure limit
        assert at.beyond is (math.log(expected) > math.log(1.5))
    # at 1 bar the same change is smaller (closer to the high-pressure limit)
    at_one_bar = store.diff("v1", "store", temperatures=[300.0]).changed[0].ratios[0].ratio
    expected = lindemann(2.0e22, 300.0, 1e5) / lindemann(1.0e22, 300.0, 1e5)
    assert at_one_bar == pytest.approx(expected, rel=1e-12)
    assert at_one_bar < change.ratios[0].ratio


@pytest.fixture
def other_url(db_url, tmp_path):
    """Another store: on PostgreSQL when this one is SQLite and a server is configured."""
    from helpers.pg import scratch_schema

    if db_url.startswith("postgresql") or not os.environ.get("RATEBANK_TEST_PG_URL"):
        yield str(tmp_path / "other.db")
        return
    with scratch_schema() as url:
        yield url


def test_a_release_changed_outside_ratebank_is_not_written(store, tmp_path):
    from sqlalchemy import update

    from ratebank.errors import StoreError
    from ratebank.store.models import Release

    store.create_release("v1")
    assert store.release("v1").intact is True
    with store.session(write=True) as session:
        stored = session.get(Release, 1).content
        session.execute(update(Release).values(content=stored.replace("syn a", "syn z")))
    assert store.release("v1").intact is False
    with pytest.raises(StoreError, match="no longer has its fingerprint"):
        store.export(tmp_path / "out", release="v1")
    assert not (tmp_path / "out").exists()
