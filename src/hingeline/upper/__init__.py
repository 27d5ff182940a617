"""The upper bound: discontinuity layout optimisation of yield lines.

candidates (node-to-node lines and their plastic cost) -> loadwork (external work per unit
rotation) -> lp (the kinematic linear program, solved adaptively with HiGHS) -> mechanism
(yield lines and a deflection field) -> certificate (an independent re-check by the work
equation). Units: m, kN, kNm/m, rad; w positive downward, sagging positive.
May import: `hingeline.model`, `hingeline.geometry`, `hingeline.result`, `hingeline.errors`.
Never `hingeline.lower`: the two bounds stay independent of each other.
"""
