"""Project-wide checks: lint, doctests, layout, help texts, start-up imports."""

from __future__ import annotations

import doctest
import importlib
import json
import pkgutil
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

import ratebank

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = Path(ratebank.__file__).resolve().parent


def _modules() -> list[str]:
    names = []
    for info in pkgutil.walk_packages([str(PACKAGE)], prefix="ratebank."):
        if info.name.startswith(("ratebank._migrations", "ratebank._seed_demo")):
            continue
        if info.name == "ratebank.__main__":
            continue
        names.append(info.name)
    return sorted(names)


@pytest.mark.parametrize("name", _modules())
def test_doctests(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0


def test_science_functions_have_doctests():
    for name in _modules():
        if not name.startswith("ratebank.science.") or name.endswith((".data", ".constants")):
            continue
        module = importlib.import_module(name)
        finder = doctest.DocTestFinder()
        examples = sum(len(t.examples) for t in finder.find(module))
        assert examples > 0, f"{name} has no doctest example"


@pytest.mark.skipif(
    shutil.which("ruff") is None and not (Path(sys.executable).parent / "ruff").exists(),
    reason="ruff is installed with the test extra",
)
@pytest.mark.parametrize("args", [["check"], ["format", "--check"]])
def test_ruff_is_clean(args):
    ruff = Path(sys.executable).parent / "ruff"
    executable = str(ruff) if ruff.exists() else "ruff"
    result = subprocess.run(
        [executable, *args, "ratebank", "migrations", "tests", "seed_demo"],
        cwd=ROOT,
        capture_output=True,
        text=True,
    )
    assert result.returncode == 0, result.stdout + result.stderr


def test_top_level_layout():
    tracked = subprocess.run(["git", "ls-files"], cwd=ROOT, capture_output=True, text=True)
    if tracked.returncode != 0 or not tracked.stdout:
        pytest.skip("not a git checkout")
    top = {line.split("/")[0] for line in tracked.stdout.splitlines()}
    top = {name for name in top if not name.startswith(".")}
    assert top == {
        "README.md",
        "DEVELOPERS.md",
        "pyproject.toml",
        "ratebank",
        "migrations",
        "tests",
        "seed_demo",
    }


def test_ci_runs_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = [b.split("```", 1)[0].strip() for b in readme.split("```\n")[1::2]]
    commands = [line for line in readme.splitlines() if line.startswith("python3 -m venv")]
    assert len(commands) >= 2, blocks
    install_demo, install_test = commands[0], commands[1]
    assert install_demo.endswith("ratebank demo")
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert install_test in ci.splitlines()


def _all_commands():
    from typer.main import get_command

    from ratebank.cli.app import app

    root = get_command(app)
    found = []

    def walk(command, path):
        sub = getattr(command, "commands", None)
        if sub:
            for name, child in sub.items():
                walk(child, [*path, name])
        else:
            found.append((path, command))

    walk(root, [])
    return found


def test_every_command_has_help_with_an_example():
    from typer.testing import CliRunner

    from ratebank.cli.app import app

    commands = _all_commands()
    assert len(commands) >= 14
    runner = CliRunner()
    for path, _command in commands:
        result = runner.invoke(app, [*path, "--help"])
        assert result.exit_code == 0, path
        assert "Example: ratebank" in result.stdout, f"{' '.join(path)} --help has no example"


def test_every_command_is_documented_in_the_readme():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    reference = readme.split("### Commands", 1)[1].split("\n## ", 1)[0]
    missing = [
        " ".join(path) for path, _ in _all_commands() if f"`{' '.join(path)}" not in reference
    ]
    assert missing == []


#: What ``reactions list`` must not import: the numerics, the migrations, the plots, typer's
#: validators (pydantic), the terminal console (JSON draws nothing), the ORM model registry,
#: the validators and the commands and services of other groups.
NOT_FOR_A_LISTING = (
    "numpy",
    "scipy",
    "alembic",
    "matplotlib",
    "pydantic",
    "rich.console",
    "ratebank.store.models",
    "ratebank.store.listings",
    "ratebank.services.validate",
    "ratebank.services.reactions",
    "ratebank.science.units",
    "ratebank.io",
    "ratebank.cli.kinetics",
    "ratebank.cli.plot",
    "ratebank.cli.thermo",
    "ratebank.cli.release",
    "ratebank.cli.review",
    "ratebank.cli.efficiencies",
)


def _one_reaction_store(tmp_path: Path) -> str:
    """The path of a new store holding OH, O, H2O and the reaction oh-oh (SYNTHETIC)."""
    db = str(tmp_path / "s.db")
    store, _ = ratebank.init(db)
    with store:
        for name, formula in (("OH", "HO"), ("O", "O"), ("H2O", "H2O")):
            store.add_species(name, formula)
        store.add_reaction("oh-oh", "OH + OH -> O + H2O")
    return db


def test_listing_does_not_import_what_it_does_not_use(tmp_path):
    db = _one_reaction_store(tmp_path)
    code = f"""
import json, sys
from ratebank.cli.app import app
try:
    app(["--db", {db!r}, "reactions", "list", "--species", "OH", "--json"], prog_name="ratebank")
except SystemExit as stop:
    assert not stop.code, stop.code
print(json.dumps(sorted(sys.modules)), file=sys.stderr)
"""
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    assert [row["key"] for row in json.loads(result.stdout)] == ["oh-oh"]
    loaded = json.loads(result.stderr.splitlines()[-1])
    unwanted = [m for m in loaded if m in NOT_FOR_A_LISTING or m.startswith(_PREFIXES)]
    assert unwanted == []


_PREFIXES = tuple(f"{name}." for name in NOT_FOR_A_LISTING)


#: Commands of the whole job, with what they are given: none builds typer's validators
#: (pydantic), and the fit does its statistics without scipy.
JOB_COMMANDS = (
    (["estimate", "--keep-going", "--steric", "0.1", "--t-range", "300", "2000"], ("pydantic",)),
    (["fit"], ("pydantic", "scipy")),
    (["check", "--ignore", "extrapolation", "--t-range", "300", "2000"], ("pydantic",)),
    (["export", "{out}", "--leave-out-gaps"], ("pydantic",)),
    (["reactions", "show", "oh-oh"], ("pydantic",)),
)


@pytest.mark.parametrize(("command", "not_imported"), JOB_COMMANDS, ids=lambda c: str(c[0]))
def test_the_job_s_commands_do_not_import_typer_s_validators(tmp_path, command, not_imported):
    db = _one_reaction_store(tmp_path)
    args = [arg.replace("{out}", str(tmp_path / "out")) for arg in command]
    code = f"""
import json, sys
from ratebank.cli.app import app
try:
    app(["--db", {db!r}, "--quiet", *{args!r}], prog_name="ratebank")
except SystemExit as stop:
    print("exit", stop.code, file=sys.stderr)
print(json.dumps(sorted(sys.modules)), file=sys.stderr)
"""
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert "Traceback" not in result.stderr, result.stderr
    loaded = json.loads(result.stderr.splitlines()[-1])
    assert "ratebank.cli.common" in loaded  # the command did run through the CLI
    unwanted = [m for m in loaded if m.split(".")[0] in not_imported]
    assert unwanted == []


def test_options_given_without_typer_s_validators_keep_their_meaning(tmp_path):
    from typer.testing import CliRunner

    from ratebank.cli.app import app

    db = str(tmp_path / "s.db")
    runner = CliRunner()
    assert runner.invoke(app, ["--db", db, "init"]).exit_code == 0
    # a bad number is refused in one line naming the option
    bad = runner.invoke(app, ["--db", db, "estimate", "--t-range", "300", "abc"])
    assert bad.exit_code != 0
    assert "Invalid value for '--t-range': 'abc' is not a number" in bad.output
    # a path argument reaches the command as a path: the export writes where it is told
    out = tmp_path / "pkg"
    done = runner.invoke(app, ["--db", db, "export", str(out), "--leave-out-gaps"])
    assert done.exit_code == 0, done.output
    assert (out / "datapackage.json").is_file()
    # a repeatable option keeps every value
    refused = runner.invoke(
        app, ["--db", db, "check", "--ignore", "extrapolation", "--ignore", "x"]
    )
    assert refused.exit_code != 0
    assert "unknown check x" in refused.output


def test_version():
    from typer.testing import CliRunner

    from ratebank.cli.app import app

    result = CliRunner().invoke(app, ["--version"])
    assert result.exit_code == 0
    assert result.stdout.strip() == f"ratebank {ratebank.__version__}"
