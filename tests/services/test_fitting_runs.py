"""A fit of many reactions and an import of a whole file: the provenance their rows share is
stored once (one ``provenance_run`` each), every reaction stays in the history, and every
reader (the typed rows, the listing, the edit, the export, diff) sees each row's whole
provenance, as if the row held it all."""

from __future__ import annotations

import json
import math

import pytest
from helpers.cli import run, write
from sqlalchemy import select, update

import ratebank
from ratebank.io.export import package_content
from ratebank.services.mechanism import export_units
from ratebank.store import queries
from ratebank.store.listings import expression_summaries
from ratebank.store.models import Expression, ProvenanceRun
from ratebank.store.records import expression_for_edit
from ratebank.store.runs import PARTNERS, RunCache

# SYNTHETIC: invented species and reactions (OH + CyH(y+2) -> H2O + CyH(y+1)), one set of
# five points each, k = A (T/300)^n exp(-E/T) with invented A, n, E and a small made-up
# scatter, so that `auto` takes the three-parameter form for some reactions and not others.
N = 60
T_POINTS = (300.0, 450.0, 700.0, 1000.0, 1400.0)
SCATTER = (0.02, -0.03, 0.01, 0.03, -0.02)

#: The fields of a stored fit's whole provenance (pressures are not stated here).
FIT_FIELDS = {
    "method", "form", "form_reason", "fixed_n", "T_ref", "covariance",
    "covariance_parameters", "absolute_sigma", "reduced_chi_square", "covariance_scale",
    "between_set_variance_ln_k", "n_points", "n_sets", "set_ids", "warnings",
    "steric_factor", "steric_factor_T_K", "steric_factor_model", "partners",
}  # fmt: skip
PARTNER_FIELDS = {
    "species", "molar_mass_kg_per_mol", "diameter_m", "diameter_method",
    "diameter_estimated", "well_depth_K", "well_depth_method", "well_depth_estimated",
    "diameter_and_well_depth_from_different_sources",
}  # fmt: skip


def _keys() -> list[str]:
    return [f"r-{y}" for y in range(1, N + 1)]


def _measurements() -> str:
    lines = ["set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference"]
    for y in range(1, N + 1):
        A, n, E = 1e-12 * (1 + y % 7), (0.0, 1.5, 2.5)[y % 3], 500.0 + 20.0 * y
        for T, scatter in zip(T_POINTS, SCATTER, strict=True):
            k = A * (T / 300.0) ** n * math.exp(-E / T) * (1.0 + scatter)
            lines.append(f"s{y},r-{y},{T},{k:.6e},cm3/molecule/s,0.05,relative,lab {y % 4}")
    return "\n".join(lines) + "\n"


@pytest.fixture
def measured(db_url, tmp_path):
    """A store of N SYNTHETIC bimolecular reactions, each with one measured set."""
    species = ["name,formula,diameter_angstrom,well_depth_K,source"]
    species += [f"C{y}H{h},C{y}H{h},{3.2 + 0.1 * y:.2f},{90 + 4 * y},synthetic"
                for y in range(1, N + 1) for h in (y + 1, y + 2)]  # fmt: skip
    species += ["OH,HO,3.147,79.8,synthetic", "H2O,H2O,2.641,809.1,synthetic"]
    reactions = ["key,equation,class"] + [
        f"r-{y},OH + C{y}H{y + 2} -> H2O + C{y}H{y + 1},synthetic-transfer" for y in range(1, N + 1)
    ]
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "s.csv", "\n".join(species) + "\n"),
        ("reactions", "r.csv", "\n".join(reactions) + "\n"),
        ("data", "m.csv", _measurements()),
    ):
        outcome = run(db_url, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    return db_url


def _views(session, expression_id: int) -> list[dict]:
    """Every reader's view of one expression's provenance."""
    row = queries.expression(session, expression_id)
    summary = next(s for s in expression_summaries(session) if s.id == expression_id)
    loaded = expression_for_edit(session, expression_id)
    return [row.provenance, summary.provenance, loaded.provenance]


def _make_whole(session) -> None:
    """Write each row's whole provenance onto the row itself (no run): the store as if runs
    did not exist."""
    runs = RunCache(session)
    rows = session.execute(select(Expression.id, Expression.provenance, Expression.run_id))
    for expression_id, own, run_id in rows.all():
        session.execute(
            update(Expression)
            .where(Expression.id == expression_id)
            .values(provenance=runs.full(own, run_id), run_id=None)
        )


def test_a_fit_stores_its_common_provenance_once_and_readers_see_it_whole(measured):
    with ratebank.open(measured, author="tester") as store:
        report = store.fit(form="auto")
        stored = {row.key: row for row in report.rows}
        assert {row.status for row in report.rows} == {"stored"} and len(stored) == N
        assert {row.form for row in report.rows} == {"arrhenius", "modified"}
        with store.session() as session:
            (run_row,) = session.query(ProvenanceRun).all()
            assert run_row.action == "fit" and run_row.created_by == "tester"
            common = run_row.content
            assert common["method"].startswith("weighted linear least squares in ln k")
            assert common["covariance_parameters"] == ["ln A", "n", "Ea [J/mol]"]
            # each partner's record once, by species name: OH and the N hydrocarbons
            assert set(common[PARTNERS]) == {"OH"} | {f"C{y}H{y + 2}" for y in range(1, N + 1)}
            for row in report.rows:
                own = session.get(Expression, row.expression_id)
                assert own.run_id == run_row.id
                assert not {"method", "covariance_parameters", PARTNERS} & set(own.provenance)
                # a fit whose form is not the run's keeps its own
                assert ("form" in own.provenance) == (row.form != common["form"])
                assert own.provenance["partners"]["a"] in common[PARTNERS]
                views = _views(session, row.expression_id)
                for provenance in views:
                    assert set(provenance) == FIT_FIELDS
                    assert provenance == views[0]
                whole = views[0]
                assert whole["form"] == row.form and whole["n_points"] == 5
                assert whole["reduced_chi_square"] == pytest.approx(row.reduced_chi_square)
                assert whole["fixed_n"] is None and whole["absolute_sigma"] is True
                names = {whole["partners"]["a"]["species"], whole["partners"]["b"]["species"]}
                assert "OH" in names and len(names) == 2
                for side in ("a", "b"):
                    assert set(whole["partners"][side]) == PARTNER_FIELDS
        # every reaction in the history, naming its expression and the run
        fits = [e for e in store.history(limit=5000) if e.action == "fit"]
        assert sorted(e.target for e in fits) == sorted(_keys())
        for entry in fits:
            assert entry.detail["expression"] == stored[entry.target].expression_id
            assert entry.detail["run"] == run_row.id
        # a second fit of the same data stores nothing and no run
        assert {row.status for row in store.fit(form="auto").rows} == {"unchanged"}
        with store.session() as session:
            assert session.query(ProvenanceRun).count() == 1
    # the command line's listing shows the whole provenance
    listed = run(measured, "expressions", "list", "--reaction", "r-7", "--json")
    (shown,) = json.loads(listed.stdout)
    assert set(shown["provenance"]) == FIT_FIELDS
    assert shown["provenance"]["partners"]["b"]["diameter_m"] == pytest.approx(3.147e-10)


def test_the_export_and_diff_read_a_fit_run_as_whole_rows(measured, tmp_path):
    """The export of a fit stored as a run equals, byte for byte and fingerprint for
    fingerprint, the export of the same rows holding their whole provenance."""
    with ratebank.open(measured, author="tester") as store:
        store.fit(form="auto")
        with store.session() as session:
            as_run = package_content(session, units=export_units("si"), leave_out_gaps=True)
        store.export(tmp_path / "as-run", preset="si", leave_out_gaps=True)
        with store.session(write=True) as session:
            _make_whole(session)
        with store.session() as session:
            assert session.query(Expression).filter(Expression.run_id.is_not(None)).count() == 0
            whole = package_content(session, units=export_units("si"), leave_out_gaps=True)
        assert as_run.fingerprint == whole.fingerprint
        assert list(as_run.table.rows) == list(whole.table.rows)
        store.export(tmp_path / "whole", preset="si", leave_out_gaps=True)
        assert (tmp_path / "as-run" / "mechanism.csv").read_bytes() == (
            tmp_path / "whole" / "mechanism.csv"
        ).read_bytes()
        report = store.diff(str(tmp_path / "as-run"), "store")
        assert not report.added and not report.removed and not report.changed


# --------------------------------------------------------------------------- import

UNITS_ROWS = [
    ("cm3/molecule/s", "kJ/mol"),
    ("cm3/molecule/s", "kJ/mol"),
    ("cm3/mol/s", "K"),  # one row in other units keeps its own
]


def test_an_import_stores_the_file_once_and_readers_see_each_row_whole(measured, tmp_path):
    lines = ["reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference"]
    for y in range(1, N + 1):
        k_units, e_units = UNITS_ROWS[y % 3]
        A = 1e-12 * y if k_units == "cm3/molecule/s" else 6e11 * y
        Ea = 10 + y % 9 if e_units == "kJ/mol" else 1200 + y
        lines.append(f"r-{y},{A:g},0,{Ea},{e_units},{k_units},300,1500,2,review {y % 5}")
    path = write(tmp_path / "lit.csv", "\n".join(lines) + "\n")
    with ratebank.open(measured, author="curator") as store:
        store.import_expressions(path)
        with store.session() as session:
            (run_row,) = session.query(ProvenanceRun).all()
            assert run_row.action == "expressions.import" and run_row.created_by == "curator"
            assert run_row.content["source_file"] == str(path)
            assert run_row.content["given_units"] == {
                "k_units": "cm3/molecule/s",
                "Ea_units": "kJ/mol",
            }
            stored = session.query(Expression).filter(Expression.origin == "literature")
            by_line = {e.id: e for e in stored}
            assert len(by_line) == N
            for expression in by_line.values():
                own = expression.provenance
                assert expression.run_id == run_row.id and "source_file" not in own
                views = _views(session, expression.id)
                for provenance in views:
                    assert provenance == views[0]
                whole = views[0]
                assert set(whole) == {"source_file", "line", "given_units"}
                assert whole["source_file"] == str(path) and whole["line"] == own["line"]
                y = whole["line"] - 1
                k_units, e_units = UNITS_ROWS[y % 3]
                assert whole["given_units"] == {"k_units": k_units, "Ea_units": e_units}
                assert ("given_units" in own) == (k_units != "cm3/molecule/s")
    listed = run(measured, "expressions", "list", "--reaction", "r-2", "--json")
    (shown,) = json.loads(listed.stdout)
    assert shown["provenance"] == {
        "source_file": str(path),
        "line": 3,
        "given_units": {"k_units": "cm3/mol/s", "Ea_units": "K"},
    }
