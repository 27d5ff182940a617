"""Dimensionless units: a model restated so that its numbers are of order one to ten.

The solver works in units chosen from the model itself, so that none of its tolerances
depends on whether a slab is 6 m or 6 km across, or carries 1 kPa or 1 MPa:

- lengths: x' = (x - origin) / L, origin the lower-left corner of the outline's bounding
  box and L an eighth of its larger side (ACROSS), so the slab is 8 units across;
- moments per unit length: m' = m / M, M the largest capacity of the slab or its zones;
- scaled loads: forces divided by F, the total scaled force, so they sum to about 1
  (area loads q' = q L^2 / F, line loads q' = q L / F, point loads P' = P / F);
- held loads: forces divided by M (q' = q L^2 / M, ...), the moment unit, because held
  loads are not multiplied by the load factor and must keep their ratio to the capacities.

Why 8 units across rather than 1: the lower bound's cone program (Clarabel) reached full
accuracy more often with slabs a few units across; restating four models (a 24-gon, the
clamped unit square, a rectangle with a free edge, the demo) with 1/4, 1, 2, 4 and 8 units
across, at 8 all but the clamped square were "Solved" (that one "AlmostSolved", passing its
re-check, at every size), while at 1 the 24-gon's field failed its re-check (3.6e-5).

M and F are rounded to powers of two, so dividing by them is exact in binary floating point.
L is not: the mesher (Triangle) was seen to give a different mesh for a model scaled exactly
by 1/8, so a slab drawn 1,000 times larger must restate to the very same numbers, which
x / L with L taken from the slab's own size does (to rounding). Then, for the same
mechanism, load factor = (M / F) load factor', w = w' / F (m per kNm of scaled-load
work), rotations = rotations' / (F L), internal and held-load work = (M / F) times theirs.

Units: m, kN, kNm/m, kPa in the model; the restated model is dimensionless.
May import: numpy, shapely, `hingeline.model.types`. Nothing downstream.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import shapely
import shapely.affinity

from .types import LineLoad, Model, PointLoad

#: Largest plan dimension (m) above which a slab is taken to have been typed in mm: a
#: floor slab analysed as one piece is rarely more than a couple of hundred metres across,
#: while any slab of 0.5 m or more typed in mm exceeds 500 (common practice, no source).
MM_SUSPECT_SIZE = 500.0

#: Length units across the slab's larger side in the dimensionless model (a power of two).
ACROSS = 8.0


@dataclass(frozen=True)
class Scales:
    """Units of the dimensionless model: origin (x0, y0) in m, length L in m, moment M in
    kNm/m (= kN), factored force F in kN; M and F are powers of two."""

    origin: tuple[float, float]
    length: float
    moment: float
    force: float

    @property
    def load_factor(self) -> float:
        """Load factor per unit of dimensionless load factor, M / F."""
        return self.moment / self.force

    def points_in(self, xy) -> np.ndarray:
        """Points (k, 2) in m -> dimensionless."""
        return (np.asarray(xy, float) - np.asarray(self.origin)) / self.length

    def points_out(self, xy) -> np.ndarray:
        """Dimensionless points (k, 2) -> m."""
        return np.asarray(xy, float) * self.length + np.asarray(self.origin)


def _power_of_two(x: float) -> float:
    return 2.0 ** round(math.log2(x)) if x > 0 and math.isfinite(x) else 1.0


def largest_dimension(model: Model) -> float:
    """Larger side of the outline's bounding box, m."""
    return float(np.ptp(np.asarray(model.slab.outline, float), axis=0).max())


def factored_force(model: Model) -> float:
    """Total factored force of the model's loads on the slab (openings deducted), kN."""
    slab = shapely.Polygon(model.slab.outline, list(model.slab.openings))
    total = 0.0
    for ld in model.loads:
        if not ld.factored:
            continue
        if isinstance(ld, PointLoad):
            total += ld.value
        elif isinstance(ld, LineLoad):
            total += ld.value * float(np.sum(np.hypot(*np.diff(np.asarray(ld.path, float), axis=0).T)))
        else:
            region = slab if ld.region is None else shapely.Polygon(ld.region).intersection(slab)
            total += ld.value * region.area
    return total


def scales_of(model: Model) -> Scales:
    """The units in which `model` becomes dimensionless (see the module docstring)."""
    outline = np.asarray(model.slab.outline, float)
    caps = [*model.capacity.sagging, *model.capacity.hogging]
    for z in model.zones:
        caps += [*z.sagging, *z.hogging]
    moment = _power_of_two(max(caps))
    return Scales(tuple(float(v) for v in outline.min(axis=0)), largest_dimension(model) / ACROSS,
                  moment, _power_of_two(factored_force(model)))


def _frozen(a) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=np.float64)
    a.flags.writeable = False
    return a


def _load_in(ld, s: Scales):
    force = s.force if ld.factored else s.moment
    if isinstance(ld, PointLoad):
        return replace(ld, value=ld.value / force, at=_frozen(s.points_in(ld.at)))
    if isinstance(ld, LineLoad):
        return replace(ld, value=ld.value * s.length / force, path=_frozen(s.points_in(ld.path)))
    region = None if ld.region is None else _frozen(s.points_in(ld.region))
    return replace(ld, value=ld.value * s.length**2 / force, region=region)


def dimensionless(model: Model, s: Scales) -> Model:
    """`model` restated in the units `s` (geometry, capacities, loads, analysis.mesh_size)."""
    slab = model.slab
    x0, y0 = s.origin
    slab = replace(slab, outline=_frozen(s.points_in(slab.outline)),
                   openings=tuple(_frozen(s.points_in(o)) for o in slab.openings),
                   thickness=None if slab.thickness is None else slab.thickness / s.length)
    cap = model.capacity
    cap = replace(cap, sagging=tuple(v / s.moment for v in cap.sagging),
                  hogging=tuple(v / s.moment for v in cap.hogging))
    zones = tuple(replace(z, polygon=_frozen(s.points_in(z.polygon)), sagging=tuple(v / s.moment for v in z.sagging),
                          hogging=tuple(v / s.moment for v in z.hogging)) for z in model.zones)
    # shapely's affine form [a, b, d, e, xoff, yoff]: x' = a x + b y + xoff, y' = d x + e y + yoff.
    k = 1.0 / s.length

    def moved(poly):
        return None if poly is None else shapely.affinity.affine_transform(poly, [k, 0, 0, k, -x0 * k, -y0 * k])

    supports = tuple(replace(sp, polygon=moved(sp.polygon), footprint=moved(sp.footprint),
                             centre=None if sp.centre is None else _frozen(s.points_in(sp.centre[None, :])[0]))
                     for sp in model.supports)
    analysis = model.analysis
    if analysis.mesh_size is not None:
        analysis = replace(analysis, mesh_size=analysis.mesh_size / s.length)
    loads = tuple(_load_in(ld, s) for ld in model.loads)
    return replace(model, slab=slab, capacity=cap, zones=zones, supports=supports, analysis=analysis, loads=loads)


def size_warning(model: Model) -> str | None:
    """A warning when the slab's size suggests coordinates typed in mm, else None."""
    size = largest_dimension(model)
    if size <= MM_SUSPECT_SIZE:
        return None
    return (f"the slab is {size:.4g} m across, more than {MM_SUSPECT_SIZE:g} m: were the coordinates "
            f"typed in mm? hingeline reads lengths in m (a {size:.4g} mm slab is {size / 1000:.4g} m)")


__all__ = ["ACROSS", "MM_SUSPECT_SIZE", "Scales", "dimensionless", "factored_force", "largest_dimension", "scales_of",
           "size_warning"]
