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

from . import rescale, review
from .errors import HeldLoadCollapse, ModelError, SolverError, UnstableSlabError
from .geometry.domain import build_domain
from .geometry.mesh import MAX_NODES, check_node_budget, mesh_domain, mesh_size_for
from .lower import SOLVER_SETTINGS, check_field, solve_lower_bound
from .model import RESOLUTIONS, Model, model_for_case
from .model.scaling import Scales, dimensionless, scales_of, size_warning
from .result import CertificateCheck, LowerBound, Result, SolveStats, Work
from .upper.certificate import CERTIFICATE_RTOL, certificate_agrees, check_mechanism
from .upper.lp import solve_lp
from .upper.mechanism import build_mechanism, yield_lines
from .upper.pricing import candidate_source, total_force

log = logging.getLogger(__name__)

VIOLATION_TOL = 1e-7     # stopping tolerance of the LP loop (lp.solve_lp): largest reduced-cost violation left


def solve(model: Model, resolution: str | None = None, mesh_size: float | None = None,
          lower_bound: bool = True) -> Result:
    """Find the collapse mechanism of `model` with the lowest load factor and, unless
    lower_bound is False, a lower bound from a statically admissible moment field on the
    same mesh (see lower/program.py).

    resolution: "coarse" | "normal" | "fine" (default: the model's); mesh_size: element
    size in m, overriding the resolution. Raises UnstableSlabError when the slab can
    collapse without resisting, SolverError when the LP fails.

    Both bounds are solved in dimensionless units (model/scaling.py), so that no tolerance
    depends on the slab's size or on the magnitude of its capacities and loads; the result
    is in the model's units.
    """
    t0 = time.perf_counter()
    res = resolution or model.analysis.resolution
    if res not in RESOLUTIONS:
        raise ValueError(f"resolution must be one of {RESOLUTIONS}, not {res!r}")
    size = mesh_size or (model.analysis.mesh_size if resolution is None else None) or mesh_size_for(model, res)
    option = size_option(model, resolution, mesh_size)
    # Refused before meshing: the mesher itself can exhaust memory on a tiny element size.
    check_node_budget(model, size, option)
    s = scales_of(model)
    hint = size_warning(model)
    try:
        raw, mismatch, support_w = _solve_dimensionless(dimensionless(model, s), size / s.length, lower_bound, s,
                                                        option)
    except HeldLoadCollapse as err:
        err.result = _held_alone(model, resolution, mesh_size)
        if hint is not None:
            err.args = (f"{err}; {hint}",)
        raise
    except UnstableSlabError as err:
        if hint is None:
            raise
        raise UnstableSlabError(f"{err}; {hint}") from None

    lf = rescale.load_factor(raw.load_factor, s)
    mech = rescale.mechanism(raw.mechanism, s)
    # The certificate re-checks the mechanism as it is returned, against the model as given.
    check = check_mechanism(model, mech)
    w_max = float(np.abs(mech.w).max())
    warnings = [*model.capacity.warnings, *([hint] if hint else [])]
    if not certificate_agrees(lf, check, w_max):
        warnings.append(
            f"certificate check disagrees: the mechanism field gives load factor {check.load_factor:.8g} "
            f"against {lf:.8g} from the linear program (relative {abs(check.load_factor - lf) / abs(lf):.1e}, "
            f"scaled-load work {check.factored:.8g}, largest |w| on supports {check.max_support_w / w_max:.1e} "
            "of the largest |w|); the larger value is not reliable, report this model to the developers")
    if mismatch > 1e-8 or support_w > 1e-8:
        warnings.append(
            f"the rotations are not fully compatible: planes disagree by up to {mismatch:.1e} and "
            f"|w| on supports reaches {support_w:.1e} (both relative to the largest |w|); report this model "
            "to the developers")
    warnings += raw.warnings
    lb = None
    if raw.lower_bound is not None:
        lb = rescale.lower_bound(raw.lower_bound, s)
        if lb.load_factor is not None and lb.load_factor > lf * (1 + CERTIFICATE_RTOL):
            warnings.append(
                f"the lower bound {lb.load_factor:.6g} exceeds the load factor {lf:.6g}: one of the two is "
                "wrong; report this model to the developers")
    warnings += [*review.continuous_without_hogging(model), *review.wide_gap(lf, lb), *review.uplift(mech)]
    stats = replace(rescale.stats(raw.stats, s), seconds=time.perf_counter() - t0)
    log.info("load factor %.6g (certificate %.6g), %.2f s", lf, check.load_factor, stats.seconds)
    return Result(model, lf, rescale.yield_lines(raw.yield_lines, s), rescale.work(raw.work, s), mech, stats,
                  check, tuple(warnings), lower_bound=lb)


def _held_alone(model: Model, resolution: str | None, mesh_size: float | None) -> Result | None:
    """The mechanism of the held loads alone, as if they were the scaled ones: its load
    factor (below 1) is the fraction of the held loads at which the slab collapses. None
    when it cannot be found."""
    held = tuple(replace(ld, factored=True) for ld in model.loads if not ld.factored)
    if not held:
        return None
    try:
        r = solve(replace(model, loads=held, cases=()), resolution, mesh_size, lower_bound=False)
    except (UnstableSlabError, SolverError):
        return None
    note = (f"this is the mechanism of the held loads alone: the slab collapses at {r.load_factor:.4g} times "
            "them, before any scaled load is applied")
    return replace(r, warnings=(note, *r.warnings))


def size_option(model: Model, resolution: str | None, mesh_size: float | None) -> str:
    """How the element size of a solve was set, in the words a user would recognise (for
    messages): the mesh_size argument, the file's analysis.mesh_size, or a resolution word."""
    if mesh_size:
        return "mesh_size"
    if resolution is None and model.analysis.mesh_size:
        return "analysis.mesh_size"
    return f'resolution "{resolution or model.analysis.resolution}"'


def _solve_dimensionless(model: Model, size: float, lower_bound: bool, s: Scales, option: str):
    """The solve on `model` restated in the units `s` (model/scaling.py), with element size
    `size` in those units; option: how the size was set (size_option). Returns (Result in those units, whose warnings are only those of
    the line search and the lower bound; largest disagreement between planes meeting at a
    vertex and largest |w| found on a supported edge, both relative to the largest |w|)."""
    t0 = time.perf_counter()
    domain = build_domain(model, margin=size)
    mesh = mesh_domain(domain, model, size)
    nodes = mesh.nodes
    if len(nodes) > MAX_NODES:
        raise ModelError(
            f"{option} = {size * s.length:.4g} m gives {len(nodes):,} nodes, more than the {MAX_NODES:,} "
            f"that hingeline handles; use a larger {option}")
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
            raise HeldLoadCollapse(
                f"the slab cannot carry its held loads (scaled = false) alone: the best mechanism has load "
                f"factor {lf * s.load_factor:.4g} < 0; reduce the held loads or add strength or supports")
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
    w_max = float(np.abs(mech.w).max())

    warnings = []
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
    log.info("dimensionless load factor %.6f (plane mismatch %.1e), %.2f s", lf, mismatch, seconds)
    # The certificate is checked by `solve` on the mechanism in the model's units.
    check = CertificateCheck(float("nan"), internal, factored, held, 0.0)
    result = Result(model, float(lf), lines, Work(internal, factored, held), mech, stats, check,
                    tuple(warnings), lower_bound=lb)
    return result, mismatch / max(w_max, 1e-300), support_w / max(w_max, 1e-300)


def _lower_bound(model, domain, mesh, upper: float, warnings: list[str]) -> LowerBound:
    """Solve for the lower bound, re-check the field, and keep its load factor only if the
    re-check passes (in equilibrium to EQUILIBRIUM_RTOL, inside the criterion). A field that
    fails the re-check is solved for again with the next of SOLVER_SETTINGS, then all of them
    again with another load unit; if none passes, the field in equilibrium that proves the
    most (its load factor over its yield ratio) is kept, else the one closest to equilibrium."""
    tried, seconds = [], 0.0
    # The upper bound sets only the unit of the solver's load factor (of order one, like the
    # moments); the field is proven by its re-check alone. Slabs without top bars beside a
    # free edge were seen to pass or fail the re-check (yield ratio 1 - 1e-6 against 1.4 to 4)
    # as the unit changed by 1e-13, so a second unit gives each setting another chance.
    attempts = [(a, unit) for unit in (upper, 1.5 * upper) for a in range(len(SOLVER_SETTINGS))]
    for attempt, unit in attempts:
        sol = solve_lower_bound(model, domain, mesh.nodes, mesh.triangles, attempt, load_unit=unit)
        seconds += sol.seconds
        if sol.load_factor is None:
            tried.append((sol, None))
            if "Infeasible" in sol.status:
                break
            continue
        chk = check_field(model, domain, sol.field, sol.load_factor)
        tried.append((sol, chk))
        if chk.in_equilibrium and chk.yield_ratio <= 1.0:
            break
    sol, chk = tried[-1]
    if chk is None or not (chk.in_equilibrium and chk.yield_ratio <= 1.0):
        held = any(not ld.factored for ld in model.loads)
        balanced = [sc for sc in tried if sc[1] is not None and sc[1].in_equilibrium]
        checked = [sc for sc in tried if sc[1] is not None]
        if balanced and not held:
            sol, chk = max(balanced, key=lambda sc: sc[0].load_factor / max(sc[1].yield_ratio, 1.0))
        elif checked:
            sol, chk = min(checked, key=lambda sc: sc[1].relative)
        else:
            sol, chk = tried[0]
    if sol.load_factor is None:
        reason = f"the lower-bound solver stopped with status '{sol.status}'"
        if "Infeasible" in sol.status:
            reason = ("no moment field on this mesh carries the held loads (scaled = false) within the capacities, "
                      "so nothing can be proven even at load factor 0; a finer resolution may find one")
        warnings.append(f"no lower bound: {reason}")
        return LowerBound(None, None, None, None, sol.status, seconds, reason)
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
    log.info("lower bound %s (solver %.6f, %s, %.2f s)", value, sol.load_factor, sol.status, sol.seconds)
    return LowerBound(value, sol.load_factor, sol.field, chk, sol.status, seconds, reason)


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
