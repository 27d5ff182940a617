"""Geometry optimisation of a clean pattern: junctions moved to lower the load factor.

The clean pattern's regions are polygons whose corners ("points") are shared: where three
or more regions meet (junctions), where a yield line meets the slab's boundary, and where
a line bends. Every point is a variable: free inside the slab, sliding along the edge of
the outline, an opening or a support face it lies on, fixed at a corner of those. Every
moving region's plane w = c0 + c1 x + c2 y is a variable too; regions at rest stay at rest.

The problem (as in He and Gilbert, "Automatic rationalization of yield-line patterns
identified using discontinuity layout optimization", Int. J. Solids Struct., 2016, which
solves it by sequential linear programming with move limits) is

    minimise   internal work (points, planes)
    subject to compatibility: at every point, every region holding it has the same w,
               w = 0 where the point lies on a supported edge or face, or on a region at
               rest, and at the centre of a pinned column within a region;
               external work of the scaled loads = its value at the start;
               no triangle of a region's fixed triangulation turns over.

It is solved here by SLSQP (scipy.optimize), a sequential quadratic programme whose
linearised steps play the part of the SLP steps, with bounds on the points as move limits
and a wall-clock budget. Points that meet are then merged, regions that have vanished are
dropped, straight-through points are dropped, and the planes are projected exactly onto
the compatibility conditions of the final geometry (least-squares change of the planes).
The result is only a candidate: `optimise_pattern` in `hingeline.pattern` writes it as a
hand-pattern file and certifies it by the hand check's work equation; it is shown only when
that certified load factor is below the unoptimised pattern's.

Units: m, kNm; w dimensionless inside (the start pattern scaled so its largest w is 1).
May import: numpy, scipy, shapely, `hingeline.model`, `hingeline.upper.certificate`,
`hingeline.check.regions`, and `regions` of this package.
"""
from __future__ import annotations

import logging
import time

import numpy as np

from ..model import Model
from .layout import Layout
from .problem import PatternProblem

log = logging.getLogger(__name__)

#: Smallest relative fall of the internal work (at unit load work) worth certifying.
MIN_GAIN = 1e-5
#: Iteration limits: the result depends on these, not on the machine's speed.
SLSQP_MAX_ITER = 60
SLP_MAX_STEPS = 10
#: Wall-clock safety limit of one optimisation, s (reached only on a slow machine; the
#: iteration limits above normally end it first, so results are reproducible).
TIME_BUDGET = 3.0
#: Problems with more variables than this are solved by SLP (sparse LPs) rather than SLSQP
#: (dense, cubic in the number of variables).
SLSQP_MAX_VARS = 250
#: Cost of a unit violation of a linearised equality in the SLP steps (objective ~ 1).
SLP_PENALTY = 100.0




class _UseSLP(Exception):
    pass


def _slp(f, fjac, eq, eqjac, ineq, ineqjac, z0, bounds, prob, deadline) -> np.ndarray:
    """Sequential linear programming with move limits (He and Gilbert 2016): each step
    minimises the linearised internal work subject to the linearised constraints (elastic:
    violations cost PENALTY) within a box of half-width `delta` round the current point (HiGHS
    via scipy.optimize.linprog); a step is kept when the merit f + PENALTY |eq|_1 falls,
    and the box grows, else it shrinks."""
    from scipy import sparse
    from scipy.optimize import linprog

    n = len(z0)
    npt = 2 * prob.nfree + prob.nslide
    lo = np.array([b[0] for b in bounds])
    hi = np.array([b[1] for b in bounds])
    scale_c = max(float(np.abs(z0[npt:]).max(initial=1.0)), 1.0)
    delta = np.concatenate([np.full(npt, 0.02), np.full(n - npt, 0.2 * scale_c)])
    dmin = 1e-7

    def merit(z):
        return f(z) + SLP_PENALTY * (float(np.abs(eq(z)).sum()) + float(np.maximum(-ineq(z), 0.0).sum()))

    z = z0.copy()
    mz = merit(z)
    i0 = prob.internal(*prob.unpack(z0))
    for _ in range(SLP_MAX_STEPS):
        if time.monotonic() > deadline or delta[:npt].max(initial=dmin) <= dmin:
            break
        P, C = prob.unpack(z)
        c, J = eq(z), eqjac(z)
        a, A = ineq(z), ineqjac(z)
        tl, Jt, mp, mm, wt = prob.side_lin(P, C)
        k, m = len(tl), len(c)
        na = len(a)
        # x = [dz (n), sag (k), hog (k), s+ (m), s- (m), s_area (na)]: sag - hog = tl + Jt dz
        cost = np.concatenate([np.zeros(n), wt * mp / i0, wt * mm / i0, np.full(2 * m + na, SLP_PENALTY)])
        Z = sparse.csr_matrix
        A_eq = sparse.vstack([
            sparse.hstack([Z(J), Z((m, 2 * k)), sparse.identity(m), -sparse.identity(m), Z((m, na))]),
            sparse.hstack([Z(Jt), -sparse.identity(k), sparse.identity(k), Z((k, 2 * m + na))])]).tocsr()
        b_eq = np.concatenate([-c, -tl])
        A_ub = sparse.hstack([Z(-A), Z((na, 2 * k + 2 * m)), -sparse.identity(na)]).tocsr()
        dlo = np.maximum(-delta, lo - z)
        dhi = np.minimum(delta, hi - z)
        extra = 2 * k + 2 * m + na
        bnd = np.concatenate([np.column_stack([dlo, dhi]),
                              np.column_stack([np.zeros(extra), np.full(extra, np.inf)])])
        res = linprog(cost, A_ub=A_ub, b_ub=a, A_eq=A_eq, b_eq=b_eq, bounds=bnd, method="highs")
        if res.status != 0:
            log.debug("slp: LP status %d (%s)", res.status, res.message)
            delta *= 0.5
            continue
        dz = res.x[:n]
        predicted = mz - float(res.fun)
        zn = _correct(eq, J, z + dz, lo, hi)
        mn = merit(zn)
        log.debug("slp: merit %.9g predicted %.3g actual %.3g delta %.3g f %.6g->%.6g lin %.6g eq %.3g lin %.3g", mz, predicted, mz - mn, delta[:npt].max(initial=0), f(z), f(zn), float(res.x[n:n + 2 * k] @ cost[n:n + 2 * k]), np.abs(eq(zn)).sum(), np.abs(c + J @ dz).sum())
        if predicted > 1e-12 and mn < mz - 0.1 * predicted:
            z, mz = zn, mn
            delta = np.minimum(delta * 1.5, np.concatenate([np.full(npt, 0.1), np.full(n - npt, scale_c)]))
        else:
            delta *= 0.5
    return z


def _correct(eq, J, z, lo, hi, steps: int = 4) -> np.ndarray:
    """Second-order correction of an SLP step: minimum-norm steps back onto the equalities
    with the step's Jacobian J (compatibility is bilinear in points and planes, so a step
    leaves a residual of the order of its square)."""
    A = J @ J.T
    A[np.diag_indices_from(A)] += 1e-12 * max(float(np.trace(A)) / max(len(A), 1), 1e-300)
    try:
        cho = np.linalg.cholesky(A)
    except np.linalg.LinAlgError:
        return z
    for _ in range(steps):
        c = eq(z)
        if np.abs(c).max(initial=0.0) < 1e-13:
            break
        y = np.linalg.solve(cho.T, np.linalg.solve(cho, -c))
        z = np.clip(z + J.T @ y, lo, hi)
    return z


def optimise_layout(model: Model, lay: Layout, size: float, budget: float = TIME_BUDGET,
                    method: str = "auto") -> tuple[np.ndarray, np.ndarray] | None:
    """Points and planes of the layout moved to lower the internal work at unit external
    work (see the module docstring; `tidy` then merges and cleans them); None when the
    optimiser finds nothing to gain."""
    from scipy.optimize import minimize

    prob = PatternProblem(model, lay, size)
    if not prob.loads:
        return None
    z0 = prob.pack(lay.points, lay.planes)
    e0 = prob.external(lay.points, lay.planes)
    if not e0 > 0:
        return None
    i0 = prob.internal(lay.points, lay.planes)
    start = time.monotonic()

    def f(z):
        return prob.internal(*prob.unpack(z)) / i0

    def fjac(z):
        return prob.internal(*prob.unpack(z), want_grad=True)[1] / i0

    def eq(z):
        P, C = prob.unpack(z)
        return np.concatenate([prob.compat(P, C), [prob.external(P, C) / e0 - 1.0]])

    def eqjac(z):
        P, C = prob.unpack(z)
        return np.vstack([prob.compat_jac(P, C), prob.external_grad(P, C)[None, :] / e0])

    def ineq(z):
        P, _ = prob.unpack(z)
        return prob.areas(P) * np.sign(prob.area0) + 1e-12

    def ineqjac(z):
        P, _ = prob.unpack(z)
        return prob.areas_jac(P) * np.sign(prob.area0)[:, None]

    best = [z0, 1.0]

    def callback(zk):
        val = f(zk)
        if val < best[1] and np.abs(eq(zk)).max() < 1e-6:
            best[0], best[1] = zk.copy(), val
        if time.monotonic() - start > budget:
            raise StopIteration

    if method == "auto":
        method = "slsqp" if prob.nvar <= SLSQP_MAX_VARS else "slp"
    try:
        if method == "slp":
            raise _UseSLP
        res = minimize(f, z0, jac=fjac, method="SLSQP", bounds=prob.bounds(z0),
                       constraints=[{"type": "eq", "fun": eq, "jac": eqjac},
                                    {"type": "ineq", "fun": ineq, "jac": ineqjac}],
                       callback=callback, options={"maxiter": SLSQP_MAX_ITER, "ftol": 1e-10})
        z = res.x
        if res.status == 6:
            # SLSQP stops on a singular subproblem (redundant compatibility rows, as where a
            # merged region leaves two lines ending at one point); SLP's LPs do not mind them.
            log.info("pattern optimisation: SLSQP stopped (%s); SLP takes over", res.message)
            raise _UseSLP
    except _UseSLP:
        z = _slp(f, fjac, eq, eqjac, ineq, ineqjac, z0, prob.bounds(z0), prob, start + budget)
        callback_free = f(z)
        if callback_free < best[1] and np.abs(eq(z)).max() < 1e-6:
            best[0], best[1] = z.copy(), callback_free
    except (ValueError, np.linalg.LinAlgError) as exc:   # pragma: no cover - solver refused
        log.info("pattern optimisation stopped: %s", exc)
        z = best[0]
    if not np.all(np.isfinite(z)) or np.abs(eq(z)).max() > 1e-5 or f(z) > best[1]:
        z = best[0]
    log.info("pattern optimisation: internal work %.6g of the start at unit load work (%.2f s)",
             f(z), time.monotonic() - start)
    if f(z) >= 1.0 - MIN_GAIN:
        return None        # too little to gain for a certification (and a busier pattern)
    P, C = prob.unpack(z)
    return P, C


#: (merge, sliver, bend) settings of `tidy`, tried in turn until one is certified.
