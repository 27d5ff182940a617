"""Yield conditions of the lower bound: Nielsen's criterion on the control values of each
triangle as second-order cones, and the forms it takes where there are no top bars.

Each branch of the criterion in the bar axes, a b >= m_12^2 with a, b >= 0 (sagging:
a = m_p1 - m_1, b = m_p2 - m_2; hogging: a = m_n1 + m_1, b = m_n2 + m_2), is the rotated
cone u = a + b >= |(a - b, 2 m_12)|. The capacities are lowered by CONE_MARGIN and the cone
is kept exact, so that the solver's tolerance cannot carry the field past the true
capacities. (Narrowing the cone about its apex instead, u (1 - d) >= |(a - b, 2 m_12)|,
does the same with top bars, but where a hogging capacity is 0 it forbids the uniaxial
states m_n = 0 < m_t that free edges need: a slab without top bars then proved nothing at
all next to a free edge or an opening.)

Without top bars (both hogging capacities 0 in a triangle) the hogging branch says that
the moment tensor M is positive semi-definite, and two more forms are used:

- On a boundary side where m_n = 0 (elements.zero_moment_sides) it leaves m_nt = 0 and
  m_t >= 0. These are imposed as linear rows at the side's 3 control values, in place of
  hogging cones that have no interior there (such cones slow or stall the interior-point
  solver). Where two such sides of a triangle meet, M = 0 follows from three of the rows.
- In a triangle along a free edge (elements.scaled_check_sides), checking M at its control
  values would force m_n and m_nt to vanish like the square of the distance from the edge,
  so the row of triangles along it would act as an edge beam that carries almost nothing.
  The hogging branch is checked there on N = D^-1 M D^-1, D = diag(1, lambda) in the side's
  (t, n) frame, lambda the barycentric coordinate of the opposite vertex: with m_n = c
  lambda^2 and m_nt = lambda L (L linear), N is a quadratic polynomial whose control values
  are linear in those of M, and N positive semi-definite at them gives M positive
  semi-definite on the whole triangle (as many cones as before).

After the solve, `tidy_controls` sets to exactly 0 the parts of the field that these
conditions make 0 up to the solver's tolerance, so that the re-check (fieldcheck.py) reads
the same structure from the field alone.

Units: kNm/m. May import: `hingeline.model`, `.elements`; never `hingeline.upper`.
"""
from __future__ import annotations

import numpy as np
from scipy import sparse

from ..model import Model
from .elements import (
    PAIR,
    SIDES,
    Sides,
    bar_rotation,
    normal_moment_coeffs,
    scaled_check_sides,
    scaled_controls,
    twist_coeffs,
    zero_moment_sides,
)

# Relative margin by which the capacities imposed on the cone program lie below the true
# ones, so that solver tolerances (about 1e-8) cannot carry the field outside the criterion.
CONE_MARGIN = 1e-6


def _zero_side_controls(sd: Sides, cap: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Control values on the zero-moment sides: side (k,), triangle (k,), control (k,) and
    whether it is the first zero-moment side of its triangle to reach that control (k,)."""
    zero = np.flatnonzero(zero_moment_sides(sd, cap))
    i, j = SIDES[sd.local[zero], 0], SIDES[sd.local[zero], 1]
    ctrl = np.stack([i, PAIR[i, j], j], axis=1).ravel()
    side = np.repeat(zero, 3)
    tri = sd.tri[side]
    first = np.zeros(len(side), bool)
    first[np.unique(6 * tri + ctrl, return_index=True)[1]] = True
    return side, tri, ctrl, first


def _point_cones(K: np.ndarray, points: np.ndarray, ncol: int) -> sparse.csr_matrix:
    """Rows A of cones (u, v, w) = const + K m at control points `points` (global 6 t + k),
    in the solver's form s = rhs - A x (so A = -K, and const is the rhs)."""
    k = len(points)
    r = np.repeat(np.arange(3 * k), 3)
    c = np.tile(np.arange(3), 3 * k) + 3 * np.repeat(points, 9)
    return sparse.csr_matrix((np.tile(-K.ravel(), k), (r, c)), shape=(3 * k, ncol))


def _scaled_cones(sd: Sides, scaled: np.ndarray, ncol: int) -> sparse.csr_matrix:
    """Hogging cones (zero capacity) on the control values of N in the triangles with a
    scaled check, as rows over their 18 control values."""
    tau = np.flatnonzero(scaled >= 0)
    s = scaled[tau]
    m = len(tau)
    i, j, v, ij, iv, jv = scaled_controls(sd.local[s])
    tt = normal_moment_coeffs(sd.tangent[s])
    nn = normal_moment_coeffs(sd.normal[s])
    nt = twist_coeffs(sd.normal[s], sd.tangent[s])
    r = np.arange(m)
    W = np.zeros((m, 6, 3, 6, 3))               # [triangle, control of N, (N_tt, N_nn, N_nt), control of M, component]
    for q in range(6):
        W[:, q, 0, q] = tt                      # N_tt = m_t
        W[r, q, 1, v] = nn                      # N_nn = m_n / lambda^2 = control value of m_n at v
    # N_nt = m_nt / lambda is linear with vertex values 2 a_iv, 2 a_jv, a_v (a: control values
    # of m_nt); its quadratic control values are those, and on the sides the mean of the ends.
    for q, p, w in ((i, iv, 2.0), (j, jv, 2.0), (v, v, 1.0), (ij, iv, 1.0), (ij, jv, 1.0),
                    (iv, iv, 1.0), (iv, v, 0.5), (jv, jv, 1.0), (jv, v, 0.5)):
        W[r, q, 2, p] += w * nt
    W = W.reshape(m, 6, 3, 18)
    K = np.stack([W[:, :, 0] + W[:, :, 1], W[:, :, 0] - W[:, :, 1], 2.0 * W[:, :, 2]], axis=2)  # (m, 6, 3, 18)
    rows = np.repeat(np.arange(18 * m), 18)
    cols = np.broadcast_to((18 * tau)[:, None, None, None] + np.arange(18), K.shape).ravel()
    return sparse.csr_matrix((-K.ravel(), (rows, cols)), shape=(18 * m, ncol))


def yield_conditions(model: Model, sd: Sides, cap: np.ndarray, ncol: int, rows, ineq) -> tuple[sparse.csr_matrix, np.ndarray]:
    """The criterion on the t triangles with capacities cap (t, 4): the cone block and its
    right-hand side (3 rows per cone); linear rows (m_nt = 0, m_t >= 0 on zero-moment sides
    of triangles without top bars) are added to `rows` (equalities) and `ineq` (<= 0)."""
    t = len(cap)
    R = bar_rotation(model.capacity.bar_angle)                     # (m1, m2, m12) = R m
    scaled = scaled_check_sides(sd, cap)
    side, tri, ctrl, first = _zero_side_controls(sd, cap)
    cols = 18 * tri[:, None] + 3 * ctrl[:, None] + np.arange(3)
    rows.add(cols[first], twist_coeffs(sd.normal[side], sd.tangent[side])[first], 0.0)
    cover = np.bincount(6 * tri + ctrl, minlength=6 * t)
    lone = (cover[6 * tri + ctrl] == 1) & (scaled[tri] < 0)       # m_t >= 0 is implied elsewhere
    ineq.add(cols[lone], -normal_moment_coeffs(sd.tangent[side])[lone], 0.0)

    hog = np.ones(6 * t, bool)
    hog[6 * tri + ctrl] = False
    hog[(6 * np.flatnonzero(scaled >= 0)[:, None] + np.arange(6)).ravel()] = False
    capp = (1.0 - CONE_MARGIN) * np.repeat(cap, 6, axis=0)          # (6t, 4)
    blocks, rhs = [], []
    for sign, c1, c2, points in ((-1.0, 0, 1, np.arange(6 * t)), (1.0, 2, 3, np.flatnonzero(hog))):
        K = np.array([[sign, sign, 0.0], [sign, -sign, 0.0], [0.0, 0.0, 2.0]]) @ R
        a, b = capp[points, c1], capp[points, c2]
        blocks.append(_point_cones(K, points, ncol))
        rhs.append(np.stack([a + b, a - b, np.zeros(len(points))], axis=1).ravel())
    blocks.append(_scaled_cones(sd, scaled, ncol))
    rhs.append(np.zeros(blocks[-1].shape[0]))
    return sparse.vstack(blocks).tocsr(), np.concatenate(rhs)


def _outer(d: np.ndarray, e: np.ndarray) -> np.ndarray:
    """(k, 3): the symmetric tensor (d e^T + e d^T) / 2 as (m_x, m_y, m_xy)."""
    return np.stack([d[:, 0] * e[:, 0], d[:, 1] * e[:, 1], 0.5 * (d[:, 0] * e[:, 1] + d[:, 1] * e[:, 0])], axis=1)


def tidy_controls(controls: np.ndarray, sd: Sides, cap: np.ndarray) -> np.ndarray:
    """Control values (t, 6, 3) with the parts the conditions make zero set to exactly 0:
    m_n and m_nt on zero-moment sides (M = m_t t t^T there; M = 0 where two meet) and m_n at
    the controls one step off the side of a scaled check. The changes are of the size of
    the solver's tolerance; the re-check measures the equilibrium of the result."""
    c = controls.copy()
    side, tri, ctrl, first = _zero_side_controls(sd, cap)
    t_dir = sd.tangent[side]
    m_t = np.einsum("kc,kc->k", c[tri, ctrl], normal_moment_coeffs(t_dir))
    c[tri, ctrl] = m_t[:, None] * _outer(t_dir, t_dir)
    c[tri[~first], ctrl[~first]] = 0.0
    tau = np.flatnonzero(scaled_check_sides(sd, cap) >= 0)
    s = scaled_check_sides(sd, cap)[tau]
    n = sd.normal[s]
    nn = normal_moment_coeffs(n)
    for k in scaled_controls(sd.local[s])[4:]:
        c[tau, k] -= np.einsum("kc,kc->k", c[tau, k], nn)[:, None] * _outer(n, n)
    return c
