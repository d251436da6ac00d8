"""Plots stay readable: panel grids that grow, no overlapping text, no library warnings.

The store is the invented demo scenario (every rate number synthetic). Overlaps
are measured on the drawn figure: the extents matplotlib's renderer gives for
each title, legend and tick label.
"""

from __future__ import annotations

import itertools
import json
import subprocess
import sys

import numpy as np
import pytest
from helpers.cli import run
from PIL import Image

from ratebank.report.plots import (
    PANEL_SIZE,
    arrhenius_figure,
    arrhenius_figure_size,
    steric_figure,
    steric_figure_width,
)
from ratebank.services.plot_data import arrhenius_plot_data, steric_plot_data
from ratebank.services.store_access import open_store

SIX = ["oh-ch4", "h-ch4", "o-ch4", "ho2-ho2", "h-o2", "oh-co"]


@pytest.fixture(scope="module")
def demo_db(tmp_path_factory) -> str:
    folder = tmp_path_factory.mktemp("layout")
    db = str(folder / "demo.db")
    outcome = run(db, "demo", "--out", str(folder / "out"))
    assert outcome.exit_code == 0, outcome.stderr
    return db


def _ratebank(*args: str) -> subprocess.CompletedProcess:
    """The real command in a fresh interpreter, as a user runs it (warnings as they come)."""
    return subprocess.run(
        [sys.executable, "-m", "ratebank", *args], capture_output=True, text=True, timeout=300
    )


def _overlap(a, b) -> bool:  # type: ignore[no-untyped-def]
    """Whether two display-space boxes share more than a pixel each way."""
    return min(a.x1, b.x1) - max(a.x0, b.x0) > 1 and min(a.y1, b.y1) - max(a.y0, b.y0) > 1


def _pairwise_apart(boxes, what: str) -> None:  # type: ignore[no-untyped-def]
    for (i, a), (j, b) in itertools.combinations(enumerate(boxes), 2):
        assert not _overlap(a, b), f"{what} {i} and {j} overlap"


def test_panels_of_six_reactions_grow_a_grid_without_warnings(demo_db, tmp_path):
    out = tmp_path / "six.png"
    result = _ratebank("--db", demo_db, "plot", *SIX, "--panels", "-o", str(out), "--dpi", "80")
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""  # no library warning reaches the user
    width, height = arrhenius_figure_size(6, True)
    assert (width, height) == pytest.approx((3 * PANEL_SIZE[0], 2 * PANEL_SIZE[1]))
    image = Image.open(out)
    assert image.size == (round(width * 80), round(height * 80))
    pixels = np.asarray(image.convert("L"), dtype=float)
    assert pixels.std() > 10.0
    # every panel has ink in it: split the picture into the 3 x 2 grid
    for row in np.array_split(pixels, 2, axis=0):
        for cell in np.array_split(row, 3, axis=1):
            assert (cell < 128).mean() > 0.01


@pytest.mark.parametrize("count", [5, 6, 9, 12])
def test_panel_titles_legends_and_axes_do_not_overlap(demo_db, count):
    reactions = json.loads(run(demo_db, "reactions", "list", "--json").stdout)
    keys = [r["key"] for r in reactions if r["status"] == "measured"][:count]
    assert len(keys) == count
    store = open_store(demo_db)
    try:
        with store.session() as session:
            data = arrhenius_plot_data(session, keys)
    finally:
        store.close()
    width, height = arrhenius_figure_size(count, True)
    figure = arrhenius_figure(data, panels=True, width=width, height=height)
    figure.canvas.draw()
    renderer = figure.canvas.get_renderer()
    panels = [axes for axes in figure.axes if axes.get_visible() and axes.get_title()]
    assert len(panels) == count
    whole = []
    for axes in panels:
        box = axes.get_window_extent(renderer)
        # not collapsed: each plotting area keeps most of an inch each way
        assert box.width > 0.4 * PANEL_SIZE[0] * figure.dpi
        assert box.height > 0.3 * PANEL_SIZE[1] * figure.dpi
        legend = axes.get_legend().get_window_extent(renderer)
        assert legend.x0 >= box.x0 - 1 and legend.x1 <= box.x1 + 1, "legend leaves its panel"
        (top,) = axes.child_axes
        labels = [t.get_window_extent(renderer) for t in top.get_xticklabels() if t.get_text()]
        assert len(labels) >= 2
        _pairwise_apart(labels, "top-axis labels")
        whole.append(axes.get_tightbbox(renderer))
    # each panel with its title, labels, top axis and legend stays clear of the others
    _pairwise_apart(whole, "panels")
    for box in whole:
        assert box.x0 >= -1 and box.x1 <= figure.bbox.x1 + 1
        assert box.y0 >= -1 and box.y1 <= figure.bbox.y1 + 1


def test_steric_plot_class_labels_apart_and_legend_entries_once(demo_db, tmp_path):
    store = open_store(demo_db)
    try:
        with store.session() as session:
            data = steric_plot_data(session)
    finally:
        store.close()
    estimated = [c for c in data.classes if c.uses_estimated_diameter.any()]
    assert len(data.classes) >= 6 and len(estimated) >= 2  # the cases that used to break
    figure = steric_figure(data, width=steric_figure_width(len(data.classes)), height=5.0)
    figure.canvas.draw()
    renderer = figure.canvas.get_renderer()
    (axes,) = figure.axes
    labels = [t.get_window_extent(renderer) for t in axes.get_xticklabels()]
    assert len(labels) == len(data.classes)
    _pairwise_apart(labels, "class labels")
    entries = [t.get_text() for t in axes.get_legend().get_texts()]
    assert len(entries) == len(set(entries)), entries
    assert "reaction (estimated diameter)" in entries
    out = tmp_path / "steric.png"
    result = _ratebank("--db", demo_db, "steric", "plot", "-o", str(out), "--dpi", "60")
    assert result.returncode == 0 and result.stderr == "", result.stderr
    assert Image.open(out).size == (round(steric_figure_width(len(data.classes)) * 60), 300)
