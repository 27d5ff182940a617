"""The analysis domain and its mesh, shared by both bounds.

domain (the slab with openings filled, a zero-strength strip beyond free edges, support
kinds per boundary segment, small point and segment helpers) -> mesh (well-spread nodes
from Triangle that respect every boundary, patch and zone). Units: m.
May import: `hingeline.model`, `hingeline.errors`, numpy, shapely, meshpy.
"""
