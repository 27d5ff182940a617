"""Free geometric parameters of a hand-drawn pattern: the minimum load factor within bounds.

Holds `optimise_parameters`, which minimises a load-factor function of the pattern's
parameters (scipy.optimize: bounded scalar search for one parameter, Nelder-Mead with
bounds for several). Trial points where the pattern is invalid (ModelError) get a
penalty, so the search steers away from them instead of stopping.

Units: parameters as used in the pattern (usually m); load factors dimensionless.
May import: `hingeline.errors` and `pattern_file` of this package (it is given the load
factor as a function, so it needs neither the model nor the work equation).
"""
from __future__ import annotations

import logging
import math
from collections.abc import Callable, Mapping

import numpy as np

from ..errors import ModelError
from .pattern_file import Parameter, fmt_params

log = logging.getLogger(__name__)


def optimise_parameters(load_factor: Callable[[dict[str, float]], float],
                        parameters: tuple[Parameter, ...], start: Mapping[str, float],
                        lf0: float) -> tuple[dict[str, float], int]:
    """Parameter values minimising `load_factor` within the bounds, from `start`.

    `lf0` is the load factor at `start`; the start values are kept unless the search finds
    a lower factor. Returns (values, number of load factors evaluated in the search).
    """
    # Imported here: scipy.optimize is only needed by patterns with free parameters.
    from scipy.optimize import minimize, minimize_scalar

    names = [p.name for p in parameters]
    params = dict(start)
    penalty = 1e6 * (1.0 + abs(lf0))
    count = [0]

    def f(x) -> float:
        count[0] += 1
        try:
            lf = load_factor(dict(zip(names, np.atleast_1d(x).tolist())))
        except ModelError:
            return penalty       # invalid geometry at this trial point: steer away
        return lf if math.isfinite(lf) else penalty

    lo = np.array([p.min for p in parameters])
    hi = np.array([p.max for p in parameters])
    x0 = np.array([params[n] for n in names])
    if len(names) == 1:
        res = minimize_scalar(f, bounds=(lo[0], hi[0]), method="bounded",
                              options={"xatol": 1e-10 * (hi[0] - lo[0]), "maxiter": 500})
        best = np.array([res.x])
        fbest = float(res.fun)
    else:
        res = minimize(f, x0, method="Nelder-Mead", bounds=list(zip(lo, hi)),
                       options={"xatol": 1e-9 * float(np.max(hi - lo)), "fatol": 1e-12 * abs(lf0),
                                "maxiter": 4000, "adaptive": True})
        best, fbest = np.asarray(res.x), float(res.fun)
    if fbest < lf0:
        params = dict(zip(names, best.tolist()))
    log.info("pattern parameters optimised in %d work equations: %s", count[0], fmt_params(params))
    return params, count[0]
