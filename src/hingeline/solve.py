"""The pipeline in one call: model -> domain and mesh -> candidate lines -> LP ->
mechanism and certificate -> Result.

Units: m, kN, kNm/m, kPa. See the stage modules for the method.
"""
from __future__ import annotations

import logging
import time
from dataclasses import replace

import numpy as np
import shapely

from .errors import ModelError, SolverError, UnstableSlabError
from .geometry.domain import build_domain
from .geometry.mesh import MAX_NODES, check_node_budget, mesh_domain, mesh_size_for
from .lower import check_field, solve_lower_bound
from .model import RESOLUTIONS, Model, model_for_case
from .result import LowerBound, Result, SolveStats, Work
from .upper.certificate import check_mechanism
from .upper.lp import solve_lp
from .upper.mechanism import build_mechanism, yield_lines
from .upper.pricing import candidate_source, total_force

log = logging.getLogger(__name__)

CERTIFICATE_RTOL = 1e-6  # relative agreement required between LP and certificate
VIOLATION_TOL = 1e-7     # stopping tolerance of the LP loop (lp.solve_lp): largest reduced-cost violation left


def solve(model: Model, resolution: str | None = None, mesh_size: float | None = None,
          lower_bound: bool = True) -> Result:
    """Find the collapse mechanism of `model` with the lowest load factor and, unless
    lower_bound is False, a lower bound from a statically admissible moment field on the
    same mesh (see lowerbound.py).

    resolution: "coarse" | "normal" | "fine" (default: the model's); mesh_size: element
    size in m, overriding the resolution. Raises UnstableSlabError when the slab can
    collapse without resisting, SolverError when the LP fails.
    """
    t0 = time.perf_counter()
    res = resolution or model.analysis.resolution
    if res not in RESOLUTIONS:
        raise ValueError(f"resolution must be one of {RESOLUTIONS}, not {res!r}")
    size = mesh_size or (model.analysis.mesh_size if resolution is None else None) or mesh_size_for(model, res)
    option = ("mesh_size" if mesh_size else "analysis.mesh_size" if size == model.analysis.mesh_size
              else f"the mesh size of resolution \"{res}\"")
    check_node_budget(model, size, option)

    domain = build_domain(model, margin=size)
    mesh = mesh_domain(domain, model, size)
    nodes = mesh.nodes
    if len(nodes) > MAX_NODES:
        raise ModelError(
            f"{option} = {size:.4g} m gives {len(nodes)} nodes, more than the {MAX_NODES} that fit in "
            f"memory; use a larger {option}")
    source = candidate_source(nodes, domain, model)
    cap = model.capacity
    m_ref = max(*cap.sagging, *cap.hogging)
    sol = solve_lp(source, mesh.edges, m_ref, tol=VIOLATION_TOL)
    cand, f, g = sol.lines.cand, sol.lines.f, sol.lines.g
    log.info("mesh: %d nodes, %d candidate lines", len(nodes), sol.candidates)
    w_total = total_force(model, domain)
    lf = sol.objective
    # Dimensionless scale of load factors: capacity over total factored force (kNm/m / kN).
    lf_scale = m_ref / w_total
    if lf <= 1e-7 * lf_scale:
        if lf < -1e-7 * lf_scale:
            raise UnstableSlabError(
                f"the slab cannot carry its held (unfactored) loads alone: the best mechanism has load "
                f"factor {lf:.4g} < 0; reduce the held loads or add strength or supports")
        raise UnstableSlabError(
            "the slab can move or fold without resisting (load factor 0): a mechanism exists that "
            "needs no internal work, e.g. a rigid rotation about a single supported edge or folding "
            "along lines of zero capacity; add supports, make an edge continuous or give capacity")

    theta = sol.theta
    mech, mismatch, support_w = build_mechanism(nodes, cand, theta, domain)
    lines = yield_lines(nodes, cand, theta, domain, model)
    internal = float(np.sum(np.where(theta > 0, cand.cost_plus * theta, -cand.cost_minus * theta)))
    held = float(g @ theta)
    factored = float(f @ theta)
    check = check_mechanism(model, mech)

    warnings = list(model.capacity.warnings)
    if abs(check.load_factor - lf) > CERTIFICATE_RTOL * abs(lf):
        warnings.append(
            f"certificate check disagrees: the mechanism field gives load factor {check.load_factor:.8g} "
            f"against {lf:.8g} from the linear program (relative {abs(check.load_factor - lf) / lf:.1e}); "
            "the larger value is not reliable, report this model to the developers")
    w_max = float(np.abs(mech.w).max())
    if mismatch > 1e-8 * w_max or support_w > 1e-8 * w_max:
        warnings.append(
            f"the rotations are not fully compatible: planes disagree by up to {mismatch:.1e} and "
            f"|w| on supports reaches {support_w:.1e} (largest |w| {w_max:.1e}); report this model "
            "to the developers")
    if sol.max_violation > VIOLATION_TOL:
        warnings.append(
            f"the search for yield lines stopped before proving that no other node-to-node line "
            f"lowers the load factor (largest violation {sol.max_violation:.1e}); a finer resolution "
            "may give a slightly lower load factor")
    lb = _lower_bound(model, domain, mesh, float(lf), warnings) if lower_bound else None
    seconds = time.perf_counter() - t0
    slab_nodes = int(np.sum(shapely.intersects_xy(domain.slab, nodes[:, 0], nodes[:, 1])))
    stats = SolveStats(len(nodes), slab_nodes, sol.candidates, len(cand), sol.rounds,
                       sol.max_violation, seconds, float(size))
    log.info("load factor %.6f (certificate %.6f, plane mismatch %.1e), %.2f s",
             lf, check.load_factor, mismatch, seconds)
    return Result(model, float(lf), lines, Work(internal, factored, held), mech, stats, check,
                  tuple(warnings), lower_bound=lb)


def _lower_bound(model, domain, mesh, upper: float, warnings: list[str]) -> LowerBound:
    """Solve for the lower bound, re-check the field, and keep its load factor only if the
    re-check passes (in equilibrium to EQUILIBRIUM_RTOL, inside the criterion)."""
    sol = solve_lower_bound(model, domain, mesh.nodes, mesh.triangles)
    if sol.load_factor is None:
        reason = f"the lower-bound solver stopped with status '{sol.status}'"
        if "Infeasible" in sol.status:
            reason = ("no moment field on this mesh carries the held (unfactored) loads within the capacities, "
                      "so nothing can be proven even at load factor 0; a finer resolution may find one")
        warnings.append(f"no lower bound: {reason}")
        return LowerBound(None, None, None, None, sol.status, sol.seconds, reason)
    chk = check_field(model, domain, sol.field, sol.load_factor)
    value, reason = sol.load_factor, ""
    if not chk.in_equilibrium:
        value, reason = None, (f"the moment field is out of equilibrium by {chk.relative:.1e} (relative) "
                               "on re-check")
    elif chk.yield_ratio > 1.0:
        if any(not ld.factored for ld in model.loads):
            value, reason = None, f"the moment field exceeds the capacities (ratio {chk.yield_ratio:.9f})"
        else:
            # Without held loads the field scaled by 1 / ratio is admissible for value / ratio.
            value = sol.load_factor / chk.yield_ratio
    if value is None:
        warnings.append(f"no lower bound: {reason}")
    elif value > upper * (1 + CERTIFICATE_RTOL):
        warnings.append(
            f"the lower bound {value:.6g} exceeds the load factor {upper:.6g}: one of the two is wrong; "
            "report this model to the developers")
    log.info("lower bound %s (solver %.6f, %s, %.2f s)", value, sol.load_factor, sol.status, sol.seconds)
    return LowerBound(value, sol.load_factor, sol.field, chk, sol.status, sol.seconds, reason)


def solve_cases(model: Model, resolution: str | None = None, mesh_size: float | None = None,
                lower_bound: bool = True) -> Result:
    """Solve every load case of `model` (or the model itself when it has none) and return the
    governing result: the case with the lowest load factor, carrying the table of all cases
    with each case's lower bound (the slab carries every case at the smallest of them); the
    result's own lower bound is that of the governing case."""
    if not model.cases:
        return solve(model, resolution, mesh_size, lower_bound)
    results = []
    for case in model.cases:
        log.info("load case %s", case.name)
        results.append((case.name, solve(model_for_case(model, case), resolution, mesh_size, lower_bound)))
    name, governing = min(results, key=lambda nr: nr[1].load_factor)
    table = tuple((n, r.load_factor) for n, r in results)
    lowers = tuple(r.lower_bound.load_factor if r.lower_bound else None for _, r in results) if lower_bound else ()
    # The result keeps the case's own model (its loads), so its certificate re-checks as it is.
    return replace(governing, case=name, cases=table, case_lower_bounds=lowers)
