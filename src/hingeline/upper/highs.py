"""HiGHS models of the kinematic DLO problem: columns from lines, fresh models, solves
and their statuses. Used by the adaptive rounds (lp.py) and the vertex step (vertex.py).

Rows: 2 per node (rotation compatibility, = 0), the work row (scaled-load work = 1), then
the rows that hold supports inside the slab. Columns: 2 per line, +theta and -theta (rad,
both >= 0); costs kNm per rad: plastic cost minus or plus held-load work, plus a small
extra cost per m (see lp.py on EPS).
"""
from __future__ import annotations

import os
import sys

import highspy
import numpy as np

from ..errors import HeldLoadCollapse, SolverError
from .pricing import LineSet

EPS = 1e-8          # extra LP cost per m of line, relative to m_ref (see lp.py's docstring)


def columns(lines: LineSet, n_nodes: int, extra_cost: np.ndarray):
    """HiGHS column data for `lines`: each gives a +theta and a -theta column."""
    c = lines.cand
    a, b, t = c.a, c.b, c.tangent
    k = len(c)
    rows = np.stack([2 * a, 2 * a + 1, 2 * b, 2 * b + 1, np.full_like(a, 2 * n_nodes)], axis=1)
    vals = np.stack([t[:, 0], t[:, 1], -t[:, 0], -t[:, 1], lines.f], axis=1)
    line = np.repeat(np.arange(k), 5)
    row, val = rows.ravel(), vals.ravel()
    if lines.extra.shape[1]:
        e = lines.extra.tocoo()
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
    cost[0::2] = c.cost_plus - lines.g + extra_cost
    cost[1::2] = c.cost_minus + lines.g + extra_cost
    return cost, starts.astype(np.int32), row.astype(np.int32), val


def highs_instance() -> highspy.Highs:
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


def new_model(n_nodes, ipm, n_extra=0):
    h = highs_instance()
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
    # Presolve spends its time searching for dependent equations among the compatibility rows
    # and finds none worth removing (clamped square, 1068 nodes, final LP of 2137 rows and
    # 23k columns: 13.4 s with presolve, 1.15 s without, the same optimum).
    h.setOptionValue("presolve", "off")
    # One thread: interior point (IPX) and the simplex as used here run serially, so HiGHS's
    # worker thread only competes with the other processes of a parallel study (demo at 800
    # nodes: the same CPU time and load factor with 1 thread as with the default).
    h.setOptionValue("threads", 1)
    nrow = 2 * n_nodes + 1 + n_extra
    lower = np.zeros(nrow)
    upper = np.zeros(nrow)
    lower[2 * n_nodes] = upper[2 * n_nodes] = 1.0
    h.addRows(nrow, lower, upper, 0, np.zeros(0, np.int32), np.zeros(0, np.int32), np.zeros(0))
    return h


def add_lines(h, lines: LineSet, n_nodes: int, m_ref: float):
    cost, starts, indices, values = columns(lines, n_nodes, EPS * m_ref * lines.cand.length)
    k = 2 * len(lines)
    h.addCols(k, cost, np.zeros(k), np.full(k, highspy.kHighsInf), len(indices), starts, indices, values)


def run(h):
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


def option(h, name: str):
    """The value of a HiGHS option (highspy returns (status, value) in some versions)."""
    value = h.getOptionValue(name)
    return value[1] if isinstance(value, tuple) else value
