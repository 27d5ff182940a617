"""A result found in dimensionless units (model/scaling.py) restated in the model's units.

With the units of `Scales` (origin and length L in m, moment M in kNm/m, factored force F in
kN), the same mechanism and moment field read, in the model's units:

    load factor = (M / F) load factor'      points = origin + L x'
    w = w' / F (m per kNm of work)         rotations = rotations' / (F L) (rad)
    internal and held-load work = (M / F) times theirs; factored-load work = 1 kNm in both
    moments = M m'; residuals of the field: kPa = (M / L^2) p', kN/m = (M / L) V', kN = M P'.

Units: m, kN, kNm/m, kPa; load factors dimensionless.
May import: `hingeline.result`, `hingeline.model`, `hingeline.lower`.
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from .lower import MomentField
from .model.scaling import Scales
from .result import LowerBound, Mechanism, SolveStats, Work, YieldLines


def load_factor(value: float | None, s: Scales) -> float | None:
    """A dimensionless load factor in the model's terms."""
    return None if value is None else value * s.load_factor


def mechanism(mech: Mechanism, s: Scales) -> Mechanism:
    return Mechanism(s.points_out(mech.vertices), mech.triangles, np.asarray(mech.w) / s.force)


def yield_lines(lines: YieldLines, s: Scales) -> YieldLines:
    return replace(lines, start=s.points_out(lines.start), end=s.points_out(lines.end),
                   rotation=np.asarray(lines.rotation) / (s.force * s.length),
                   dissipation=np.asarray(lines.dissipation) * s.load_factor)


def work(w: Work, s: Scales) -> Work:
    return Work(w.internal * s.load_factor, w.factored, w.held * s.load_factor)


def stats(st: SolveStats, s: Scales) -> SolveStats:
    return replace(st, mesh_size=st.mesh_size * s.length)


def lower_bound(lb: LowerBound, s: Scales) -> LowerBound:
    field = lb.field
    if field is not None:
        field = MomentField(s.points_out(field.nodes), field.triangles, np.asarray(field.moments) * s.moment)
    chk = lb.check
    if chk is not None:
        m, L = s.moment, s.length
        chk = replace(chk, equilibrium=chk.equilibrium * m / L**2, moment_jump=chk.moment_jump * m,
                      shear_jump=chk.shear_jump * m / L, corner=chk.corner * m, load_total=chk.load_total * m)
    return replace(lb, load_factor=load_factor(lb.load_factor, s), solved=load_factor(lb.solved, s),
                   field=field, check=chk)


__all__ = ["load_factor", "lower_bound", "mechanism", "stats", "work", "yield_lines"]
