"""Clean yield lines and fans of a pattern of rigid regions.

The certificate (upper/certificate.py `hinges`) of the clean field gives every triangle
side that hinges, with its rotation and work. Those between two different regions (or
between a region and a supported edge, where work is done) are the yield lines; pieces of
one sense on one straight line that touch are joined into one line, also across a
junction of regions, as a reviewer would draw them.

A fan is a point where at least FAN_MIN_RAYS regions meet and as many rays of lines
leave: under a point load or round a column the mechanism approximates a cone by many
narrow regions, and a reviewer reads that as one item (apex, its lines, the angle their
rays span, their work). Four regions meet where two diagonals cross; that is no fan.

Units: m, rad, kNm. Rotations > 0; sense "sagging" (bottom bars yield) or "hogging".
May import: numpy, shapely, `hingeline.model`, `hingeline.geometry`, `hingeline.upper`
(the certificate), `hingeline.result`, and `regions` of this package.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..geometry.domain import merge_points, segment_distance
from ..model import Model
from ..result import Mechanism
from ..upper.certificate import hinges
from .regions import PLANE_RTOL, STRAIGHT_RTOL, Region

#: Regions meeting at a point, and rays leaving it, that make it a fan.
FAN_MIN_RAYS = 5

GROUND = -1      # the "region" on the far side of a hinge along a supported edge


@dataclass(frozen=True)
class CleanLine:
    """One straight yield line: number (1 = most work), ends (m), length (m), rotation (rad,
    length-weighted mean over its pieces), sense, work (kNm), share of the internal work,
    at_support: True for a hinge along a supported edge (continuous edge, column or wall
    face) rather than inside the slab."""

    number: int
    start: tuple[float, float]
    end: tuple[float, float]
    length: float
    rotation: float
    sense: str
    work: float
    share: float
    at_support: bool


@dataclass(frozen=True)
class Fan:
    """Lines meeting at one point: apex (m), the numbers of the lines ending at it or
    passing through it (`rays`), the angle (deg) their rays span (360 less the largest gap
    between neighbouring rays), their work (kNm) and its share of the internal work."""

    apex: tuple[float, float]
    rays: tuple[int, ...]
    angle: float
    work: float
    share: float


def _sides(regions: list[Region], mid: np.ndarray, normal: np.ndarray, size: float) -> np.ndarray:
    """(h, 2) region on either side of each hinge piece (GROUND where none), sorted."""
    out = np.full((len(mid), 2), GROUND)
    step = 1e-6 * size
    for side, sign in enumerate((1.0, -1.0)):
        p = mid + sign * step * normal
        for r, reg in enumerate(regions):
            out[shapely.contains_xy(reg.polygon, p[:, 0], p[:, 1]), side] = r
    return np.sort(out, axis=1)


def _collinear_groups(a: np.ndarray, b: np.ndarray, tol: float) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Pieces a -> b (k, 2) grouped by the straight line they lie on (to `tol` m), and each
    group cut where the pieces leave a gap: (indices, start, end) of every straight run."""
    d = b - a
    L = np.hypot(d[:, 0], d[:, 1])
    ang = np.arctan2(d[:, 1], d[:, 0])
    size = float(np.ptp(np.concatenate([a, b]), axis=0).max()) or 1.0
    # Doubled angle: a piece and its reverse have the same direction; tol / size in radians
    # moves the far end of the longest line by tol.
    dirs = np.stack([np.cos(2 * ang), np.sin(2 * ang)], axis=1)
    _, dgroup = merge_points(dirs, 2 * tol / size)
    runs = []
    for g in np.unique(dgroup):
        idx = np.flatnonzero(dgroup == g)
        u = d[idx[0]] / L[idx[0]]
        n = np.array([-u[1], u[0]])
        _, ogroup = merge_points(np.column_stack([(0.5 * (a[idx] + b[idx])) @ n, np.zeros(len(idx))]), tol)
        for o in np.unique(ogroup):
            sel = idx[ogroup == o]
            s0, s1 = a[sel] @ u, b[sel] @ u
            lo, hi = np.minimum(s0, s1), np.maximum(s0, s1)
            order = np.argsort(lo)
            # A new run starts where a piece begins beyond the furthest end reached so far.
            reach = np.maximum.accumulate(hi[order])
            new = np.concatenate([[True], lo[order][1:] > reach[:-1] + tol])
            run = np.cumsum(new) - 1
            for r in range(run[-1] + 1):
                k = order[run == r]
                first, last = k[np.argmin(lo[k])], k[np.argmax(hi[k])]
                start = a[sel[first]] if s0[first] <= s1[first] else b[sel[first]]
                end = b[sel[last]] if s1[last] >= s0[last] else a[sel[last]]
                runs.append((sel[k], start, end))
    return runs


def clean_lines(model: Model, mech: Mechanism, regions: list[Region]) -> list[CleanLine]:
    """The yield lines of the field `mech` (normalised) between `regions`, most work first.

    Hinge pieces of one sense that lie on one straight line and touch are one line, even
    where they pass a junction of regions (a reviewer draws them so); the rotation given is
    then the length-weighted mean over the pieces. Hinges along supports are kept apart
    from hinges inside the slab."""
    a, b, theta, work = hinges(model, mech)
    size = float(np.hypot(*np.ptp(mech.vertices, axis=0)))
    tmax = float(np.abs(theta).max(initial=0.0))
    d = b - a
    L = np.hypot(d[:, 0], d[:, 1])
    normal = np.stack([-d[:, 1], d[:, 0]], axis=1) / L[:, None]
    side = _sides(regions, 0.5 * (a + b), normal, size)
    # Sides rotating beyond round-off: between two regions, or on a supported edge where
    # work is done (a simply supported edge rotates but nothing yields there).
    ground = side[:, 0] == GROUND
    turns = np.abs(theta) > PLANE_RTOL * tmax
    keep = turns & np.where(ground, work > 0, side[:, 0] != side[:, 1])
    internal = float(work.sum())
    found = []
    for at_support in (False, True):
        for sagging in (True, False):
            sel = np.flatnonzero(keep & (ground == at_support) & ((theta > 0) == sagging))
            if not sel.size:
                continue
            for k, p, q in _collinear_groups(a[sel], b[sel], 10 * STRAIGHT_RTOL * size):
                pieces = sel[k]
                length = float(L[pieces].sum())
                rot = float((L[pieces] * np.abs(theta[pieces])).sum() / length)
                found.append((float(work[pieces].sum()), tuple(map(float, p)), tuple(map(float, q)),
                              length, rot, "sagging" if sagging else "hogging", at_support))
    found.sort(key=lambda f: -f[0])
    return [CleanLine(k + 1, p, q, length, rot, sense, wk, wk / internal if internal > 0 else 0.0, sup)
            for k, (wk, p, q, length, rot, sense, sup) in enumerate(found)]


def region_junctions(mech: Mechanism, regions: list[Region], min_regions: int = FAN_MIN_RAYS) -> np.ndarray:
    """Points (k, 2) m of the mechanism where at least `min_regions` regions meet."""
    label = np.empty(len(mech.triangles), int)
    for r, reg in enumerate(regions):
        label[reg.triangles] = r
    pairs = np.unique(np.column_stack([mech.triangles.ravel(), np.repeat(label, 3)]), axis=0)
    count = np.bincount(pairs[:, 0], minlength=len(mech.vertices))
    return mech.vertices[count >= min_regions]


def find_fans(lines: list[CleanLine], apexes: np.ndarray, size: float, min_rays: int = FAN_MIN_RAYS) -> list[Fan]:
    """Fans at the candidate `apexes` (points where many regions meet): the lines ending
    at an apex are one ray each, a line passing through it two; an apex with at least
    `min_rays` rays is a fan. Most work first."""
    if not lines or not len(apexes):
        return []
    tol = 10 * STRAIGHT_RTOL * size
    ends = np.array([[ln.start, ln.end] for ln in lines])
    seg_d = segment_distance(apexes, ends)                      # (apexes, lines)
    fans = []
    for i, apex in enumerate(apexes):
        on = np.flatnonzero(seg_d[i] <= tol)
        dirs = []
        for k in on:
            for p in ends[k]:
                if np.hypot(*(p - apex)) > tol:                 # each end away from the apex is a ray
                    dirs.append(np.arctan2(p[1] - apex[1], p[0] - apex[0]))
        if len(dirs) < min_rays:
            continue
        ang = np.sort(dirs)
        gaps = np.diff(np.concatenate([ang, ang[:1] + 2 * np.pi]))
        fans.append(Fan((float(apex[0]), float(apex[1])), tuple(int(lines[k].number) for k in on),
                        float(np.degrees(2 * np.pi - gaps.max())), float(sum(lines[k].work for k in on)),
                        float(sum(lines[k].share for k in on))))
    fans.sort(key=lambda f: -f.work)
    return fans
