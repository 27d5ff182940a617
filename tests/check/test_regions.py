"""Checks of the rigid regions (regions.py): cover, overlap, fit and supports, each named.

A pattern that breaks one of Johansen's conditions on a mechanism (rigid regions covering
the slab, compatible along their boundaries, at rest on the supports) must be refused
with a ModelError naming the region or pair of regions and the place; the places are
those of the pattern text in each test.
"""
from __future__ import annotations

import pytest
from hand_patterns import SIMPLE_SQUARE, diagonal

from hingeline import ModelError
from hingeline.check import check_pattern, pattern_from_toml


def test_incompatible_regions_named():
    with pytest.raises(ModelError) as err:
        check_pattern(SIMPLE_SQUARE, pattern_from_toml(diagonal((1.0, 1.0, 1.5, 1.0))))
    msg = str(err.value)
    assert "'north'" in msg and ("'east'" in msg or "'west'" in msg) and "(0.5, 0.5)" in msg


def test_moving_support_named():
    # The south triangle given w = 0.2 at (1, 0), a corner on the supported south edge.
    text = diagonal().replace(
        'axis = [[0, 0], [1, 0]]\npoint = [0.5, 0.5]\ndeflection = 1.0',
        'deflections = [[0, 0, 0], [1, 0, 0.2], [0.5, 0.5, 1]]')
    with pytest.raises(ModelError) as err:
        check_pattern(SIMPLE_SQUARE, pattern_from_toml(text))
    msg = str(err.value)
    assert "region 'south'" in msg and "(1, 0)" in msg and "simple edge" in msg


def test_cover_and_overlap_named():
    gap = diagonal().replace("polygon = [[1, 1], [0, 1], [0.5, 0.5]]", "polygon = [[1, 1], [0, 1], [0.5, 0.6]]")
    with pytest.raises(ModelError, match=r"covered by no region.*'north'"):
        check_pattern(SIMPLE_SQUARE, pattern_from_toml(gap))
    over = diagonal().replace("polygon = [[1, 1], [0, 1], [0.5, 0.5]]", "polygon = [[1, 1], [0, 1], [0.5, 0.4]]")
    with pytest.raises(ModelError, match=r"regions '\w+' and '\w+' overlap") as err:
        check_pattern(SIMPLE_SQUARE, pattern_from_toml(over))
    assert "'north'" in str(err.value)


# One-way strip, span L = 2 between simply supported ends x = 0 and x = 2, free sides,
# m = 1, q = 1: Johansen's 8 m / L^2 = 2 for two regions turning about the supports.
STRIP = """
[[region]]
name = "west"
polygon = [[0, 0], [1, 0], [1, 1], [0, 1]]
{holes}
axis = [[0, 0], [0, 1]]
point = [1, 0.5]
deflection = 1.0

[[region]]
name = "east"
polygon = [[1, 0], [2, 0], [2, 1], [1, 1]]
axis = [[2, 0], [2, 1]]
point = [1, 0.5]
deflection = 1.0
"""
INNER = """
[[region]]
name = "inner"
polygon = [[0.2, 0.2], [0.6, 0.2], [0.6, 0.6], [0.2, 0.6]]
axis = [[0, 0], [0, 1]]
point = [1, 0.5]
deflection = 1.0
"""


def _strip():
    from unit_slabs import model
    return model([[0, 0], [2, 0], [2, 1], [0, 1]], ["free", "simple", "free", "simple"])


def test_region_with_a_hole_round_another_region():
    # The inner region moves with the plane of the one round it: the strip's closed form.
    holes = "holes = [[[0.2, 0.2], [0.6, 0.2], [0.6, 0.6], [0.2, 0.6]]]"
    hc = check_pattern(_strip(), pattern_from_toml(STRIP.format(holes=holes) + INNER))
    assert hc.load_factor == pytest.approx(2.0, rel=1e-12)
    assert sum(b.work for b in hc.boundaries) == pytest.approx(hc.internal, rel=1e-12)


def test_hole_left_empty_named():
    holes = "holes = [[[0.2, 0.2], [0.6, 0.2], [0.6, 0.6], [0.2, 0.6]]]"
    with pytest.raises(ModelError) as err:
        check_pattern(_strip(), pattern_from_toml(STRIP.format(holes=holes)))
    assert "covered by no region" in str(err.value) and "0.16 m2" in str(err.value)


def test_a_tiny_region_is_a_region():
    # A sliver of 5e-9 m2 (below 1e-8 of the slab, above 1e-10) cut from the south triangle
    # of the simply supported square's diagonal pattern and moving with it: still the two
    # diagonals, 24 m / L^2 (simply supported isotropic square, exact). A raw mechanism on a
    # fine mesh reads as such regions, one tiny triangle each.
    a, e = 1e-3, 5e-6
    tip = (0.5 - a / 2 + e, 0.5 - a / 2 - e)
    text = diagonal().replace(
        "polygon = [[0, 0], [1, 0], [0.5, 0.5]]",
        f"polygon = [[0, 0], [1, 0], [0.5, 0.5], [{tip[0]!r}, {tip[1]!r}], [{0.5 - a!r}, {0.5 - a!r}]]")
    text += f"""
[[region]]
name = "sliver"
polygon = [[{0.5 - a!r}, {0.5 - a!r}], [{tip[0]!r}, {tip[1]!r}], [0.5, 0.5]]
axis = [[0, 0], [1, 0]]
point = [0.5, 0.5]
deflection = 1.0
"""
    hc = check_pattern(SIMPLE_SQUARE, pattern_from_toml(text), optimise=False)
    assert hc.load_factor == pytest.approx(24.0, rel=1e-9)
