"""Moment capacity normal to a line (Johansen's stepped yield criterion).

For bars of capacity m1 along e1 = (cos a, sin a) and m2 along e2 = (-sin a, cos a),
a yield line with unit normal n mobilises m_n = m1 (n.e1)^2 + m2 (n.e2)^2 per metre
(kNm/m). Johansen's criterion: the bars yield in their own direction, and their
moments project onto the line with the square of the direction cosine.
"""
from __future__ import annotations

import numpy as np


def normal_capacity(pair: tuple[float, float], bar_angle_deg: float, normal: np.ndarray) -> np.ndarray:
    """Capacity in kNm/m for unit normals `normal` (k, 2), bars (m1, m2) at `bar_angle_deg`."""
    a = np.radians(bar_angle_deg)
    c1 = normal[:, 0] * np.cos(a) + normal[:, 1] * np.sin(a)
    return pair[0] * c1**2 + pair[1] * (1.0 - c1**2)
