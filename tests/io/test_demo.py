"""The demo: an invented scenario built, fitted, estimated, checked and exported."""

from __future__ import annotations

from helpers.cli import run


def test_demo_builds_fits_estimates_and_exports(tmp_path):
    db = tmp_path / "demo.db"
    out = tmp_path / "out"
    outcome = run(str(tmp_path / "unused.db"), "demo", "--db", str(db), "--out", str(out))
    assert outcome.exit_code == 0, outcome.stderr
    assert "every rate number in it is synthetic" in outcome.stdout
    assert "Caution:" in outcome.stdout
    for preset in ("combustion", "atmospheric"):
        assert (out / f"mechanism-{preset}" / "mechanism.csv").is_file()
        assert (out / f"mechanism-{preset}" / "datapackage.json").is_file()
    import csv

    with (out / "mechanism-atmospheric" / "mechanism.csv").open(encoding="utf-8") as handle:
        rows = {r["key"]: r for r in csv.DictReader(handle)}
    origins = {r["origin"] for r in rows.values()}
    assert origins == {"measured-fit", "literature", "collision-estimate"}
    assert rows["ho2-ho2"]["origin"] == "collision-estimate"
    assert rows["ho2-ho2"]["steric_factor"] == "0.02"
    # a second run replaces its own store
    again = run(str(tmp_path / "unused.db"), "demo", "--db", str(db), "--out", str(out))
    assert again.exit_code == 0


def test_demo_refuses_to_overwrite_a_store_it_did_not_build(tmp_path):
    db = tmp_path / "precious.db"
    assert run(str(db), "init").exit_code == 0
    outcome = run(str(db), "demo", "--db", str(db), "--out", str(tmp_path / "o"))
    assert outcome.exit_code == 1
    assert "is not a ratebank demo store" in outcome.stderr
    assert db.exists()
