"""Unit slabs shared by the tests that compare a bound with a closed form.

Lengths m, one uniform load of 1 kPa, so a load factor is the coefficient of m / L^2.
"""
import copy
import math

import numpy as np

import hingeline

SQUARE = [[0, 0], [1, 0], [1, 1], [0, 1]]


def model(outline, edges, sagging=1.0, hogging=1.0, nodes=150, extra="", bar_angle=0.0):
    text = f"""
[slab]
outline = {outline}
edges = {edges!r}
[capacity]
sagging = {sagging}
hogging = {hogging}
bar_angle = {bar_angle}
[[load]]
type = "area"
value = 1.0
[analysis]
nodes = {nodes}
{extra}
""".replace("'", '"')
    return hingeline.model_from_toml(text)


def johansen_rectangle(a, b, m=1.0):
    """Simply supported isotropic rectangle, short side a, long side b (Johansen's formula)."""
    r = a / b
    return 24 * m / (a * a * (math.sqrt(3 + r * r) - r) ** 2)


def jittered(data: dict, seed: int, amplitude: float = 1e-6) -> dict:
    """A model file's data (as read by tomllib) with every distinct point of the slab, its
    loads and zones moved by up to `amplitude` m, uniform random from `seed` (a point shared
    by two polygons moves once, as rounding in a CAD export moves it)."""
    rng = np.random.default_rng(seed)
    moved = {}

    def walk(x):
        if isinstance(x, dict):
            return {k: walk(v) for k, v in x.items()}
        if isinstance(x, list):
            if len(x) == 2 and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in x):
                key = tuple(x)
                if key not in moved:
                    moved[key] = (np.asarray(x, float) + rng.uniform(-amplitude, amplitude, 2)).tolist()
                return moved[key]
            return [walk(v) for v in x]
        return x

    out = copy.deepcopy(data)
    for key in ("slab", "load", "zone"):
        if key in out:
            out[key] = walk(out[key])
    return out
