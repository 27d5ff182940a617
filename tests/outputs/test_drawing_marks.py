"""What the drawings mark beyond the plan itself: the shading's scale (w / w_max), uplift,
hinges along continuous edges, numbered yield lines, the colour bar and legend of long and
tall slabs, the footer of each drawing and the stamp (case, mesh, version, date, file).

The slabs are invented test scenarios (the notched panel of plot_scene.py, a long and a
tall rectangle), solved on a uniform mesh of 150 nodes; no engineering result is checked here.
The SHA-256 check value is computed by hashlib from the file's bytes.
"""
from __future__ import annotations

import dataclasses
import hashlib
from datetime import datetime, timezone

import numpy as np
import pytest
from plot_scene import NOTCHED_PANEL, new_figure
from shapely.geometry import LineString, Point, Polygon

from hingeline import solve
from hingeline.model import model_from_toml, read_model
from hingeline.outputs import result_json
from hingeline.outputs.contours import plot_deflection, plot_utilisation
from hingeline.outputs.drawing import (
    CAUTION_FOOTER,
    UPLIFT_GID,
    UPLIFT_HATCH,
    UTILISATION_FOOTER,
    add_caution_footer,
    file_figure,
)
from hingeline.outputs.numbering import LABEL_SHARE, YIELD_LINE_NUMBER_GID, number_lines
from hingeline.outputs.plan import SUPPORT_HINGE_GID, plot_pattern

RECTANGLE = """\
title = "Plot test: {what}"
[slab]
outline = [[0.0, 0.0], [{a}, 0.0], [{a}, {b}], [0.0, {b}]]
edges = ["simple", "continuous", "simple", "simple"]
[capacity]
sagging = 12.0
hogging = 10.0
[[load]]
type = "area"
value = 6.0
[analysis]
nodes = 150
"""


@pytest.fixture(scope="module")
def long_and_tall():
    return [solve(model_from_toml(RECTANGLE.format(what=w, a=a, b=b)))
            for w, a, b in (("long strip", 16.0, 2.0), ("tall strip", 2.0, 16.0))]


def _with_uplift(result):
    """The result with its mechanism's w lowered by a tenth of its largest value, so that
    the slab rises (w < 0) beside the supports (a made-up field, for drawing only)."""
    w = np.asarray(result.mechanism.w, float)
    mech = dataclasses.replace(result.mechanism, w=w - 0.1 * float(w.max()))
    return dataclasses.replace(result, mechanism=mech)


def _colour_bar(ax):
    bars = [c for c in ax.child_axes if c.get_ylabel()] or [a for a in ax.figure.axes if a is not ax]
    assert len(bars) == 1
    return bars[0]


def test_pattern_shading_is_w_over_w_max(notched_result):
    ax = plot_pattern(notched_result)
    bar = _colour_bar(ax)
    assert bar.get_ylabel() == "w / w_max"
    # the shading runs to 1 at the largest deflection (w / w_max), not to the raw w in m/kNm
    mesh = [c for c in ax.collections if c.get_cmap().name == "hingeline_w"][0]
    assert mesh.norm.vmax == pytest.approx(1.0)
    assert float(np.max(mesh.get_array())) == pytest.approx(1.0)


@pytest.mark.parametrize("plot", [plot_pattern, plot_deflection])
def test_uplift_is_hatched_not_white(notched_result, plot):
    up = plot(_with_uplift(notched_result))
    hatched = [c for c in up.collections if c.get_gid() == UPLIFT_GID]
    assert hatched and all(UPLIFT_HATCH in c.hatches for c in hatched)
    assert any("uplift" in t.get_text() for t in up.get_legend().get_texts())
    # the field as solved has no uplift: nothing hatched
    plain = plot(notched_result)
    assert not [c for c in plain.collections if c.get_gid() == UPLIFT_GID]


def test_hinges_along_continuous_edges_are_drawn_inside_the_edge_and_dashed(notched_result):
    ax = plot_pattern(notched_result)
    hinges = [c for c in ax.collections if c.get_gid() == SUPPORT_HINGE_GID]
    assert len(hinges) == 1
    slab = notched_result.model.slab
    outline = Polygon(slab.outline)
    size = float(np.ptp(slab.outline, axis=0).max())
    for seg in hinges[0].get_segments():
        mid = Point(np.mean(seg, axis=0))
        assert outline.contains(mid)
        assert outline.exterior.distance(mid) > 0.004 * size       # clear of the heavy edge line
    # a dash pattern with gaps (survives black-and-white printing), not a solid line
    _, dashes = hinges[0].get_linestyle()[0]
    assert dashes is not None and len(dashes) >= 2 and min(dashes[1::2]) > 0


def test_numbered_lines_carry_the_share_of_the_work(notched_result):
    order, labelled = number_lines(notched_result)
    dis = np.asarray(notched_result.yield_lines.dissipation, float)
    assert sorted(order) == list(range(len(dis)))
    assert all(dis[order[i]] >= dis[order[i + 1]] for i in range(len(order) - 1))
    total = dis.sum()
    assert dis[order[:labelled]].sum() >= LABEL_SHARE * total
    assert dis[order[:labelled - 1]].sum() < LABEL_SHARE * total
    ax = plot_pattern(notched_result)
    texts = [t for t in ax.texts if t.get_gid() == YIELD_LINE_NUMBER_GID]
    assert sorted(int(t.get_text()) for t in texts) == list(range(1, labelled + 1))
    start = np.asarray(notched_result.yield_lines.start, float)
    end = np.asarray(notched_result.yield_lines.end, float)
    for t in texts:
        k = order[int(t.get_text()) - 1]
        assert LineString([start[k], end[k]]).distance(Point(t.get_position())) < 1e-9


@pytest.mark.parametrize("kind", ["pattern", "utilisation"])
def test_long_and_tall_colour_bar_and_legend(long_and_tall, kind):
    for result in long_and_tall:
        fig = file_figure()
        ax = fig.add_subplot()
        {"pattern": plot_pattern, "utilisation": plot_utilisation}[kind](result, ax=ax)
        fig.canvas.draw()
        r = fig.canvas.get_renderer()
        plot_box = ax.get_window_extent(r)
        bar = _colour_bar(ax).get_window_extent(r)
        assert bar.height <= plot_box.height + 1.0                # pixels
        assert bar.y0 >= plot_box.y0 - 1.0 and bar.y1 <= plot_box.y1 + 1.0
        legend = ax.get_legend()
        if legend is not None:
            assert legend.get_window_extent(r).y1 <= ax.xaxis.label.get_window_extent(r).y0 + 0.5
        assert bar.x1 <= fig.bbox.x1
        if legend is not None:
            assert legend.get_window_extent(r).y0 >= 0.0


def test_utilisation_file_says_it_shows_the_lower_bound_field(notched_result, tmp_path):
    util = result_json._render_plot(notched_result, "svg", "utilisation").decode("utf-8")
    assert "Lower-bound moment field" in UTILISATION_FOOTER and "pale is not spare capacity" in UTILISATION_FOOTER
    assert all(line in util for line in UTILISATION_FOOTER.split("\n"))
    assert CAUTION_FOOTER not in util and "Upper-bound yield-line result" not in util
    for words in ("punching", "qualified engineer"):             # the usual caution stays
        assert words in UTILISATION_FOOTER
    pattern = result_json._render_plot(notched_result, "svg", "pattern").decode("utf-8")
    assert CAUTION_FOOTER in pattern


def test_every_drawing_carries_the_stamp(tmp_path):
    text = NOTCHED_PANEL + '\n[[case]]\nname = "all"\nloads = ["load 1"]\n'
    path = tmp_path / "panel.toml"
    path.write_text(text, encoding="utf-8")
    model = read_model(path)
    from hingeline.cases import solve_cases

    result = solve_cases(model)
    digest = hashlib.sha256(path.read_bytes()).hexdigest()
    written = result_json.write_outputs(result, tmp_path / "out", formats=("svg",))
    today = datetime.now(timezone.utc).strftime("%Y-%m-%d")
    drawings = [p for p in written if p.suffix == ".svg"]
    assert len(drawings) >= 3                                     # pattern, deflection, utilisation
    for p in drawings:
        svg = p.read_text(encoding="utf-8")
        for part in ("case all", f"{result.stats.nodes} nodes", f"element {result.stats.mesh_size:.3g} m",
                     f"hingeline {result_json.hingeline_version()}", "panel.toml", f"SHA-256 {digest[:12]}"):
            assert part in svg, (p.name, part)
        assert today in svg or (today[:8] in svg)                # the day the file was drawn (UTC)
        assert digest[12:20] not in svg                          # 12 hex digits, not the whole hash


def test_stamp_without_a_file_or_cases(notched_result):
    fig = file_figure()
    ax = fig.add_subplot()
    plot_pattern(notched_result, ax=ax)
    add_caution_footer(fig, notched_result, version="9.9")
    texts = " ".join(t.get_text() for t in fig.texts)
    assert "hingeline 9.9" in texts and "case" not in texts and "SHA-256" not in texts
    assert f"{notched_result.stats.nodes} nodes" in texts
    # the stamp and the caution stay inside the figure and below the plot
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    for t in fig.texts:
        box = t.get_window_extent(r)
        assert box.x0 >= 0 and box.x1 <= fig.bbox.x1 and box.y0 >= 0
        assert box.y1 <= ax.get_tightbbox(r).y0 + 0.5
    assert new_figure() is not fig
