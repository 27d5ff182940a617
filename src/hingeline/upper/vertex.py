"""Vertex step: rotations at a vertex of the final LP of the adaptive rounds (few active
lines, clean hinges for the mechanism stage), recovered from the interior-point solution.

Rotations in rad; the LP objective is the load factor. Every try keeps optimality to a
relative 1e-7; whichever mechanism results is judged by the certificate check.
"""
from __future__ import annotations

import logging
from functools import partial

import numpy as np

from ..errors import SolverError, UnstableSlabError
from .highs import add_lines, new_model, option, run
from .pricing import LineSet

log = logging.getLogger(__name__)

# Simplex iterations allowed after HiGHS's crossover (see vertex_rotations): where its basis was good
# the simplex needed none; where it was poor it needed 12,355 (858-node refined clamped square).
CROSSOVER_ITERATIONS = 1000
# Simplex iterations allowed in the other vertex solves.
VERTEX_ITERATIONS = 20000


def _support_vertex(lines: LineSet, idx: np.ndarray, n_nodes: int, m_ref: float, n_extra: int, ipm: bool,
                    feas: float):
    """(solution, objective) of the LP over lines[idx] alone: interior point with IPX's
    crossover, or the simplex; feasibility tolerances `feas`."""
    hv = new_model(n_nodes, ipm=ipm, n_extra=n_extra)
    hv.setOptionValue("primal_feasibility_tolerance", feas)
    hv.setOptionValue("dual_feasibility_tolerance", feas)
    hv.setOptionValue("run_crossover", "on")
    hv.setOptionValue("simplex_iteration_limit", VERTEX_ITERATIONS)
    add_lines(hv, lines.take(idx), n_nodes, m_ref)
    return run(hv)


def _live_crossover(h, sol):
    """HiGHS's crossover from the interior-point solution `sol` on the live model, then a
    short simplex from its basis (a deterministic iteration limit, not a time limit)."""
    h.crossover(sol)
    h.setOptionValue("solver", "simplex")
    h.setOptionValue("simplex_iteration_limit", CROSSOVER_ITERATIONS)
    return run(h)


def _live_ipx_crossover(h):
    """The interior-point solve repeated on the live model with IPX's own crossover."""
    h.clearSolver()
    h.setOptionValue("solver", "ipm")
    h.setOptionValue("run_crossover", "on")
    h.setOptionValue("simplex_iteration_limit", VERTEX_ITERATIONS)
    return run(h)


def vertex_rotations(h, sol, obj: float, lines: LineSet, n_nodes: int, m_ref: float, n_extra: int):
    """Rotations at a vertex of the final LP (few active lines), so that the mechanism stage
    sees clean hinges. Tries in turn, keeping the first that does not lose optimality:
    1. interior point with IPX's crossover over the support of the interior-point solution
       (the lines whose |theta| exceeds 1e-7 of the largest), a small LP: on the 858-node
       refined clamped square 278 of 18,593 lines, 0.03 s, the optimum to 2e-9;
    2. HiGHS's crossover on the live model and a short simplex (fast where its basis is
       good; on the same square it needed 12,355 iterations and 6.8 s, hence the limit);
    3. the live model solved again with IPX's crossover (2.4 s there);
    4. the support LP at feasibility tolerances of 1e-8, by interior point, then by the
       simplex: on a model whose points were moved by 1e-6 m the basic solutions kept
       infeasibilities of 7e-8, HiGHS said 'Unknown' at 1e-9, and 2 and 3 failed too
       (looser tolerances come last: on another such model they cost a plane mismatch
       of 4e-7 where 2 gave a clean vertex);
    5. the interior-point rotations as they are.
    The certificate check judges whichever mechanism results; refinement keeps only
    certified steps."""
    x = np.asarray(sol.col_value)
    theta_ipm = x[0::2] - x[1::2]
    if option(h, "solver") == "simplex":
        return theta_ipm        # the rounds ended on the simplex: already a vertex
    limit = obj * (1 + 1e-7) + 1e-12
    idx = np.flatnonzero(np.abs(theta_ipm) > 1e-7 * np.abs(theta_ipm).max())
    support = partial(_support_vertex, lines, idx, n_nodes, m_ref, n_extra)
    # (name, attempt, the lines its columns stand for: idx, or None for every line)
    tries = [("the support", partial(support, True, 1e-9), idx),
             ("crossover", partial(_live_crossover, h, sol), None),
             ("IPX crossover", partial(_live_ipx_crossover, h), None),
             ("the support at 1e-8", partial(support, True, 1e-8), idx),
             ("the support by simplex at 1e-8", partial(support, False, 1e-8), idx)]
    for name, attempt, cols in tries:
        try:
            vsol, vobj = attempt()
        except (SolverError, UnstableSlabError) as err:
            log.info("vertex by %s failed (%s)", name, err)
            continue
        if vobj > limit:
            log.info("vertex by %s loses optimality (%.9g > %.9g)", name, vobj, obj)
            continue
        xv = np.asarray(vsol.col_value)
        theta = xv[0::2] - xv[1::2]
        if cols is not None:
            theta = np.zeros(len(lines))
            theta[cols] = xv[0::2] - xv[1::2]
        log.info("vertex by %s (%d lines in the support)", name, len(idx))
        return theta
    log.info("no vertex solution: using the interior-point solution")
    return theta_ipm
