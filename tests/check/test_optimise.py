"""Free parameters of a hand-drawn pattern (optimise.py): the optimum is Johansen's.

Johansen's closed form for the simply supported isotropic rectangle is the minimum over
the apex distance a of the work equation derived by hand in test_work.test_roof_fixed_a,
lambda(a) = (8 + 2/a) / (1 - a/3); tolerances allow for the optimiser's stopping rule.
"""
from __future__ import annotations

import math

import pytest
from hand_patterns import RECT, ROOF, ROOF2
from unit_slabs import johansen_rectangle

from hingeline.check import check_pattern, pattern_from_toml


def test_roof_optimised_equals_johansen():
    hc = check_pattern(RECT, pattern_from_toml(ROOF))
    # Johansen, simply supported isotropic rectangle, q = 24 m / (L^2 (sqrt(3 + (L/B)^2) - L/B)^2),
    # L the short side, B the long side (e.g. Kennedy & Goodchild, Practical Yield Line Design,
    # Concrete Centre 2004, simply supported rectangular slabs; formula recalled from memory and
    # re-derived: it is the minimum over a of the work equation in test_work.test_roof_fixed_a).
    expected = johansen_rectangle(1.0, 2.0)          # = 14.1407 for 1 x 2 (formula above)
    assert abs(expected - 14.1407) < 1e-4
    assert hc.optimised
    assert hc.load_factor == pytest.approx(expected, rel=1e-6)
    # Optimal apex distance, from lambda(a) = (8 + 2/a) / (1 - a/3) of test_roof_fixed_a:
    # (8 + 2/a)' (1 - a/3) + (8 + 2/a)/3 = 0  ->  -2/a^2 + 2/(3a) + 8/3 + 2/(3a) = 0
    # -> 8 a^2 + 4 a - 6 = 0  ->  a = (-4 + sqrt(16 + 192)) / 16 = (sqrt(208) - 4) / 16 (hand derivation)
    assert hc.parameters["a"] == pytest.approx((math.sqrt(208.0) - 4.0) / 16.0, rel=1e-4)


def test_two_parameters_optimised_together():
    # Same slab; independent apex distances must both reach the optimum of test_roof_optimised.
    hc = check_pattern(RECT, pattern_from_toml(ROOF2))
    assert hc.load_factor == pytest.approx(johansen_rectangle(1.0, 2.0), rel=1e-6)
    assert hc.parameters["a"] == pytest.approx(hc.parameters["b"], rel=1e-3)
