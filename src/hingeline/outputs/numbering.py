"""Numbers of the yield lines, shared by the plan (labels) and the calculation record (table).

The active yield lines are numbered 1, 2, ... in order of falling internal work (ties by the
start point, x then y, then the end point), so the numbers on the plan are 1 to k: the fewest
lines that make LABEL_SHARE of the internal work. The rest keep their numbers in the record's
table but carry no label, so a fine pattern's plan stays readable.

Units: work kNm, lengths m, rotations rad.
May import: numpy, matplotlib (Axes only) and `result`.
"""
from __future__ import annotations

import numpy as np
from matplotlib.axes import Axes

from ..result import Result

#: Share of the internal work the labelled lines make together (at least).
LABEL_SHARE = 0.95

#: Gid of the number labels on the plan.
YIELD_LINE_NUMBER_GID = "yield line number"


def number_lines(result: Result, share: float = LABEL_SHARE) -> tuple[list[int], int]:
    """(order, labelled): order[i] is the index in result.yield_lines of line number i + 1;
    the first `labelled` numbers are the fewest lines whose work makes at least `share` of
    the total (all of them when the total is not positive)."""
    yl = result.yield_lines
    n = len(yl)
    if n == 0:
        return [], 0
    dis = np.asarray(yl.dissipation, float)
    start = np.asarray(yl.start, float).reshape(-1, 2)
    end = np.asarray(yl.end, float).reshape(-1, 2)
    order = sorted(range(n), key=lambda i: (-dis[i], start[i, 0], start[i, 1], end[i, 0], end[i, 1]))
    total = float(dis.sum())
    if total <= 0:
        return order, n
    running = np.cumsum(dis[order])
    labelled = int(np.searchsorted(running, share * total * (1 - 1e-12))) + 1
    return order, min(labelled, n)


def draw_numbers(ax: Axes, result: Result) -> None:
    """Small numbers at the mid-points of the labelled lines (see number_lines), on a white
    ground so they read over the lines and the shading."""
    order, labelled = number_lines(result)
    start = np.asarray(result.yield_lines.start, float).reshape(-1, 2)
    end = np.asarray(result.yield_lines.end, float).reshape(-1, 2)
    for number, k in enumerate(order[:labelled], start=1):
        mid = 0.5 * (start[k] + end[k])
        ax.text(mid[0], mid[1], str(number), fontsize=5.5, ha="center", va="center", zorder=8,
                gid=YIELD_LINE_NUMBER_GID, clip_on=True,
                bbox={"boxstyle": "round,pad=0.12", "facecolor": "white", "edgecolor": "0.4",
                      "linewidth": 0.4, "alpha": 0.9})


def line_rows(result: Result) -> list[dict]:
    """One row per yield line in number order: number, start, end (m), length (m), rotation
    (rad), sense ("sagging" or "hogging"), at_support, work (kNm), share (of the internal
    work, 0..1) and labelled (bool: numbered on the plan)."""
    order, labelled = number_lines(result)
    yl = result.yield_lines
    start = np.asarray(yl.start, float).reshape(-1, 2)
    end = np.asarray(yl.end, float).reshape(-1, 2)
    dis = np.asarray(yl.dissipation, float)
    total = float(dis.sum())
    rows = []
    for number, k in enumerate(order, start=1):
        rows.append({"number": number, "start": start[k], "end": end[k],
                     "length": float(np.hypot(*(end[k] - start[k]))), "rotation": float(yl.rotation[k]),
                     "sense": "sagging" if bool(yl.sagging[k]) else "hogging",
                     "at_support": bool(yl.at_support[k]), "work": float(dis[k]),
                     "share": float(dis[k]) / total if total > 0 else 0.0, "labelled": number <= labelled})
    return rows
