"""Work equation and energy table of a hand-drawn pattern (work.py).

Check values are closed forms of Johansen's yield-line theory or work equations derived by
hand in the comments beside them. The work equation of a rigid-region pattern is exact (no
mesh error: the triangulation follows every region boundary), so tolerances are round-off
(1e-9 relative).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hand_patterns import RECT, ROOF, SIMPLE_SQUARE, diagonal
from unit_slabs import SQUARE, model

from hingeline import check_mechanism, model_from_toml, read_model
from hingeline.check import (
    check_pattern,
    pattern_from_toml,
    pattern_mechanism,
    read_pattern,
)

ROOT = Path(__file__).resolve().parents[2]


def test_roof_fixed_a():
    # Hand work equation (m = 1 kNm/m, q = 1 kPa, ridge deflection 1 m):
    # internal: each region dissipates m * theta * (length of its support edge) for a simply
    # supported slab (projection rule): south, north: theta = 1/0.5, edge 2 m -> 4 each;
    # east, west: theta = 1/a, edge 1 m -> 1/a each.  D = 8 + 2/a.
    # external: volume under the roof = middle prism (2 - 2a) * 0.5 plus the two end parts
    # (each integral over x in [0, a] of 0.5 - (1 - x/a)^2 / 2 = a/3): V = 1 - a + 2a/3 = 1 - a/3.
    # lambda(a) = (8 + 2/a) / (1 - a/3); at a = 0.5: 12 / (5/6) = 14.4; at a = 0.3: 14.6667/0.9 = 16.2963.
    pat = pattern_from_toml(ROOF)
    hc = check_pattern(RECT, pat, optimise=False)
    assert not hc.optimised and hc.parameters == {"a": 0.5}
    assert hc.load_factor == pytest.approx(14.4, rel=1e-9)
    hc3 = check_pattern(RECT, pat, optimise=False, values={"a": 0.3})
    assert hc3.load_factor == pytest.approx((8 + 2 / 0.3) / (1 - 0.1), rel=1e-9)
    # Energy table: sums to the internal work; the ridge (south | north, 2 - 2a = 1 m long) turns
    # by 1/0.5 + 1/0.5 = 4 rad per metre of ridge deflection; scaled by 1/V = 6/5 -> 4.8 kNm.
    assert sum(b.work for b in hc.boundaries) == pytest.approx(hc.internal, rel=1e-12)
    ridge = {b.between: b for b in hc.boundaries}["south | north"]
    assert ridge.length == pytest.approx(1.0) and ridge.work == pytest.approx(4.8, rel=1e-9)
    assert dict(hc.work_per_load)["load 1"] == pytest.approx(1.0, rel=1e-12)   # normalised
    # The mechanism is an ordinary certificate: check_mechanism gives the same factor.
    assert check_mechanism(RECT, hc.mechanism).load_factor == pytest.approx(14.4, rel=1e-9)
    raw = pattern_mechanism(RECT, pat)              # unscaled: ridge at w = 1 m as drawn
    assert raw.w.max() == pytest.approx(1.0, rel=1e-12)


def test_clamped_square_diagonals_48():
    # Johansen, clamped (continuous) isotropic square, diagonal pattern: q = 48 m / L^2 with
    # m = m' (textbook result, e.g. Johansen, Yield-line theory, C&CA 1962; recalled from memory).
    # Hand: sagging 4 regions * theta 2 * edge 1 = 8, hogging 4 edges * 1 * 2 = 8, volume 1/3.
    hc = check_pattern(model(SQUARE, "continuous"), pattern_from_toml(diagonal()))
    assert hc.load_factor == pytest.approx(48.0, rel=1e-9)
    hinge = sum(b.work for b in hc.boundaries if b.kind == "hinge")
    support = sum(b.work for b in hc.boundaries if b.kind == "continuous")
    assert hinge == pytest.approx(24.0, rel=1e-9) and support == pytest.approx(24.0, rel=1e-9)
    assert all(b.rotation < 0 for b in hc.boundaries if b.kind == "continuous")   # hogging


def test_simply_supported_square_24():
    # Johansen, simply supported isotropic square: q = 24 m / L^2 (textbook result; hand: 8 / (1/3)).
    hc = check_pattern(SIMPLE_SQUARE, pattern_from_toml(diagonal()))
    assert hc.load_factor == pytest.approx(24.0, rel=1e-9)
    assert all(b.rotation > 0 for b in hc.boundaries if b.kind == "hinge")        # sagging


def test_held_load_and_opening():
    # Held load: work equation lambda * W_f + W_h = D; with the diagonal pattern on the simply
    # supported unit square, D / W_f = 24 and W_h / W_f = 1 (equal 1 kPa loads) -> lambda = 23.
    held = model_from_toml("""
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
[[load]]
type = "area"
value = 1.0
[[load]]
type = "area"
value = 1.0
factored = false
""")
    hc = check_pattern(held, pattern_from_toml(diagonal()))
    assert hc.load_factor == pytest.approx(23.0, rel=1e-9)
    # Central 0.2 x 0.2 opening (the regions run across it and are clipped). Hand work equation:
    # the half-diagonals outside the opening, 4 x 0.4 sqrt(2) m, turn by 2 sqrt(2) rad -> D = 6.4;
    # load: pyramid volume 1/3 minus the part over the opening, where w = 1 - 2 max(|u|, |v|)
    # (mean of max(|u|,|v|) over a square of half-side h is 2h/3): 0.04 (1 - 2 * 0.2/3) = 0.034667.
    holed = model(SQUARE, "simple",
                  extra="[[slab.opening]]\npolygon = [[0.4, 0.4], [0.6, 0.4], [0.6, 0.6], [0.4, 0.6]]")
    hc = check_pattern(holed, pattern_from_toml(diagonal()))
    assert hc.load_factor == pytest.approx(6.4 / (1 / 3 - 0.04 * (1 - 0.4 / 3)), rel=1e-9)


@pytest.mark.parametrize("stem", ["workshop_bay", "plant_deck"])
def test_example_patterns(stem):
    folder = ROOT / "examples" / "patterns"
    slab = read_model(folder / f"{stem}_model.toml")
    hc = check_pattern(slab, read_pattern(folder / f"{stem}_pattern.toml"))
    start = check_pattern(slab, read_pattern(folder / f"{stem}_pattern.toml"), optimise=False)
    # Optimising can only lower the factor (self-consistency, not a collapse value).
    assert 0 < hc.load_factor <= start.load_factor
    assert sum(b.work for b in hc.boundaries) == pytest.approx(hc.internal, rel=1e-9)
    assert hc.max_support_w <= 1e-9 * np.abs(hc.mechanism.w).max()
