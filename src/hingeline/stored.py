"""Re-check of the numbers a person reads in result.json, beside the two bounds (verify.py).

Each function compares stored values with values recomputed from the model and the stored
mechanism alone, and returns a list of messages, one per disagreement (empty when all
agree): the model the result was solved for, the yield-line table, the certificate, the
work balance, the gap. Units: m, rad, kNm; w positive downward, rotation > 0 sagging.

May import: `model`, `geometry`, `upper.certificate`, `outputs.result_json` (the model as
result.json stores it), `check` and `pattern.simplify` (the stored clean pattern's re-check).
Nothing downstream.
"""
from __future__ import annotations

import json

import numpy as np

from .geometry.domain import segment_distance
from .model import Model
from .model.criterion import capacity_at
from .result import CertificateCheck, Mechanism
from .upper.certificate import hinges


def _xy(p) -> str:
    return f"({float(p[0]):.6g}, {float(p[1]):.6g})"


def model_differences(model: Model, stored: dict | None) -> list[str]:
    """Where the model stored in result.json differs from `model` (the model file as read,
    for the stored load case): one message naming the first differing item."""
    from .outputs.result_json import model_to_dict

    if stored is None:
        return ["result.json stores no model"]
    expected = json.loads(json.dumps(model_to_dict(model)))

    def first(a, b, path):
        if isinstance(a, dict) and isinstance(b, dict):
            for k in a.keys() | b.keys():
                if k not in a or k not in b:
                    return f"{path}.{k}" if path else k
                found = first(a[k], b[k], f"{path}.{k}" if path else k)
                if found:
                    return found
            return None
        if isinstance(a, list) and isinstance(b, list):
            if len(a) != len(b):
                return path
            return next((f for i, (x, y) in enumerate(zip(a, b)) if (f := first(x, y, f"{path}[{i}]"))), None)
        return None if a == b else path

    where = first(stored, expected, "")
    return [] if where is None else [f"the result was solved for another model: its model.{where} differs from "
                                     "the model file"]


def _matches(p: np.ndarray, q: np.ndarray, a: np.ndarray, b: np.ndarray, tol: float) -> np.ndarray:
    """(k, h) True where the midpoint of segment k (p -> q) lies on segment h (a -> b) and the
    two are parallel: the same line of the plan."""
    mid = 0.5 * (p + q)
    tp, th = q - p, b - a
    tp = tp / np.hypot(*tp.T)[:, None]
    th = th / np.hypot(*th.T)[:, None]
    parallel = np.abs(tp[:, None, 0] * th[None, :, 1] - tp[:, None, 1] * th[None, :, 0]) <= 1e-6
    return parallel & (segment_distance(mid, np.stack([a, b], axis=1)) <= tol)


def yield_line_errors(model: Model, mech: Mechanism, lines: list[dict], rtol: float) -> list[str]:
    """The stored yield lines against the hinges of the stored mechanism: every stored line
    lies on a hinge with its rotation and sense, and (away from supports) has the work of its
    length, rotation and capacity; every hinge that does work lies on a stored line with its
    rotation; the stored works add up to the hinges' total."""
    a, b, theta, work = hinges(model, mech)
    total = float(work.sum())
    theta_tol = rtol * float(np.abs(theta).max(initial=0.0))
    work_tol = rtol * max(total, 1e-300)
    tol = 1e-6 * float(np.ptp(np.asarray(model.slab.outline, float), axis=0).max())
    try:
        s = np.array([ln["start"] for ln in lines], float).reshape(-1, 2)
        e = np.array([ln["end"] for ln in lines], float).reshape(-1, 2)
        sign = np.array([{"sagging": 1.0, "hogging": -1.0}[ln["sense"]] for ln in lines])
        rot = sign * np.array([ln["rotation"] for ln in lines], float)
        diss = np.array([ln["dissipation"] for ln in lines], float)
        support = np.array([bool(ln["at_support"]) for ln in lines], bool)
    except (KeyError, TypeError, ValueError) as exc:
        return [f"yield_lines: not a table of yield lines ({type(exc).__name__}: {exc})"]
    errors = []
    if abs(float(diss.sum()) - total) > work_tol:
        errors.append(f"yield_lines: their works add up to {float(diss.sum()):.8g} kNm, the mechanism's hinges to "
                      f"{total:.8g} kNm")
    on = _matches(s, e, a, b, tol) & (np.abs(rot[:, None] - theta[None, :]) <= theta_tol)
    for k in np.flatnonzero(~on.any(axis=1))[:3]:
        errors.append(f"yield_lines[{k}] from {_xy(s[k])} to {_xy(e[k])}: the mechanism has no hinge with its "
                      "rotation and sense there")
    working = np.flatnonzero(work > work_tol)
    covered = (_matches(a[working], b[working], s, e, tol)
               & (np.abs(theta[working][:, None] - rot[None, :]) <= theta_tol)).any(axis=1)
    for h in working[~covered][:3]:
        errors.append(f"yield_lines: the mechanism hinges from {_xy(a[h])} to {_xy(b[h])} (work {work[h]:.6g} kNm) "
                      "but no stored yield line with its rotation lies there")
    inner = np.flatnonzero(~support)
    if inner.size:
        t = e[inner] - s[inner]
        length = np.hypot(*t.T)
        normal = np.stack([-t[:, 1], t[:, 0]], axis=1) / length[:, None]
        plus, minus = capacity_at(model, 0.5 * (s[inner] + e[inner]), normal, tol)
        expected = length * np.abs(rot[inner]) * np.where(rot[inner] > 0, plus, minus)
        for k in inner[np.abs(expected - diss[inner]) > work_tol][:3]:
            errors.append(f"yield_lines[{k}] from {_xy(s[k])} to {_xy(e[k])}: work {diss[k]:.8g} kNm stored, "
                          "its length, rotation and capacity give "
                          f"{expected[np.searchsorted(inner, k)]:.8g} kNm")
    return errors


def number_errors(stored: dict, check: CertificateCheck, rtol: float) -> list[str]:
    """The stored certificate and work balance against the re-check, and the stored gap
    against the stored bounds."""
    errors = []

    def compare(label, value, expected, scale):
        try:
            v = float(value)
        except (TypeError, ValueError):
            errors.append(f"{label}: {value!r} is not a number")
            return
        if not abs(v - expected) <= rtol * max(abs(scale), 1e-300):
            errors.append(f"{label}: stored {v:.8g}, re-checked {expected:.8g}")

    cert, work = stored.get("certificate") or {}, stored.get("work") or {}
    for key in ("load_factor", "internal", "factored", "held"):
        compare(f"certificate.{key}", cert.get(key), getattr(check, key),
                check.load_factor if key == "load_factor" else check.internal)
    for key in ("internal", "factored", "held"):
        compare(f"work.{key}", work.get(key), getattr(check, key), check.internal)
    lb = stored.get("lower_bound") or {}
    if lb.get("load_factor") is not None and lb.get("gap") is not None:
        upper, lower = float(stored["load_factor"]), float(lb["load_factor"])
        compare("lower_bound.gap", lb["gap"], (upper - lower) / upper, 1.0)
    return errors


def pattern_errors(model: Model, stored: dict, rtol: float) -> list[str]:
    """The stored clean pattern (result.json `pattern`) re-checked by the hand check's work
    equation: its regions written as a hand-pattern file (each plane by three corners) and
    checked; its load factor must agree, and never lie above the raw mechanism's, unless the
    pattern is a simplified one marked `above_raw`, and then by at most RISE_MAX."""
    pat = stored.get("pattern")
    if not pat:
        return []
    from .check import check_pattern, pattern_from_toml
    from .errors import HingelineError
    from .pattern.simplify import RISE_MAX

    def pts(ring) -> str:
        return "[" + ", ".join(f"[{float(x)!r}, {float(y)!r}]" for x, y in ring) + "]"

    try:
        lines = ['title = "stored pattern"']
        regions = [(r["polygon"], r["plane"]) for r in pat["regions"]] + [(p, None) for p in pat.get("at_rest", [])]
        for k, (poly, plane) in enumerate(regions):
            ext = np.asarray(poly["exterior"], float)
            lines += ["", "[[region]]", f'name = "{k + 1}"', f"polygon = {pts(ext)}"]
            if poly.get("holes"):
                lines.append("holes = [" + ", ".join(pts(h) for h in poly["holes"]) + "]")
            a = 0
            b = int(np.argmax(np.hypot(*(ext - ext[a]).T)))
            d = ext[b] - ext[a]
            c = int(np.argmax(np.abs(d[0] * (ext[:, 1] - ext[a, 1]) - d[1] * (ext[:, 0] - ext[a, 0]))))
            corners = ext[[a, b, c]]
            w = np.zeros(3) if plane is None else float(plane[0]) + corners @ np.asarray(plane[1:], float)
            lines.append("deflections = [" + ", ".join(f"[{p[0]!r}, {p[1]!r}, {float(wi)!r}]"
                                                      for p, wi in zip(corners.tolist(), w)) + "]")
        hc = check_pattern(model, pattern_from_toml("\n".join(lines) + "\n", source="stored pattern"), optimise=False)
        lf = float(pat["load_factor"])
    except (HingelineError, KeyError, TypeError, ValueError, IndexError) as exc:
        return [f"pattern: the stored pattern does not re-check ({type(exc).__name__}: {exc})"]
    errors = []
    if not abs(lf - hc.load_factor) <= rtol * max(abs(hc.load_factor), 1e-300):
        errors.append(f"pattern.load_factor: stored {lf:.8g}, re-checked by the work equation {hc.load_factor:.8g}")
    raw = pat.get("raw_load_factor")
    upper = float(stored.get("load_factor", float("nan")))
    if raw is not None and not abs(float(raw) - upper) <= rtol * abs(upper):
        errors.append(f"pattern.raw_load_factor: stored {float(raw):.8g}, the result's load factor is {upper:.8g}")
    above = bool(pat.get("above_raw")) and bool(pat.get("simplified"))
    if hc.load_factor > upper * (1 + rtol) and not above:
        errors.append(f"pattern: its re-checked load factor {hc.load_factor:.8g} is above the raw mechanism's {upper:.8g}"
                      " and the pattern is not marked above_raw")
    if above and hc.load_factor > upper * (1 + RISE_MAX + rtol):
        errors.append(f"pattern: its re-checked load factor {hc.load_factor:.8g} is more than {RISE_MAX:.1%} above "
                      f"the raw mechanism's {upper:.8g}")
    return errors
