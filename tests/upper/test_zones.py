"""Reinforcement zones: capacities that override the slab's inside a polygon."""
import pytest

import hingeline

BASE = """
[slab]
outline = [[0, 0], [3, 0], [3, 2], [0, 2]]
edges = ["simple", "continuous", "simple", "continuous"]
{opening}
[capacity]
sagging = {m}
hogging = {m}
[[load]]
type = "area"
value = 10.0
[analysis]
nodes = 150
{zones}
"""
OPENING = "[[slab.opening]]\npolygon = [[1.2, 0.7], [1.8, 0.7], [1.8, 1.3], [1.2, 1.3]]"


def solve(**kw):
    kw.setdefault("opening", "")
    kw.setdefault("zones", "")
    kw.setdefault("m", 5.0)
    return hingeline.solve(hingeline.model_from_toml(BASE.format(**kw)))


def test_zone_over_the_whole_slab_equals_the_slab_with_its_capacity():
    # A zone covering everything is the slab with the zone's capacity (definition). The
    # zone boundary coincides with the outline, so the meshes and candidate lines are the same.
    whole = '[[zone]]\npolygon = [[0, 0], [3, 0], [3, 2], [0, 2]]\nsagging = 8.0\nhogging = 8.0'
    zoned = solve(zones=whole)
    plain = solve(m=8.0)
    assert zoned.load_factor == pytest.approx(plain.load_factor, rel=1e-9)


def test_trimmer_zone_round_an_opening_raises_the_load_factor():
    # Trimmer bars round an opening add strength where the mechanism of the holed slab hinges,
    # so the collapse factor rises (upper-bound theorem: no mechanism gets cheaper); the
    # certificate, which prices every edge by its own location, must agree.
    trimmer = ('[[zone]]\nname = "trimmers"\npolygon = [[0.9, 0.4], [2.1, 0.4], [2.1, 1.6], [0.9, 1.6]]\n'
               'sagging = 15.0\nhogging = 15.0')
    plain = solve(opening=OPENING)
    trimmed = solve(opening=OPENING, zones=trimmer)
    assert trimmed.load_factor > plain.load_factor * 1.02
    assert trimmed.certificate.load_factor == pytest.approx(trimmed.load_factor, rel=1e-6)


def test_weak_zone_lowers_the_load_factor_and_certifies():
    # A cracked or corroded region (lower capacity) in an existing slab.
    weak = '[[zone]]\nname = "corroded"\npolygon = [[1.0, 0.5], [2.0, 0.5], [2.0, 1.5], [1.0, 1.5]]\nsagging = 1.0'
    plain = solve()
    weakened = solve(zones=weak)
    assert weakened.load_factor < plain.load_factor
    assert weakened.certificate.load_factor == pytest.approx(weakened.load_factor, rel=1e-6)
    assert sum(weakened.yield_lines.dissipation) == pytest.approx(weakened.work.internal, rel=1e-6)


@pytest.mark.parametrize("zones, item", [
    ('[[zone]]\npolygon = [[2, 1], [4, 1], [4, 1.5], [2, 1.5]]\nsagging = 3.0', "zone\\[1\\].polygon leaves"),
    ('[[zone]]\npolygon = [[0, 0], [1, 0], [1, 1], [0, 1]]\nsagging = 3.0\n'
     '[[zone]]\npolygon = [[0.5, 0.5], [1.5, 0.5], [1.5, 1.5], [0.5, 1.5]]\nsagging = 3.0', "zone\\[2\\] overlaps zone\\[1\\]"),
    ('[[zone]]\npolygon = [[0, 0], [1, 0], [1, 1], [0, 1]]\nsagging = -3.0', "zone\\[1\\].sagging"),
    ('[[zone]]\npolygon = [[0, 0], [1, 0], [1, 1], [0, 1]]', "zone\\[1\\] has no sagging"),
])
def test_bad_zones_name_the_item(zones, item):
    with pytest.raises(hingeline.ModelError, match=item):
        hingeline.model_from_toml(BASE.format(opening="", zones=zones, m=5.0))
