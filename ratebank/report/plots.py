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

import io
import math
import os
import textwrap
import warnings
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ratebank import safe_output
from ratebank.errors import RatebankError

if TYPE_CHECKING:  # types only: a report module must stay light to import
    from ratebank.services.plot_data import ReactionPlotData, StericClassPoints, StericPlotData

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
#: Size of one panel of ``plot --panels`` when no figure size is given [in].
PANEL_SIZE = (4.6, 3.7)
#: Size of a plot when none is given [in].
DEFAULT_SIZE = (7.0, 5.0)
#: Width a top-axis temperature label needs, with room to spare [in].
_TOP_LABEL_PITCH = 0.55


@contextmanager
def quiet_library() -> Iterator[None]:
    """Keep matplotlib's and numpy's warnings away from the user while drawing.

    A plot that cannot be laid out perfectly is still written; what a library
    says about it (a layout it could not apply, a glyph it lacks) is not the
    user's business, and it must not reach the terminal.
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield


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
    def save(stream: Any) -> None:
        with quiet_library():
            figure.savefig(stream, format=fmt, dpi=dpi)

    safe_output.write_file(path, save, store_path=store_path)


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


def _inverse_thousand(x):  # type: ignore[no-untyped-def]
    """1000/x, with the non-positive part of an axis sent to infinity (its own inverse)."""
    import numpy as np

    x = np.asarray(x, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(x > 0, 1000.0 / np.where(x > 0, x, 1.0), np.inf)


def temperature_ticks(t_span: tuple[float, float], max_labels: int = 8) -> list[float]:
    """Round temperatures [K] to label a 1000/T axis with, no two closer than 1/max_labels.

    >>> temperature_ticks((300.0, 2000.0), 4)
    [300, 400, 600, 1200]
    """
    low, high = t_span
    # nice temperatures crowd at the hot end of a 1/T axis: keep those at least
    # 1/max_labels of the axis apart, from the cold end
    gap = (1000.0 / low - 1000.0 / high) / max(max_labels, 2)
    ticks: list[float] = []
    for t in (t for t in _NICE_TEMPERATURES if low <= t <= high):
        if not ticks or 1000.0 / ticks[-1] - 1000.0 / t >= gap:
            ticks.append(t)
    if len(ticks) < 2:
        ticks = [float(f"{low:.2g}"), float(f"{high:.2g}")]
    return ticks


def _label_temperatures(top: Any, t_span: tuple[float, float], width_in: float) -> None:
    ticks = temperature_ticks(t_span, max(2, min(8, int(width_in / _TOP_LABEL_PITCH))))
    top.set_xticks(ticks)
    top.set_xticklabels([f"{t:g}" for t in ticks])
    top.set_xlabel("T (K)")


def _temperature_axis(axes: Any, t_span: tuple[float, float], width_in: float = 7.0) -> None:
    """A top axis in T [K] for an abscissa of 1000/T, labelled for an axes ``width_in`` wide."""
    top = axes.secondary_xaxis("top", functions=(_inverse_thousand, _inverse_thousand))
    _label_temperatures(top, t_span, width_in)


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
    axes: Any,
    data: Sequence[ReactionPlotData],
    title: str,
    extrapolated: bool,
    width_in: float = 7.0,
    top: Any = None,
    legend: dict[str, Any] | None = None,
    title_y: float | None = None,
    draw_legend: bool = True,
) -> None:
    """Labels, limits, the top temperature axis (``top`` when it exists already) and legend."""
    from matplotlib.lines import Line2D

    axes.set_xlabel("1000/T (K⁻¹)")
    axes.set_ylabel(data[0].k_axis_label)
    low, high = data[0].t_span
    axes.set_xlim(1000.0 / high, 1000.0 / low)
    if top is None:
        _temperature_axis(axes, data[0].t_span, width_in)
    else:
        _label_temperatures(top, data[0].t_span, width_in)
    # a long equation wraps rather than running over its neighbours' titles
    axes.set_title(textwrap.fill(title, max(20, int(width_in * 12))), fontsize="medium", y=title_y)
    axes.grid(True, color="0.9", linewidth=0.6)
    handles, labels = axes.get_legend_handles_labels()
    if extrapolated:
        handles.append(Line2D([], [], linestyle=":", color="0.3"))
        labels.append("dotted: outside the stated T range")
    if not draw_legend:
        return
    # long set names and references wrap instead of widening the legend past the figure
    labels = [textwrap.fill(label, 48) for label in labels]
    placement = legend or {"loc": "best"}
    axes.legend(handles, labels, fontsize="x-small", framealpha=0.85, **placement)


def arrhenius_figure_size(
    count: int, panels: bool, width: float | None = None, height: float | None = None
) -> tuple[float, float]:
    """The figure size [in] of an Arrhenius plot of ``count`` reactions.

    A size given is used as given. Otherwise a single plot is
    :data:`DEFAULT_SIZE`, and ``panels`` grow a grid of :data:`PANEL_SIZE`
    panels with the count (see :func:`panel_grid`).

    >>> arrhenius_figure_size(6, True)
    (13.8, 7.4)
    >>> arrhenius_figure_size(6, True, width=10.0)
    (10.0, 7.4)
    """
    if panels:
        columns, rows = panel_grid(count)
        natural = (round(columns * PANEL_SIZE[0], 3), round(rows * PANEL_SIZE[1], 3))
    else:
        natural = DEFAULT_SIZE
    return (natural[0] if width is None else width, natural[1] if height is None else height)


def panel_grid(count: int) -> tuple[int, int]:
    """(columns, rows) of a grid of ``count`` panels: at most 3 across up to 9, then 4.

    >>> panel_grid(1), panel_grid(4), panel_grid(6), panel_grid(12)
    ((1, 1), (2, 2), (3, 2), (4, 3))
    """
    if count <= 1:
        return 1, 1
    columns = 2 if count <= 4 else 3 if count <= 9 else 4
    return columns, math.ceil(count / columns)


def render_arrhenius(
    data: Sequence[ReactionPlotData],
    path: Path | str,
    *,
    panels: bool = False,
    width: float | None = None,
    height: float | None = None,
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
        One panel per reaction instead of all on one axes; the panels form a
        grid that grows with the count (:func:`panel_grid`).
    width, height : float, optional
        Figure size [in]; default :func:`arrhenius_figure_size`.
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
    width, height = arrhenius_figure_size(len(data), panels, width, height)
    path, fmt, width_px, height_px = check_plot_target(path, width, height, dpi, store_path)
    if not data:
        raise RatebankError("nothing to plot")
    units = sorted({d.k_unit for d in data})
    if len(units) > 1 and not panels:
        raise RatebankError(
            f"these reactions have k in different units ({', '.join(units)}: different "
            "reaction orders) and cannot share one axis; plot them with --panels"
        )
    with quiet_library():
        figure = arrhenius_figure(data, panels=panels, width=width, height=height)
    _write_atomically(figure, path, fmt, dpi, store_path)
    return PlotFile(path, fmt, width_px, height_px, width, height)


def arrhenius_figure(
    data: Sequence[ReactionPlotData], *, panels: bool, width: float, height: float
):  # type: ignore[no-untyped-def]
    """The matplotlib Figure of :func:`render_arrhenius`, drawn but not written."""
    figure = _new_figure(width, height)
    single = len(data) == 1 or panels
    if panels:
        columns, rows = panel_grid(len(data))
        grid = figure.subplots(rows, columns, squeeze=False)
        for index, axes in enumerate(grid.flat):
            if index >= len(data):
                axes.set_visible(False)
                continue
            reaction = data[index]
            extrapolated = _draw_reaction(axes, reaction, _palette(index, True), alone=True)
            _finish_axes(axes, [reaction], reaction.title, extrapolated, width / columns)
    else:
        axes = figure.subplots()
        extrapolated = False
        for index, reaction in enumerate(data):
            extrapolated |= _draw_reaction(
                axes, reaction, _palette(index, single), alone=len(data) == 1
            )
        title = data[0].title if len(data) == 1 else ", ".join(d.key for d in data)
        _finish_axes(axes, data, title, extrapolated, width)
    return figure


# --------------------------------------------------------------------------- steric


def steric_figure_width(classes: int) -> float:
    """A steric plot's width [in] when none is given: room for every class's label.

    >>> steric_figure_width(3), steric_figure_width(12)
    (7.0, 12.3)
    """
    return max(DEFAULT_SIZE[0], round(1.5 + 0.9 * classes, 3))


def render_steric(
    data: StericPlotData,
    path: Path | str,
    *,
    width: float | None = None,
    height: float | None = None,
    dpi: float = 150.0,
    store_path: str | None = None,
) -> PlotFile:
    """Write the distribution of derived steric factors per reaction class (log scale).

    Each reaction is one point; a hollow point uses an estimated diameter. The
    class's geometric mean is a horizontal bar, with its spread (×/÷ the
    spread factor) as an error bar where the class has two reactions or more.
    Points are named when their class has at most :data:`NAMED_POINTS`
    reactions (``steric derived`` lists them all).

    Parameters
    ----------
    data : StericPlotData
        From :func:`ratebank.services.plot_data.steric_plot_data`.
    path : pathlib.Path or str
        Output file ending in ``.png``, ``.svg`` or ``.pdf``.
    width, height : float, optional
        Figure size [in]; by default wide enough for every class
        (:func:`steric_figure_width`) and 5 in high.
    dpi : float, optional
        Resolution [pixels per inch].
    store_path : str or None, optional
        The SQLite store in use, which the plot must never replace.

    Returns
    -------
    PlotFile
        What was written.
    """
    width = steric_figure_width(len(data.classes)) if width is None else width
    height = DEFAULT_SIZE[1] if height is None else height
    path, fmt, width_px, height_px = check_plot_target(path, width, height, dpi, store_path)
    if not data.classes:
        raise RatebankError("no steric factors to plot")
    with quiet_library():
        figure = steric_figure(data, width=width, height=height)
    _write_atomically(figure, path, fmt, dpi, store_path)
    return PlotFile(path, fmt, width_px, height_px, width, height)


#: A class's points are named on the steric plot up to this many reactions.
NAMED_POINTS = 6


def steric_figure(data: StericPlotData, *, width: float, height: float):  # type: ignore[no-untyped-def]
    """The matplotlib Figure of :func:`render_steric`, drawn but not written."""
    figure = _new_figure(width, height)
    axes = figure.subplots()
    _draw_steric(axes, data.classes, data.model, width)
    return figure


def _draw_steric(
    axes: Any, classes: Sequence[StericClassPoints], model: str, width_in: float
) -> None:
    import numpy as np

    axes.set_yscale("log")
    # each legend entry once, however many classes use it
    unused = {
        "given": "reaction (given diameters)",
        "estimated": "reaction (estimated diameter)",
        "mean": "class geometric mean",
        "spread": "class spread (×/÷ exp(s.d. of ln P))",
    }
    for index, group in enumerate(classes):
        count = len(group.keys)
        # spread the points sideways, evenly, so that equal values stay visible
        offsets = np.linspace(-0.25, 0.25, count) if count > 1 else np.zeros(1)
        x = index + offsets
        filled = ~group.uses_estimated_diameter
        if filled.any():
            axes.scatter(
                x[filled],
                group.steric_factor[filled],
                color="tab:blue",
                zorder=3,
                label=unused.pop("given", None),
            )
        if (~filled).any():
            axes.scatter(
                x[~filled],
                group.steric_factor[~filled],
                facecolors="none",
                edgecolors="tab:blue",
                zorder=3,
                label=unused.pop("estimated", None),
            )
        if count <= NAMED_POINTS:
            for i, (xi, value, key) in enumerate(
                zip(x, group.steric_factor, group.keys, strict=True)
            ):
                # alternate above and below, so that neighbours do not print on each other
                axes.annotate(
                    key,
                    (xi, value),
                    xytext=(4, 3 if i % 2 == 0 else -9),
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
            label=unused.pop("mean", None),
        )
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
                label=unused.pop("spread", None),
            )
    axes.axhline(1.0, color="0.5", linestyle=":", linewidth=1.0, label="P = 1")
    axes.set_xticks(range(len(classes)))
    # a label gets its share of the width; longer names wrap onto more lines
    share = max(6, int(width_in / max(len(classes), 1) * 11))
    axes.set_xticklabels(
        [
            textwrap.fill(c.label, share, break_on_hyphens=True) + f"\n(n = {len(c.keys)})"
            for c in classes
        ],
        fontsize="small",
    )
    axes.set_xlim(-0.6, len(classes) - 0.4)
    axes.set_ylabel("steric factor P")
    axes.set_title(f"Steric factors implied by measured fits ({model} collision rate)")
    axes.grid(True, axis="y", which="both", color="0.92", linewidth=0.6)
    axes.legend(fontsize="x-small", loc="best", framealpha=0.85)


# --------------------------------------------------------------------------- the review book


def _svg_text(figure: Any) -> str:
    """The figure as an SVG element to put inline in a page (text kept as text)."""
    from matplotlib import rc_context

    buffer = io.StringIO()
    with rc_context({"svg.fonttype": "none", "svg.hashsalt": "ratebank"}), quiet_library():
        figure.savefig(buffer, format="svg")
    text = buffer.getvalue()
    # the element alone, without the file's XML prologue and its RDF metadata block
    text = text[text.index("<svg") :]
    start, end = text.find("<metadata>"), text.find("</metadata>")
    if 0 <= start < end:
        text = text[:start] + text[end + len("</metadata>") :]
    return text


@dataclass(frozen=True)
class LegendEntry:
    """One legend line of a book plot: a small SVG swatch and its text."""

    swatch: str
    label: str


@dataclass(frozen=True)
class BookPlot:
    """An inline SVG plot and its legend entries."""

    svg: str
    legend: list[LegendEntry]


_SWATCH_OPEN = '<svg class="swatch" width="30" height="12" viewBox="0 0 30 12" aria-hidden="true">'
_DASHES = {"--": "5,3", "-.": "6,2,1.5,2", ":": "1.5,2", "dashed": "5,3", "dotted": "1.5,2"}
_MARKER_SHAPES = {
    "s": '<rect x="11" y="2.5" width="7" height="7" fill="{c}"/>',
    "D": '<polygon points="14.5,1.5 19,6 14.5,10.5 10,6" fill="{c}"/>',
    "^": '<polygon points="14.5,1.5 19,10 10,10" fill="{c}"/>',
    "v": '<polygon points="10,2 19,2 14.5,10.5" fill="{c}"/>',
}


def _swatch(handle: Any) -> str:
    """A 30 x 12 px SVG that looks like ``handle``: a line, a marker or a filled band.

    Built from numbers and colour codes only, so it is safe to put in a page as is.
    """
    from matplotlib.colors import to_hex

    def line(artist: Any) -> str:
        style = artist.get_linestyle()
        if style in ("None", "none", " ", ""):
            return ""
        dash = _DASHES.get(style)
        return (
            f'<line x1="1" y1="6" x2="29" y2="6" stroke="{to_hex(artist.get_color())}" '
            f'stroke-width="{min(float(artist.get_linewidth()), 3.0):.2g}"'
            + (f' stroke-dasharray="{dash}"' if dash else "")
            + "/>"
        )

    def marker(artist: Any) -> str:
        shape = artist.get_marker()
        if shape in (None, "None", "none", ""):
            return ""
        colour = to_hex(artist.get_markerfacecolor())
        template = _MARKER_SHAPES.get(shape, '<circle cx="14.5" cy="6" r="3.5" fill="{c}"/>')
        return template.format(c=colour)

    body = ""
    if hasattr(handle, "lines") and handle.lines:  # an error-bar container
        data_line = handle.lines[0]
        body = (
            f'<line x1="14.5" y1="1" x2="14.5" y2="11" stroke="{to_hex(data_line.get_color())}"'
            ' stroke-width="0.8"/>' + marker(data_line)
        )
    elif hasattr(handle, "get_marker"):  # a line
        body = line(handle) + marker(handle)
    elif hasattr(handle, "get_facecolor"):  # a band
        colour = handle.get_facecolor()
        colour = colour[0] if len(colour) else (0.5, 0.5, 0.5, 0.3)
        alpha = handle.get_alpha()
        opacity = colour[3] if alpha is None else alpha
        body = (
            f'<rect x="1" y="2" width="28" height="8" fill="{to_hex(colour[:3])}" '
            f'fill-opacity="{float(opacity):.2g}"/>'
        )
    return f"{_SWATCH_OPEN}{body}</svg>"


def legend_entries(axes: Any, extrapolated: bool) -> list[LegendEntry]:
    """The legend of ``axes`` as entries, each once, plus the extrapolation note."""
    handles, labels = axes.get_legend_handles_labels()
    entries: list[LegendEntry] = []
    seen: set[str] = set()
    for handle, label in zip(handles, labels, strict=True):
        if label in seen:
            continue
        seen.add(label)
        entries.append(LegendEntry(_swatch(handle), label))
    if extrapolated:
        entries.append(
            LegendEntry(
                f'{_SWATCH_OPEN}<line x1="1" y1="6" x2="29" y2="6" stroke="#4d4d4d" '
                'stroke-width="1.5" stroke-dasharray="1.5,2"/></svg>',
                "dotted: outside the stated T range",
            )
        )
    return entries


class BookFigures:
    """The figures of the review book: one Figure per kind, drawn again for every page.

    Building a Figure, its axes and their ticks costs more than drawing the
    data, so the book keeps one of each and empties it between pages. The
    Arrhenius figure has its legend beside the axes and a fixed layout: the
    pages look alike and no layout engine runs per plot.
    """

    ARRHENIUS_SIZE = (6.4, 4.6)
    STERIC_SIZE = (6.4, 4.6)

    def __init__(self) -> None:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        # no layout engine: with one, every save draws the figure twice
        self._arrhenius = Figure(figsize=self.ARRHENIUS_SIZE)
        FigureCanvasAgg(self._arrhenius)
        # the axes take the left part; the legend sits to their right
        self._axes = self._arrhenius.add_axes((0.11, 0.12, 0.86, 0.7))
        # a few round ticks each way: every tick is a label, a mark and a grid line to draw
        from matplotlib.ticker import MaxNLocator

        self._axes.xaxis.set_major_locator(MaxNLocator(6))
        self._axes.yaxis.set_major_locator(MaxNLocator(6, integer=True))
        # axis labels at fixed places: placing them by the tick labels' extents is a tenth
        # of the drawing
        self._axes.xaxis.set_label_coords(0.5, -0.1)
        self._axes.yaxis.set_label_coords(-0.09, 0.5)
        self._top = self._axes.secondary_xaxis(
            "top", functions=(_inverse_thousand, _inverse_thousand)
        )
        self._top.xaxis.set_label_coords(0.5, 1.1, transform=self._axes.transAxes)
        self._steric = _new_figure(*self.STERIC_SIZE)

    def _empty_arrhenius(self) -> None:
        axes = self._axes
        for artist in [*axes.lines, *axes.collections, *axes.texts, *axes.patches]:
            artist.remove()
        axes.containers.clear()
        legend = axes.get_legend()
        if legend is not None:
            legend.remove()
        axes.relim()
        axes.autoscale(True)

    def arrhenius(self, data: ReactionPlotData) -> BookPlot:
        """One reaction's Arrhenius plot: an inline SVG and its legend for the page.

        Each measured set's markers are one SVG group with the id
        ``measured-points-<i>``, one ``<use>`` element per point. The legend is
        given as entries for the page to show beside the plot (drawing it inside
        the figure would cost a quarter of the time).
        """
        from matplotlib import rc_context

        self._empty_arrhenius()
        axes = self._axes
        # stored text ("$5 lab") is text, not mathematics to typeset
        with quiet_library(), rc_context({"text.parse_math": False}):
            extrapolated = _draw_reaction(axes, data, _palette(0, True), alone=True)
            for index, container in enumerate(axes.containers):
                container.lines[0].set_gid(f"measured-points-{index}")
            _finish_axes(
                axes,
                [data],
                data.title,
                extrapolated,
                width_in=self.ARRHENIUS_SIZE[0] * 0.86,
                top=self._top,
                # a fixed place above the top axis: finding it costs a third of the drawing
                title_y=1.2,
                draw_legend=False,
            )
            entries = legend_entries(axes, extrapolated)
        return BookPlot(_svg_text(self._arrhenius), entries)

    def steric_svg(self, points: StericClassPoints, model: str) -> str:
        """An inline SVG of one class's derived steric factors."""
        figure = self._steric
        figure.clear()
        axes = figure.subplots()
        from matplotlib import rc_context

        with quiet_library(), rc_context({"text.parse_math": False}):
            _draw_steric(axes, [points], model, self.STERIC_SIZE[0])
        return _svg_text(figure)
