"""The lower bound: a statically admissible moment field on the slab's triangles, and its
independent re-check.

Public names: `solve_lower_bound`, `MomentField`, `check_field`, `FieldCheck`,
`yield_ratio`, `normal_moments`, `element_capacities`, `SIDES`, `slab_triangles`,
`EQUILIBRIUM_RTOL`, `SOLVER_SETTINGS`.
Units: m, kN, kNm/m, kPa; sagging positive.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.errors`. Never
`hingeline.upper`: the two bounds stay independent of each other.
"""
from .elements import SIDES, MomentField, element_capacities, slab_triangles
from .fieldcheck import EQUILIBRIUM_RTOL, FieldCheck, check_field, normal_moments, yield_ratio
from .program import SOLVER_SETTINGS, solve_lower_bound

__all__ = [
    "EQUILIBRIUM_RTOL", "SIDES", "SOLVER_SETTINGS", "FieldCheck", "MomentField", "check_field",
    "element_capacities", "normal_moments", "slab_triangles", "solve_lower_bound", "yield_ratio",
]
