"""The solver against published and closed-form collapse loads.

Each case is a unit slab (lengths m, q = 1 kPa), so the load factor is the
coefficient of m / L^2. Yield-line analysis gives upper bounds: every result
must lie at or above the exact value (0.1 % allowed for round-off) and
within a mesh-dependent margin above it. benchmarks/reference.py measures
the same cases on finer meshes.
"""
import math

import numpy as np
import pytest
from unit_slabs import SQUARE, johansen_rectangle, model

import hingeline


def assert_upper_bound(lf, exact, above):
    assert lf >= exact * (1 - 1e-3), f"{lf} is below the exact value {exact}: unsafe"
    assert lf <= exact * (1 + above), f"{lf} is more than {above:.1%} above {exact}"


def test_simply_supported_square():
    # 24 m/L^2: Johansen's diagonal pattern, exact (a lower-bound field with the same value
    # exists; Nielsen & Hoang, Limit Analysis and Concrete Plasticity - recalled).
    r = hingeline.solve(model(SQUARE, "simple"))
    assert_upper_bound(r.load_factor, 24.0, 1e-4)


def test_clamped_square_normal():
    # 42.851 m/L^2 for m' = m: Fox, Phil. Trans. R. Soc. A 277 (1974), exact for the square
    # yield criterion. Target at 450 nodes: within 1.5 %.
    r = hingeline.solve(model(SQUARE, "continuous", nodes=450))
    assert_upper_bound(r.load_factor, 42.851, 0.015)


def test_rectangle_1x2_johansen():
    # Johansen's formula for the simply supported rectangle: 14.1407 m/a^2 for b = 2a.
    exact = johansen_rectangle(1.0, 2.0)
    assert exact == pytest.approx(14.1407, abs=1e-4)
    r = hingeline.solve(model([[0, 0], [2, 0], [2, 1], [0, 1]], "simple"))
    assert_upper_bound(r.load_factor, exact, 0.01)


def test_square_with_free_edge():
    # Three edges simply supported, one free: Johansen's pattern is half of the 1 x 2 rectangle,
    # 14.1407 m/L^2. The free edge needs the fill strip to work.
    r = hingeline.solve(model(SQUARE, ["simple", "simple", "free", "simple"]))
    assert_upper_bound(r.load_factor, johansen_rectangle(1.0, 2.0), 0.02)


def test_regular_polygon():
    # Pyramid mechanism of a regular polygon of inradius r: internal work m * perimeter / r
    # against q * area / 3 gives 6 m / r^2 (the circle's exact value, 6 m / R^2).
    n = 16
    R = 1.0 / math.cos(math.pi / n)
    pts = [[round(R * math.cos(2 * math.pi * k / n), 12), round(R * math.sin(2 * math.pi * k / n), 12)]
           for k in range(n)]
    r = hingeline.solve(model(pts, "simple"))
    assert_upper_bound(r.load_factor, 6.0, 0.02)


def test_orthotropic_square_affinity():
    # Johansen's affinity theorem: capacities m (x bars) and mu m (y bars) on Lx x Ly behave as
    # the isotropic slab m on Lx x Ly / sqrt(mu). mu = 0.5: rectangle 1 x sqrt(2).
    exact = johansen_rectangle(1.0, 1.0 / math.sqrt(0.5))
    r = hingeline.solve(model(SQUARE, "simple", sagging=[1.0, 0.5], hogging=[1.0, 0.5]))
    assert_upper_bound(r.load_factor, exact, 0.01)


def test_bar_angle_rotates_capacities():
    # Bars turned by 90 degrees with their capacities swapped describe the same slab: the same
    # load factor (symmetry of the capacity formula; no source needed).
    a = hingeline.solve(model(SQUARE, "simple", sagging=[1.0, 0.5], hogging=[1.0, 0.5]))
    b = hingeline.solve(model(SQUARE, "simple", sagging=[0.5, 1.0], hogging=[0.5, 1.0], bar_angle=90.0))
    assert a.load_factor == pytest.approx(b.load_factor, rel=1e-6)


L_SHAPE = [[0, 0], [3, 0], [3, 1.5], [1.5, 1.5], [1.5, 3], [0, 3]]


def test_clamped_is_twice_simple_without_top_bars():
    # For a slab supported all round with isotropic capacities, continuous edges with m' = m give
    # exactly twice the load factor of simple edges with m' = 0 (docs/method.md, Known traps:
    # over any mechanism vanishing on the outline, sagging and hogging rotations have equal
    # weighted sums).
    # Holds for the discrete problem too (same candidate lines), so the tolerance is tight.
    simple = hingeline.solve(model(L_SHAPE, "simple", hogging=0.0))
    clamped = hingeline.solve(model(L_SHAPE, "continuous", hogging=1.0))
    assert clamped.load_factor == pytest.approx(2 * simple.load_factor, rel=1e-6)


HOLED = """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "simple"
[[slab.opening]]
polygon = [[0.4, 0.4], [0.6, 0.4], [0.6, 0.6], [0.4, 0.6]]
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 1.0
[analysis]
nodes = 150
"""

# Diagonal mechanism of the simply supported unit square with a central c x c opening
# (c = 0.2, opening corners at a = 0.4): four trapezoids rotate by 2 about their edges
# (apex deflection 1 at the centre). Hand work equation (Johansen): internal work
# m * rotation * projected yield-line length = 4 * 2 * 2a = 6.4 m; external work
# 4 * integral_0^a 2y (1 - 2y) dy = 4 (a^2 - 4 a^3 / 3) = 0.298667 q.
HOLED_DIAGONAL = 6.4 / (4 * (0.4**2 - 4 * 0.4**3 / 3))


def test_opening_hand_mechanism_is_an_upper_bound():
    # The optimum over all mechanisms cannot exceed one particular mechanism that the candidate
    # lines can represent. A formulation that mishandles openings is not bound by this (deleting
    # lines across an opening gives results far off in either direction: docs/method.md, Known
    # traps). The lower limit guards against far-too-low values (e.g. 8.25) of such a fault.
    assert HOLED_DIAGONAL == pytest.approx(21.4286, abs=1e-4)
    r = hingeline.solve(hingeline.model_from_toml(HOLED))
    assert r.load_factor <= HOLED_DIAGONAL * (1 + 1e-9)
    assert r.load_factor > 0.5 * HOLED_DIAGONAL
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


def test_certificate_reproduces_hand_mechanisms():
    # check_mechanism on hand-built fields: the clamped square's diagonal pattern gives 48 m/L^2
    # (textbook result), the simply supported one 24 m/L^2, and the holed
    # square's diagonal mechanism the hand value above.
    from hingeline.result import Mechanism

    V = np.array([[0, 0], [1, 0], [1, 1], [0, 1], [0.5, 0.5]], float)
    T = np.array([[0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4]])
    w = np.array([0, 0, 0, 0, 3.0])  # work of q = 1 on the pyramid = 1/3 * 3 = 1
    simple = model(SQUARE, "simple")
    clamped = model(SQUARE, "continuous")
    assert hingeline.check_mechanism(simple, Mechanism(V, T, w)).load_factor == pytest.approx(24.0, rel=1e-12)
    assert hingeline.check_mechanism(clamped, Mechanism(V, T, w)).load_factor == pytest.approx(48.0, rel=1e-12)

    a = 0.4
    V = np.array([[0, 0], [1, 0], [1, 1], [0, 1], [a, a], [1 - a, a], [1 - a, 1 - a], [a, 1 - a]], float)
    T = np.array([[0, 1, 5], [0, 5, 4], [1, 2, 6], [1, 6, 5], [2, 3, 7], [2, 7, 6], [3, 0, 4], [3, 4, 7]])
    w = np.where(np.arange(8) < 4, 0.0, 2 * a)
    check = hingeline.check_mechanism(hingeline.model_from_toml(HOLED), Mechanism(V, T, w))
    assert check.load_factor == pytest.approx(HOLED_DIAGONAL, rel=1e-12)
