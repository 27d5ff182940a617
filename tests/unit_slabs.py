"""Unit slabs shared by the tests that compare a bound with a closed form.

Lengths m, one uniform load of 1 kPa, so a load factor is the coefficient of m / L^2.
"""
import math

import hingeline

SQUARE = [[0, 0], [1, 0], [1, 1], [0, 1]]


def model(outline, edges, sagging=1.0, hogging=1.0, resolution="coarse", extra="", bar_angle=0.0):
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
resolution = "{resolution}"
{extra}
""".replace("'", '"')
    return hingeline.model_from_toml(text)


def johansen_rectangle(a, b, m=1.0):
    """Simply supported isotropic rectangle, short side a, long side b (Johansen's formula)."""
    r = a / b
    return 24 * m / (a * a * (math.sqrt(3 + r * r) - r) ** 2)
