"""Moment capacity per metre from a bar schedule, EN 1992-1-1.

Each layer (bottom or top bars, first or second bar direction) is taken on its
own as a singly reinforced section 1 m wide:

    A_s = pi phi^2 / 4 * 1000 / s                      (mm^2/m)
    d   = h - c - phi / 2                              (c: cover to the layer's bars, mm)
    f_cd = alpha_cc f_ck / gamma_c,  f_yd = f_yk / gamma_s        (3.1.6(1), 3.2.7)
    rectangular stress block (3.1.7(3)): depth lambda x, stress eta f_cd,
        lambda = 0.8, eta = 1.0 for f_ck <= 50 MPa; lambda = 0.8 - (f_ck - 50)/400,
        eta = 1.0 - (f_ck - 50)/200 for 50 < f_ck <= 90 MPa
    x = A_s f_yd / (eta f_cd lambda b),  M_Rd = A_s f_yd (d - lambda x / 2)

The steel is taken to yield; a layer whose neutral axis is so deep that it would
not (x/d > eps_cu3 / (eps_cu3 + f_yd/E_s), 3.1.7 and 3.2.7) is refused. Plastic
analysis without a check of rotation capacity needs x_u/d <= 0.25 for classes up
to C50/60 (5.6.2(2)); a layer above that gets a warning, as does a ratio of
support (top) to span (bottom) capacity outside 0.5 to 2.0 (common practice).

Detailing limits for slabs, recommended values: bar spacing at most 3h and 400 mm for
principal bars (9.3.1.1(3); both bar directions of a two-way slab are taken as principal,
and the tighter 2h and 250 mm near concentrated loads and maximum moments is left to the
engineer), and at least A_s,min = max(0.26 f_ctm / f_yk, 0.0013) b d (9.2.1.1(1), by
9.3.1.1(1)), with f_ctm = 0.30 f_ck^(2/3) up to C50/60 and 2.12 ln(1 + f_cm / 10),
f_cm = f_ck + 8, above (Table 3.1). Clause numbers and values recalled from memory.

Units: mm and MPa inside, kNm/m out.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from ..errors import ModelError

# Characteristic cylinder strength f_ck, MPa (EN 1992-1-1 Table 3.1).
CONCRETE = {f"C{a}/{b}": a for a, b in ((12, 15), (16, 20), (20, 25), (25, 30), (30, 37), (35, 45),
                                        (40, 50), (45, 55), (50, 60), (55, 67), (60, 75), (70, 85),
                                        (80, 95), (90, 105))}
# Characteristic yield strength f_yk, MPa, and ductility class (EN 1992-1-1 Annex C).
STEEL = {"B500A": (500.0, "A"), "B500B": (500.0, "B"), "B500C": (500.0, "C"),
         "B450A": (450.0, "A"), "B450B": (450.0, "B"), "B450C": (450.0, "C")}
E_S = 200_000.0       # MPa, 3.2.7(4)
LAYERS = ("bottom_1", "bottom_2", "top_1", "top_2")


@dataclass(frozen=True)
class BarLayer:
    """One layer of bars: diameter, spacing and cover to these bars, all mm."""

    name: str
    diameter: float
    spacing: float
    cover: float


@dataclass(frozen=True)
class LayerCapacity:
    """Design moment of one layer per metre width.

    area: mm^2/m; d: effective depth, mm; x: neutral-axis depth, mm; xu_d = x/d;
    moment: kNm/m.
    """

    name: str
    area: float
    d: float
    x: float
    xu_d: float
    moment: float


@dataclass(frozen=True)
class Materials:
    """Concrete and steel with partial factors (EN 1992-1-1 Table 2.1N defaults)."""

    concrete: str
    steel: str
    gamma_c: float = 1.5
    gamma_s: float = 1.15
    alpha_cc: float = 1.0

    @property
    def fck(self) -> float:
        return float(CONCRETE[self.concrete])

    @property
    def fyk(self) -> float:
        return STEEL[self.steel][0]


def stress_block(fck: float) -> tuple[float, float, float]:
    """(lambda, eta, eps_cu3) of EN 1992-1-1 3.1.7(3) and Table 3.1 for f_ck in MPa."""
    if fck <= 50:
        return 0.8, 1.0, 0.0035
    return 0.8 - (fck - 50) / 400, 1.0 - (fck - 50) / 200, (2.6 + 35 * ((90 - fck) / 100) ** 4) / 1000


def layer_capacity(layer: BarLayer, thickness_mm: float, mat: Materials) -> LayerCapacity:
    """Design moment of `layer` in a slab `thickness_mm` thick (see module docstring)."""
    lam, eta, eps_cu = stress_block(mat.fck)
    fcd = mat.alpha_cc * mat.fck / mat.gamma_c
    fyd = mat.fyk / mat.gamma_s
    area = math.pi * layer.diameter**2 / 4 * 1000.0 / layer.spacing
    d = thickness_mm - layer.cover - layer.diameter / 2
    where = f"capacity.bars.{layer.name}"
    if d <= 0 or layer.cover + layer.diameter >= thickness_mm:
        raise ModelError(f"{where}: bars of {layer.diameter:g} mm with {layer.cover:g} mm cover do not fit "
                         f"in a slab {thickness_mm:g} mm thick; check cover, diameter and slab.thickness")
    x = area * fyd / (eta * fcd * lam * 1000.0)
    limit = eps_cu / (eps_cu + fyd / E_S)
    if x / d > limit:
        raise ModelError(f"{where}: the layer is over-reinforced (x/d = {x / d:.2f} > {limit:.2f}, the bars "
                         "would not yield); use fewer or smaller bars or a stronger concrete")
    moment = area * fyd * (d - lam * x / 2) / 1e6  # N mm per mm -> kNm/m
    return LayerCapacity(layer.name, area, d, x, x / d, moment)


def max_spacing(thickness_mm: float) -> float:
    """Largest spacing of principal bars in a slab, mm (EN 1992-1-1 9.3.1.1(3): 3h, 400 mm)."""
    return min(3.0 * thickness_mm, 400.0)


def fctm(fck: float) -> float:
    """Mean axial tensile strength of concrete, MPa (EN 1992-1-1 Table 3.1)."""
    if fck <= 50:
        return 0.30 * fck ** (2.0 / 3.0)
    return 2.12 * math.log(1.0 + (fck + 8.0) / 10.0)


def min_area(d_mm: float, mat: Materials) -> float:
    """Minimum tension reinforcement per metre, mm^2/m (EN 1992-1-1 9.2.1.1(1))."""
    return max(0.26 * fctm(mat.fck) / mat.fyk, 0.0013) * 1000.0 * d_mm


def detailing_warnings(bars, layers: dict[str, LayerCapacity], thickness_mm: float, mat: Materials) -> list[str]:
    """Bar layers wider apart than max_spacing or lighter than min_area."""
    out = []
    limit = max_spacing(thickness_mm)
    for bar in bars:
        lc = layers[bar.name]
        if bar.spacing > limit:
            out.append(f"capacity.bars.{bar.name}: spacing {bar.spacing:g} mm exceeds {limit:g} mm "
                       "(EN 1992-1-1 9.3.1.1(3): 3h and 400 mm)")
        need = min_area(lc.d, mat)
        if lc.area < need:
            out.append(f"capacity.bars.{bar.name}: {lc.area:.0f} mm2/m is below the minimum {need:.0f} mm2/m "
                       "(EN 1992-1-1 9.2.1.1(1))")
    return out


def schedule_warnings(layers: dict[str, LayerCapacity], mat: Materials) -> list[str]:
    """Warnings for plastic analysis without a rotation check (EN 1992-1-1 5.6.2(2))."""
    out = []
    for lc in layers.values():
        if lc.xu_d > 0.25 and mat.fck <= 50:
            out.append(f"capacity.bars.{lc.name}: x_u/d = {lc.xu_d:.3f} exceeds 0.25 (EN 1992-1-1 5.6.2(2)): "
                       "the hinges may lack rotation capacity; the yield-line result needs a rotation check")
    if STEEL[mat.steel][1] == "A":
        out.append(f"capacity.bars: steel {mat.steel} is ductility class A; plastic analysis without a rotation "
                   "check needs class B or C (EN 1992-1-1 5.6.2(2))")
    for k in ("1", "2"):
        bottom, top = layers.get(f"bottom_{k}"), layers.get(f"top_{k}")
        if bottom and top and bottom.moment > 0:
            ratio = top.moment / bottom.moment
            if not 0.5 <= ratio <= 2.0:
                out.append(f"capacity.bars: top/bottom capacity ratio in bar direction {k} is {ratio:.2f}, "
                           "outside 0.5 to 2.0 (common practice for plastic analysis)")
    return out
