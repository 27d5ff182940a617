"""Point and line loads against closed forms and hand mechanisms."""
import math

import numpy as np
import pytest

import hingeline
from hingeline.result import Mechanism

CLAMPED_POINT = """
[slab]
outline = [[-2, -2], [2, -2], [2, 2], [-2, 2]]
edges = "continuous"
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "point"
value = 1.0
at = [0.0, 0.0]
[analysis]
nodes = {res}
"""


def test_point_load_fan_on_clamped_slab():
    # Fan mechanism under a concentrated load far from edges: P = 2 pi (m + m') (Johansen's
    # yield-line theory, the circular fan). An upper bound that DLO
    # approaches with refinement: measured +1.9 % at 150 nodes, +0.9 % at 450 nodes.
    exact = 2 * math.pi * (1.0 + 1.0)
    r = hingeline.solve(hingeline.model_from_toml(CLAMPED_POINT.format(res=150)))
    assert exact * (1 - 1e-3) <= r.load_factor <= exact * 1.03
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


SQUARE = """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
hogging = 1.0
{load}
[analysis]
nodes = 150
"""
PYRAMID = Mechanism(np.array([[0, 0], [1, 0], [1, 1], [0, 1], [0.5, 0.5]], float),
                    np.array([[0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4]]), np.array([0, 0, 0, 0, 1.0]))


def test_certificate_work_of_point_and_line_loads_on_the_pyramid():
    # Pyramid of apex deflection 1 on the simply supported unit square: internal work 8 m (hand
    # work equation: 4 triangles, rotation 2, projected yield-line length 1). A point load P at the
    # apex does work P; a line load q along y = 0.5 does q * (area under the tent 1 - 2|x - 0.5|)
    # = 0.5 q; one along x = 0.25 (vertical) does q * integral of 2 min(0.25, y, 1 - y) dy
    # = q * (0.5 * 0.5 + 2 * integral_0^0.25 2y dy) = q * (0.25 + 0.125) = 0.375 q.
    point = hingeline.model_from_toml(SQUARE.format(load='[[load]]\ntype = "point"\nvalue = 2.0\nat = [0.5, 0.5]'))
    assert hingeline.check_mechanism(point, PYRAMID).load_factor == pytest.approx(8 / 2.0, rel=1e-12)
    line = hingeline.model_from_toml(SQUARE.format(load='[[load]]\ntype = "line"\nvalue = 3.0\npath = [[0, 0.5], [1, 0.5]]'))
    assert hingeline.check_mechanism(line, PYRAMID).load_factor == pytest.approx(8 / (0.5 * 3.0), rel=1e-12)
    vert = hingeline.model_from_toml(SQUARE.format(load='[[load]]\ntype = "line"\nvalue = 1.0\npath = [[0.25, 0], [0.25, 1]]'))
    assert hingeline.check_mechanism(vert, PYRAMID).load_factor == pytest.approx(8 / 0.375, rel=1e-12)


@pytest.mark.parametrize("path", ["[[0, 0.5], [1, 0.5]]", "[[0.25, 0], [0.25, 1]]", "[[0.1, 0.2], [0.8, 0.9], [0.9, 0.3]]"])
def test_line_load_solves_with_certificate(path):
    # The LP's work coefficients (integration by parts) against the certificate's direct
    # integration along the path: two independent computations of the same work.
    m = hingeline.model_from_toml(SQUARE.format(load=f'[[load]]\ntype = "line"\nvalue = 1.0\npath = {path}'))
    r = hingeline.solve(m)
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


def test_line_load_is_the_limit_of_a_narrow_strip():
    # A line load q along y = 0.5 and an area load q / b on the strip |y - 0.5| < b / 2: the same
    # total load, converging as b -> 0 (no source needed: the definition of a line load).
    line = hingeline.solve(hingeline.model_from_toml(
        SQUARE.format(load='[[load]]\ntype = "line"\nvalue = 1.0\npath = [[0, 0.5], [1, 0.5]]')))
    b = 0.02
    strip = hingeline.solve(hingeline.model_from_toml(SQUARE.format(
        load=f'[[load]]\ntype = "area"\nvalue = {1 / b}\nregion = [[0, {0.5 - b / 2}], [1, {0.5 - b / 2}], [1, {0.5 + b / 2}], [0, {0.5 + b / 2}]]')))
    assert strip.load_factor == pytest.approx(line.load_factor, rel=0.03)


@pytest.mark.parametrize("load, item", [
    ('type = "point"\nvalue = 1.0\nat = [1.5, 0.5]', "at"),
    ('type = "point"\nvalue = -1.0\nat = [0.5, 0.5]', "value"),
    ('type = "line"\nvalue = 1.0\npath = [[0.5, 0.5], [1.5, 0.5]]', "path"),
    ('type = "line"\nvalue = 1.0\npath = [[0.5, 0.5]]', "path"),
])
def test_bad_point_and_line_loads(load, item):
    with pytest.raises(hingeline.ModelError, match=f"load\\[1\\].{item}"):
        hingeline.model_from_toml(SQUARE.format(load=f"[[load]]\n{load}"))
