"""Rate-law forms from the command line: imports of forms and efficiencies, rate at a
pressure; every refusal one line, nothing written."""

from __future__ import annotations

import json

import pytest
from helpers.cli import run, snapshot, write
from helpers.data import (
    FORMS_EFFICIENCIES_CSV,
    FORMS_EXPRESSIONS_CSV,
    FORMS_REACTIONS_CSV,
    FORMS_SPECIES_CSV,
    REACTIONS_CSV,
    SPECIES_CSV,
)


@pytest.fixture
def cli():
    return run


@pytest.fixture
def forms_db(db_url, cli, tmp_path):
    assert cli(db_url, "init").exit_code == 0
    for kind, name, text in (
        ("species", "s.csv", SPECIES_CSV),
        ("species", "s2.csv", FORMS_SPECIES_CSV),
        ("reactions", "r.csv", REACTIONS_CSV),
        ("reactions", "r2.csv", FORMS_REACTIONS_CSV),
        ("expressions", "x.csv", FORMS_EXPRESSIONS_CSV),
        ("efficiencies", "e.csv", FORMS_EFFICIENCIES_CSV),
    ):
        result = cli(db_url, kind, "import", str(write(tmp_path / name, text)))
        assert result.exit_code == 0, result.stderr
    return db_url


def test_forms_are_listed_and_the_reaction_shows_its_efficiencies(forms_db, cli):
    listed = json.loads(cli(forms_db, "expressions", "list", "--json").stdout)
    forms = {e["reaction"]: e["form"] for e in listed}
    assert forms == {
        "h-o2-m": "falloff",
        "oh-co": "sum",
        "c2h5-m": "falloff",
        "oh-oh-m": "third-body",
    }
    falloff = next(e for e in listed if e["reaction"] == "h-o2-m")
    assert (falloff["k_units"], falloff["k_low_units"]) == ("cm3/mol/s", "cm6/mol2/s")
    assert falloff["A_low"] == pytest.approx(6.37e20, rel=1e-12)
    shown = json.loads(cli(forms_db, "reactions", "show", "h-o2-m", "--json").stdout)
    assert {e["species"]: e["efficiency"] for e in shown["efficiencies"]} == {
        "H2O": 12.0,
        "Ar": 0.5,
    }
    table = cli(forms_db, "efficiencies", "list", "--reaction", "oh-oh-m").stdout
    assert "H2O" in table and "counts 1" in table


def test_rate_at_a_pressure_prints_the_parts_of_a_falloff(forms_db, cli):
    result = cli(forms_db, "rate", "h-o2-m", "-T", "300", "-P", "1", "--bath", "N2", "--json")
    assert result.exit_code == 0, result.stderr
    record = json.loads(result.stdout)
    assert record["form"] == "falloff" and record["pressure_units"] == "bar"
    assert set(record["rates"][0]) >= {"k", "k0", "k_inf", "Pr", "F"}
    table = cli(forms_db, "rate", "h-o2-m", "-T", "300", "-P", "100", "--pressure-units", "Torr")
    assert "Pr" in table.stdout and "100 Torr" in table.stdout


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["rate", "h-o2-m", "-T", "300"], "give a pressure (option --pressure)"),
        (["rate", "h-o2-m", "-T", "300", "-P", "1", "--pressure-units", "psi"], "psi"),
        (["rate", "h-o2-m", "-T", "300", "-P", "1", "--mixture", "N2:0.5"], "sum to 0.5"),
    ],
)
def test_bad_rate_requests_are_one_line(forms_db, cli, args, message):
    result = cli(forms_db, *args)
    assert result.exit_code != 0
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: ") and message in lines[0]
    assert "Traceback" not in result.stderr + result.stdout


@pytest.mark.parametrize(
    ("kind", "text", "message"),
    [
        (
            "expressions",
            "reaction,form,A,Ea,Ea_units,k_units\noh-co,spiral,1e-12,0,K,cm3/molecule/s\n",
            "form: 'spiral' is not one of",
        ),
        (
            "expressions",
            "reaction,form,A,Ea,Ea_units,k_units\nh-o2-m,falloff,1e-12,0,K,cm3/molecule/s\n",
            "A_low: is empty",
        ),
        (
            "efficiencies",
            "reaction,species,efficiency\nh-o2-m,N2,-2\n",
            "efficiency: -2 is below 0",
        ),
        (
            "efficiencies",
            "reaction,species,efficiency\nh-o2-m,Kr,2\n",
            "species: species 'Kr' is not in the store",
        ),
    ],
)
def test_bad_imports_say_where_and_write_nothing(forms_db, cli, tmp_path, kind, text, message):
    before = snapshot(forms_db)
    result = cli(forms_db, kind, "import", str(write(tmp_path / "bad.csv", text)))
    assert result.exit_code != 0
    assert f"bad.csv:2: {message}" in result.stderr
    assert "Traceback" not in result.stderr
    assert snapshot(forms_db) == before
