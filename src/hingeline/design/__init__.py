"""Design mode: the capacity scale that reaches a target load factor, and bar proposals.

Public names: `required_scale`. Units: kNm/m, mm (bar spacings).
May import: `hingeline.model`, `hingeline.solve`, `hingeline.cases`, `hingeline.result`, `hingeline.errors`.
"""
from .scale import required_scale

__all__ = ["required_scale"]
