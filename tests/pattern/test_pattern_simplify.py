"""Simplification of the clean pattern (hingeline.pattern.simplify_pattern) on meshes of
about 450 nodes, where the raw mechanisms read as 20 to 110 regions (fans, slivers)."""
import functools
import json

import numpy as np
import pytest

import hingeline
from hingeline.check import check_pattern, pattern_from_toml
from hingeline.pattern import _checked, clean_pattern, layout
from hingeline.outputs.result_json import write_outputs
from hingeline.pattern.simplify import RISE_MAX, merge_groups, simplify_layout
from hingeline.verify import verify_result

from unit_slabs import SQUARE, johansen_rectangle, model

RECT = [[0, 0], [2, 0], [2, 1], [0, 1]]
SLABS = {"rect": (RECT, ["simple"] * 4),
         "three_simple_one_free": (SQUARE, ["simple", "simple", "free", "simple"]),
         "clamped": (SQUARE, ["continuous"] * 4)}


@functools.cache
def _solved(name):
    outline, edges = SLABS[name]
    res = hingeline.solve(model(outline, edges, nodes=450), lower_bound=False)
    return res, clean_pattern(res.model, res.mechanism, res.load_factor)


def _rechecked(res, cp) -> float:
    """The pattern file's load factor by the hand check, from its text alone."""
    return check_pattern(res.model, pattern_from_toml(cp.hand_pattern, source="test"), optimise=False).load_factor


def test_rectangle_at_450_nodes_reads_as_johansens_five_lines():
    # Simply supported isotropic 1 x 2 rectangle: Johansen's five-line pattern at its optimum,
    # q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2) = 14.1407 m/a^2 (Johansen's rectangle
    # solution, standard yield-line theory; tests/unit_slabs.py).
    res, cp = _solved("rect")
    exact = johansen_rectangle(1.0, 2.0)
    assert cp.simplified
    assert len(cp.lines) == 5
    assert cp.load_factor == pytest.approx(exact, rel=1e-3)
    assert cp.load_factor >= exact * (1 - 1e-9)          # an upper bound: never below the exact value
    assert cp.load_factor <= res.load_factor              # never above the raw mechanism
    assert _rechecked(res, cp) == pytest.approx(cp.load_factor, rel=1e-9)


@pytest.mark.parametrize("name", sorted(SLABS))
def test_the_pattern_shown_is_certified_and_above_the_raw_mechanism_only_when_marked(name):
    res, cp = _solved(name)
    assert cp is not None
    assert cp.raw_load_factor == res.load_factor
    assert _rechecked(res, cp) == pytest.approx(cp.load_factor, rel=1e-9)
    if cp.above_raw:
        assert cp.simplified
        assert cp.load_factor <= res.load_factor * (1 + RISE_MAX)
    else:
        # As read it agrees with the raw mechanism to the certificate's tolerance; simplified
        # or optimised it is never above it.
        assert cp.load_factor <= res.load_factor * (1 + 1e-6)


def test_clamped_square_at_450_nodes_reads_as_a_clean_pattern_above_the_exact_load():
    # Clamped isotropic square, m' = m: 42.851 m / L^2 (Fox, Phil. Trans. R. Soc. A, 1974,
    # recalled); no upper bound, the raw mechanism's or a pattern's, may fall below it.
    res, cp = _solved("clamped")
    assert res.load_factor >= 42.851 * (1 - 1e-4)
    assert cp is not None
    assert 42.851 * (1 - 1e-4) <= cp.load_factor <= res.load_factor * (1 + 1e-6)


def test_three_simple_edges_and_a_free_one_at_450_nodes_reads_as_johansens_three_lines(tmp_path):
    # Johansen's three-line pattern for a square with one free edge, 14.14 m / L^2 (recalled).
    # At 450 nodes the raw mechanism (corner levers at the supported corners) is lower than
    # that, so the three lines are shown marked above it, the raw mechanism governing.
    res, cp = _solved("three_simple_one_free")
    assert len(cp.lines) <= 5
    assert cp.load_factor == pytest.approx(14.14, rel=1e-3)
    assert cp.above_raw and cp.load_factor > res.load_factor
    paths = {p.name for p in write_outputs(res, tmp_path, formats=())}
    assert "hand-pattern.toml" in paths
    data = json.loads((tmp_path / "result.json").read_text())
    assert data["load_factor"] == res.load_factor                 # the raw mechanism's answer
    assert data["pattern"]["above_raw"] is True and data["pattern"]["simplified"] is True
    assert verify_result(res.model, data).ok
    # Unmarked, the same pattern is one above the raw mechanism that verify refuses.
    data["pattern"]["above_raw"] = False
    v = verify_result(res.model, data)
    assert not v.ok and any("above the raw mechanism" in e for e in v.stored_errors)
    # The record gives both load factors to enough digits to tell them apart.
    from hingeline.outputs.record import pattern_tables

    tables = pattern_tables(res.model, res)
    assert tables["above_raw"] and tables["raw"] != tables["load_factor"]


def test_a_pattern_above_the_raw_mechanism_says_so_on_the_plan():
    res, cp = _solved("three_simple_one_free")
    from hingeline.outputs.pattern_plan import plot_clean_pattern

    title = plot_clean_pattern(res, pattern=cp).get_title()
    assert "ABOVE the raw mechanism" in title and "which governs" in title
    assert f"{res.load_factor:.6g}" in title and f"{cp.load_factor:.6g}" in title


def _diagonals_with_slivers():
    """The simply supported square's two diagonals (24 m / L^2, exact), with two thin regions
    along the diagonal from (0, 0) that move as their neighbours nearly do."""
    c = np.array([0.5, 0.5])
    q = np.array([0.25, 0.25])
    e = 1e-3
    rings = [[np.array([[0, 0], [1, 0], c, q + [e, -e]])],
             [np.array([[1, 0], [1, 1], c])],
             [np.array([[1, 1], [0, 1], c])],
             [np.array([[0, 1], [0, 0], q + [-e, e], c])],
             [np.array([[0, 0], q + [e, -e], c, q])],
             [np.array([[0, 0], q, c, q + [-e, e]])]]
    planes = np.array([[0, 0, 2], [2, -2, 0], [2, 0, -2], [0, 2, 0], [0, 0.1, 1.9], [0, 1.9, 0.1]], float)
    return rings, planes


def test_slivers_join_the_neighbour_whose_plane_is_closest():
    size = float(np.hypot(1, 1))
    rings, planes = _diagonals_with_slivers()
    lay = layout.layout_of(rings, planes, np.zeros(6, bool), size)
    group = merge_groups(lay, 1.0, 1e-2)
    assert group.tolist() == [0, 1, 2, 3, 0, 3]
    # Merged, straightened and made compatible, it is the two diagonals: 24 m / L^2 exactly
    # (simply supported isotropic square, closed form).
    mdl = model(SQUARE, ["simple"] * 4)
    out = simplify_layout(mdl, lay, size, group)
    assert out is not None and len(out.rings) == 4
    regions, rings_xy = layout.layout_regions(out, size)
    _, hc = _checked(mdl, regions, rings_xy)
    assert hc.load_factor == pytest.approx(24.0, rel=1e-9)
