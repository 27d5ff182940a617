"""The variants of a study: grid positions of the moving opening, the positions it cannot
take (and why), and each variant's model data.

Grid. Positions are those of the opening's area centroid, `step` apart in x and y, centred
within the limits [x], [y] of [move_opening] (so a grid fills its limits symmetrically, and
limits a whole number of steps apart are both on the grid). Without limits, the centre may
range over the slab's bounding box shrunk by the opening's own extent about its centroid
(at size factor 1) and by a millionth of the slab's size, so that the opening's bounding box
stays strictly inside the slab's.

Skip reasons, first that applies, by shapely predicates with the model's tolerance: the
opening leaves the slab or touches its edge; it hits another opening, a column or a wall
(comes within the tolerance of it); it overlaps the region of an area load, or lies on a
point or line load (an opening carries no load); finally anything else the model refuses
(its message is the reason).

Units: m. The variant model data are plain TOML tables (dicts and lists), ready for
`hingeline.model.parse_model` and for writing back as TOML.
May import: numpy, shapely, `hingeline.model`, the other study modules.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import LineString, Point, Polygon

from ..errors import ModelError
from ..model import parse_model
from ..model.polygons import REL_TOL
from ..model.values import points
from .file import MAX_POSITIONS, Study, StudyError
from .paths import with_value

#: Decimals (of m) kept in the coordinates of a moved opening, so that grid arithmetic
#: (x0 + i * step) gives the same model data, and the same fingerprint, on every run.
DECIMALS = 9


@dataclass(frozen=True, eq=False)
class Variant:
    """One model to solve.

    x, y: centroid of the moving opening, m (None without [move_opening]);
    scale: its size factor (None when the study gives no scale list);
    values: one value per sweep, in the study's order; model: the model data (TOML tables).
    """

    x: float | None
    y: float | None
    scale: float | None
    values: tuple[float, ...]
    model: dict


@dataclass(frozen=True)
class Skipped:
    """A grid position (m) the opening cannot take, and why. values: the sweep values, or ()
    when the position is refused for every one of them."""

    x: float
    y: float
    scale: float | None
    reason: str
    values: tuple[float, ...] = ()


@dataclass(frozen=True, eq=False)
class Plan:
    """Everything a study solves: its variants, the skipped positions and the grid axes
    (xs, ys in m; empty without [move_opening])."""

    variants: tuple[Variant, ...]
    skipped: tuple[Skipped, ...]
    xs: np.ndarray
    ys: np.ndarray


def grid_axis(lo: float, hi: float, step: float) -> np.ndarray:
    """Positions `step` apart centred in [lo, hi] (m); the ends are on it when hi - lo is a
    whole number of steps."""
    n = int(np.floor((hi - lo) / step + 1e-9)) + 1
    start = 0.5 * (lo + hi) - 0.5 * (n - 1) * step
    return np.round(start + step * np.arange(n), DECIMALS)


def centroid(polygon) -> np.ndarray:
    """Area centroid (2,) in m of a polygon given as (k, 2) vertices."""
    c = Polygon(polygon).centroid
    return np.array([c.x, c.y])


def grid(study: Study) -> tuple[np.ndarray, np.ndarray]:
    """The x and y positions (m) of the moving opening's centroid."""
    move = study.move
    poly = np.asarray(move.polygon, dtype=float)
    c = centroid(poly)
    outline = np.asarray(study.model.slab.outline)
    # The opening may not touch the edge, so keep the extreme positions a hair inside: a grid
    # whose ends landed exactly on the limits would waste them on skips.
    margin = 1e-6 * float(max(outline.max(axis=0) - outline.min(axis=0)))
    lo = outline.min(axis=0) + (c - poly.min(axis=0)) + margin
    hi = outline.max(axis=0) - (poly.max(axis=0) - c) - margin
    axes = []
    for k, (axis, limits) in enumerate((("x", move.x), ("y", move.y))):
        a, b = limits if limits is not None else (lo[k], hi[k])
        if a > b:
            raise StudyError(f"study file '{study.path}': move_opening: the opening is larger than the slab "
                             f"along {axis}; there is no position to try")
        axes.append(grid_axis(a, b, move.step))
    if len(axes[0]) * len(axes[1]) > MAX_POSITIONS:
        raise StudyError(f"study file '{study.path}': move_opening.step = {move.step:g} m gives "
                         f"{len(axes[0]) * len(axes[1])} positions (at most {MAX_POSITIONS}); give a larger "
                         "step (m) or limits x = [..], y = [..]")
    return axes[0], axes[1]


def _obstacles(study: Study) -> list[tuple[str, object, str]]:
    """(reason, shapely geometry, test) of everything the opening must keep clear of: test
    "near" (within the tolerance), "overlap" (area in common) or "on" (covers it)."""
    out = []
    for j, op in enumerate(study.base.get("slab", {}).get("opening", [])):
        if study.move.opening != j + 1:
            out.append((f"hits opening {j + 1}", Polygon(points(op.get("polygon"), "opening")), "near"))
    for sp in study.model.supports:
        out.append((f"hits {sp.name}", sp.physical, "near"))
    for ld in study.model.loads:
        if getattr(ld, "region", None) is not None:
            out.append((f"overlaps the region of load \"{ld.name}\"", Polygon(ld.region), "overlap"))
        elif getattr(ld, "at", None) is not None:
            out.append((f"lies on point load \"{ld.name}\"", Point(ld.at), "on"))
        elif getattr(ld, "path", None) is not None:
            out.append((f"lies on line load \"{ld.name}\"", LineString(ld.path), "on"))
    return out


def placements(study: Study, xs: np.ndarray, ys: np.ndarray, scale: float) -> tuple[np.ndarray, list[str | None]]:
    """The moved opening at every grid position (row-major over y then x) at size `scale`:
    its vertices (n, k, 2) in m, and per position None (it fits) or the reason it does not."""
    poly = np.asarray(study.move.polygon, dtype=float)
    rel = (poly - centroid(poly)) * scale
    gx, gy = np.meshgrid(xs, ys)
    centres = np.column_stack([gx.ravel(), gy.ravel()])
    coords = np.round(centres[:, None, :] + rel[None, :, :], DECIMALS)
    polys = shapely.polygons(coords)
    outline = Polygon(study.model.slab.outline)
    lo, hi = outline.bounds[:2], outline.bounds[2:]
    tol = REL_TOL * max(hi[0] - lo[0], hi[1] - lo[1])
    reasons = np.full(len(polys), None, dtype=object)
    # Vectorised over positions; earlier reasons win, so fill only where none is set yet.
    tests = [("leaves the slab", ~shapely.contains(outline, polys)),
             ("touches the slab edge", shapely.distance(outline.exterior, polys) <= tol)]
    for reason, geom, kind in _obstacles(study):
        if kind == "near":
            hit = shapely.distance(geom, polys) <= tol
        elif kind == "overlap":
            hit = shapely.area(shapely.intersection(geom, polys)) > tol * tol / REL_TOL
        else:
            hit = shapely.intersects(geom, shapely.buffer(polys, -tol))
        tests.append((reason, hit))
    for reason, hit in tests:
        reasons[(reasons == None) & hit] = reason  # noqa: E711 (element-wise test of an object array)
    return coords, list(reasons)


def _sweep_combinations(study: Study) -> list[tuple[tuple[float, ...], dict]]:
    """(values, model data) for every combination of the sweeps' values."""
    out = []
    for values in itertools.product(*(s.values for s in study.sweeps)):
        data = study.base
        for s, v in zip(study.sweeps, values):
            data = with_value(data, s.key, v)
        out.append((tuple(values), data))
    return out


def _with_opening(data: dict, opening: int | None, coords: np.ndarray) -> dict:
    """Model data with the moving opening at `coords` (m): replacing opening `opening` (from 1)
    or, for a new opening, added after the others."""
    slab = dict(data.get("slab", {}))
    openings = [dict(op) for op in slab.get("opening", [])]
    polygon = coords.tolist()
    if opening is None:
        openings.append({"polygon": polygon})
    else:
        openings[opening - 1]["polygon"] = polygon
    slab["opening"] = openings
    return {**data, "slab": slab}


def _refused(data: dict) -> str | None:
    """None when the model data make a valid model, else the model's message."""
    try:
        parse_model(data, "model")
    except ModelError as exc:
        return "the model refuses it: " + str(exc).removeprefix("model: ")
    return None


def build_variants(study: Study) -> Plan:
    """All variants of `study` (sweep values outermost, then size, then y, then x) and the
    grid positions skipped, each with its reason. Every variant's model data is checked
    by `parse_model`; a variant it refuses is skipped with the model's message."""
    combos = _sweep_combinations(study)
    variants: list[Variant] = []
    skipped: list[Skipped] = []
    if study.move is None:
        for values, data in combos:
            variants.append(Variant(None, None, None, values, data))
        return Plan(tuple(variants), (), np.empty(0), np.empty(0))
    xs, ys = grid(study)
    scales = study.move.scale or (None,)
    fits = []
    for scale in scales:
        coords, reasons = placements(study, xs, ys, 1.0 if scale is None else scale)
        centres = [(x, y) for y in ys for x in xs]
        for (x, y), c, why in zip(centres, coords, reasons):
            if why is None:
                fits.append((float(x), float(y), scale, c))
            else:
                skipped.append(Skipped(float(x), float(y), scale, why))
    for values, data in combos:
        for x, y, scale, c in fits:
            moved = _with_opening(data, study.move.opening, c)
            why = _refused(moved)
            if why is None:
                variants.append(Variant(x, y, scale, values, moved))
            else:
                skipped.append(Skipped(x, y, scale, why, values))
    if not variants:
        reasons = sorted({s.reason for s in skipped})
        raise StudyError(f"study file '{study.path}': move_opening: every one of the {len(skipped)} positions "
                         f"is skipped ({'; '.join(reasons[:3])}); widen the limits x, y, change the step or "
                         "make the opening smaller")
    return Plan(tuple(variants), tuple(skipped), xs, ys)
