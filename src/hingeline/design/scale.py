"""Design mode: by how much must the reinforcement be scaled for the load factor to reach a target?

Scaling every capacity by s scales the internal work of every mechanism by s.
Collapse at the target then requires s D_m >= target F_m + H_m for every
mechanism m (D internal work at the given capacities, F and H the work of the
factored and held loads), so

    s = max over m of (target F_m + H_m) / D_m = 1 / lambda_all,

where lambda_all is the ordinary load factor of the slab under the single load
set (target x scaled loads + held loads), all of it scaled. One solve gives s. Since lambda_all is an upper bound, s is a lower bound on the
scale truly needed: a finer mesh usually raises it.

The same solve gives a lower bound lambda_lower <= lambda_all (lower/program.py); by the
lower-bound theorem, capacities scaled by s_safe = 1 / lambda_lower are proven enough
(moments and loads both scale with s). The scale truly needed lies in [s, s_safe].

Scaling the bottom bars alone (or the top bars alone) is not linear: the load factor
lambda(s) of the fixed mesh is then the minimum over mechanisms of s D_m + E_m (D the
work of the scaled capacities, E that of the others, at unit load work), concave and
nondecreasing in s. Newton's step on the governing mechanism's line, s' = s (1 - E)/D,
never overshoots the root (the line lies above lambda) and reaches it in a few solves
on the same mesh. The proven scale is then sought upwards from there: a scale whose
lower-bound solve reaches the target is proven; a few steps along the mechanism's slope
are tried, and none is reported if none is proven.

With load cases ([[case]]), the slab must reach the target under each of them: s and
s_safe are computed case by case and the largest of each governs (the case of the
largest s is named). When all capacities scale, one solve of every case at the target
loads gives them all (hingeline.solve_cases, with its rule for cases that cannot govern).

With a bar schedule, each layer's spacing is then reduced (in 25 mm steps, the
diameter kept, or the next diameter up if needed) until its EN 1992-1-1 moment
reaches s_safe times its present value (s when there is no lower bound): proposals
are proven adequate, not only adequate against the mechanism found.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

from ..cases import solve_cases
from ..errors import ModelError
from ..model import Model, eurocode, model_for_case
from ..result import Result
from ..solve import solve
from ..upper.certificate import internal_work

#: What design may scale: every capacity, the bottom bars (sagging) or the top bars (hogging).
SCALED = ("all", "bottom", "top")

DIAMETERS = (8.0, 10.0, 12.0, 16.0, 20.0, 25.0, 32.0)  # mm, common stock sizes (common practice)


@dataclass(frozen=True)
class LayerProposal:
    """A bar layer that reaches `required` kNm/m: diameter and spacing in mm, moment kNm/m."""

    name: str
    required: float
    diameter: float
    spacing: float
    moment: float


@dataclass(frozen=True, eq=False)
class DesignResult:
    """scale: factor on all capacities for the load factor to equal `target` (the true scale
    needed is at or above it); safe_scale: a factor proven enough by the lower-bound theorem
    (None without a lower bound); result: the solve under target x factored + held loads
    (of the governing case). With load cases: case, the governing case (largest scale), and
    cases, (name, scale, safe_scale) of every case; safe_scale is then the largest of the
    cases' (None if any case has none); scaled: the capacities the scales apply to (SCALED)."""

    scale: float
    target: float
    result: Result
    proposals: tuple[LayerProposal, ...] = ()
    safe_scale: float | None = None
    case: str | None = None
    cases: tuple[tuple[str, float, float | None], ...] = ()
    scaled: str = "all"

    @property
    def proposal_scale(self) -> float:
        """The scale the bar proposals are made for: safe_scale when known, else scale."""
        return self.scale if self.safe_scale is None else self.safe_scale


def required_scale(model: Model, target: float = 1.0, nodes: int | None = None,
                   scaled: str = "all", mesh_size: float | None = None, gap: float | None = None,
                   time_limit: float | None = None) -> DesignResult:
    """Capacity scale factor for load factor `target` (> 0), case by case when the model has
    load cases; `scaled`: one of SCALED, the capacities the factor applies to (those of the
    zones included). nodes, mesh_size, gap, time_limit: the mesh, as for hingeline.solve (by
    default refined until the bounds are within the model's target gap). See the module
    docstring."""
    if target <= 0:
        raise ValueError("target load factor must be > 0")
    if scaled not in SCALED:
        raise ValueError(f"scaled must be one of {SCALED}, not {scaled!r}")
    mesh = {"nodes": nodes, "mesh_size": mesh_size, "gap": gap, "time_limit": time_limit}
    if not model.cases:
        return _required_scale(model, model, target, mesh, scaled)
    if scaled == "all":
        return _all_cases_scaled(model, target, mesh)
    each = [(case.name, _required_scale(model_for_case(model, case), model, target, mesh, scaled))
            for case in model.cases]
    name, governing = max(each, key=lambda nd: nd[1].scale)
    return _over_cases(model, name, governing, tuple((n, d.scale, d.safe_scale) for n, d in each), scaled)


def with_scale(model: Model, s: float, scaled: str) -> Model:
    """`model` with its `scaled` capacities (slab and zones) multiplied by s."""
    sag = s if scaled in ("all", "bottom") else 1.0
    hog = s if scaled in ("all", "top") else 1.0

    def pair(p, f):
        return (p[0] * f, p[1] * f)

    cap = replace(model.capacity, sagging=pair(model.capacity.sagging, sag), hogging=pair(model.capacity.hogging, hog))
    zones = tuple(replace(z, sagging=pair(z.sagging, sag), hogging=pair(z.hogging, hog)) for z in model.zones)
    return replace(model, capacity=cap, zones=zones)


def _at_target(model: Model, target: float) -> Model:
    """`model` under the single load set target x scaled loads + held loads, all of it scaled."""
    loads = tuple(replace(ld, value=ld.value * target if ld.factored else ld.value, factored=True)
                  for ld in model.loads)
    return replace(model, loads=loads)


def _all_cases_scaled(model: Model, target: float, mesh: dict) -> DesignResult:
    """required_scale of a model with load cases when every capacity scales: each case's
    scale is 1 / its load factor at the target loads and its proven scale 1 / its lower
    bound, so one solve_cases gives them all. Under refinement it refines the governing case
    and leaves a case whose lower bound is above the governing load factor at its first mesh
    (cases.py): that case's proven scale is then below the governing scale, so it changes
    neither the governing nor the proven scale."""
    result = solve_cases(_at_target(model, target), **mesh)
    lowers = result.case_lower_bounds or (None,) * len(result.cases)
    cases = tuple((n, 1.0 / lf, 1.0 / lb if lb else None) for (n, lf), lb in zip(result.cases, lowers))
    return _over_cases(model, result.case, DesignResult(1.0 / result.load_factor, target, result), cases)


def _over_cases(model: Model, name: str, governing: DesignResult, cases: tuple, scaled: str = "all") -> DesignResult:
    """The design of a model with load cases: `governing`, the design of case `name` (the
    largest scale), with the table `cases` of (name, scale, proven scale or None) and the
    proven scale of all cases (the largest, or None when a case has none), bars proposed."""
    safes = [safe for _, _, safe in cases]
    safe = None if any(v is None for v in safes) else max(safes)
    return replace(_with_proposals(model, governing.scale, safe, governing, scaled), case=name, cases=cases)


def _required_scale(model: Model, whole: Model, target: float, mesh: dict, scaled: str) -> DesignResult:
    """required_scale of `model` (no cases); bar proposals from `whole`'s bar schedule."""
    at_target = _at_target(model, target)
    if scaled == "all":
        result = solve(at_target, **mesh)
        scale = 1.0 / result.load_factor
        lower = result.lower_bound.load_factor if result.lower_bound is not None else None
        safe = None if not lower else 1.0 / lower
    else:
        scale, result, safe = _partial_scale(at_target, mesh, scaled)
    return _with_proposals(whole, scale, safe, DesignResult(scale, target, result), scaled)


def _partial_scale(model: Model, mesh: dict, scaled: str, rounds: int = 12, tries: int = 4):
    """(scale, result at that scale, proven scale or None) for `model` whose loads all count
    at unit load factor, scaling only the `scaled` capacities (module docstring)."""
    fixed = with_scale(model, 0.0, "top" if scaled == "bottom" else "bottom")   # the scaled part alone
    s = 1.0
    for _ in range(rounds):
        result = solve(with_scale(model, s, scaled), lower_bound=False, **mesh)
        part = internal_work(with_scale(fixed, s, scaled), result.mechanism)   # at unit load work
        rest = result.work.internal - part
        if abs(result.load_factor - 1.0) <= 1e-9:
            break
        if part <= 1e-12 * result.work.internal:
            raise ModelError(f"scaling the {scaled} bars alone cannot reach the target: the governing mechanism "
                             f"has no {'sagging' if scaled == 'bottom' else 'hogging'} lines; scale all capacities")
        s_next = max(s * (1.0 - rest) / part, 1e-9)
        if abs(s_next - s) <= 1e-12 * s:
            break
        s = s_next
    slope = part / s                      # d lambda / d s of the governing mechanism
    safe, trial = None, s
    for _ in range(tries):
        lower = solve(with_scale(model, trial, scaled), **mesh).lower_bound
        value = None if lower is None else lower.load_factor
        if value is not None and value >= 1.0:
            safe = trial
            break
        if value is None or slope <= 0:
            break
        trial += (1.0 - value) / slope * 1.001
    return s, result, safe


def _with_proposals(model: Model, scale: float, safe: float | None, d: DesignResult,
                    scaled: str = "all") -> DesignResult:
    proposals = ()
    if model.capacity.bars:
        factor = scale if safe is None else safe
        proposals = tuple(_propose(model, bar, lc.moment * factor)
                          for bar, lc in zip(model.capacity.bars, model.capacity.layers)
                          if scaled == "all" or bar.name.startswith(scaled))
    return replace(d, scale=scale, safe_scale=safe, proposals=proposals, scaled=scaled)


def _propose(model: Model, bar: eurocode.BarLayer, required: float) -> LayerProposal:
    """Widest spacing (25 mm steps, at most 300 mm and the EN 1992-1-1 9.3.1.1(3) limit) of the same or
    the next larger diameter whose design moment reaches `required` kNm/m and whose area
    reaches the minimum of 9.2.1.1(1); NaN fields when none does."""
    thickness = model.slab.thickness * 1000.0
    mat = model.capacity.materials
    # 300 mm also bounds the spacing: a usual limit for crack control (common practice, no source).
    widest = int(min(eurocode.max_spacing(thickness), 300.0) // 25) * 25
    for dia in [bar.diameter] + [d for d in DIAMETERS if d > bar.diameter]:
        for spacing in range(widest, 49, -25):
            try:
                lc = eurocode.layer_capacity(replace(bar, diameter=dia, spacing=float(spacing)), thickness, mat)
            except ModelError:
                break  # does not fit or over-reinforced: denser bars of this size will not help
            if lc.moment >= required and lc.area >= eurocode.min_area(lc.d, mat):
                return LayerProposal(bar.name, required, dia, float(spacing), lc.moment)
    nan = float("nan")
    return LayerProposal(bar.name, required, nan, nan, nan)
