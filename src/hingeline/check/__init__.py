"""Hand-drawn patterns: rigid regions and their motions, checked by the work equation.

Public names: `read_pattern`, `pattern_from_toml`, `check_pattern`, `pattern_mechanism`,
`HandCheck`. Units: m, kN, kNm/m, rad.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.upper` (the certificate's
work equation), `hingeline.result`, `hingeline.errors`.
"""
from .pattern import HandCheck, check_pattern, pattern_from_toml, pattern_mechanism, read_pattern

__all__ = ["HandCheck", "check_pattern", "pattern_from_toml", "pattern_mechanism", "read_pattern"]
