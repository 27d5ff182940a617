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
#: How the preset mesh words of earlier versions map to analysis.nodes (for the message that
#: refuses them).
OLD_RESOLUTION_NODES = {"coarse": 150, "normal": 450, "fine": 1100}


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
    origin: tuple["EdgeOrigin", ...] = ()   # per edge, where it lies on the outline as written
                                            # (empty for a Slab built in code)


@dataclass(frozen=True)
class EdgeOrigin:
    """Where an edge (or a run of one) lies on the outline as written in the model file.

    edge: 1-based number of the outline edge in the file (edge k runs from vertex k to k+1);
    start, end: distances in m from that edge's first vertex (as written) to the ends of
    the run; runs: how many runs the file splits that edge into (1: the whole edge);
    reversed: True when the outline was written clockwise, so that the (counter-clockwise)
    edge runs from the file's `end` to its `start`.
    """

    edge: int
    start: float
    end: float
    runs: int = 1
    reversed: bool = False


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

    value: kPa, > 0 (downward): the design value, the partial factor `gamma` applied.
    region: (k, 2) polygon in m (counter-clockwise) or None for the whole slab
        (openings excluded).
    factored: True if multiplied by the load factor (file key `scaled`), False if held
        at its value.
    name: label used in messages and reports ("load 1", ... when not given).
    gamma: the partial factor the file gave (1 when none); value already includes it.
    unit_weight: kN/m^3 when the load is the slab's self-weight (value = gamma x
        unit_weight x thickness), else None.
    """

    value: float
    region: np.ndarray | None = None
    factored: bool = True
    name: str = ""
    gamma: float = 1.0
    unit_weight: float | None = None


@dataclass(frozen=True, eq=False)
class LineLoad:
    """Uniform load along a polyline.

    value: kN/m of path length, > 0 (downward); path: (k, 2) vertices in m, k >= 2,
    lying on the slab; factored, name and gamma as for AreaLoad.
    """

    value: float
    path: np.ndarray
    factored: bool = True
    name: str = ""
    gamma: float = 1.0


@dataclass(frozen=True, eq=False)
class PointLoad:
    """Concentrated load: value in kN, > 0 (downward), at (2,) in m on the slab."""

    value: float
    at: np.ndarray
    factored: bool = True
    name: str = ""
    gamma: float = 1.0


@dataclass(frozen=True, eq=False)
class Analysis:
    """Solver settings.

    nodes: about this many nodes on the slab in one uniform mesh, no refinement (None: not set).
    mesh_size: element size in m of one uniform mesh, no refinement (None: not set).
    With neither, the mesh is refined adaptively (solve.py) until the bracket
    (upper - lower) / upper is at most target_gap, or time_limit (s) is reached, or a step
    no longer narrows it.
    """

    nodes: int | None = None
    mesh_size: float | None = None
    target_gap: float = 0.03
    time_limit: float = 120.0


@dataclass(frozen=True)
class Project:
    """The optional [project] table: who and what the calculation is for (free text, "" when
    not given); printed at the head of the calculation record."""

    job: str = ""
    reference: str = ""
    revision: str = ""
    prepared_by: str = ""
    checked_by: str = ""


@dataclass(frozen=True)
class Source:
    """The model file a model was read from: its name (as given), the SHA-256 of its bytes
    (64 hex digits) and its text. Kept for the calculation record and the drawings' stamp."""

    name: str
    sha256: str
    text: str


@dataclass(frozen=True, eq=False)
class Model:
    """A complete, validated slab model. project: the [project] table; source: the file it
    was read from (None when built from text or a dict)."""

    slab: Slab
    capacity: Capacity
    loads: tuple[AreaLoad | LineLoad | PointLoad, ...]
    analysis: Analysis = field(default_factory=Analysis)
    title: str = ""
    zones: tuple["Zone", ...] = ()
    supports: tuple["Support", ...] = ()
    cases: tuple["LoadCase", ...] = ()
    project: Project = field(default_factory=Project)
    source: Source | None = None


@dataclass(frozen=True)
class LoadCase:
    """A named selection of the model's loads (by load name), solved on its own."""

    name: str
    loads: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class Support:
    """A column or wall under the slab: its footprint (shapely Polygon, m, clipped to the
    outline) and connection "monolithic" or "pinned"; centre (2,) in m for a column, None for
    a wall; kind "column" or "wall", the table it was given in (drawings put them apart).

    A monolithic column or wall holds its footprint as rigid ground; hinges round its faces
    mobilise the hogging capacity. A pinned wall holds only a strip along its path (polygon;
    the bearing line of EN 1992-1-1 5.3.2.2, see parse_supports), round whose sides hinges
    cost nothing; footprint is then the whole wall, for drawings and placement checks. A
    pinned column is a bearing point: it holds w = 0 at its centre only and the slab,
    footprint included, rotates over it in any direction (docs/method.md)."""

    polygon: Polygon
    connection: str
    name: str
    centre: np.ndarray | None = None
    kind: str = "column"
    footprint: Polygon | None = None

    @property
    def physical(self) -> Polygon:
        """The support's whole footprint (m): `footprint` where the held area is smaller."""
        return self.polygon if self.footprint is None else self.footprint

    @property
    def bearing(self) -> bool:
        """True for a pinned column, which supports the slab at its centre point only."""
        return self.connection == "pinned" and self.centre is not None


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
