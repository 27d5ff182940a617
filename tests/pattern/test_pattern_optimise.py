"""Geometry optimisation of the clean pattern (hingeline.pattern.optimise_pattern)."""
import functools
import json

import numpy as np
import pytest

import hingeline
from hingeline.check import check_pattern, pattern_from_toml
from hingeline.outputs.result_json import stale_outputs, write_outputs
from hingeline.pattern import clean_pattern
from hingeline.pattern import layout
from hingeline.pattern.tidy import tidy
from hingeline.verify import verify_result

from unit_slabs import SQUARE, johansen_rectangle, model

RECT = [[0, 0], [2, 0], [2, 1], [0, 1]]


@functools.cache
def _solved(name):
    if name == "rect":
        return hingeline.solve(model(RECT, ["simple"] * 4), lower_bound=False)
    if name == "three_simple_one_free":
        return hingeline.solve(model(SQUARE, ["simple", "simple", "free", "simple"]), lower_bound=False)
    raise KeyError(name)


@functools.cache
def _pattern(name):
    res = _solved(name)
    return clean_pattern(res.model, res.mechanism, res.load_factor)


def _rechecked(res, cp) -> float:
    """The pattern file's load factor by the hand check, from its text alone."""
    return check_pattern(res.model, pattern_from_toml(cp.hand_pattern, source="test"), optimise=False).load_factor


def test_rectangle_reaches_johansens_closed_form():
    # Simply supported isotropic 1 x 2 rectangle: Johansen's five-line pattern with its inner
    # junctions at the optimum, q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2) = 14.1407 m/a^2
    # (Johansen's rectangle solution, standard yield-line theory; tests/unit_slabs.py).
    res, cp = _solved("rect"), _pattern("rect")
    exact = johansen_rectangle(1.0, 2.0)
    assert cp.optimised
    assert cp.load_factor == pytest.approx(exact, rel=1e-3)
    assert cp.load_factor >= exact * (1 - 1e-9)          # an upper bound: never below the exact value
    assert len(cp.lines) == 5
    assert sum(not r.at_rest for r in cp.regions) == 4
    # Certified: its own hand-pattern file re-checks to the same load factor.
    assert _rechecked(res, cp) == pytest.approx(cp.load_factor, rel=1e-9)


@pytest.mark.parametrize("name", ["rect", "three_simple_one_free"])
def test_optimisation_lowers_or_keeps_and_never_rises_above_the_raw_mechanism(name):
    res, cp = _solved(name), _pattern(name)
    assert cp.raw_load_factor == res.load_factor
    assert cp.clean_load_factor == pytest.approx(res.load_factor, rel=1e-6)
    assert cp.load_factor <= min(cp.clean_load_factor, res.load_factor) * (1 + 1e-12)
    assert _rechecked(res, cp) == pytest.approx(cp.load_factor, rel=1e-9)


def test_three_simple_edges_and_a_free_one_gives_johansens_three_lines():
    # Johansen's three-line pattern for a square with one free edge, 14.14 m / L^2 (recalled).
    cp = _pattern("three_simple_one_free")
    assert len(cp.lines) <= 5
    assert cp.load_factor == pytest.approx(14.14, rel=1e-3)


def test_a_worse_optimum_is_never_shown(monkeypatch):
    # An optimiser that moves the junctions the wrong way: the certified load factor rises, so
    # the clean pattern as read is kept.
    res = _solved("rect")

    def worse(model, lay, size, **_):
        P = lay.points.copy()
        free = (P[:, 0] > 1e-6) & (P[:, 0] < 2 - 1e-6) & (P[:, 1] > 1e-6) & (P[:, 1] < 1 - 1e-6)
        P[free] += 0.01
        return P, lay.planes

    monkeypatch.setattr("hingeline.pattern.optimise_layout", worse)
    cp = clean_pattern(res.model, res.mechanism, res.load_factor)
    assert not cp.optimised
    assert cp.load_factor == cp.clean_load_factor
    assert cp.load_factor == pytest.approx(res.load_factor, rel=1e-6)


def test_tidy_merges_points_that_meet_and_drops_vanished_regions():
    size = float(np.hypot(1, 1))
    # Four triangles of the square's diagonals, plus a sliver region at the centre that the
    # optimiser shrank to (almost) nothing: it goes, and its corners merge into the centre.
    c = np.array([0.5, 0.5])
    e = 1e-5
    rings = [[np.array([[0, 0], [1, 0], c + [e, -e], c + [-e, -e]])],
             [np.array([[1, 0], [1, 1], c + [e, e], c + [e, -e]])],
             [np.array([[1, 1], [0, 1], c + [-e, e], c + [e, e]])],
             [np.array([[0, 1], [0, 0], c + [-e, -e], c + [-e, e]])],
             [np.array([c + [-e, -e], c + [e, -e], c + [e, e], c + [-e, e]])]]
    planes = np.array([[0, 0, 2], [2, -2, 0], [2, 0, -2], [0, 2, 0], [1, 0, 0]], float)
    lay = layout.layout_of(rings, planes, np.zeros(5, bool), size)
    mdl = model(SQUARE, ["simple"] * 4)
    out = tidy(mdl, lay, lay.points, lay.planes, size)
    assert out is not None
    assert len(out.rings) == 4
    assert len(out.points) == 5                         # the corners and the centre
    regions, rings = layout.layout_regions(out, size)
    from hingeline.pattern import _checked

    _, hc = _checked(mdl, regions, rings)
    assert hc.load_factor == pytest.approx(24.0, rel=1e-9)


def test_drawings_have_the_new_names(tmp_path):
    res = _solved("three_simple_one_free")
    paths = {p.name for p in write_outputs(res, tmp_path, formats=("png", "svg"))}
    for name in ("pattern.png", "pattern.svg", "mechanism.png", "mechanism.svg", "hand-pattern.toml",
                 "result.json"):
        assert name in paths and (tmp_path / name).stat().st_size > 0
    # A second run with one format removes the other format's drawings, mechanism.* included.
    assert {p.name for p in stale_outputs(tmp_path, {"result.json", "pattern.png", "mechanism.png"})} >= {
        "pattern.svg", "mechanism.svg"}
    data = json.loads((tmp_path / "result.json").read_text())
    pat = data["pattern"]
    assert pat["raw_load_factor"] == res.load_factor
    assert pat["load_factor"] <= pat["clean_load_factor"] * (1 + 1e-12)
    assert pat["optimised"] is True


def test_verify_catches_a_tampered_pattern_load_factor(tmp_path):
    res = _solved("three_simple_one_free")
    write_outputs(res, tmp_path, formats=())
    data = json.loads((tmp_path / "result.json").read_text())
    assert verify_result(res.model, data).ok
    data["pattern"]["load_factor"] *= 1.001
    v = verify_result(res.model, data)
    assert not v.ok
    assert any(e.startswith("pattern.load_factor") for e in v.stored_errors)
