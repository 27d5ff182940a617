"""Result stage: what a solve returns, and its JSON form.

Units: lengths m; rotations rad; work kNm. The mechanism is normalised so that
the scaled loads do unit work (1 kNm): deflections w are then in m per kNm of
scaled-load work, positive downward, and the load factor equals
internal work - held-load work.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .model import Model

#: Significant digits of a load factor in printed text; plot titles use one fewer. Fixed
#: decimals would print 0.000 for a slab whose loads are large against its capacities.
LOAD_FACTOR_DIGITS = 5


def load_factor_text(value: float, digits: int = LOAD_FACTOR_DIGITS) -> str:
    """A load factor (or lower bound, or capacity scale) in `digits` significant digits,
    trailing zeros kept: 1.5 -> '1.5000', 0.00054321 -> '0.00054321', 24 -> '24.000'."""
    return f"{value:#.{digits}g}"


CAUTIONS = (
    "Yield-line analysis is an upper-bound method: the load factor is the collapse "
    "factor of the mechanism found, which can only be at or above the true collapse factor. "
    "The lower bound, when given, comes from a moment field in equilibrium and inside the "
    "yield criterion (lower-bound theorem); it assumes the same ductility as the upper bound.",
    "Not checked: shear and punching shear, deflection and serviceability, ductility "
    "(rotation capacity of the hinges), detailing and anchorage of bars.",
    "Results must be reviewed by a qualified engineer under the codes that apply locally.",
)


@dataclass(frozen=True, eq=False)
class YieldLines:
    """Active yield lines of the mechanism, clipped to the slab; arrays of length k.

    start, end: (k, 2) end points in m.
    rotation: (k,) relative rotation across the line, rad, > 0.
    sagging: (k,) True for sagging (bottom bars yield), False for hogging.
    dissipation: (k,) internal work of the line, kNm.
    at_support: (k,) True for hinges along a supported edge.
    """

    start: np.ndarray
    end: np.ndarray
    rotation: np.ndarray
    sagging: np.ndarray
    dissipation: np.ndarray
    at_support: np.ndarray

    def __len__(self) -> int:
        return len(self.rotation)


@dataclass(frozen=True, eq=False)
class Mechanism:
    """The certificate: a P1 deflection field on a triangulation of the slab.

    vertices: (n, 2) in m; triangles: (t, 3) vertex indices, counter-clockwise,
    covering the slab with openings excluded; every active yield line lies on
    triangle edges. w: (n,) deflection, positive downward, normalised so that the
    scaled loads do 1 kNm of work.
    """

    vertices: np.ndarray
    triangles: np.ndarray
    w: np.ndarray


@dataclass(frozen=True)
class Work:
    """Work balance of the normalised mechanism, kNm."""

    internal: float
    factored: float
    held: float


@dataclass(frozen=True)
class SolveStats:
    """How the solve went."""

    nodes: int              # nodes of the analysis mesh (slab and fill)
    slab_nodes: int         # of which inside or on the slab
    candidate_lines: int    # all admissible node-to-node lines
    lp_lines: int           # lines in the final linear program
    rounds: int             # LP solves of the adaptive loop
    max_violation: float    # largest reduced-cost violation left, per unit length and capacity (0 = none: optimal over all candidate lines)
    seconds: float          # wall time of the solve
    mesh_size: float        # target element size, m


@dataclass(frozen=True)
class CertificateCheck:
    """Independent re-check of the mechanism (see certificate.py)."""

    load_factor: float        # recomputed from the mechanism field alone
    internal: float           # kNm
    factored: float           # kNm, scaled-load work
    held: float               # kNm, held-load work
    max_support_w: float      # largest |w| at a vertex on a supported edge, m/kNm


@dataclass(frozen=True, eq=False)
class LowerBound:
    """Outcome of the lower-bound stage (lower/program.py), re-checked by lower/fieldcheck.py.

    load_factor: a load factor the slab is proven to carry (None when no field passed
        the re-check: see `reason`); field: the statically admissible moment field
        (lower.MomentField); check: lower.FieldCheck of that field;
        solved: the solver's optimum before the re-check; status: the solver's status;
        seconds: wall time; reason: why load_factor is None, else "".
    """

    load_factor: float | None
    solved: float | None
    field: object
    check: object
    status: str
    seconds: float
    reason: str = ""


@dataclass(frozen=True)
class RefinementStep:
    """One mesh of a solve: nodes on the slab; load_factor (upper bound) and lower_bound
    (None when none was proven) found on it; gap (upper - lower) / upper of that mesh alone
    (None without a lower bound); seconds: wall time of the step, s."""

    nodes: int
    load_factor: float
    lower_bound: float | None
    gap: float | None
    seconds: float


#: Why the refinement of a solve stopped (Result.stop) and how the summary words it.
STOP_REASONS = {
    "gap": "the bounds are within the target gap",
    "time": "the time limit was reached",
    "stalled": "a further step no longer narrowed the bracket",
    "nodes": "the next mesh would exceed the node limit",
    "uniform": "one uniform mesh was asked for (nodes or mesh_size), no refinement",
    "not governing": "a load case whose lower bound is above the governing case's load factor: it cannot govern",
}


@dataclass(frozen=True, eq=False)
class Result:
    """Outcome of `hingeline.solve`."""

    model: Model
    load_factor: float
    yield_lines: YieldLines
    work: Work
    mechanism: Mechanism
    stats: SolveStats
    certificate: CertificateCheck
    warnings: tuple[str, ...] = ()
    case: str | None = None                       # load case of this result, when the model has cases
    cases: tuple[tuple[str, float], ...] = ()     # (case name, load factor) of every case solved
    lower_bound: LowerBound | None = None         # None when the lower bound was not asked for
    case_lower_bounds: tuple[float | None, ...] = ()  # lower bound of each case in `cases` (None: none found)
    refinement: tuple[RefinementStep, ...] = ()   # every mesh solved, in order (one for a uniform mesh)
    stop: str = "uniform"                         # why refinement stopped: a key of STOP_REASONS
    target_gap: float | None = None               # the gap asked for (None for a uniform mesh)

    @property
    def gap(self) -> float | None:
        """(upper - lower) / upper, or None without a lower bound."""
        lb = self.lower_bound.load_factor if self.lower_bound else None
        return None if lb is None else (self.load_factor - lb) / self.load_factor
