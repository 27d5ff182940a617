"""The frozen dataclasses of a model and the words the model file may use.

Units: lengths m, moments kNm/m, area loads kPa (kN/m^2), line loads kN/m, point loads kN,
bar angles degrees. Loads are positive downward; sagging = bottom bars in tension.
Arrays are read-only float64; polygons are (k, 2) vertices without the closing repeat,
counter-clockwise once read (edge conditions re-ordered to match).
May import: numpy, shapely. Nothing else of hingeline (every other model module imports this one).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from shapely.geometry import Polygon

EDGE_KINDS = ("simple", "continuous", "free")
RESOLUTIONS = ("coarse", "normal", "fine")


@dataclass(frozen=True, eq=False)
class Slab:
    """Slab geometry.

    outline: (n, 2) vertices in m, counter-clockwise.
    edges: n edge conditions; edge k runs from vertex k to vertex k+1 (mod n).
    openings: polygons (k, 2) in m, counter-clockwise, strictly inside the outline,
        not touching each other.
    thickness: m, or None when not given.
    """

    outline: np.ndarray
    edges: tuple[str, ...]
    openings: tuple[np.ndarray, ...] = ()
    thickness: float | None = None
    fixity: tuple[float, ...] = ()   # per edge, fraction of the hogging capacity mobilised on
                                     # continuous edges (1.0 each when empty)


@dataclass(frozen=True, eq=False)
class Capacity:
    """Plastic moment capacities per unit width, kNm/m (all >= 0).

    sagging: (m1, m2) of the bottom bars along bar directions 1 and 2.
    hogging: (m1', m2') of the top bars along bar directions 1 and 2.
    bar_angle: degrees from the x axis to bar direction 1 (direction 2 is 90 deg further).
    """

    sagging: tuple[float, float]
    hogging: tuple[float, float]
    bar_angle: float = 0.0
    layers: tuple = ()               # eurocode.LayerCapacity per bar layer, when given as bars
    warnings: tuple[str, ...] = ()   # EN 1992-1-1 5.6.2 checks of the bar schedule
    bars: tuple = ()                 # eurocode.BarLayer as given, when given as bars
    materials: object = None         # eurocode.Materials, when given as bars


@dataclass(frozen=True, eq=False)
class AreaLoad:
    """Uniform area load.

    value: kPa, > 0 (downward).
    region: (k, 2) polygon in m (counter-clockwise) or None for the whole slab
        (openings excluded).
    factored: True if scaled by the load factor, False if held constant.
    name: label used in messages and reports ("load 1", ... when not given).
    """

    value: float
    region: np.ndarray | None = None
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class LineLoad:
    """Uniform load along a polyline.

    value: kN/m of path length, > 0 (downward); path: (k, 2) vertices in m, k >= 2,
    lying on the slab; factored and name as for AreaLoad.
    """

    value: float
    path: np.ndarray
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class PointLoad:
    """Concentrated load: value in kN, > 0 (downward), at (2,) in m on the slab."""

    value: float
    at: np.ndarray
    factored: bool = True
    name: str = ""


@dataclass(frozen=True, eq=False)
class Analysis:
    """Solver settings.

    resolution: "coarse" | "normal" | "fine" (target node counts, see mesh.py).
    mesh_size: optional explicit target element size in m; overrides resolution.
    """

    resolution: str = "normal"
    mesh_size: float | None = None


@dataclass(frozen=True, eq=False)
class Model:
    """A complete, validated slab model."""

    slab: Slab
    capacity: Capacity
    loads: tuple[AreaLoad | LineLoad | PointLoad, ...]
    analysis: Analysis = field(default_factory=Analysis)
    title: str = ""
    zones: tuple["Zone", ...] = ()
    supports: tuple["Support", ...] = ()
    cases: tuple["LoadCase", ...] = ()


@dataclass(frozen=True)
class LoadCase:
    """A named selection of the model's loads (by load name), solved on its own."""

    name: str
    loads: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class Support:
    """A column or wall under the slab: its footprint (shapely Polygon, m, clipped to the
    outline) is rigid ground; connection "monolithic" (hinges round its faces mobilise the
    hogging capacity) or "pinned" (the slab rotates freely about its faces)."""

    polygon: Polygon
    connection: str
    name: str


@dataclass(frozen=True, eq=False)
class Zone:
    """A region of the slab with its own capacities (kNm/m), overriding the slab's there.

    polygon: (k, 2) counter-clockwise, within the outline, not overlapping other zones;
    sagging, hogging: (m1, m2) along the slab's bar directions; name for messages.
    """

    polygon: np.ndarray
    sagging: tuple[float, float]
    hogging: tuple[float, float]
    name: str = ""
