"""Linear program stage: the kinematic DLO problem, solved adaptively with HiGHS.

Variables: for each line i in the LP, theta_i+ >= 0 (sagging) and theta_i- >= 0
(hogging) in rad, theta_i = theta_i+ - theta_i-.
    minimise   sum_i (c_i+ - g_i) theta_i+ + (c_i- + g_i) theta_i-
    subject to sum over lines at node j of theta_i e_i = 0   (2 rows per node; e_i the
               unit vector along line i pointing away from j: rotation compatibility)
               sum_i f_i theta_i = 1                          (scaled-load work, kNm)
with c the plastic costs (kNm/rad), f and g the work coefficients (kN) of the
factored and held loads. The optimum is the load factor.

Only the mesh edges enter the first LP; every other candidate is priced with the
duals (u at the node rows, mu at the work row) and the worst violators are added
as new columns to the live HiGHS model, which re-solves from its last basis.
The loop stops when no candidate has a negative reduced cost beyond `tol`
(relative to its length times the largest capacity; a looser 1e-4 was tried: the simply
supported square then stopped at 24.0004 instead of 24.0000, without saving time at "fine"), or when the load factor
has stopped falling (see `patience`); either way the mechanism found is a valid
upper bound, the second only leaves some doubt that more lines could lower it.
"""
from __future__ import annotations

import logging
import os
import sys
from dataclasses import dataclass

import highspy
import numpy as np

from ..errors import HeldLoadCollapse, SolverError, UnstableSlabError

log = logging.getLogger(__name__)


@dataclass(frozen=True, eq=False)
class LPSolution:
    """theta: (c,) rotation of every candidate (0 for lines never added), rad.
    objective: load factor. rounds: LP solves. in_lp: (c,) bool, lines in the final LP.
    max_violation: largest reduced-cost violation left, per unit length and
    unit capacity (0 when the optimum over all candidates is proven)."""

    theta: np.ndarray
    objective: float
    rounds: int
    in_lp: np.ndarray
    max_violation: float


def _columns(cand, f, g, idx, n_nodes, extra):
    """HiGHS column data for lines idx: each gives a +theta and a -theta column.
    extra: (c, r) sparse coefficients of the lines in the island rows (after the work row)."""
    a, b, t = cand.a[idx], cand.b[idx], cand.tangent[idx]
    k = len(idx)
    rows = np.stack([2 * a, 2 * a + 1, 2 * b, 2 * b + 1, np.full_like(a, 2 * n_nodes)], axis=1)
    vals = np.stack([t[:, 0], t[:, 1], -t[:, 0], -t[:, 1], f[idx]], axis=1)
    line = np.repeat(np.arange(k), 5)
    row, val = rows.ravel(), vals.ravel()
    if extra is not None and extra.shape[1]:
        e = extra[idx].tocoo()
        line = np.concatenate([line, e.row])
        row = np.concatenate([row, 2 * n_nodes + 1 + e.col])
        val = np.concatenate([val, e.data])
    keep = val != 0.0  # e.g. f of a vertical line
    line, row, val = line[keep], row[keep], val[keep]
    # Column 2j is +theta_j, column 2j+1 is -theta_j (negated entries).
    col = np.concatenate([2 * line, 2 * line + 1])
    row = np.concatenate([row, row])
    val = np.concatenate([val, -val])
    order = np.lexsort((row, col))
    col, row, val = col[order], row[order], val[order]
    starts = np.searchsorted(col, np.arange(2 * k))
    cost = np.empty(2 * k)
    cost[0::2] = cand.cost_plus[idx] - g[idx]
    cost[1::2] = cand.cost_minus[idx] + g[idx]
    return cost, starts.astype(np.int32), row.astype(np.int32), val


def _highs() -> highspy.Highs:
    """A HiGHS instance; its licence banner (printed to fd 1 on the first construction in a
    process) is kept out of the command line's output."""
    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "w") as null:
            os.dup2(null.fileno(), 1)
            h = highspy.Highs()
    finally:
        os.dup2(saved, 1)
        os.close(saved)
    h.setOptionValue("output_flag", False)
    return h


def _new_model(n_nodes, ipm, n_extra=0):
    h = _highs()
    h.setOptionValue("output_flag", False)
    h.setOptionValue("primal_feasibility_tolerance", 1e-9)
    h.setOptionValue("dual_feasibility_tolerance", 1e-9)
    if ipm:
        # Interior point without crossover while lines are being added: its duals lie inside
        # the optimal dual face, so degenerate problems (the simply supported square) do not
        # keep pricing in useless lines, and it was 4-8 times faster than either simplex on
        # these LPs (clamped square, 1068 nodes, 19k lines: IPM 3.5 s, dual simplex 17 s,
        # primal simplex 30 s).
        h.setOptionValue("solver", "ipm")
        h.setOptionValue("run_crossover", "off")
    nrow = 2 * n_nodes + 1 + n_extra
    lower = np.zeros(nrow)
    upper = np.zeros(nrow)
    lower[2 * n_nodes] = upper[2 * n_nodes] = 1.0
    h.addRows(nrow, lower, upper, 0, np.zeros(0, np.int32), np.zeros(0, np.int32), np.zeros(0))
    return h


def _add(h, cand, f, g, idx, n_nodes, extra):
    cost, starts, indices, values = _columns(cand, f, g, idx, n_nodes, extra)
    k = 2 * len(idx)
    h.addCols(k, cost, np.zeros(k), np.full(k, highspy.kHighsInf), len(indices), starts, indices, values)


def _run(h):
    h.run()
    status = h.getModelStatus()
    if status == highspy.HighsModelStatus.kUnbounded:
        raise HeldLoadCollapse(
            "the slab collapses under its held loads (scaled = false) alone: there is a mechanism whose "
            "held-load work exceeds its internal work; reduce the held loads or add strength/supports")
    if status == highspy.HighsModelStatus.kInfeasible:
        raise SolverError("the linear program is infeasible: no mechanism does positive work "
                          "under the scaled loads (check the loads)")
    if status != highspy.HighsModelStatus.kOptimal:
        raise SolverError(f"HiGHS stopped with status '{h.modelStatusToString(status)}'")
    return h.getSolution(), h.getInfo().objective_function_value


def _run_rounds(h):
    """_run for the interior-point rounds; when IPX stops short of optimality (status
    'Unknown' was seen on a slab on columns), retry with crossover, then with the simplex."""
    try:
        return _run(h)
    except SolverError as first:
        if h.getModelStatus() in (highspy.HighsModelStatus.kUnbounded, highspy.HighsModelStatus.kInfeasible):
            raise
        log.info("interior point stopped (%s); retrying with crossover, then simplex", first)
    for option, value in (("run_crossover", "on"), ("solver", "simplex")):
        h.setOptionValue(option, value)
        try:
            return _run(h)
        except SolverError:
            continue
        finally:
            if option == "solver":
                h.setOptionValue("solver", "ipm")
            h.setOptionValue("run_crossover", "off")
    raise SolverError("HiGHS could not solve the linear program with interior point or simplex")


def solve_lp(cand, f, g, n_nodes, initial, m_ref, tol=1e-7, max_rounds=200,
             batch=None, patience=3, stall=1e-7, extra=None) -> LPSolution:
    """Adaptive DLO solve. initial: indices of the lines of the first LP.
    m_ref: largest capacity (kNm/m), to scale violations; batch: most lines added per round.
    extra: optional (c, r) sparse matrix of further equality rows (= 0) per line: the
    conditions that islands of ground (columns, walls) stay at rest."""
    n_extra = 0 if extra is None else extra.shape[1]
    h = _new_model(n_nodes, ipm=True, n_extra=n_extra)
    in_lp = np.zeros(len(cand), bool)
    order = []  # line index of every column pair, in column order
    scale = m_ref * cand.length
    if batch is None:
        # About one line per node per round: smaller LPs per round were faster overall than
        # larger batches (clamped square, 1068 nodes: batch 2n 160 s, n 57 s, n/4 59 s).
        batch = max(n_nodes, 200)

    def add(idx):
        _add(h, cand, f, g, idx, n_nodes, extra)
        in_lp[idx] = True
        order.extend(idx.tolist())

    add(np.asarray(initial))
    rounds, history = 0, []
    while True:
        sol, obj = _run_rounds(h)
        rounds += 1
        y = np.asarray(sol.row_dual)
        u = y[: 2 * n_nodes].reshape(-1, 2)
        mu = y[2 * n_nodes]
        s = ((u[cand.a] - u[cand.b]) * cand.tangent).sum(1) + mu * f
        if n_extra:
            s += extra @ y[2 * n_nodes + 1:]
        rc_plus = cand.cost_plus - g - s
        rc_minus = cand.cost_minus + g + s
        viol = np.maximum(-rc_plus, -rc_minus) / scale
        viol[in_lp] = 0.0
        viol_max = float(viol.max(initial=0.0))
        log.info("LP round %d: %d lines, load factor %.6f, max violation %.2e",
                 rounds, in_lp.sum(), obj, viol_max)
        history.append(obj)
        # Stop once the load factor has not moved by `stall` (relative) over `patience` rounds.
        stalled = len(history) > patience and history[-1 - patience] - obj <= stall * abs(obj)
        if viol_max <= tol or rounds >= max_rounds or stalled:
            if viol_max > tol:
                log.info("LP stopped with violation %.2e left", viol_max)
            break
        bad = np.flatnonzero(viol > tol)
        if bad.size > batch:
            bad = bad[np.argpartition(-viol[bad], batch)[:batch]]
        add(bad)

    # A vertex solution (few active lines): a simplex solve over the lines the interior-point
    # solution uses, else over all LP lines, else interior point with crossover. Each try is
    # kept only if it does not lose optimality; if all fail, the interior-point solution is
    # used as it is (still a compatible mechanism; the certificate check judges it).
    order = np.asarray(order)
    x = np.asarray(sol.col_value)
    theta_ipm = x[0::2] - x[1::2]
    big = order[np.abs(theta_ipm) > 1e-7 * np.abs(theta_ipm).max()]
    support = np.union1d(big, np.asarray(initial))
    theta = np.zeros(len(cand))
    for lines, ipm in ((support, False), (order, False), (order, True)):
        hv = _new_model(n_nodes, ipm=ipm, n_extra=n_extra)
        if ipm:
            hv.setOptionValue("run_crossover", "on")
        _add(hv, cand, f, g, lines, n_nodes, extra)
        try:
            vsol, vobj = _run(hv)
        except SolverError as err:
            log.info("vertex solve over %d lines failed: %s", len(lines), err)
            continue
        if vobj <= obj * (1 + 1e-7) + 1e-12:
            log.info("vertex solution over %d lines: load factor %.8f", len(lines), vobj)
            xv = np.asarray(vsol.col_value)
            theta[lines] = xv[0::2] - xv[1::2]
            return LPSolution(theta, float(vobj), rounds, in_lp, viol_max)
    log.info("no vertex solution: using the interior-point solution")
    theta[order] = theta_ipm
    vobj = obj
    return LPSolution(theta, float(vobj), rounds, in_lp, viol_max)
