"""The pipeline in one call: model -> domain and mesh -> candidate lines -> LP ->
mechanism and certificate -> Result; with adaptive refinement (refine.py) the meshes are
solved one after another, keeping the lowest upper and the highest lower bound.

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
from .geometry.mesh import MAX_NODES, START_NODES, SizeField, check_node_budget, mesh_domain, mesh_size_for
from .lower_step import lower_bound_on_mesh
from .model import Model
from .model.scaling import Scales, dimensionless, scales_of, size_warning
from .refine import NARROWING, REFINE_FACTOR, carried_lines, lines_onto, refinement_points
from .result import STOP_REASONS, CertificateCheck, RefinementStep, Result, SolveStats, Work
from .upper.certificate import CERTIFICATE_RTOL, certificate_agrees, check_mechanism
from .upper.lp import solve_lp
from .upper.mechanism import active_lines, build_mechanism, yield_lines
from .upper.pricing import candidate_source, total_force

log = logging.getLogger(__name__)

VIOLATION_TOL = 1e-7     # stopping tolerance of the LP loop (lp.solve_lp): largest reduced-cost violation left


def solve(model: Model, nodes: int | None = None, mesh_size: float | None = None,
          lower_bound: bool = True, gap: float | None = None, time_limit: float | None = None) -> Result:
    """Find the collapse mechanism of `model` with the lowest load factor and, unless
    lower_bound is False, a lower bound from a statically admissible moment field.

    The mesh: nodes (about that many nodes on the slab) or mesh_size (element size, m) give
    one uniform mesh, no refinement; the arguments override the model's analysis.nodes and
    analysis.mesh_size. With none of the four, the mesh is refined adaptively (refine.py)
    from a coarse one until (upper - lower) / upper <= gap (default analysis.target_gap), or
    time_limit (s, default analysis.time_limit) is reached, or a step no longer narrows the
    bracket. The load factor is the lowest upper bound found, the lower bound the highest
    proven one, each from its own mesh and each re-checked; Result.refinement lists the steps.
    Raises UnstableSlabError when the slab can collapse without resisting, SolverError when
    the LP fails.

    Both bounds are solved in dimensionless units (model/scaling.py), so that no tolerance
    depends on the slab's size or on the magnitude of its capacities and loads; the result
    is in the model's units.
    """
    return Refinement(model, nodes, mesh_size, lower_bound, gap, time_limit).run().finish()[0]


def mesh_plan(model: Model, nodes: int | None, mesh_size: float | None) -> tuple[bool, float, str]:
    """(uniform, element size in m, how it was set in the user's words): the arguments first,
    then the model's analysis.mesh_size and analysis.nodes; else adaptive refinement from
    START_NODES."""
    if mesh_size:
        return True, float(mesh_size), "mesh_size"
    if nodes:
        return True, mesh_size_for(model, int(nodes)), f"nodes = {int(nodes)}"
    if model.analysis.mesh_size:
        return True, float(model.analysis.mesh_size), "analysis.mesh_size"
    if model.analysis.nodes:
        return True, mesh_size_for(model, model.analysis.nodes), f"analysis.nodes = {model.analysis.nodes}"
    return False, mesh_size_for(model, START_NODES), "the first mesh of refinement"


class Refinement:
    """One solve of `model` in progress: its meshes, solved one `step` at a time (adaptive
    refinement, or the one uniform mesh), then `finish`ed into a Result. Load cases
    (cases.py) step every case's first mesh before choosing which one to refine.

    Arguments as for solve(); start: a size field (model units) to start from instead of the
    first uniform mesh; carried: end points (k, 2, 2), m, of lines put in the first LP (see
    cases.solve_carrying); t0: when the time limit started counting (default: now).
    Both bounds are solved in the dimensionless units `s` (model/scaling.py); `upper` and
    `lower` give the bounds so far in the model's units."""

    def __init__(self, model: Model, nodes: int | None, mesh_size: float | None, lower_bound: bool,
                 gap: float | None, time_limit: float | None, start: SizeField | None = None,
                 carried: np.ndarray | None = None, t0: float | None = None):
        self.t0 = time.perf_counter() if t0 is None else t0
        self.model, self.nodes, self.mesh_size, self.lower_bound = model, nodes, mesh_size, lower_bound
        self.uniform, size, self.option = mesh_plan(model, nodes, mesh_size)
        self.target = model.analysis.target_gap if gap is None else float(gap)
        self.limit = model.analysis.time_limit if time_limit is None else float(time_limit)
        # Refused before meshing: the mesher itself can exhaust memory on a tiny element size.
        check_node_budget(model, size, self.option)
        s = self.s = scales_of(model)
        self.hint = size_warning(model)
        self.size = size / s.length
        self.dimless = dimensionless(model, s)
        self.domain = build_domain(self.dimless, margin=self.size)
        if start is not None:
            self.field = SizeField(start.base / s.length, s.points_in(start.points), start.sizes / s.length)
        else:
            self.field = SizeField(self.size, np.zeros((0, 2)), np.zeros(0))
        self.carried = None
        if carried is not None:
            self.carried = s.points_in(np.asarray(carried, float).reshape(-1, 2)).reshape(-1, 2, 2)
        # best: the step holding the lowest upper bound (its raw Result, plane mismatch, |w| on
        # supports, active lines' ends); lower_raw: the LowerBound holding the highest proven one.
        self.steps, self.best, self.lower_raw, self.prev = [], None, None, None
        self.last_gap = self.milder = None
        self.best_sound = False
        self.admitted = 0
        self.stop: str | None = None

    @property
    def _up_best(self) -> float:
        """The lowest upper bound so far (dimensionless)."""
        return self.best[0].load_factor

    @property
    def _lo_best(self) -> float | None:
        """The highest proven lower bound so far (dimensionless), or None."""
        return None if self.lower_raw is None else self.lower_raw.load_factor

    def upper(self) -> float:
        """The lowest upper bound so far (model units)."""
        return rescale.load_factor(self._up_best, self.s)

    def lower(self) -> float | None:
        """The highest proven lower bound so far (model units), or None."""
        lo = self._lo_best
        return None if lo is None else rescale.load_factor(lo, self.s)

    def run(self) -> Refinement:
        """Step until a stop reason is reached."""
        while self.stop is None:
            self.step()
        return self

    def step(self) -> None:
        """Solve the next mesh (or find that none is to be solved), and set `stop` when the
        solve is over."""
        try:
            self._step()
        except HeldLoadCollapse as err:
            err.result = _held_alone(self.model, self.nodes, self.mesh_size)
            if self.hint is not None:
                err.args = (f"{err}; {self.hint}",)
            raise
        except UnstableSlabError as err:
            if self.hint is None:
                raise
            raise UnstableSlabError(f"{err}; {self.hint}") from None

    def _step(self) -> None:
        model, steps, target = self.dimless, self.steps, self.target
        while True:
            mesh = mesh_domain(self.domain, model, self.size, None if self.uniform else self.field)
            if len(mesh.nodes) > MAX_NODES:
                if steps:
                    self.stop = "nodes"
                    return
                raise ModelError(
                    f"{self.option} = {self.size * self.s.length:.4g} m gives {len(mesh.nodes):,} nodes, more than "
                    f"the {MAX_NODES:,} that hingeline handles; use a larger {self.option}")
            if not steps:
                break
            elapsed = time.perf_counter() - self.t0
            # A step costs more than in proportion to its nodes: candidate lines grow with their square, and
            # the steps of the clamped square were measured to grow as nodes^1.7 to nodes^2.6.
            guess = steps[-1].seconds * (len(mesh.nodes) / len(self.prev[0])) ** 2
            if elapsed + guess <= self.limit:
                break
            if self.milder is None:
                self.stop = "time"
                return
            # Too big for the time left: refine the same places by less, once.
            self.field, self.milder = self.milder, None
        if self.prev is None:
            first = None if self.carried is None else lines_onto(self.carried, mesh.nodes)
        else:
            first = carried_lines(*self.prev, mesh.nodes)
        t_step = time.perf_counter()
        raw, mismatch, support_w, active, n_in = _solve_on_mesh(model, self.domain, mesh, self.size,
                                                                self.lower_bound, self.s, self.option, first)
        if self.prev is None:
            self.admitted = n_in
        lb = raw.lower_bound
        lo = None if lb is None else lb.load_factor
        step_gap = None if lo is None else (raw.load_factor - lo) / raw.load_factor
        steps.append(RefinementStep(raw.stats.slab_nodes, raw.load_factor, lo, step_gap,
                                    time.perf_counter() - t_step))
        # Only a step whose mechanism is certified may hold the lowest upper bound: on a
        # refined L-shaped slab the interior-point fallback of the vertex step once gave a
        # mechanism whose work equation disagreed with its LP value by a factor of 4.
        chk = check_mechanism(model, raw.mechanism)
        sound = (certificate_agrees(raw.load_factor, chk, float(np.abs(raw.mechanism.w).max()))
                 and mismatch <= 1e-8 and support_w <= 1e-8)
        if self.best is None or (sound and (not self.best_sound or raw.load_factor < self._up_best)):
            self.best, self.best_sound = (raw, mismatch, support_w, mesh.nodes[active]), sound
        lo_best = self._lo_best
        if lb is not None and (self.lower_raw is None or (lo is not None and (lo_best is None or lo > lo_best))):
            self.lower_raw = lb
        self.prev = (mesh.nodes, active)
        log.info("refinement step %d: %d nodes, upper %.6g, lower %s, %.2f s", len(steps), len(mesh.nodes),
                 raw.load_factor, lo, steps[-1].seconds)
        up_best, lo_best = self._up_best, self._lo_best
        now = None if lo_best is None else (up_best - lo_best) / up_best
        if self.uniform:
            self.stop = "uniform"
        elif now is not None and now <= target:
            self.stop = "gap"
        elif time.perf_counter() - self.t0 >= self.limit:
            self.stop = "time"
        elif self.lower_bound and now is not None:
            if self.last_gap is not None and now > NARROWING * self.last_gap:
                self.stop = "stalled"
            self.last_gap = now
        elif len(steps) > 1 and steps[-2].load_factor - up_best < 0.25 * target * up_best:
            # Without a lower bound: stop when the upper bound no longer falls by a quarter of the target.
            self.stop = "stalled"
        if self.stop is None:
            marks = refinement_points(model, self.domain, raw.yield_lines, lb, self.field)
            self.field, self.milder = self.field.refined(marks, REFINE_FACTOR), self.field.refined(
                marks, np.sqrt(REFINE_FACTOR))

    def finish(self, stop: str | None = None) -> tuple[Result, SizeField | None, np.ndarray, int]:
        """The Result (model units) of the steps solved so far; stop: the stop reason to give
        when the solve is ended from outside (a load case that cannot govern). Also returns the
        size field of the last mesh (model units; None for a uniform mesh), the end points
        (k, 2, 2), m, of the active lines of the mechanism kept, and how many carried lines
        went into the first LP."""
        model, s, target, uniform = self.model, self.s, self.target, self.uniform
        stop = self.stop if stop is None else stop
        raw, mismatch, support_w, active = self.best
        # Warnings about a missing lower bound belong to the step whose bound is kept.
        keep = [w for w in raw.warnings if not w.startswith("no lower bound")]
        if self.lower_raw is not None and self.lower_raw.load_factor is None:
            keep.append(f"no lower bound: {self.lower_raw.reason}")

        lf = rescale.load_factor(raw.load_factor, s)
        mech = rescale.mechanism(raw.mechanism, s)
        # The certificate re-checks the mechanism as it is returned, against the model as given.
        check = check_mechanism(model, mech)
        w_max = float(np.abs(mech.w).max())
        warnings = [*model.capacity.warnings, *([self.hint] if self.hint else [])]
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
        warnings += keep
        lb = None
        if self.lower_raw is not None:
            lb = rescale.lower_bound(self.lower_raw, s)
            if lb.load_factor is not None and lb.load_factor > lf * (1 + CERTIFICATE_RTOL):
                warnings.append(
                    f"the lower bound {lb.load_factor:.6g} exceeds the load factor {lf:.6g}: one of the two is "
                    "wrong; report this model to the developers")
        steps = tuple(RefinementStep(st.nodes, rescale.load_factor(st.load_factor, s),
                                     rescale.load_factor(st.lower_bound, s), st.gap, st.seconds) for st in self.steps)
        result_gap = None
        if lb is not None and lb.load_factor is not None:
            result_gap = (lf - lb.load_factor) / lf
        if not uniform and stop not in ("gap", "not governing") and (result_gap is None or result_gap > target):
            shown = "no lower bound" if result_gap is None else f"a gap of {100 * result_gap:.2f} %"
            warnings.append(f"the target gap of {100 * target:.2f} % was not reached ({STOP_REASONS[stop]}); "
                            f"refinement ended with {shown}")
        warnings += [*review.continuous_without_hogging(model), *review.wide_gap(lf, lb), *review.uplift(mech)]
        stats = replace(rescale.stats(raw.stats, s), seconds=time.perf_counter() - self.t0)
        log.info("load factor %.6g (certificate %.6g), %.2f s, %d steps, stop: %s", lf, check.load_factor,
                 stats.seconds, len(steps), stop)
        result = Result(model, lf, rescale.yield_lines(raw.yield_lines, s), rescale.work(raw.work, s), mech, stats,
                        check, tuple(warnings), lower_bound=lb, refinement=steps, stop=stop,
                        target_gap=None if uniform else target)
        field = None
        if not uniform:
            f = self.field
            field = SizeField(f.base * s.length, s.points_out(f.points), f.sizes * s.length)
        return result, field, s.points_out(active.reshape(-1, 2)).reshape(-1, 2, 2), self.admitted


def _held_alone(model: Model, nodes: int | None, mesh_size: float | None) -> Result | None:
    """The mechanism of the held loads alone, as if they were the scaled ones: its load
    factor (below 1) is the fraction of the held loads at which the slab collapses. None
    when it cannot be found."""
    held = tuple(replace(ld, factored=True) for ld in model.loads if not ld.factored)
    if not held:
        return None
    try:
        r = solve(replace(model, loads=held, cases=()), nodes, mesh_size, lower_bound=False)
    except (UnstableSlabError, SolverError):
        return None
    note = (f"this is the mechanism of the held loads alone: the slab collapses at {r.load_factor:.4g} times "
            "them, before any scaled load is applied")
    return replace(r, warnings=(note, *r.warnings))


def _solve_on_mesh(model: Model, domain, mesh, size: float, lower_bound: bool, s: Scales, option: str,
                   carried: np.ndarray | None = None):
    """The solve of both bounds on one mesh of `model` restated in the units `s`
    (model/scaling.py), with base element size `size` in those units; option: how the size was
    set (for messages). Returns (Result in those units, whose warnings are only those of the
    line search and the lower bound; largest disagreement between planes meeting at a vertex
    and largest |w| found on a supported edge, both relative to the largest |w|; node pairs
    (k, 2) of the active lines; how many `carried` pairs the first LP held)."""
    t0 = time.perf_counter()
    nodes = mesh.nodes
    source = candidate_source(nodes, domain, model)
    cap = model.capacity
    m_ref = max(*cap.sagging, *cap.hogging)
    sol = solve_lp(source, mesh.edges, m_ref, tol=VIOLATION_TOL, carried=carried)
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
            f"lowers the load factor (largest violation {sol.max_violation:.1e}); a finer mesh "
            "may give a slightly lower load factor")
    lb = lower_bound_on_mesh(model, domain, mesh, float(lf), warnings) if lower_bound else None
    seconds = time.perf_counter() - t0
    slab_nodes = int(np.sum(shapely.intersects_xy(domain.slab, nodes[:, 0], nodes[:, 1])))
    stats = SolveStats(len(nodes), slab_nodes, sol.candidates, len(cand), sol.rounds,
                       sol.max_violation, seconds, float(size))
    log.info("dimensionless load factor %.6f (plane mismatch %.1e), %.2f s", lf, mismatch, seconds)
    # The certificate is checked by `solve` on the mechanism in the model's units.
    check = CertificateCheck(float("nan"), internal, factored, held, 0.0)
    result = Result(model, float(lf), lines, Work(internal, factored, held), mech, stats, check,
                    tuple(warnings), lower_bound=lb)
    act = active_lines(theta)
    active = np.stack([cand.a[act], cand.b[act]], axis=1)
    return result, mismatch / max(w_max, 1e-300), support_w / max(w_max, 1e-300), active, sol.carried
