"""Drawing the plots of ``ratebank.services.plot_data`` with matplotlib.

matplotlib is imported inside the drawing functions only, so that nothing a
listing imports pays for it. Figures are built with the object interface
(:class:`matplotlib.figure.Figure` on an Agg canvas) rather than pyplot: no
window, no global figure registry to leak into, and no change to the backend
of a notebook that calls these functions.

Every file is written through :mod:`ratebank.safe_output`: drawn into a
staging folder beside the target, then renamed over it, so a failed plot
leaves nothing behind and an earlier file of the same name intact; the store's
own file and non-regular targets (a FIFO, a device) are refused.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ratebank import safe_output
from ratebank.errors import RatebankError

if TYPE_CHECKING:  # types only: a report module must stay light to import
    from ratebank.services.plot_data import ReactionPlotData, StericPlotData

#: File formats a plot can be written in, by suffix.
PLOT_FORMATS = ("png", "svg", "pdf")
#: Largest side of a raster image [px]; far beyond any journal figure, and it keeps
#: a mistyped --dpi from exhausting memory.
MAX_PIXELS = 20000
#: Temperatures [K] the top axis may be labelled with.
_NICE_TEMPERATURES = (
    50, 100, 150, 200, 250, 300, 400, 500, 600, 700, 800, 1000, 1200, 1500, 2000,
    2500, 3000, 4000, 5000, 7000, 10000,
)  # fmt: skip


@dataclass(frozen=True)
class PlotFile:
    """A written plot.

    Attributes
    ----------
    path : pathlib.Path
        The file.
    format : str
        ``png``, ``svg`` or ``pdf``.
    width_px, height_px : int
        Size in pixels at the requested resolution (the raster size of a PNG).
    width_in, height_in : float
        Size [in].
    """

    path: Path
    format: str
    width_px: int
    height_px: int
    width_in: float
    height_in: float

    @property
    def size_text(self) -> str:
        """``300 x 200 px`` for a raster image, ``6 x 4 in`` for a vector one."""
        if self.format == "png":
            return f"{self.width_px} x {self.height_px} px"
        return f"{self.width_in:g} x {self.height_in:g} in"


def plot_format(path: Path) -> str:
    """The format named by a plot file's suffix, or an error naming the accepted ones.

    >>> plot_format(Path("arrhenius.SVG"))
    'svg'
    """
    suffix = path.suffix.lower().lstrip(".")
    if suffix not in PLOT_FORMATS:
        accepted = ", ".join(f".{f}" for f in PLOT_FORMATS[:-1]) + f" or .{PLOT_FORMATS[-1]}"
        raise RatebankError(
            f"cannot write a plot to {str(path)!r}: the file name must end in {accepted} "
            "(the suffix names the format)"
        )
    return suffix


def _check_size(width: float, height: float, dpi: float) -> tuple[int, int]:
    for name, value in (("--width", width), ("--height", height), ("--dpi", dpi)):
        if not (math.isfinite(value) and value > 0):
            raise RatebankError(f"{name} {value:g} must be a number greater than zero")
    width_px, height_px = round(width * dpi), round(height * dpi)
    if max(width_px, height_px) > MAX_PIXELS:
        raise RatebankError(
            f"a {width:g} x {height:g} in figure at {dpi:g} dpi would be {width_px} x "
            f"{height_px} pixels; keep each side under {MAX_PIXELS}"
        )
    if min(width_px, height_px) < 50:
        raise RatebankError(
            f"a {width:g} x {height:g} in figure at {dpi:g} dpi would be only {width_px} x "
            f"{height_px} pixels; make it at least 50 pixels each way"
        )
    return width_px, height_px


def _check_folder(path: Path) -> None:
    folder = path.parent
    if not folder.exists():
        raise RatebankError(f"folder {str(folder)!r} does not exist; create it first")
    if not folder.is_dir():
        raise RatebankError(f"{str(folder)!r} is not a folder; cannot write {path.name} there")
    if path.is_dir():
        raise RatebankError(f"{str(path)!r} is a folder; give a file name ending in .png")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise RatebankError(f"cannot write to folder {str(folder)!r}: Permission denied")


def _write_atomically(
    figure: Any, path: Path, fmt: str, dpi: float, store_path: str | None
) -> None:
    safe_output.write_file(
        path, lambda stream: figure.savefig(stream, format=fmt, dpi=dpi), store_path=store_path
    )


def _new_figure(width: float, height: float):  # type: ignore[no-untyped-def]
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=(width, height), layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def check_plot_target(
    path: Path | str, width: float, height: float, dpi: float, store_path: str | None = None
) -> tuple[Path, str, int, int]:
    """Refuse a plot file that cannot be written, before any work is done.

    Parameters
    ----------
    path : pathlib.Path or str
        Output file; its suffix must be one of :data:`PLOT_FORMATS`.
    width, height : float
        Figure size [in]; positive.
    dpi : float
        Resolution [pixels per inch]; positive.
    store_path : str or None
        The SQLite store in use, which a plot must never replace.

    Returns
    -------
    tuple
        (path, format, width [px], height [px]).

    Raises
    ------
    RatebankError
        For an unknown suffix, an impossible size, a missing folder, the store's
        own file or a target that is not a regular file.
    """
    path = Path(path)
    fmt = plot_format(path)
    width_px, height_px = _check_size(width, height, dpi)
    _check_folder(path)
    safe_output.check_target(path, store_path=store_path)
    return path, fmt, width_px, height_px


# --------------------------------------------------------------------------- Arrhenius


def _temperature_axis(axes: Any, t_span: tuple[float, float]) -> None:
    """A top axis in T [K] for an abscissa of 1000/T."""
    import numpy as np

    def inverse(x):  # type: ignore[no-untyped-def]
        x = np.asarray(x, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(x > 0, 1000.0 / np.where(x > 0, x, 1.0), np.inf)

    top = axes.secondary_xaxis("top", functions=(inverse, inverse))
    low, high = t_span
    # nice temperatures crowd at the hot end of a 1/T axis: keep those at least an
    # eighth of the axis apart, from the cold end
    gap = (1000.0 / low - 1000.0 / high) / 8
    ticks: list[float] = []
    for t in (t for t in _NICE_TEMPERATURES if low <= t <= high):
        if not ticks or 1000.0 / ticks[-1] - 1000.0 / t >= gap:
            ticks.append(t)
    if len(ticks) < 2:
        ticks = [float(f"{low:.2g}"), float(f"{high:.2g}")]
    top.set_xticks(ticks)
    top.set_xticklabels([f"{t:g}" for t in ticks])
    top.set_xlabel("T (K)")


def _split_line(axes: Any, x: Any, y: Any, inside: Any, color: Any, solid: str, **style: Any):  # type: ignore[no-untyped-def]
    """Draw y(x) with ``solid`` style where ``inside`` and dotted where not."""
    import numpy as np

    inner = np.where(inside, y, np.nan)
    # the outer line runs one grid step into the range, so the two parts join
    joined = inside.copy()
    joined[1:] &= inside[:-1]
    joined[:-1] &= inside[1:]
    outer = np.where(joined, np.nan, y)
    label = style.pop("label", None)
    lines = []
    if inside.any():
        lines += axes.plot(x, inner, linestyle=solid, color=color, label=label, **style)
        label = None
    if not inside.all():
        lines += axes.plot(x, outer, linestyle=":", color=color, label=label, **style)
    return lines


def _draw_reaction(axes: Any, data: ReactionPlotData, colors: dict[str, Any], alone: bool) -> bool:
    """Draw one reaction on ``axes``; True if some curve is extrapolated."""
    import numpy as np

    prefix = "" if alone else f"{data.key}: "
    extrapolated = False
    if data.collision_limit is not None:
        limit = data.collision_limit
        axes.plot(
            1000.0 / limit.T,
            np.log10(limit.k),
            linestyle="-.",
            color=colors["limit"],
            linewidth=1.2,
            label=prefix + limit.label,
        )
    for curve in data.others:
        extrapolated |= not curve.inside.all()
        _split_line(
            axes,
            1000.0 / curve.T,
            np.log10(curve.k),
            curve.inside,
            colors["other"],
            "--",
            linewidth=1.0,
            label=prefix + curve.label,
        )
    if data.chosen is not None:
        chosen = data.chosen
        x = 1000.0 / chosen.T
        band = np.isfinite(chosen.k_low) & np.isfinite(chosen.k_high)
        if band.any():
            axes.fill_between(
                x,
                np.log10(np.where(band, chosen.k_low, np.nan)),
                np.log10(np.where(band, chosen.k_high, np.nan)),
                color=colors["chosen"],
                alpha=0.18,
                linewidth=0,
                label=prefix + "uncertainty band (×/÷ f)",
            )
        extrapolated |= not chosen.inside.all()
        _split_line(
            axes,
            x,
            np.log10(chosen.k),
            chosen.inside,
            colors["chosen"],
            "-",
            linewidth=2.0,
            label=prefix + chosen.label,
        )
    markers = "osD^vP*Xh<>"
    for i, points in enumerate(data.sets):
        y = np.log10(points.k)
        low = np.nan_to_num(y - np.log10(points.k_low), nan=0.0)
        high = np.nan_to_num(np.log10(points.k_high) - y, nan=0.0)
        axes.errorbar(
            1000.0 / points.T,
            y,
            yerr=np.vstack([low, high]),
            fmt=markers[i % len(markers)],
            color=colors["sets"][i % len(colors["sets"])],
            markersize=5,
            capsize=2,
            linewidth=0.8,
            label=prefix + points.label,
        )
    return extrapolated


def _palette(index: int, single: bool) -> dict[str, Any]:
    from matplotlib import colormaps

    cycle = [colormaps["tab10"](i) for i in range(10)]
    if single:
        return {"chosen": "black", "other": "0.45", "limit": "tab:red", "sets": cycle}
    own = cycle[index % 10]
    return {"chosen": own, "other": own, "limit": own, "sets": [own]}


def _finish_axes(
    axes: Any, data: Sequence[ReactionPlotData], title: str, extrapolated: bool
) -> None:
    from matplotlib.lines import Line2D

    axes.set_xlabel("1000/T (K⁻¹)")
    axes.set_ylabel(data[0].k_axis_label)
    low, high = data[0].t_span
    axes.set_xlim(1000.0 / high, 1000.0 / low)
    _temperature_axis(axes, data[0].t_span)
    axes.set_title(title, fontsize="medium")
    axes.grid(True, color="0.9", linewidth=0.6)
    handles, labels = axes.get_legend_handles_labels()
    if extrapolated:
        handles.append(Line2D([], [], linestyle=":", color="0.3"))
        labels.append("dotted: outside the stated T range")
    axes.legend(handles, labels, fontsize="x-small", loc="best", framealpha=0.85)


def render_arrhenius(
    data: Sequence[ReactionPlotData],
    path: Path | str,
    *,
    panels: bool = False,
    width: float = 7.0,
    height: float = 5.0,
    dpi: float = 150.0,
    store_path: str | None = None,
) -> PlotFile:
    """Write an Arrhenius plot, log10 k against 1000/T, of one or more reactions.

    Parameters
    ----------
    data : sequence of ReactionPlotData
        From :func:`ratebank.services.plot_data.arrhenius_plot_data`.
    path : pathlib.Path or str
        Output file; the suffix (``.png``, ``.svg`` or ``.pdf``) names the format.
    panels : bool, optional
        One panel per reaction instead of all on one axes.
    width, height : float, optional
        Figure size [in].
    dpi : float, optional
        Resolution [pixels per inch]; a PNG is ``width*dpi`` by ``height*dpi`` pixels.
    store_path : str or None, optional
        The SQLite store in use, which the plot must never replace.

    Returns
    -------
    PlotFile
        What was written.

    Raises
    ------
    RatebankError
        For an unknown suffix, a missing or unwritable folder, an impossible
        size, or reactions whose k units differ on one shared axis.
    """
    path, fmt, width_px, height_px = check_plot_target(path, width, height, dpi, store_path)
    if not data:
        raise RatebankError("nothing to plot")
    units = sorted({d.k_unit for d in data})
    if len(units) > 1 and not panels:
        raise RatebankError(
            f"these reactions have k in different units ({', '.join(units)}: different "
            "reaction orders) and cannot share one axis; plot them with --panels"
        )
    figure = _new_figure(width, height)
    single = len(data) == 1 or panels
    if panels:
        columns = math.ceil(math.sqrt(len(data)))
        rows = math.ceil(len(data) / columns)
        grid = figure.subplots(rows, columns, squeeze=False)
        for index, axes in enumerate(grid.flat):
            if index >= len(data):
                axes.set_visible(False)
                continue
            reaction = data[index]
            extrapolated = _draw_reaction(axes, reaction, _palette(index, True), alone=True)
            _finish_axes(axes, [reaction], reaction.title, extrapolated)
    else:
        axes = figure.subplots()
        extrapolated = False
        for index, reaction in enumerate(data):
            extrapolated |= _draw_reaction(
                axes, reaction, _palette(index, single), alone=len(data) == 1
            )
        title = data[0].title if len(data) == 1 else ", ".join(d.key for d in data)
        _finish_axes(axes, data, title, extrapolated)
    _write_atomically(figure, path, fmt, dpi, store_path)
    return PlotFile(path, fmt, width_px, height_px, width, height)


# --------------------------------------------------------------------------- steric


def render_steric(
    data: StericPlotData,
    path: Path | str,
    *,
    width: float = 7.0,
    height: float = 5.0,
    dpi: float = 150.0,
    store_path: str | None = None,
) -> PlotFile:
    """Write the distribution of derived steric factors per reaction class (log scale).

    Each reaction is one point; a hollow point uses an estimated diameter. The
    class's geometric mean is a horizontal bar, with its spread (×/÷ the
    spread factor) as an error bar where the class has two reactions or more.

    Parameters
    ----------
    data : StericPlotData
        From :func:`ratebank.services.plot_data.steric_plot_data`.
    path : pathlib.Path or str
        Output file ending in ``.png``, ``.svg`` or ``.pdf``.
    width, height : float, optional
        Figure size [in].
    dpi : float, optional
        Resolution [pixels per inch].
    store_path : str or None, optional
        The SQLite store in use, which the plot must never replace.

    Returns
    -------
    PlotFile
        What was written.
    """
    import numpy as np

    path, fmt, width_px, height_px = check_plot_target(path, width, height, dpi, store_path)
    if not data.classes:
        raise RatebankError("no steric factors to plot")
    figure = _new_figure(width, height)
    axes = figure.subplots()
    axes.set_yscale("log")
    mean_label = "class geometric mean"
    spread_label = "class spread (×/÷ exp(s.d. of ln P))"
    for index, group in enumerate(data.classes):
        count = len(group.keys)
        # spread the points sideways, evenly, so that equal values stay visible
        offsets = np.linspace(-0.25, 0.25, count) if count > 1 else np.zeros(1)
        x = index + offsets
        filled = ~group.uses_estimated_diameter
        axes.scatter(
            x[filled],
            group.steric_factor[filled],
            color="tab:blue",
            zorder=3,
            label="reaction (given diameters)" if index == 0 else None,
        )
        if (~filled).any():
            axes.scatter(
                x[~filled],
                group.steric_factor[~filled],
                facecolors="none",
                edgecolors="tab:blue",
                zorder=3,
                label="reaction (estimated diameter)",
            )
        for xi, value, key in zip(x, group.steric_factor, group.keys, strict=True):
            axes.annotate(
                key,
                (xi, value),
                xytext=(4, 3),
                textcoords="offset points",
                fontsize="x-small",
                color="0.3",
            )
        axes.hlines(
            group.geometric_mean,
            index - 0.35,
            index + 0.35,
            color="tab:orange",
            linewidth=2.5,
            zorder=2,
            label=mean_label,
        )
        mean_label = None
        if group.spread_factor is not None:
            axes.errorbar(
                [index],
                [group.geometric_mean],
                yerr=[
                    [group.geometric_mean - group.geometric_mean / group.spread_factor],
                    [group.geometric_mean * group.spread_factor - group.geometric_mean],
                ],
                color="tab:orange",
                capsize=6,
                linewidth=1.0,
                zorder=2,
                label=spread_label,
            )
            spread_label = None
    axes.axhline(1.0, color="0.5", linestyle=":", linewidth=1.0, label="P = 1")
    axes.set_xticks(range(len(data.classes)))
    axes.set_xticklabels(
        [f"{c.label}\n(n = {len(c.keys)})" for c in data.classes], fontsize="small"
    )
    axes.set_xlim(-0.6, len(data.classes) - 0.4)
    axes.set_ylabel("steric factor P")
    axes.set_title(f"Steric factors implied by measured fits ({data.model} collision rate)")
    axes.grid(True, axis="y", which="both", color="0.92", linewidth=0.6)
    axes.legend(fontsize="x-small", loc="best", framealpha=0.85)
    _write_atomically(figure, path, fmt, dpi, store_path)
    return PlotFile(path, fmt, width_px, height_px, width, height)
