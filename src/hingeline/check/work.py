"""Work equation of a hand-drawn pattern: load factor, energy table and the HandCheck result.

Holds `check_pattern`, which evaluates the pattern (optionally after optimising its free
parameters), scales the mechanism so that the factored loads do 1 kNm of work (as for a
solve) and hands it to the upper bound's certificate (`check_mechanism`) for the load
factor; and the energy table: internal work grouped by region boundary and by supported
edge (`BoundaryWork`), which sums to the internal work.

Units: m, kN, kNm/m, kPa; work kNm; rotations rad (> 0 sagging, < 0 hogging);
w m, positive downward.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.upper.certificate`,
`hingeline.result`, `hingeline.errors`, and `pattern_file`, `regions`, `optimise` of this package.
"""
from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from itertools import chain

import numpy as np

from ..errors import ModelError
from ..geometry.domain import segment_distance
from ..model import Model
from ..model.criterion import normal_capacity
from ..result import Mechanism
from ..upper.certificate import check_mechanism, work_per_load
from .optimise import optimise_parameters
from .pattern_file import Pattern, fmt_params, with_values
from .regions import Layout, edge_label, field, p1_mechanism


@dataclass(frozen=True)
class BoundaryWork:
    """Internal work along one region boundary or one supported edge.

    between: label ("north | south" or "east on continuous edge (..)-(..)");
    length: m of hinge; rotation: rad, length-weighted mean of the signed rotation
    (> 0 sagging, < 0 hogging); work: kNm (of the normalised mechanism).
    """

    between: str
    kind: str               # "hinge" (between regions), "simple" or "continuous" (supported edge)
    length: float
    rotation: float
    work: float


@dataclass(frozen=True, eq=False)
class HandCheck:
    """Work equation of a hand-drawn pattern (mechanism scaled so factored loads do 1 kNm).

    load_factor: (internal - held) / factored. parameters: values used (optimised when
    optimised is True). internal, held: kNm. work_per_load: (load name, kNm) in model
    order. boundaries: internal work by region boundary and supported edge (they sum
    to `internal`). mechanism: the P1 field checked. evaluations: work equations solved.
    """

    load_factor: float
    parameters: dict[str, float]
    internal: float
    held: float
    work_per_load: tuple[tuple[str, float], ...]
    boundaries: tuple[BoundaryWork, ...]
    mechanism: Mechanism
    optimised: bool
    evaluations: int
    max_support_w: float
    bounds: dict[str, tuple[float, float]]



def _boundaries(model: Model, mech: Mechanism, region: np.ndarray, lay: Layout,
                scale: float) -> list[BoundaryWork]:
    """Internal work grouped by region pair and by (region, supported edge), kNm, of the
    region planes times `scale` (the normalisation of `mech`)."""
    V, T = mech.vertices, mech.triangles
    g = scale * lay.planes[region][:, 1:]
    edges = _edge_table(T)
    rows: dict[str, list] = {}          # label -> [kind, length, length * rotation, work]
    for label, kind, L, theta, work in chain(_hinge_work(model, V, region, lay, g, edges),
                                             _support_work(model, V, region, lay, g, edges)):
        r = rows.setdefault(label, [kind, 0.0, 0.0, 0.0])
        r[0] = kind
        r[1] += float(L)
        r[2] += float(L * theta)
        r[3] += float(work)
    return [BoundaryWork(lbl, kind, L, Lt / L if L > 0 else 0.0, work)
            for lbl, (kind, L, Lt, work) in rows.items()]


def _edge_table(T: np.ndarray) -> tuple[np.ndarray, ...]:
    """Triangle sides sorted so that the two sides of an interior edge are adjacent.

    Returns e (3t, 2) vertex pairs, opp (3t,) the opposite vertex, tri (3t,) the triangle,
    first: index of the first side of each interior edge, single (3t,) True on the boundary.
    """
    e = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
    opp = np.concatenate([T[:, 2], T[:, 0], T[:, 1]])
    tri = np.tile(np.arange(len(T)), 3)
    key = np.sort(e, axis=1)
    order = np.lexsort((key[:, 1], key[:, 0]))
    key, e, opp, tri = key[order], e[order], opp[order], tri[order]
    dup = np.all(key[1:] == key[:-1], axis=1)
    first = np.flatnonzero(dup)
    single = np.ones(len(key), bool)
    single[first] = single[first + 1] = False
    return e, opp, tri, first, single


def _normals(V: np.ndarray, a: np.ndarray, b: np.ndarray, o: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Lengths (k,) m of the sides a-b and their unit normals (k, 2) pointing towards vertex o."""
    t = V[b] - V[a]
    L = np.hypot(t[:, 0], t[:, 1])
    n = np.stack([-t[:, 1], t[:, 0]], axis=1) / L[:, None]
    n *= np.sign(((V[o] - V[a]) * n).sum(1))[:, None]
    return L, n


def _hinge_work(model: Model, V, region, lay: Layout, g, edges) -> Iterator[tuple]:
    """(label, "hinge", length m, rotation rad, work kNm) of each triangle side between two regions."""
    e, opp, tri, first, _ = edges
    cap = model.capacity
    r1, r2 = region[tri[first]], region[tri[first + 1]]
    cross = first[r1 != r2]
    if not cross.size:
        return
    a, b = e[cross, 0], e[cross, 1]
    L, nu = _normals(V, a, b, opp[cross + 1])            # from triangle 1 into triangle 2
    theta = -((g[tri[cross + 1]] - g[tri[cross]]) * nu).sum(1)
    mp = normal_capacity(cap.sagging, cap.bar_angle, nu)
    mm = normal_capacity(cap.hogging, cap.bar_angle, nu)
    work = L * np.where(theta > 0, mp * theta, -mm * theta)
    for k in range(len(cross)):
        i, j = sorted((region[tri[cross[k]]], region[tri[cross[k] + 1]]))
        yield f"{lay.names[i]} | {lay.names[j]}", "hinge", L[k], theta[k], work[k]


def _support_work(model: Model, V, region, lay: Layout, g, edges) -> Iterator[tuple]:
    """(label, edge kind, length m, rotation rad, work kNm) of each triangle side on a supported
    edge; only a continuous edge in hogging does work."""
    e, opp, tri, _, single = edges
    cap = model.capacity
    outline = model.slab.outline
    size = float(np.hypot(*np.ptp(outline, axis=0)))
    idx = np.flatnonzero(single)
    for k, kind in enumerate(model.slab.edges):
        if kind == "free":
            continue
        edge = np.array([[outline[k], outline[(k + 1) % len(outline)]]])
        a, b = e[idx, 0], e[idx, 1]
        on = (segment_distance(V[a], edge)[:, 0] <= 1e-8 * size) & (segment_distance(V[b], edge)[:, 0] <= 1e-8 * size)
        sel = idx[on]
        if not sel.size:
            continue
        L, nu = _normals(V, e[sel, 0], e[sel, 1], opp[sel])     # into the slab
        theta = -(g[tri[sel]] * nu).sum(1)
        if kind == "continuous":
            mm = normal_capacity(cap.hogging, cap.bar_angle, nu)
            work = L * np.where(theta < 0, -mm * theta, 0.0)
        else:
            work = np.zeros(len(sel))
        for m in range(len(sel)):
            yield f"{lay.names[region[tri[sel[m]]]]} on {edge_label(model, k)}", kind, L[m], theta[m], work[m]


def _load_factor(model: Model, pattern: Pattern, values: Mapping[str, float]) -> float:
    """Load factor of the pattern at `values`; ModelError if the factored loads do no work."""
    V, T, region, lay = field(model, pattern, values)
    mech = p1_mechanism(V, T, region, lay)
    chk = check_mechanism(model, mech)
    if not chk.factored > 0:
        raise ModelError(f"{pattern.source}: the factored loads do no positive work on this pattern "
                         f"(at {fmt_params(values)}); w is positive downward - check the signs of the deflections")
    return chk.load_factor


def check_pattern(model: Model, pattern: Pattern, optimise: bool = True,
                  values: Mapping[str, float] | None = None) -> HandCheck:
    """Work equation of `pattern` on `model`.

    With optimise (and parameters), the load factor is minimised over the parameters within
    their bounds, starting from `values` (default: start values); otherwise it is evaluated at
    `values`. Raises ModelError naming the region (or pair of regions) for a pattern that does
    not cover the slab, does not fit together, or moves on a supported edge.
    """
    params = with_values(pattern, values)
    evaluations = 1
    lf0 = _load_factor(model, pattern, params)     # errors at the start point are the user's
    did_optimise = bool(optimise and pattern.parameters)
    if did_optimise:
        params, searched = optimise_parameters(lambda v: _load_factor(model, pattern, v),
                                               pattern.parameters, params, lf0)
        evaluations += searched

    V, T, region, lay = field(model, pattern, params)
    mech = p1_mechanism(V, T, region, lay)
    factored = sum(wk for wk, ld in zip(work_per_load(model, mech), model.loads) if ld.factored)
    if not factored > 0:
        raise ModelError(f"{pattern.source}: the factored loads do no positive work on this pattern "
                         "(w is positive downward); check the signs of the deflections")
    mech = Mechanism(mech.vertices, mech.triangles, mech.w / factored)
    chk = check_mechanism(model, mech)
    per_load = tuple((ld.name, wk) for ld, wk in zip(model.loads, work_per_load(model, mech)))
    return HandCheck(
        load_factor=chk.load_factor, parameters=params, internal=chk.internal, held=chk.held,
        work_per_load=per_load, boundaries=tuple(_boundaries(model, mech, region, lay, 1.0 / factored)),
        mechanism=mech, optimised=did_optimise, evaluations=evaluations,
        max_support_w=chk.max_support_w,
        bounds={p.name: (p.min, p.max) for p in pattern.parameters},
    )
