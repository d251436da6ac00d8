"""Plot commands: ``plot`` (Arrhenius plots) and ``steric plot`` (steric-factor distributions).

Attach them with :func:`register`. matplotlib is imported by the drawing
functions only, never when this module is imported.
"""

from __future__ import annotations

from pathlib import Path

import typer

from ratebank.cli.common import calls, number, opened_store, say

OUT_OPTION = typer.Option(
    ..., "--out", "-o", help="Output file; .png, .svg or .pdf (the suffix names the format)."
)
WIDTH_OPTION = typer.Option(
    None,
    "--width",
    help="Figure width in inches (default 7; with --panels 4.6 per column; the steric plot "
    "widens with its classes).",
    show_default=False,
    parser=number,
)
HEIGHT_OPTION = typer.Option(
    None,
    "--height",
    help="Figure height in inches (default 5; with --panels 3.7 per row).",
    show_default=False,
    parser=number,
)
DPI_OPTION = typer.Option(
    150.0, "--dpi", help="Resolution; a PNG is width*dpi by height*dpi pixels.", parser=number
)


def register(app: typer.Typer, steric_app: typer.Typer | None = None) -> None:
    """Add ``plot`` to ``app``, and ``plot`` to the ``steric`` group ``steric_app`` when given
    (``ratebank.cli.kinetics`` attaches it to its own group once)."""
    app.command("plot")(plot)
    if steric_app is not None:
        steric_app.command("plot")(steric_plot)


def _written(kind: str, result) -> str:  # type: ignore[no-untyped-def]
    return f"Wrote {kind} to {result.path} ({result.format.upper()}, {result.size_text})."


@calls("plot")
def plot(
    keys: list[str] = typer.Argument(..., help="Reaction keys or equations."),
    out: Path = OUT_OPTION,
    preset: str = typer.Option(
        "combustion", "--units", help="Unit preset of k: combustion, atmospheric or si."
    ),
    k_units: str = typer.Option(
        None, "--k-units", help="Explicit k unit, e.g. cm3/molecule/s (overrides --units)."
    ),
    t_range: tuple[float, float] = typer.Option(
        None,
        "--t-range",
        help="Temperature span TMIN TMAX [K] (default: the data and expression ranges "
        "with a margin).",
        show_default=False,
        parser=number,
    ),
    panels: bool = typer.Option(False, "--panels", help="One panel per reaction."),
    width: float = WIDTH_OPTION,
    height: float = HEIGHT_OPTION,
    dpi: float = DPI_OPTION,
) -> None:
    """Arrhenius plot: log10 k against 1000/T, with T on the top axis.

    Shows the measured points of every set with their error bars, the expression
    that is exported with its uncertainty band (solid inside its T range, dotted
    outside), the other stored expressions dashed, and the hard-sphere collision
    limit of bimolecular reactions.

    Example: ratebank plot oh-ch4 ho2-ho2 --panels -o arrhenius.png --dpi 200
    """
    span = None if not t_range or t_range[0] is None else (t_range[0], t_range[1])
    with opened_store() as store:
        result = store.plot(
            keys, out, preset=preset, k_units=k_units, T_range=span, panels=panels,
            width=width, height=height, dpi=dpi,
        )  # fmt: skip
    data = result.data
    shown = ", ".join(d.key for d in data)
    say(_written(f"the Arrhenius plot of {len(data)} reaction(s) ({shown})", result.file))


@calls("steric_plot")
def steric_plot(
    out: Path = OUT_OPTION,
    collision: str = typer.Option(
        "hard-sphere", "--collision", help="Collision rate model: hard-sphere or lennard-jones."
    ),
    reaction_class: str = typer.Option(None, "--class", help="Only this class."),
    width: float = WIDTH_OPTION,
    height: float = HEIGHT_OPTION,
    dpi: float = DPI_OPTION,
) -> None:
    """Plot the steric factors implied by measured fits, per reaction class (log scale).

    One point per reaction (hollow: an estimated diameter), the class geometric
    mean as a bar with its spread.

    Example: ratebank steric plot -o steric.svg
    """
    with opened_store() as store:
        result = store.steric_plot(
            out, collision=collision, reaction_class=reaction_class,
            width=width, height=height, dpi=dpi,
        )  # fmt: skip
    data = result.data
    say(
        _written(
            f"the steric factors of {data.count} reaction(s) in {len(data.classes)} class(es)",
            result.file,
        )
    )
