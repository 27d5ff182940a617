"""plan.py on a real coarse solve: the artists plot_pattern draws, and the scale bar.

The notched panel (plot_scene.py) for the scale bar; a square slab with a column, a zone
and each kind of load for the plan's fixed items.
"""
from __future__ import annotations

import numpy as np
import pytest
from matplotlib.patches import Rectangle
from plot_scene import scale_bar_texts

from hingeline import model_from_toml, solve
from hingeline.outputs.plan import SCALE_BAR_GID, plot_pattern, scale_bar_length


@pytest.mark.parametrize("size, length", [(6.0, 1.0), (5.0, 1.0), (12.0, 2.0), (30.0, 5.0), (3.0, 0.5),
                                          (4.9, 0.5), (60.0, 10.0), (0.9, 0.1)])
def test_scale_bar_length_is_round_and_at_most_a_fifth(size, length):
    assert scale_bar_length(size) == pytest.approx(length)


def test_plot_pattern_has_a_scale_bar_in_m(notched_result):
    ax = plot_pattern(notched_result)
    assert scale_bar_texts(ax) == ["1 m"]                      # 5 m slab -> 1 m bar
    blocks = [p for p in ax.patches if isinstance(p, Rectangle) and p.get_gid() == SCALE_BAR_GID]
    assert len(blocks) == 2
    assert sum(b.get_width() for b in blocks) == pytest.approx(1.0)   # drawn in data units, m
    # one black and one white block, so it reads in black and white
    faces = sorted(tuple(np.round(b.get_facecolor()[:3], 3)) for b in blocks)
    assert faces == [(0.0, 0.0, 0.0), (1.0, 1.0, 1.0)]
    # below the slab and inside the axes limits
    outline = np.asarray(notched_result.model.slab.outline)
    y_top = max(b.get_y() + b.get_height() for b in blocks)
    assert y_top < outline[:, 1].min()
    assert ax.get_ylim()[0] < min(b.get_y() for b in blocks)
    assert ax.get_xlabel() == "x (m)" and ax.get_ylabel() == "y (m)"


def test_plan_draws_supports_zones_and_loads():
    # Columns and walls, zones, patches, line and point loads each leave their own artist.
    r = solve(model_from_toml("""
[slab]
outline = [[0, 0], [5, 0], [5, 4], [0, 4]]
edges = "simple"
[[column]]
at = [2.5, 2.0]
size = [0.3, 0.3]
[[zone]]
name = "band"
polygon = [[2.0, 0.0], [3.0, 0.0], [3.0, 4.0], [2.0, 4.0]]
sagging = 20.0
[capacity]
sagging = 10.0
[[load]]
type = "area"
value = 2.0
region = [[0.5, 0.5], [1.5, 0.5], [1.5, 1.5], [0.5, 1.5]]
[[load]]
type = "line"
value = 3.0
path = [[3.5, 1.0], [4.5, 3.0]]
[[load]]
type = "point"
value = 5.0
at = [1.0, 3.0]
[analysis]
nodes = 150
"""))
    ax = plot_pattern(r)
    labels = {a.get_label() for a in [*ax.patches, *ax.lines]}
    assert {"_support", "_zone", "_load_patch", "_line_load", "_point_load"} <= labels
    assert "band" in {t.get_text() for t in ax.texts}
