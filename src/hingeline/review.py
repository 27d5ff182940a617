"""Warnings a reviewing engineer must see beside a result, from the model and both bounds.

Each function returns a list of messages (empty when there is nothing to say); solve.py
adds them to the result's warnings, so they reach the screen, result.json and the record.
Units: m, kNm/m; w positive downward (result.Mechanism).

May import: `model`, `result`. Nothing downstream.
"""
from __future__ import annotations

import numpy as np

from .model import Model
from .model.criterion import normal_capacity
from .result import LowerBound, Mechanism

#: Gap (upper - lower) / upper above which the bracket is called wide. A bracket of a few
#: per cent is what a refined mesh gives on ordinary floors (common practice, no source).
GAP_WARNING = 0.05

#: Rise of the slab, as a fraction of the largest deflection, above which the mechanism is
#: said to lift part of the slab (common practice, no source).
UPLIFT_WARNING = 0.01


def _xy(p) -> str:
    return f"({float(p[0]):.6g}, {float(p[1]):.6g})"


def continuous_without_hogging(model: Model) -> list[str]:
    """Continuous edges where the hogging capacity normal to the edge, times the edge's
    fixity, is 0: the edge then restrains nothing and acts as simply supported."""
    s, cap = model.slab, model.capacity
    out = np.asarray(s.outline, float)
    ends = np.roll(out, -1, axis=0)
    kinds = np.asarray(s.edges)
    fixity = np.asarray(s.fixity or (1.0,) * len(out), float)
    cont = np.flatnonzero(kinds == "continuous")
    if not cont.size:
        return []
    d = ends[cont] - out[cont]
    normal = np.stack([d[:, 1], -d[:, 0]], axis=1) / np.hypot(d[:, 0], d[:, 1])[:, None]
    held = fixity[cont] * normal_capacity(cap.hogging, cap.bar_angle, normal)
    return [f"continuous edge from {_xy(out[k])} to {_xy(ends[k])} has no hogging capacity normal to it "
            f"({'fixity 0' if fixity[k] == 0 else 'no top bars across it'}): it acts as simply supported; "
            "check that this is intended" for k, h in zip(cont, held) if h <= 0.0]


def wide_gap(load_factor: float, lower: LowerBound | None) -> list[str]:
    """The bracket, when the proven lower bound lies more than GAP_WARNING below the
    load factor."""
    if lower is None or lower.load_factor is None or load_factor <= 0:
        return []
    gap = (load_factor - lower.load_factor) / load_factor
    if gap <= GAP_WARNING:
        return []
    return [f"the bounds are {100 * gap:.1f} % apart (lower bound {lower.load_factor:.5g}, load factor "
            f"{load_factor:.5g}): the true collapse load may lie well below the load factor; refine the mesh "
            "(smaller mesh_size) or design to the lower bound"]


def uplift(mechanism: Mechanism) -> list[str]:
    """Parts of the slab that the mechanism lifts by more than UPLIFT_WARNING of its largest
    deflection: loads there resist the collapse, which is unsafe if they may be absent."""
    w = np.asarray(mechanism.w, float)
    if not w.size or w.max() <= 0:
        return []
    rise = -float(w.min()) / float(w.max())
    if rise <= UPLIFT_WARNING:
        return []
    return [f"the mechanism lifts part of the slab by up to {100 * rise:.1f} % of its largest deflection: "
            "loads on the rising part help resist the collapse, so a load case without them (pattern "
            "loading) may govern; check it"]
