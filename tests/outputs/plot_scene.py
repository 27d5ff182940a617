"""The slab the plot tests draw, and small readers of what a plot drew.

The slab is an invented test scenario: a 5 m x 3.6 m panel with a notch (an
L-shape), one small opening, simple and continuous edges and one free edge,
solved on a uniform mesh of 150 nodes (fixture `notched_result` in conftest.py).
"""
from __future__ import annotations

from matplotlib.axes import Axes
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from hingeline.outputs.plan import SCALE_BAR_GID

NOTCHED_PANEL = """\
title = "Plot test: notched panel"
[slab]
outline = [[0.0, 0.0], [5.0, 0.0], [5.0, 2.4], [3.2, 2.4], [3.2, 3.6], [0.0, 3.6]]
edges = ["simple", "simple", "free", "continuous", "simple", "continuous"]
[[slab.opening]]
polygon = [[0.8, 0.8], [1.4, 0.8], [1.4, 1.3], [0.8, 1.3]]
[capacity]
sagging = 16.0
hogging = 20.0
[[load]]
type = "area"
value = 8.0
[analysis]
nodes = 150
"""


def new_figure() -> Figure:
    fig = Figure(figsize=(7.0, 5.5))
    FigureCanvasAgg(fig)
    return fig


def scale_bar_texts(ax: Axes) -> list[str]:
    return [t.get_text() for t in ax.texts if t.get_gid() == SCALE_BAR_GID]
