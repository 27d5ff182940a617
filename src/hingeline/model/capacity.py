"""The [capacity] section: moment capacities given directly, or computed from a bar schedule.

Given directly: sagging (bottom bars) and hogging (top bars), one number or a pair for bar
directions 1 and 2, at bar_angle from the x axis. Given as [capacity.bars]: concrete and steel
grades, partial factors, and up to four bar layers, turned into capacities by EN 1992-1-1
(see eurocode.py), with its warnings kept on the Capacity.

Units: kNm/m (capacities), degrees (bar_angle), mm (bar diameter, spacing, cover), m (slab
thickness passed in).
May import: `hingeline.errors`, `.eurocode`, `.types`, `.values`.
"""
from __future__ import annotations

from typing import Any

from ..errors import ModelError
from . import eurocode
from .types import Capacity
from .values import Invalid, check_keys, fmt, moment_pair, number, show, words

CAPACITY_KEYS = ("sagging", "hogging", "bar_angle", "bars")
BARS_KEYS = ("concrete", "steel", "gamma_c", "gamma_s", "alpha_cc", "bottom_1", "bottom_2", "top_1", "top_2")
LAYER_KEYS = ("diameter", "spacing", "cover")


def parse_capacity(t: dict, thickness: float | None) -> Capacity:
    """The [capacity] table; `thickness` (m, or None) is the slab's, needed for a bar schedule."""
    check_keys(t, CAPACITY_KEYS, "[capacity]")
    bar_angle = number(t.get("bar_angle", 0.0), "capacity.bar_angle", "degrees")
    if "bars" in t:
        if "sagging" in t or "hogging" in t:
            raise Invalid("[capacity] gives both bars and sagging/hogging; give one of them "
                          "(bars computes the capacities by EN 1992-1-1)")
        return _parse_bars(t["bars"], thickness, bar_angle)
    if "sagging" not in t:
        raise Invalid(
            "[capacity] has no sagging; add sagging = <kNm/m> (bottom bars, one number or a pair "
            "for bar directions 1 and 2), or a [capacity.bars] bar schedule"
        )
    sagging = moment_pair(t["sagging"], "capacity.sagging")
    hogging = moment_pair(t.get("hogging", 0.0), "capacity.hogging")
    if max(sagging + hogging) <= 0:
        raise Invalid(
            "[capacity]: no positive capacity (sagging and hogging are all 0); "
            "give the moment capacity of the bottom bars in capacity.sagging (kNm/m)"
        )
    return Capacity(sagging=sagging, hogging=hogging, bar_angle=bar_angle)


def _parse_bars(t: Any, thickness: float | None, bar_angle: float) -> Capacity:
    """Capacities from a bar schedule (EN 1992-1-1, see eurocode.py)."""
    if not isinstance(t, dict):
        raise Invalid(f"capacity.bars must be a table [capacity.bars], got {show(t)}")
    check_keys(t, BARS_KEYS, "[capacity.bars]")
    if thickness is None:
        raise Invalid("[capacity.bars] needs the slab thickness: add thickness = <m> to [slab]")
    for key, table in (("concrete", eurocode.CONCRETE), ("steel", eurocode.STEEL)):
        if key not in t:
            raise Invalid(f"[capacity.bars] has no {key}; add {key} = one of {words(table)}")
        if t[key] not in table:
            raise Invalid(f"capacity.bars.{key} = {show(t[key])} is not a known grade; use one of {words(table)}")
    factors = {k: number(t.get(k, d), f"capacity.bars.{k}", "") for k, d in
               (("gamma_c", 1.5), ("gamma_s", 1.15), ("alpha_cc", 1.0))}
    for k, v in factors.items():
        if v <= 0:
            raise Invalid(f"capacity.bars.{k} = {fmt(v)} must be > 0")
    mat = eurocode.Materials(t["concrete"], t["steel"], **factors)
    layers, bars = {}, []
    try:
        for name in eurocode.LAYERS:
            if name not in t:
                continue
            bars.append(_bar_layer(t[name], name))
            layers[name] = eurocode.layer_capacity(bars[-1], thickness * 1000.0, mat)
    except ModelError as exc:
        raise Invalid(str(exc)) from None
    if "bottom_1" not in layers and "bottom_2" not in layers:
        raise Invalid("[capacity.bars] has no bottom bars; give bottom_1 and/or bottom_2")

    def moment(name):
        return layers[name].moment if name in layers else 0.0

    return Capacity(sagging=(moment("bottom_1"), moment("bottom_2")),
                    hogging=(moment("top_1"), moment("top_2")), bar_angle=bar_angle,
                    layers=tuple(layers.values()), warnings=tuple(eurocode.schedule_warnings(layers, mat)),
                    bars=tuple(bars), materials=mat)


def _bar_layer(lt: Any, name: str) -> eurocode.BarLayer:
    """One bar layer {diameter, spacing, cover} (mm) of [capacity.bars]."""
    where = f"capacity.bars.{name}"
    if not isinstance(lt, dict):
        raise Invalid(f"{where} must be a table {{diameter = <mm>, spacing = <mm>, cover = <mm>}}")
    check_keys(lt, LAYER_KEYS, f"{where}")
    vals = {}
    for k in LAYER_KEYS:
        if k not in lt:
            raise Invalid(f"{where} has no {k}; give diameter, spacing and cover in mm")
        vals[k] = number(lt[k], f"{where}.{k}", "mm")
        if vals[k] <= 0 and k != "cover":
            raise Invalid(f"{where}.{k} = {fmt(vals[k])} mm must be > 0")
        if vals[k] < 0:
            raise Invalid(f"{where}.{k} = {fmt(vals[k])} mm must not be negative")
    return eurocode.BarLayer(name, **vals)
