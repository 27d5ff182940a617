"""contours.py on a real coarse solve: the artists plot_deflection, plot_deflection_3d and
plot_utilisation draw.

The slab is the notched panel of plot_scene.py (fixture `notched_result`).
"""
from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from matplotlib.axes import Axes
from matplotlib.collections import TriMesh
from matplotlib.contour import ContourSet
from matplotlib.figure import Figure
from mpl_toolkits.mplot3d.art3d import Poly3DCollection
from plot_scene import new_figure, scale_bar_texts

from hingeline.outputs.contours import (
    NO_LOWER_BOUND_TEXT,
    UTILISATION_LABEL,
    W_RATIO_LABEL,
    plot_deflection,
    plot_deflection_3d,
    plot_utilisation,
)


def test_plot_deflection_contours_labels_and_colour_bar(notched_result):
    fig = new_figure()
    ax = fig.add_subplot()
    assert plot_deflection(notched_result, ax=ax) is ax
    sets = [c for c in ax.collections if isinstance(c, ContourSet)]
    filled = [c for c in sets if c.filled]
    lines = [c for c in sets if not c.filled]
    assert len(filled) == 1 and len(lines) == 1
    assert filled[0].levels[0] == pytest.approx(0.0) and filled[0].levels[-1] == pytest.approx(1.0)
    # the field plotted is w / max(w): its largest value is 1 and it reaches the top band
    assert float(np.max(filled[0].get_array())) > 0.85
    assert len(lines[0].labelTexts) >= 1
    assert all(t.get_text() in {"0.2", "0.4", "0.6", "0.8"} for t in lines[0].labelTexts)
    colour_bars = [a for a in fig.axes if a is not ax]
    assert len(colour_bars) == 1 and colour_bars[0].get_ylabel() == W_RATIO_LABEL
    assert ax.get_aspect() == 1.0
    assert ax.get_xlabel() == "x (m)" and ax.get_ylabel() == "y (m)"
    assert scale_bar_texts(ax) == ["1 m"]
    assert [p for p in ax.patches if p.get_label() == "_opening"], "opening drawn"
    edge_labels = {c.get_label() for c in ax.collections}
    assert {"_edge_simple", "_edge_continuous", "_edge_free", "_opening_edge"} <= edge_labels
    assert f"load factor = {notched_result.load_factor:#.4g}" in ax.get_title()


def test_plot_deflection_makes_its_own_figure(notched_result):
    ax = plot_deflection(notched_result)
    assert isinstance(ax, Axes)
    assert tuple(ax.figure.get_size_inches()) == (7.0, 5.5)
    ax.figure.canvas.draw()                                   # renders without a display


def test_plot_deflection_3d_surface_sags_downward(notched_result):
    ax = plot_deflection_3d(notched_result)
    assert ax.name == "3d"
    surfaces = [c for c in ax.collections if isinstance(c, Poly3DCollection)]
    assert len(surfaces) == 1
    ax.figure.canvas.draw()                                   # projects the facets; no display needed
    assert len(surfaces[0].get_paths()) == len(notched_result.mechanism.triangles)
    # shaded light grey: every facet is a grey (r = g = b), none darker than mid grey
    faces = surfaces[0].get_facecolor()[:, :3]
    assert np.allclose(faces, faces[:, :1]) and faces.min() > 0.3 and faces.max() <= 0.83
    # drawn below the support plane: z from -1 (largest w) to 0, with the axis labelled downward
    lo, hi = ax.get_zlim()
    assert lo == pytest.approx(-1.0) and hi >= 0.0
    assert "w / w_max" in ax.get_zlabel()
    assert [t.get_text() for t in ax.get_zticklabels()] == ["1.0", "0.5", "0"]
    # outline and opening drawn at z = 0
    assert len(ax.lines) == 1 + len(notched_result.model.slab.openings)
    for line in ax.lines:
        assert np.allclose(line.get_data_3d()[2], 0.0)


def test_plot_deflection_3d_uses_given_3d_axes_and_rejects_2d(notched_result):
    fig = new_figure()
    ax3 = fig.add_subplot(1, 2, 1, projection="3d")
    assert plot_deflection_3d(notched_result, ax=ax3) is ax3
    ax2 = fig.add_subplot(1, 2, 2)
    with pytest.raises(ValueError, match="3-D"):
        plot_deflection_3d(notched_result, ax=ax2)


def test_plot_utilisation_shades_the_yield_ratio_with_a_colour_bar(notched_result):
    lb = notched_result.lower_bound
    assert lb is not None and lb.load_factor is not None and lb.field is not None
    fig = new_figure()
    ax = fig.add_subplot()
    assert plot_utilisation(notched_result, ax=ax) is ax
    meshes = [c for c in ax.collections if isinstance(c, TriMesh)]
    assert len(meshes) == 1
    values = np.asarray(meshes[0].get_array())
    t = len(lb.field.triangles)
    assert values.shape == (6 * t,)                             # the 6 node points of every triangle
    assert len(meshes[0].get_paths()) == 4 * t                  # each triangle split into 4
    assert values.min() >= 0.0 and values.max() <= 1.0
    # the lower bound's optimum uses the full capacity somewhere, and the node values lie
    # within the control values the re-check bounds (a quadratic stays in their hull)
    assert values.max() > 0.95
    assert values.max() <= lb.check.yield_ratio + 1e-9
    assert values.min() < 0.5                                   # not a uniform wash
    colour_bars = [a for a in fig.axes if a is not ax]
    assert len(colour_bars) == 1 and colour_bars[0].get_ylabel() == UTILISATION_LABEL
    title = ax.get_title()
    assert f"lower bound {lb.load_factor:#.5g}" in title
    assert f"upper bound {notched_result.load_factor:#.5g}" in title
    assert f"gap {100 * notched_result.gap:.1f} %" in title
    assert scale_bar_texts(ax) == ["1 m"]
    assert {"_edge_simple", "_edge_continuous", "_edge_free", "_opening_edge"} <= {c.get_label() for c in ax.collections}
    fig.canvas.draw()


def test_plot_utilisation_without_lower_bound_draws_the_plan_and_says_so(notched_result):
    bare = dataclasses.replace(notched_result, lower_bound=None)
    ax = plot_utilisation(bare)
    fig = ax.figure
    assert isinstance(fig, Figure) and len(fig.axes) == 1      # no colour bar
    assert not [c for c in ax.collections if isinstance(c, TriMesh)]
    texts = [t for t in ax.texts if NO_LOWER_BOUND_TEXT in t.get_text()]
    assert len(texts) == 1 and texts[0].get_ha() == "center" and texts[0].get_va() == "center"
    assert "lower bound not computed" in ax.get_title()
    assert {"_edge_simple", "_edge_continuous", "_edge_free"} <= {c.get_label() for c in ax.collections}
    fig.canvas.draw()
    # a lower-bound stage that found no field: its reason is shown too
    failed = dataclasses.replace(notched_result, lower_bound=dataclasses.replace(
        notched_result.lower_bound, load_factor=None, field=None, reason="solver stopped"))
    ax = plot_utilisation(failed)
    assert any(NO_LOWER_BOUND_TEXT in t.get_text() and "solver stopped" in t.get_text() for t in ax.texts)
