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
