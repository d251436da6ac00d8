"""``ratebank plot`` and ``ratebank steric plot`` through a command line of their own.

The commands are attached with ``ratebank.cli.plot.register`` to a fresh app
that carries the global options of the real one, so these tests do not depend
on where the real app registers them. The store is the tests' own: every
diameter, mass, point and expression is invented for these tests.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import typer
from helpers.cli import Outcome, run, snapshot, write
from PIL import Image
from typer.testing import CliRunner

SPECIES_CSV = """name,formula,molar_mass_g_per_mol,diameter_angstrom,diameter_kind,source
OH,HO,17.007,3.15,hard-sphere,invented for the tests
CH4,CH4,16.043,3.76,hard-sphere,invented for the tests
CH3,CH3,15.035,3.80,hard-sphere,invented for the tests
H2O,H2O,18.015,2.64,hard-sphere,invented for the tests
HO2,HO2,33.006,3.46,hard-sphere,invented for the tests
H2O2,H2O2,34.014,3.50,hard-sphere,invented for the tests
O2,O2,31.998,3.47,hard-sphere,invented for the tests
C2H6,C2H6,30.069,4.44,hard-sphere,invented for the tests
"""
REACTIONS_CSV = """key,equation,class,notes
oh-ch4,OH + CH4 -> CH3 + H2O,h-abstraction,
ho2-ho2,HO2 + HO2 -> H2O2 + O2,ho2-self,
h2o2-dec,H2O2 -> OH + OH,decomposition,
ch3-ch3,CH3 + CH3 -> C2H6,recombination,nothing stored for it
"""
POINTS_CSV = """set,reaction,T_K,k,k_units,k_uncertainty,uncertainty_kind,reference
lab-a,oh-ch4,300,6.67e-15,cm3/molecule/s,0.1,relative,invented lab A
lab-a,oh-ch4,350,1.67e-14,cm3/molecule/s,0.1,relative,invented lab A
lab-a,oh-ch4,400,3.37e-14,cm3/molecule/s,0.1,relative,invented lab A
lab-a,oh-ch4,450,5.98e-14,cm3/molecule/s,0.1,relative,invented lab A
lab-b,oh-ch4,800,4.87e11,cm3/mol/s,5e10,absolute,invented lab B
lab-b,oh-ch4,1000,1.14e12,cm3/mol/s,1.2e11,absolute,invented lab B
lab-b,oh-ch4,1200,2.37e12,cm3/mol/s,2.4e11,absolute,invented lab B
"""
EXPRESSIONS_CSV = """reaction,A,n,Ea,Ea_units,k_units,T_min_K,T_max_K,uncertainty_factor,reference
oh-ch4,2.0e-20,2.8,980,K,cm3/molecule/s,250,1500,1.5,invented review
ho2-ho2,,,-4.9,kJ/mol,,250,1000,,invented review
h2o2-dec,2.0e13,0,200,kJ/mol,s-1,800,1500,3,invented review
"""


def plot_app() -> typer.Typer:
    """A fresh app with the real global options, a fresh steric group, and the plot commands."""
    from ratebank.cli import plot as plot_commands
    from ratebank.cli.app import main_options
    from ratebank.cli.common import RatebankGroup

    app = typer.Typer(cls=RatebankGroup, add_completion=False, pretty_exceptions_enable=False)
    app.callback()(main_options)
    steric_app = typer.Typer(no_args_is_help=True)
    app.add_typer(steric_app, name="steric")
    plot_commands.register(app, steric_app)
    return app


def run_plot(db: str, *args: str) -> Outcome:
    """Run ``ratebank --db DB ARGS`` on the plot app and capture its streams."""
    result = CliRunner().invoke(plot_app(), ["--db", db, *args])
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        raise result.exception
    return Outcome(result.exit_code, result.stdout, result.stderr)


@pytest.fixture
def db(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
        ("data", "points.csv", POINTS_CSV),
        ("expressions", "expressions.csv", EXPRESSIONS_CSV),
    ):
        outcome = run(db_url, command, "import", str(write(tmp_path / name, text)))
        assert outcome.exit_code == 0, outcome.stderr
    assert run(db_url, "fit").exit_code == 0
    assert run(db_url, "estimate", "ho2-ho2", "--steric", "0.1").exit_code == 0
    return db_url


@pytest.fixture
def out_dir(tmp_path):
    folder = tmp_path / "plots"
    folder.mkdir()
    return folder


def distinct_colours(path: Path) -> int:
    with Image.open(path) as image:
        pixels = np.asarray(image.convert("RGB")).reshape(-1, 3)
    return len(np.unique(pixels, axis=0))


# --------------------------------------------------------------------------- files


def test_png_has_the_requested_pixel_size_and_is_not_blank(db, out_dir):
    import matplotlib.image

    out = out_dir / "arrhenius.png"
    size = ["--width", "6", "--height", "4", "--dpi", "50"]
    outcome = run_plot(db, "plot", "oh-ch4", "ho2-ho2", "-o", str(out), *size)
    assert outcome.exit_code == 0, outcome.stderr
    assert outcome.stdout == (
        f"Wrote the Arrhenius plot of 2 reaction(s) (oh-ch4, ho2-ho2) to {out} "
        "(PNG, 300 x 200 px).\n"
    )
    with Image.open(out) as image:
        assert image.format == "PNG"
        assert image.size == (300, 200)
    pixels = matplotlib.image.imread(out)
    assert pixels.shape[:2] == (200, 300)
    assert not np.all(pixels[..., :3] == 1.0)  # not all white
    assert distinct_colours(out) > 50
    assert sorted(p.name for p in out_dir.iterdir()) == ["arrhenius.png"]  # no temp file left
    umask = os.umask(0)
    os.umask(umask)
    assert out.stat().st_mode & 0o777 == 0o666 & ~umask  # as any file the user makes


def test_dpi_sets_the_pixel_size(db, out_dir):
    out = out_dir / "big.png"
    size = ["--width", "5", "--height", "3.5", "--dpi", "120"]
    outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out), *size)
    assert outcome.exit_code == 0, outcome.stderr
    with Image.open(out) as image:
        assert image.size == (600, 420)


@pytest.mark.parametrize(("suffix", "header"), [(".svg", b"<?xml"), (".pdf", b"%PDF-")])
def test_svg_and_pdf(db, out_dir, suffix, header):
    out = out_dir / f"arrhenius{suffix}"
    outcome = run_plot(db, "plot", "oh-ch4", "--units", "atmospheric", "-o", str(out))
    assert outcome.exit_code == 0, outcome.stderr
    content = out.read_bytes()
    assert content.startswith(header)
    if suffix == ".svg":
        assert b"<svg" in content[:2000]
    assert outcome.stdout == (
        f"Wrote the Arrhenius plot of 1 reaction(s) (oh-ch4) to {out} "
        f"({suffix.lstrip('.').upper()}, 7 x 5 in).\n"
    )


def test_panels_with_two_reactions(db, out_dir):
    out = out_dir / "panels.png"
    size = ["--width", "8", "--height", "4", "--dpi", "40"]
    outcome = run_plot(db, "plot", "oh-ch4", "h2o2-dec", "--panels", "-o", str(out), *size)
    assert outcome.exit_code == 0, outcome.stderr
    with Image.open(out) as image:
        assert image.size == (320, 160)
    assert distinct_colours(out) > 50


def test_reactions_of_different_orders_need_panels(db, out_dir):
    out = out_dir / "mixed.png"
    before = snapshot(db)
    outcome = run_plot(db, "plot", "oh-ch4", "h2o2-dec", "-o", str(out))
    assert outcome.exit_code == 1
    assert outcome.stderr == (
        "Error: these reactions have k in different units (cm3/mol/s, s-1: different reaction "
        "orders) and cannot share one axis; plot them with --panels\n"
    )
    assert list(out_dir.iterdir()) == []
    assert snapshot(db) == before


def test_t_range_and_k_units_options(db, out_dir):
    out = out_dir / "range.png"
    options = ["--t-range", "200", "3000", "--k-units", "cm3/molecule/s", "--dpi", "40"]
    outcome = run_plot(db, "plot", "oh-ch4", *options, "-o", str(out))
    assert outcome.exit_code == 0, outcome.stderr
    assert out.exists()


def test_an_existing_file_is_replaced(db, out_dir):
    out = out_dir / "again.png"
    out.write_bytes(b"old content")
    out.chmod(0o640)
    outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out), "--dpi", "40")
    assert outcome.exit_code == 0, outcome.stderr
    assert out.read_bytes().startswith(b"\x89PNG")
    assert out.stat().st_mode & 0o777 == 0o640
    assert sorted(p.name for p in out_dir.iterdir()) == ["again.png"]


def test_steric_plot(db, out_dir):
    out = out_dir / "steric.png"
    size = ["--width", "5", "--height", "4", "--dpi", "60"]
    outcome = run_plot(db, "steric", "plot", "-o", str(out), *size)
    assert outcome.exit_code == 0, outcome.stderr
    assert outcome.stdout == (
        f"Wrote the steric factors of 1 reaction(s) in 1 class(es) to {out} (PNG, 300 x 240 px).\n"
    )
    with Image.open(out) as image:
        assert image.size == (300, 240)
    assert distinct_colours(out) > 20


def test_steric_plot_svg(db, out_dir):
    out = out_dir / "steric.svg"
    assert run_plot(db, "steric", "plot", "-o", str(out)).exit_code == 0
    assert out.read_bytes().startswith(b"<?xml")


# --------------------------------------------------------------------------- errors


@pytest.mark.parametrize(
    ("args", "target", "message"),
    [
        (
            ["plot", "nope"],
            "out.png",
            "Error: no reaction with key 'nope' in the store",
        ),
        (
            ["plot", "oh-ch4"],
            "out.jpg",
            "Error: cannot write a plot to '{path}': the file name must end in .png, .svg or "
            ".pdf (the suffix names the format)",
        ),
        (
            ["steric", "plot"],
            "out.jpg",
            "Error: cannot write a plot to '{path}': the file name must end in .png, .svg or "
            ".pdf (the suffix names the format)",
        ),
        (
            ["plot", "oh-ch4"],
            "missing/out.png",
            "Error: folder '{folder}' does not exist; create it first",
        ),
        (
            ["plot", "oh-ch4"],
            "a-file.txt/out.png",
            "Error: '{folder}' is not a folder; cannot write out.png there",
        ),
        (
            ["plot", "ch3-ch3"],
            "out.png",
            "Error: nothing to plot for 'ch3-ch3': no measured points and no complete "
            "expression (import data, fit, estimate or import an expression first)",
        ),
        (
            ["plot", "oh-ch4", "--t-range", "900", "300"],
            "out.png",
            "Error: t_range 900 300 must be two temperatures above 0 K, the lower first "
            "(option --t-range)",
        ),
        (
            ["plot", "oh-ch4", "--dpi", "0"],
            "out.png",
            "Error: --dpi 0 must be a number greater than zero",
        ),
        (
            ["plot", "oh-ch4", "--width", "300", "--dpi", "100"],
            "out.png",
            "Error: a 300 x 5 in figure at 100 dpi would be 30000 x 500 pixels; keep each side "
            "under 20000",
        ),
        (
            ["plot", "oh-ch4", "--units", "cgs"],
            "out.png",
            "Error: unknown unit preset 'cgs'; expected one of combustion, atmospheric, si",
        ),
        (
            ["steric", "plot", "--class", "ho2-self"],
            "out.png",
            "Error: no steric factors to plot: no bimolecular reaction of class 'ho2-self' has "
            "a measured fit and collision data (import measurements and diameters, then fit "
            "them)",
        ),
    ],
)
def test_errors_are_one_line_and_leave_no_file(db, out_dir, args, target, message):
    (out_dir / "a-file.txt").write_text("not a folder")
    out = out_dir / target
    before_files = sorted(out_dir.rglob("*"))
    before = snapshot(db)
    outcome = run_plot(db, *args, "-o", str(out))
    assert outcome.exit_code == 1
    assert outcome.stderr == message.format(path=out, folder=out.parent) + "\n"
    assert outcome.stdout == ""
    assert not out.exists()
    assert sorted(out_dir.rglob("*")) == before_files
    assert snapshot(db) == before


@pytest.mark.skipif(os.geteuid() == 0, reason="root may write into a read-only folder")
def test_unwritable_folder(db, out_dir):
    out_dir.chmod(0o500)
    try:
        outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out_dir / "out.png"))
    finally:
        out_dir.chmod(0o700)
    assert outcome.exit_code == 1
    assert outcome.stderr == f"Error: cannot write to folder '{out_dir}': Permission denied\n"
    assert list(out_dir.iterdir()) == []


def test_folder_without_write_permission_is_refused_before_reading_the_store(
    db, out_dir, monkeypatch
):
    # root writes anywhere, so the refusal of the permission check is simulated
    real_access = os.access
    monkeypatch.setattr(
        os, "access", lambda path, mode: False if mode & os.W_OK else real_access(path, mode)
    )
    outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out_dir / "out.png"))
    assert outcome.exit_code == 1
    assert outcome.stderr == f"Error: cannot write to folder '{out_dir}': Permission denied\n"
    assert list(out_dir.iterdir()) == []


def test_a_folder_that_refuses_the_temporary_file(db, out_dir, monkeypatch):
    real_open, real_mkdir = os.open, os.mkdir

    def inside(path) -> bool:
        return out_dir in Path(path).parents

    def refuse_open(path, flags, *args, **kwargs):
        if inside(path) and flags & os.O_CREAT:
            raise PermissionError(13, "Permission denied")
        return real_open(path, flags, *args, **kwargs)

    def refuse_mkdir(path, *args, **kwargs):
        if inside(path):
            raise PermissionError(13, "Permission denied")
        return real_mkdir(path, *args, **kwargs)

    monkeypatch.setattr(os, "open", refuse_open)
    monkeypatch.setattr(os, "mkdir", refuse_mkdir)
    out = out_dir / "out.png"
    outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out))
    assert outcome.exit_code == 1
    # the path is named, whatever the operating system refused
    assert outcome.stderr == f"Error: Permission denied: writing {out}; nothing was written\n"
    assert list(out_dir.iterdir()) == []


def test_a_failure_while_writing_leaves_nothing(db, out_dir, monkeypatch):
    from matplotlib.figure import Figure

    def fail_half_way(self, stream, **kwargs):
        stream.write(b"\x89PNG half a file")
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(Figure, "savefig", fail_half_way)
    out = out_dir / "full.png"
    out.write_bytes(b"the earlier plot")
    outcome = run_plot(db, "plot", "oh-ch4", "-o", str(out))
    assert outcome.exit_code == 1
    assert outcome.stderr == f"Error: No space left on device: writing {out}; nothing was written\n"
    # the earlier file is untouched and no temporary file is left beside it
    assert out.read_bytes() == b"the earlier plot"
    assert sorted(p.name for p in out_dir.iterdir()) == ["full.png"]


# --------------------------------------------------------------------------- help, imports


@pytest.mark.parametrize("path", [["plot"], ["steric", "plot"]])
def test_help_ends_with_an_example(path):
    result = CliRunner().invoke(plot_app(), [*path, "--help"])
    assert result.exit_code == 0
    assert "Example: ratebank " + " ".join(path) in result.stdout


def test_listing_and_help_do_not_import_matplotlib(db_url):
    assert run(db_url, "init").exit_code == 0
    code = f"""
import sys
import typer
from ratebank.cli import plot as plot_commands
from ratebank.cli.app import app, main_options
from ratebank.cli.common import RatebankGroup
import ratebank.report.plots, ratebank.services.plot_data

local = typer.Typer(cls=RatebankGroup)
local.callback()(main_options)
steric = typer.Typer()
local.add_typer(steric, name="steric")
plot_commands.register(local, steric)
for target, args in ((app, ["reactions", "list", "--json"]), (local, ["plot", "--help"])):
    try:
        target(["--db", {db_url!r}, *args], standalone_mode=False)
    except SystemExit:
        pass
print("AFTER LISTING", sorted(n for n in sys.modules if n.split(".")[0] == "matplotlib")[:3])
try:
    local(["--db", {db_url!r}, "plot", "nope", "-o", "x.png"], standalone_mode=False)
except SystemExit:
    pass
from ratebank.report.plots import _new_figure
_new_figure(2, 2)
print("AFTER DRAWING", "matplotlib" in sys.modules)
"""
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    assert "AFTER LISTING []" in result.stdout, result.stdout
    # the check can see matplotlib once something draws
    assert "AFTER DRAWING True" in result.stdout, result.stdout
