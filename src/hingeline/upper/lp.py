"""Linear program stage: the kinematic DLO problem, solved adaptively with HiGHS.

Variables: for each line i in the LP, theta_i+ >= 0 (sagging) and theta_i- >= 0
(hogging) in rad, theta_i = theta_i+ - theta_i-.
    minimise   sum_i (c_i+ - g_i) theta_i+ + (c_i- + g_i) theta_i-
    subject to sum over lines at node j of theta_i e_i = 0   (2 rows per node; e_i the
               unit vector along line i pointing away from j: rotation compatibility)
               sum_i f_i theta_i = 1                          (scaled-load work, kNm)
with c the plastic costs (kNm/rad), f and g the work coefficients (kN) of the
factored and held loads. The optimum is the load factor.

The first LP holds the mesh edges and the short lines around each node. After each
solve every other candidate is priced with the duals (u at the node rows, mu at the
work row; see pricing.py, which makes the candidates block by block) and the worst
violators, with the lines just short of violating, are added as new columns to the
live HiGHS model. The loop stops only when no candidate has a negative reduced cost
beyond `tol` (relative to its length times the largest capacity; a looser 1e-4 was
tried: the simply supported square then stopped at 24.0004 instead of 24.0000), so no
line is left out that could lower the load factor. If `max_rounds` is reached first,
the largest violation left is reported and the solve adds a warning.
Measured alternatives that lost: taking the next round's lines from a pool kept by
the last pricing pass (more rounds, each an interior-point solve, for pricing that
cost less than the solve), deleting lines that stayed at zero (the interior-point
duals then moved and violated them again, and the loop stalled with violations left;
on the clamped square at 1068 nodes, deleting after each round only lines of real
strength whose reduced costs were at least 10 % of their costs both ways, 6,300 of
15,300, made the next round's largest violation jump from 0.17 to 5.8e3, and 200 rounds
did not end the loop: the interior-point duals sit at the centre of the optimal dual
face, and every deleted column widens that face),
and capping the new lines per node (the load factor stalled above the optimum).

Fill (openings and the strip beyond free edges) has no strength, so hinges there
cost nothing, and motions of the fill alone cost nothing and do no work: the optimal
face of the LP is unbounded. Interior point then drifts along it (rotations in the
fill thousands of times those in the slab, status 'imprecise' or 'Unknown', and a
simplex over the lines it uses reports 'infeasible' or 'unbounded'). Every line in
the LP therefore carries a small extra cost EPS * m_ref per m of length (highs.py); its effect
on the load factor is below the pricing tolerance, and the load factor reported is
the true cost of the mechanism found.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass

import highspy
import numpy as np
from scipy.spatial import cKDTree

from ..errors import SolverError
from .highs import add_lines, new_model, run
from .pricing import CandidateSource, LineSet, concat
from .vertex import vertex_rotations

log = logging.getLogger(__name__)


BATCH_PER_NODE = 4  # most lines added per round, per node (see solve_lp)
NEAR = 1e-3         # lines this close to violating (per m, per m_ref) may join a round's batch
LOCAL = 3.0         # the first LP also holds every line up to LOCAL median mesh edges long


@dataclass(frozen=True, eq=False)
class LPSolution:
    """lines: the lines of the final LP; theta: (c,) their rotations, rad (0 for lines
    not in the mechanism). objective: load factor (cost of the mechanism found).
    rounds: LP solves, each followed by a pricing pass over every candidate; candidates:
    how many admissible lines there are. max_violation: largest reduced-cost violation
    left at the last pass, per unit length and unit capacity (0 or below tol when the
    optimum over all candidates is proven). carried: how many of the carried node pairs
    are lines of the first LP (the admissible ones)."""

    lines: LineSet
    theta: np.ndarray
    objective: float
    rounds: int
    candidates: int
    max_violation: float
    carried: int = 0


def _run_rounds(h):
    """run() for the LP rounds; when IPX stops short of optimality (status 'Unknown' was seen on
    a slab on columns), retry with crossover, then with the simplex, and keep the simplex for
    the rounds that follow. On a square on four pinned columns IPX stopped so in every round
    from the fourth on, and the duals of each retry moved inside the optimal face: 23 rounds
    at the same load factor, 56 s; keeping the simplex (warm-started from the basis of the
    round before) ended the line search in 4 rounds, 8.5 s."""
    try:
        return run(h)
    except SolverError as first:
        if h.getModelStatus() in (highspy.HighsModelStatus.kUnbounded, highspy.HighsModelStatus.kInfeasible):
            raise
        log.info("interior point stopped (%s); retrying with crossover, then simplex", first)
    for option, value in (("run_crossover", "on"), ("solver", "simplex")):
        h.setOptionValue(option, value)
        try:
            out = run(h)
        except SolverError:
            continue
        h.setOptionValue("solver", "simplex")
        return out
    raise SolverError("HiGHS could not solve the linear program with interior point or simplex")


def _true_objective(lines: LineSet, theta: np.ndarray) -> float:
    """Load factor of rotations theta on `lines`: internal minus held-load work (kNm) at
    unit factored-load work, without the EPS cost."""
    c = lines.cand
    return float(np.sum(np.where(theta > 0, (c.cost_plus - lines.g) * theta, -(c.cost_minus + lines.g) * theta)))


class _Worst:
    """The `size` lines with the largest violation offered so far (a running selection)."""

    def __init__(self, size: int, floor: float):
        self.size, self.cutoff, self.parts, self.held = size, floor, [], 0

    def offer(self, lines: LineSet, viol: np.ndarray) -> None:
        keep = np.flatnonzero(viol > self.cutoff)
        if keep.size:
            self.parts.append((viol[keep], lines.take(keep)))
            self.held += keep.size
            if self.held > 2 * self.size:
                self._compress()

    def _compress(self) -> None:
        viol = np.concatenate([v for v, _ in self.parts])
        lines = concat([ls for _, ls in self.parts])
        if len(viol) > self.size:
            top = np.argpartition(-viol, self.size - 1)[: self.size]
            viol, lines = viol[top], lines.take(top)
            self.cutoff = float(viol.min())
        self.parts, self.held = [(viol, lines)], len(viol)

    def result(self) -> LineSet | None:
        if not self.parts:
            return None
        self._compress()
        return self.parts[0][1]


def _pricing_pass(source: CandidateSource, duals, lp_keys, m_ref, size, floor):
    """Price every candidate with `duals`. Returns (largest violation of a line not in the
    LP, or an upper bound of it; the `size` most violated such lines with a violation above
    `floor` (or None); number of admissible lines)."""
    worst, count, top = -np.inf, 0, _Worst(size, floor)
    for block, viol, rest, k in source.priced(duals, m_ref, floor, lp_keys):
        count += k
        worst = max(worst, rest, float(viol.max(initial=-np.inf)))
        if block is not None:
            top.offer(block, viol)
    return worst, top.result(), count


def _first_lines(source: CandidateSource, initial: np.ndarray, carried: np.ndarray | None = None) -> LineSet:
    """The lines of the first LP: the mesh edges and every line up to LOCAL median mesh
    edges long. Measured on the clamped square at 1068 nodes: 9 rounds from the mesh edges
    alone, 7 with lines up to 2 edges, 5 up to 3 (each round's LP larger, the total about
    equal); on the irregular slab of benchmarks/engine.py at 2308 nodes, 9 against 5 rounds,
    each round also paying a pricing pass over 2.5 million lines."""
    nodes, n = source.ctx.nodes, source.n_nodes
    edge = np.hypot(*(nodes[initial[:, 0]] - nodes[initial[:, 1]]).T)
    near = cKDTree(nodes).query_pairs(LOCAL * float(np.median(edge)), output_type="ndarray")
    keys = np.union1d(initial[:, 0].astype(np.int64) * n + initial[:, 1],
                      near.min(1).astype(np.int64) * n + near.max(1))
    if carried is not None and len(carried):
        # Lines a previous mesh found active (refinement), mapped onto these nodes.
        keys = np.union1d(keys, np.unique(carried[:, 0].astype(np.int64) * n + carried[:, 1]))
    keys = np.setdiff1d(keys, source.blocked, assume_unique=True)
    lines = source.lines(np.stack(np.divmod(keys, n), axis=1))
    mesh = np.isin(lines.keys(n), initial[:, 0].astype(np.int64) * n + initial[:, 1])
    if mesh.sum() != len(initial):
        raise SolverError("a mesh edge is not an admissible candidate line")
    return lines


def solve_lp(source: CandidateSource, initial: np.ndarray, m_ref: float, tol=1e-7, max_rounds=200,
             batch=None, carried: np.ndarray | None = None) -> LPSolution:
    """Adaptive DLO solve over every admissible line of `source`.

    initial: (k, 2) node pairs a < b of the mesh edges (each must be admissible).
    m_ref: largest capacity (kNm/m), to scale violations; batch: most lines added per round
    (default BATCH_PER_NODE per node; measured on the clamped square at 1068 nodes with 2, 4
    and 8 per node: 5, 4 and 5 rounds, 14.2, 11.2 and 18.0 s in the LP; on the refined podium
    deck, 2 against 4: 10.6 against 8.1 s).
    carried: (c, 2) node pairs a < b also put in the first LP (the active lines of a coarser
    mesh, or of a similar model, mapped to these nodes); those not admissible are dropped.
    They change only where the rounds start: the loop still stops only when pricing over
    every admissible line proves the optimum.
    """
    n = source.n_nodes
    h = new_model(n, ipm=True, n_extra=source.n_extra)
    lines = _first_lines(source, np.asarray(initial), carried)
    batch = batch or max(BATCH_PER_NODE * n, 200)
    add_lines(h, lines, n, m_ref)
    n_carried = 0
    if carried is not None and len(carried):
        keys = np.asarray(carried, np.int64)
        n_carried = int(np.isin(np.unique(keys[:, 0] * n + keys[:, 1]), lines.keys(n)).sum())
    rounds = count = 0
    viol_max = np.inf
    while True:
        t0 = time.perf_counter()
        sol, obj = _run_rounds(h)
        t1 = time.perf_counter()
        rounds += 1
        y = np.asarray(sol.row_dual)
        # Lines a little short of violating join the batch too: without them the last rounds
        # each added a handful of lines, one interior-point solve each, while the load factor
        # no longer moved (the duals only shifted inside the optimal face).
        viol_max, new, count = _pricing_pass(source, y, np.sort(lines.keys(n)), m_ref, batch, min(tol, -NEAR))
        log.info("LP round %d: %d lines, load factor %.6f, max violation %.2e (LP %.2f s, pricing %.2f s)",
                 rounds, len(lines), obj, viol_max, t1 - t0, time.perf_counter() - t1)
        # No stall rule: a line is left out only when pricing proves it cannot lower the load
        # factor (violation <= tol); max_rounds is a safeguard, reported as a warning.
        if viol_max <= tol or rounds >= max_rounds or new is None:
            if viol_max > tol:
                log.info("LP stopped with violation %.2e left", viol_max)
            break
        add_lines(h, new, n, m_ref)
        lines = concat([lines, new])
    theta = vertex_rotations(h, sol, obj, lines, n, m_ref, source.n_extra)
    return LPSolution(lines, theta, _true_objective(lines, theta), rounds, count, max(viol_max, 0.0), n_carried)

