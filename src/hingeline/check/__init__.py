"""Hand-drawn patterns: rigid regions and their motions, checked by the work equation.

Public names: `read_pattern`, `pattern_from_toml`, `check_pattern`, `pattern_mechanism`,
`HandCheck`. Units: m, kN, kNm/m, rad.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.upper` (the certificate's
work equation), `hingeline.result`, `hingeline.errors`.

Modules: `pattern_file` (the TOML pattern file, expressions, parameters), `regions` (regions,
their motions, the cover/fit/support checks, the triangulated mechanism), `work` (work
equation, energy table, HandCheck), `optimise` (free parameters).
"""
from .pattern_file import pattern_from_toml, read_pattern
from .regions import pattern_mechanism
from .work import HandCheck, check_pattern

__all__ = ["HandCheck", "check_pattern", "pattern_from_toml", "pattern_mechanism", "read_pattern"]
