"""The thermochemistry and Evans-Polanyi commands through the real command line.

Thermochemistry is fitted by ratebank to the NIST-JANAF tables of the janaf package
(helpers/thermo.py); rate numbers are synthetic.
"""

from __future__ import annotations

import builtins
import json
import math

import pytest
from helpers.cli import run, snapshot, write
from helpers.thermo import janaf_row, thermo_store
from scipy import constants

REACTIONS = """key,equation,class,reverse
h-o2,H + O2 -> OH + O,branching,detailed-balance
oh-h2,OH + H2 -> H2O + H,abstraction,
h-o2-m,H + O2 + M -> HO2 + M,recombination,
"""
EXPRESSIONS = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
h-o2,3.5e15,-0.4,72,kJ/mol,cm3/mol/s,300,2500,1.5,synthetic
oh-h2,2.2e8,1.5,14.4,kJ/mol,cm3/mol/s,300,2500,1.3,synthetic
"""
COEFFICIENT_HEADER = (
    "species,T_low_K,T_mid_K,T_high_K,"
    + ",".join(f"low_{i}" for i in range(1, 8))
    + ","
    + ",".join(f"high_{i}" for i in range(1, 8))
    + ",source\n"
)
H_ROW = "H,200,1000,6000," + ",".join(["2.5,0,0,0,0,25473.66,-0.446682853"] * 2) + ",synthetic\n"


@pytest.fixture
def filled(db_url, tmp_path):
    return thermo_store(db_url, tmp_path, REACTIONS, EXPRESSIONS)


@pytest.fixture
def bare(db_url, tmp_path):
    return thermo_store(db_url, tmp_path, REACTIONS, EXPRESSIONS, species=())


def ok(db, *args):
    outcome = run(db, *args)
    assert outcome.exit_code == 0, outcome.stderr
    return outcome


BAD_FILES = [
    pytest.param(
        COEFFICIENT_HEADER + H_ROW.replace("2.5,0,0,", "2.5,0,,", 1),
        "{f}:2: low_3: is empty; expected coefficient a3 of the low-range polynomial",
        id="missing-coefficient",
    ),
    pytest.param(
        COEFFICIENT_HEADER.replace(",low_7", "") + H_ROW.replace(",25473.66,-0.446682853", ",1", 1),
        "{f}:1: low_7: required column is missing from the header",
        id="missing-coefficient-column",
    ),
    pytest.param(
        COEFFICIENT_HEADER + H_ROW.replace("H,200,1000", "H,1000,1000", 1),
        "{f}:2: T_mid_K: 1000 K must be above T_low_K (1000 K): the low range runs from "
        "T_low_K up to T_mid_K",
        id="T_low-not-below-T_mid",
    ),
    pytest.param(
        "species,Hf298_kJ_per_mol,S298_J_per_mol_K,T_K,Cp_J_per_mol_K\n"
        "H2O,-241.826,188.834,1000,41.268\n",
        "{f}:2: T_K: 'H2O' has Cp° at 1 temperature; fitting its polynomials needs Cp° at 4 or "
        "more temperatures spanning the range of use",
        id="cp-table-with-one-temperature",
    ),
    pytest.param(
        COEFFICIENT_HEADER + H_ROW.replace("H,", "XY,", 1),
        "{f}:2: species: unknown species 'XY'; add the species first",
        id="unknown-species",
    ),
]


@pytest.mark.parametrize(("text", "line"), BAD_FILES)
def test_bad_thermochemistry_is_one_clear_line_and_writes_nothing(bare, tmp_path, text, line):
    path = write(tmp_path / "thermo.csv", text)
    before = snapshot(bare)
    outcome = run(bare, "thermo", "import", str(path))
    assert outcome.exit_code == 1
    lines = outcome.stderr.strip().splitlines()
    assert lines == [f"Error: {path}: 1 problem(s), nothing was imported", line.format(f=path)]
    assert snapshot(bare) == before


def test_a_header_of_neither_layout_is_refused(bare, tmp_path):
    path = write(tmp_path / "thermo.csv", "species,source\nH,x\n")
    before = snapshot(bare)
    outcome = run(bare, "thermo", "import", str(path))
    assert outcome.exit_code == 1
    (line,) = outcome.stderr.strip().splitlines()
    assert line.startswith(f"Error: {path}:1: the header does not say which layout")
    assert snapshot(bare) == before


def test_import_dry_run_then_for_real(bare, tmp_path):
    path = write(tmp_path / "thermo.csv", COEFFICIENT_HEADER + H_ROW)
    before = snapshot(bare)
    dry = ok(bare, "thermo", "import", str(path), "--dry-run")
    assert "would store the thermochemistry of 1 species (dry run, nothing written)" in dry.stdout
    assert snapshot(bare) == before
    done = json.loads(ok(bare, "thermo", "import", str(path), "--json").stdout)
    (stored,) = done["stored"]
    assert (done["layout"], stored["species"], stored["method"]) == (
        "coefficients",
        "H",
        "given coefficients",
    )
    listed = json.loads(ok(bare, "thermo", "list", "--json").stdout)
    assert [r["species"] for r in listed] == ["H"]
    assert listed[0]["low"] == [2.5, 0, 0, 0, 0, 25473.66, -0.446682853]


def test_janaf_pairs_and_tables_are_checked(bare):
    before = snapshot(bare)
    wrong = run(bare, "thermo", "janaf", "OH=H-064")
    assert wrong.exit_code == 1
    assert "table H-064 is Water (H2O), formula H2O1(g), which is not 'OH' (HO)" in wrong.stderr
    condensed = run(bare, "thermo", "janaf", "H2O=H-063")
    assert condensed.exit_code == 1 and "not gas" in condensed.stderr
    missing = run(bare, "thermo", "janaf", "OH=X-999")
    assert missing.exit_code == 1
    assert missing.stderr.strip().startswith("Error: no NIST-JANAF table 'X-999'")
    malformed = run(bare, "thermo", "janaf", "OH")
    assert malformed.exit_code == 1
    assert malformed.stderr.strip() == "Error: 'OH' is not SPECIES=TABLE (e.g. OH=H-038)"
    assert snapshot(bare) == before


def test_janaf_not_installed_is_a_clear_error(bare, monkeypatch):
    real_import = builtins.__import__

    def without_janaf(name, *args, **kwargs):
        if name == "janaf":
            raise ModuleNotFoundError("No module named 'janaf'")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", without_janaf)
    before = snapshot(bare)
    outcome = run(bare, "thermo", "janaf", "OH=H-038")
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        "Error: the NIST-JANAF tables come with the optional package 'janaf', which is not "
        "installed; install ratebank with its thermo extra (pip install 'ratebank[thermo]')"
    )
    assert snapshot(bare) == before


def test_species_show_gives_cp_h_and_s(filled):
    """At the default temperatures and at -T ones, against NIST-JANAF table H-038 (OH)."""
    table = ok(filled, "species", "show", "OH")
    assert "Thermochemistry of OH" in table.stdout and "NIST-JANAF table H-038" in table.stdout
    shown = json.loads(ok(filled, "species", "show", "OH", "--json").stdout)
    assert [v["T_K"] for v in shown["thermochemistry"]["values"]] == [
        298.15,
        500.0,
        1000.0,
        1500.0,
        2000.0,
    ]
    chosen = json.loads(ok(filled, "species", "show", "OH", "-T", "1000", "--json").stdout)
    (value,) = chosen["thermochemistry"]["values"]
    assert value["Cp_J_per_mol_K"] == pytest.approx(janaf_row("OH", 1000.0)["Cp"], rel=5e-3)
    assert chosen["name"] == "OH" and chosen["reactions"]


def test_species_show_without_thermochemistry(bare):
    assert json.loads(ok(bare, "species", "show", "OH", "--json").stdout)["thermochemistry"] is None
    assert "none stored" in ok(bare, "species", "show", "OH").stdout


def test_thermo_reaction_in_a_preset(filled):
    """Kc of H + O2 + M -> HO2 + M (Δn = -1) in cm3/molecule for the atmospheric preset is the
    SI value in m3/mol times 1e6 / N_A (worked by hand)."""
    data = json.loads(
        ok(
            filled, "thermo", "reaction", "h-o2-m", "-T", "1000", "--units", "atmospheric", "--json"
        ).stdout
    )
    assert (data["delta_n"], data["Kc_units"]) == (-1, "cm3/molecule")
    (row,) = data["values"]
    assert row["Kc"] == pytest.approx(math.exp(row["ln_Kc_SI"]) * 1e6 / constants.N_A, rel=1e-12)
    table = ok(filled, "thermo", "reaction", "h-o2", "-T", "1000").stdout
    assert "Kc (dimensionless)" in table


def test_thermo_reaction_without_thermochemistry_says_which(bare):
    outcome = run(bare, "thermo", "reaction", "h-o2", "-T", "1000")
    assert outcome.exit_code == 1
    assert outcome.stderr.strip() == (
        "Error: reaction 'h-o2' has no thermochemistry: species H, O, O2, OH have none "
        "(import it first)"
    )


def test_rate_reverse(filled):
    data = json.loads(ok(filled, "rate", "h-o2", "-T", "1000", "--reverse", "--json").stdout)
    assert data["reverse_equation"] == "O + OH -> H + O2"
    (row,) = data["rates"]
    assert row["k_reverse_SI"] * row["Kc_SI"] == pytest.approx(row["k_forward_SI"], rel=1e-12)
    assert data["k_units"] == "cm3/mol/s"
    assert row["k_reverse"] == pytest.approx(row["k_reverse_SI"] * 1e6, rel=1e-12)
    shown = ok(filled, "rate", "oh-h2", "-T", "1000", "--reverse").stdout
    assert "not declared reversible" in shown


def test_set_reverse_and_export_with_reverse_rows(filled, tmp_path):
    ok(filled, "thermo", "set-reverse", "oh-h2", "detailed-balance")
    bad = run(filled, "thermo", "set-reverse", "oh-h2", "both")
    assert bad.exit_code == 1
    assert "unknown reverse rule 'both'; expected one of none, detailed-balance" in bad.stderr
    out = tmp_path / "m"
    ok(filled, "export", str(out), "--reverse-as-fit", "--leave-out-gaps")
    keys = [line.split(",")[0] for line in (out / "mechanism.csv").read_text().splitlines()[1:]]
    assert keys == ["h-o2", "h-o2:reverse", "oh-h2", "oh-h2:reverse"]
    ok(filled, "thermo", "set-reverse", "oh-h2", "none")
    ok(filled, "export", str(out), "--leave-out-gaps")
    descriptor = json.loads((out / "datapackage.json").read_text())
    assert descriptor["ratebank"]["reverse"]["reversible"] == ["h-o2"]


def test_check_lists_the_thermochemistry_checks(filled):
    outcome = run(filled, "check", "--ignore", "ea-below-reaction-enthalpy", "--json")
    assert outcome.exit_code == 1  # h-o2-m has nothing usable
    codes = {f["code"] for f in json.loads(outcome.stdout)["flags"]}
    assert "ea-below-reaction-enthalpy" not in codes


def test_evans_polanyi_commands(filled):
    ok(
        filled,
        "evans-polanyi",
        "set-class",
        "abstraction",
        "45",
        "0.5",
        "--E0-units",
        "kcal/mol",
        "--source",
        "test",
    )
    rules = json.loads(ok(filled, "evans-polanyi", "list", "--units", "si", "--json").stdout)
    assert rules[0]["E0"] == pytest.approx(45 * 4184.0, rel=1e-12)
    assert (rules[0]["alpha"], rules[0]["source"], rules[0]["version"]) == (0.5, "test", 1)
    stale = run(
        filled, "evans-polanyi", "set-class", "abstraction", "40", "0.5", "--expect-version", "3"
    )
    assert stale.exit_code == 1 and "you read version 3" in stale.stderr
    derived = json.loads(ok(filled, "evans-polanyi", "derived", "--json").stdout)
    assert {d["class"]: d["count"] for d in derived} == {"abstraction": 1, "branching": 1}
    assert derived[0]["reason"].startswith("An Evans-Polanyi fit needs at least 2 reactions")
    assert "Evans-Polanyi relations derived" in ok(filled, "evans-polanyi", "derived").stdout
    ok(filled, "evans-polanyi", "clear-class", "abstraction")
    assert json.loads(ok(filled, "evans-polanyi", "list", "--json").stdout) == []
    gone = run(filled, "evans-polanyi", "clear-class", "abstraction")
    assert gone.exit_code == 1
    assert "no Evans-Polanyi relation for class 'abstraction'" in gone.stderr


def test_an_update_import_leaves_the_same_polynomials_and_replaces_changed_ones(bare, tmp_path):
    # H's polynomials for a monatomic ideal gas (Cp = 5/2 R); the update changes a6 only
    first = write(tmp_path / "h.csv", COEFFICIENT_HEADER + H_ROW)
    ok(bare, "thermo", "import", str(first))
    again = ok(bare, "thermo", "import", str(first), "--update")
    assert "stored the thermochemistry of 0 species; 1 unchanged" in again.stdout
    changed = write(tmp_path / "h2.csv", COEFFICIENT_HEADER + H_ROW.replace("25473.66", "25474.0"))
    before = snapshot(bare)
    dry = ok(bare, "thermo", "import", str(changed), "--update", "--dry-run")
    assert "would store the thermochemistry of 1 species, replacing 1" in dry.stdout
    assert snapshot(bare) == before
    ok(bare, "thermo", "import", str(changed), "--update")
    entry = json.loads(ok(bare, "history", "--json", "--limit", "2").stdout)[1]
    assert (entry["action"], entry["target"]) == ("thermo.update", "H")
    assert (entry["detail"]["before"]["low"][5], entry["detail"]["after"]["low"][5]) == (
        25473.66,
        25474.0,
    )
