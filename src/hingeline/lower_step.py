"""The lower-bound step of a solve on one mesh: the cone program solved (lower/program.py),
its moment field re-checked on its own (lower/fieldcheck.py), and solved again with other
solver settings or another load unit when the re-check fails.

Units: whatever the model is in (solve.py works in dimensionless units).
May import: `hingeline.lower`, `hingeline.model`, `hingeline.result`.
"""
from __future__ import annotations

import logging

from .lower import SOLVER_SETTINGS, check_field, solve_lower_bound
from .model import Model
from .result import LowerBound

log = logging.getLogger(__name__)


def lower_bound_on_mesh(model: Model, domain, mesh, upper: float, warnings: list[str]) -> LowerBound:
    """Solve for the lower bound, re-check the field, and keep its load factor only if the
    re-check passes (in equilibrium to EQUILIBRIUM_RTOL, inside the criterion). A field that
    fails the re-check is solved for again with the next of SOLVER_SETTINGS, then all of them
    again with other load units; if none passes, the field in equilibrium that proves the
    most (its load factor over its yield ratio) is kept, else the one closest to equilibrium."""
    tried, seconds = [], 0.0
    # With held loads a field scaled down to fit the capacities no longer carries them.
    held = any(not ld.factored for ld in model.loads)
    # The upper bound sets only the unit of the solver's load factor (of order one, like the
    # moments); the field is proven by its re-check alone. Slabs without top bars beside a
    # free edge were seen to pass or fail the re-check (yield ratio 1 - 1e-6 against 1.4 to 4)
    # as the unit changed by 1e-13, so other units give each setting more chances (the
    # rotated 6 x 4 m slab with a free edge of benchmarks/engine_numerics.py: every setting
    # failed at 1 and 1.5 times its upper bound, ratios 1.6 to 11, and passed at 3 times).
    attempts = [(a, unit) for unit in (upper, 1.5 * upper, 3.0 * upper) for a in range(len(SOLVER_SETTINGS))]
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
                      "so nothing can be proven even at load factor 0; a finer mesh may find one")
        warnings.append(f"no lower bound: {reason}")
        return LowerBound(None, None, None, None, sol.status, seconds, reason)
    value, reason = sol.load_factor, ""
    if not chk.in_equilibrium:
        value, reason = None, (f"the moment field is out of equilibrium by {chk.relative:.1e} (relative) "
                               "on re-check")
    elif chk.yield_ratio > 1.0:
        if held:
            value, reason = None, f"the moment field exceeds the capacities (ratio {chk.yield_ratio:.9f})"
        else:
            # Without held loads the field scaled by 1 / ratio is admissible for value / ratio.
            value = sol.load_factor / chk.yield_ratio
    if value is None:
        warnings.append(f"no lower bound: {reason}")
    log.info("lower bound %s (solver %.6f, %s, %.2f s)", value, sol.load_factor, sol.status, sol.seconds)
    return LowerBound(value, sol.load_factor, sol.field, chk, sol.status, seconds, reason)
