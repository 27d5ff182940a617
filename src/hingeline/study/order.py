"""The order in which a study's variants are solved, so that each can start from the active
lines of a solved neighbour (run.py hands them on; cases.py `solve_carrying` takes them).

Places. A variant's place is a point of grid indices: the opening's centroid in steps
(x / step, y / step), the index of its size factor and the index of each swept value.
Neighbouring positions are one apart, and so are two variants that differ only by the next
value of one sweep.

Order. The first variant is the first of the plan; with more workers, each further one to
start is the variant farthest from all those taken (the workers start far apart and meet
late). When a variant is solved, its worker takes the waiting variant nearest to it (ties:
plan order): along a row of the grid that is the next position, at its end the one above,
so each worker snakes over the grid. Each variant starts from the lines of the solved
variant nearest to it among the last KEEP solved (so memory stays bounded on big grids).

The order changes no result: a variant's load factor is the LP's optimum over every
admissible line, whatever lines its first LP holds.

Units: grid steps (dimensionless).
May import: numpy, the other study modules.
"""
from __future__ import annotations

from collections import OrderedDict

import numpy as np

from .file import Study
from .variants import Variant

#: Solved variants whose active lines are kept to hand on (the most recent ones).
KEEP = 256


def places(study: Study, variants: list[Variant]) -> np.ndarray:
    """(n, d) grid indices of the variants (see the module docstring)."""
    cols = []
    if not variants:
        return np.zeros((0, 0))
    if study.move is not None:
        cols.append([(v.x / study.move.step, v.y / study.move.step) for v in variants])
        if study.move.scale:
            cols.append([(study.move.scale.index(v.scale),) for v in variants])
    for k, sweep in enumerate(study.sweeps):
        cols.append([(sweep.values.index(v.values[k]),) for v in variants])
    if not cols:
        return np.zeros((len(variants), 0))
    return np.hstack([np.asarray(c, float).reshape(len(variants), -1) for c in cols])


class Order:
    """Which variant to solve next and from whose lines (indices into `where`, (n, d) places)."""

    def __init__(self, where: np.ndarray, keep: int = KEEP):
        self.where = np.asarray(where, float)
        self.waiting = np.ones(len(self.where), bool)
        self.keep = keep
        self.lines: OrderedDict[int, object] = OrderedDict()

    def _distance(self, i: int, among: np.ndarray) -> np.ndarray:
        return np.linalg.norm(self.where[among] - self.where[i], axis=1)

    def take(self, after: int | None = None) -> tuple[int, object] | None:
        """The next variant and the lines it starts from (None: none kept), or None when all
        are taken. after: the variant just solved (its worker snakes on from there); None to
        start a worker (the variant farthest from those taken)."""
        left = np.flatnonzero(self.waiting)
        if not len(left):
            return None
        taken = np.flatnonzero(~self.waiting)
        if after is not None:
            j = int(left[np.argmin(self._distance(after, left))])
        elif not len(taken):
            j = int(left[0])
        else:
            far = np.full(len(left), np.inf)
            for i in taken:
                far = np.minimum(far, self._distance(int(i), left))
            j = int(left[np.argmax(far)])
        self.waiting[j] = False
        return j, self._nearest_lines(j)

    def _nearest_lines(self, j: int) -> object:
        if not self.lines:
            return None
        # Most recent first: of equally near variants, the one this worker just solved.
        held = np.fromiter(reversed(self.lines), int, len(self.lines))
        return self.lines[int(held[np.argmin(self._distance(j, held))])]

    def solved(self, i: int, lines: object) -> None:
        """Variant i is solved; its active lines (None: none to hand on) may start others."""
        if lines is None:
            return
        self.lines[i] = lines
        if len(self.lines) > self.keep:
            self.lines.popitem(last=False)


__all__ = ["KEEP", "Order", "places"]
