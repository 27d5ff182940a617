"""drawing.py: figure set-up and the caution footer of drawings written to files."""
from __future__ import annotations

import numpy as np

from hingeline.outputs.drawing import (
    CAUTION_FOOTER,
    FIGURE_SIZE,
    add_caution_footer,
    closed_ring,
    file_figure,
    new_axes,
)
from hingeline.outputs.plan import plot_pattern


def test_new_axes_is_on_its_own_agg_figure():
    ax = new_axes()
    assert tuple(ax.figure.get_size_inches()) == FIGURE_SIZE
    assert type(ax.figure.canvas).__name__ == "FigureCanvasAgg"
    assert new_axes(projection="3d").name == "3d"
    assert new_axes().figure is not ax.figure                    # never a shared, global figure


def test_caution_footer_sits_below_the_drawing(notched_result):
    # the footer must stay readable: below everything the plan draws (legend under the
    # axes included), inside the figure (common practice, no source)
    fig = file_figure()
    ax = fig.add_subplot()
    plot_pattern(notched_result, ax=ax)
    add_caution_footer(fig)
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    footers = [t for t in fig.texts if t.get_text() == CAUTION_FOOTER]
    assert len(footers) == 1
    foot = footers[0].get_window_extent(renderer)
    strip = 0.03 * fig.bbox.height                                # the strip file_figure leaves, pixels
    assert foot.y0 >= 0.0 and foot.y1 <= strip
    assert foot.x0 >= 0.0 and foot.x1 <= fig.bbox.x1
    # the plan, its legend and its colour bar all stay above the strip
    assert min(a.get_tightbbox(renderer).y0 for a in fig.axes) >= strip


def test_closed_ring_repeats_the_first_point():
    ring = closed_ring([[0, 0], [1, 0], [1, 1]])
    assert ring.shape == (4, 2) and np.array_equal(ring[0], ring[-1])
