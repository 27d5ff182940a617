"""Design mode: by how much must the reinforcement be scaled for the load factor to reach a target?

Scaling every capacity by s scales the internal work of every mechanism by s.
Collapse at the target then requires s D_m >= target F_m + H_m for every
mechanism m (D internal work at the given capacities, F and H the work of the
factored and held loads), so

    s = max over m of (target F_m + H_m) / D_m = 1 / lambda_all,

where lambda_all is the ordinary load factor of the slab under the single load
set (target x factored loads + held loads), all of it scaled. One solve gives s. Since lambda_all is an upper bound, s is a lower bound on the
scale truly needed: a finer resolution usually raises it.

The same solve gives a lower bound lambda_lower <= lambda_all (lower/program.py); by the
lower-bound theorem, capacities scaled by s_safe = 1 / lambda_lower are proven enough
(moments and loads both scale with s). The scale truly needed lies in [s, s_safe].

With load cases ([[case]]), the slab must reach the target under each of them: s and
s_safe are computed case by case and the largest of each governs (the case of the
largest s is named).

With a bar schedule, each layer's spacing is then reduced (in 25 mm steps, the
diameter kept, or the next diameter up if needed) until its EN 1992-1-1 moment
reaches s_safe times its present value (s when there is no lower bound): proposals
are proven adequate, not only adequate against the mechanism found.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

from ..errors import ModelError
from ..model import Model, eurocode, model_for_case
from ..result import Result
from ..solve import solve

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
    cases' (None if any case has none)."""

    scale: float
    target: float
    result: Result
    proposals: tuple[LayerProposal, ...] = ()
    safe_scale: float | None = None
    case: str | None = None
    cases: tuple[tuple[str, float, float | None], ...] = ()

    @property
    def proposal_scale(self) -> float:
        """The scale the bar proposals are made for: safe_scale when known, else scale."""
        return self.scale if self.safe_scale is None else self.safe_scale


def required_scale(model: Model, target: float = 1.0, resolution: str | None = None) -> DesignResult:
    """Capacity scale factor for load factor `target` (> 0), case by case when the model has
    load cases; see the module docstring."""
    if target <= 0:
        raise ValueError("target load factor must be > 0")
    if not model.cases:
        return _required_scale(model, model, target, resolution)
    each = [(case.name, _required_scale(model_for_case(model, case), model, target, resolution))
            for case in model.cases]
    name, governing = max(each, key=lambda nd: nd[1].scale)
    safes = [d.safe_scale for _, d in each]
    safe = None if any(v is None for v in safes) else max(safes)
    return replace(_with_proposals(model, governing.scale, safe, governing),
                   case=name, cases=tuple((n, d.scale, d.safe_scale) for n, d in each))


def _required_scale(model: Model, whole: Model, target: float, resolution: str | None) -> DesignResult:
    """required_scale of `model` (no cases); bar proposals from `whole`'s bar schedule."""
    loads = tuple(replace(ld, value=ld.value * target if ld.factored else ld.value, factored=True)
                  for ld in model.loads)
    result = solve(replace(model, loads=loads), resolution=resolution)
    scale = 1.0 / result.load_factor
    lower = result.lower_bound.load_factor if result.lower_bound is not None else None
    safe = None if not lower else 1.0 / lower
    return _with_proposals(whole, scale, safe, DesignResult(scale, target, result))


def _with_proposals(model: Model, scale: float, safe: float | None, d: DesignResult) -> DesignResult:
    proposals = ()
    if model.capacity.bars:
        proposals = tuple(_propose(model, bar, lc.moment * (scale if safe is None else safe))
                          for bar, lc in zip(model.capacity.bars, model.capacity.layers))
    return replace(d, scale=scale, safe_scale=safe, proposals=proposals)


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
