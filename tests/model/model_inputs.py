"""Model inputs shared by the tests of the model package, and small helpers to inspect results.

All geometry and values here are invented for testing the parsing and validation mechanics
only; no engineering result is checked.
"""
from __future__ import annotations

import copy

import numpy as np
import pytest

from hingeline.errors import ModelError
from hingeline.model import parse_model

RECT = [[0.0, 0.0], [7.2, 0.0], [7.2, 5.4], [0.0, 5.4]]
HOLE = [[1.0, 1.0], [2.2, 1.0], [2.2, 1.8], [1.0, 1.8]]

VALID_TOML = """
title = "test bay"

[slab]
outline = [[0.0, 0.0], [7.2, 0.0], [7.2, 5.4], [0.0, 5.4]]
edges = ["simple", "continuous", "simple", "free"]
thickness = 0.22

[[slab.opening]]
polygon = [[1.0, 1.0], [2.2, 1.0], [2.2, 1.8], [1.0, 1.8]]

[capacity]
sagging = [28.0, 22.0]
hogging = 35.0
bar_angle = 30.0

[[load]]
type = "area"
value = 5.0
region = [[3, 0], [7.2, 0], [7.2, 2], [3, 2]]

[[load]]
type = "area"
value = 1.5
scaled = false
name = "finishes"

[analysis]
mesh_size = 0.25
target_gap = 0.02
time_limit = 60
"""


def base() -> dict:
    """A minimal valid model as a parsed dict (fresh copy per call)."""
    return copy.deepcopy(
        {
            "slab": {"outline": RECT, "edges": ["simple", "continuous", "simple", "free"]},
            "capacity": {"sagging": 20.0},
            "load": [{"type": "area", "value": 5.0}],
        }
    )


def signed_area(p: np.ndarray) -> float:
    x, y = p[:, 0], p[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def edge_map(outline, edges) -> dict:
    """{frozenset of the two end points: label} for each edge."""
    pts = [tuple(map(float, p)) for p in outline]
    n = len(pts)
    return {frozenset((pts[k], pts[(k + 1) % n])): edges[k] for k in range(n)}


def error_of(data: dict, source: str = "model") -> str:
    with pytest.raises(ModelError) as info:
        parse_model(data, source)
    return str(info.value)
