"""Typed values of the model file and the wording of its error messages.

Holds `Invalid` (a validation failure; `read.parse_model` prefixes the source and raises
`ModelError`), key checks, numbers, moment pairs and point lists, read-only arrays, and the
helpers that format values for messages.

Message convention (used in every error): items are named by their path in the file, list
positions 1-based in file order -- "slab.opening[2]", "load[3].region", "slab.edges[4]",
"capacity.sagging[2]". Vertices and edges are numbered 1-based in the order the user wrote
them (before any re-orientation): "vertex 3 (7.2, 5.4)"; edge k runs from vertex k to vertex
k+1 (the last edge back to vertex 1) and is written
"edge 3 (vertex 3 (7.2, 0) to vertex 4 (7.2, 5.4))".

Units: as the caller names them (m, kNm/m, kPa, ...); nothing is converted here.
May import: numpy and the standard library. Nothing of hingeline.
"""
from __future__ import annotations

import difflib
import math
import numbers
from typing import Any

import numpy as np


class Invalid(Exception):
    """A validation failure; `parse_model` prefixes the source and re-raises it as ModelError."""


def check_keys(table: dict, allowed: tuple[str, ...], where: str) -> None:
    for key in table:
        if key not in allowed:
            close = difflib.get_close_matches(str(key), allowed, n=1)
            hint = f" (did you mean '{close[0]}'?)" if close else ""
            raise Invalid(
                f"unknown key '{key}' in {where}{hint}; allowed keys: {', '.join(allowed)}"
            )


def required_table(data: dict, key: str, todo: str) -> dict:
    if key not in data:
        raise Invalid(f"no [{key}] table; {todo}")
    t = data[key]
    if not isinstance(t, dict):
        raise Invalid(f"{key} must be a table [{key}], got {show(t)}; {todo}")
    return t


def tables(raw: Any, key: str, each: str, allowed: tuple[str, ...]):
    """Yield (index, where, table) for each [[key]] table, after checking that it is one and
    that its keys are `allowed`; `each` names one of them in the advice ("each zone")."""
    if isinstance(raw, dict) or not isinstance(raw, (list, tuple)):
        raise Invalid(f"{key} must be a list of tables: write {each} as [[{key}]] (double brackets)")
    for i, t in enumerate(raw):
        where = f"{key}[{i + 1}]"
        if not isinstance(t, dict):
            raise Invalid(f"{where} must be a table, got {show(t)}")
        check_keys(t, allowed, f"[[{key}]] {where}")
        yield i, where, t


def is_number(x: Any) -> bool:
    return isinstance(x, numbers.Real) and not isinstance(x, (bool, np.bool_))


def number(x: Any, where: str, unit: str) -> float:
    if not is_number(x):
        raise Invalid(f"{where} must be a number ({unit}), got {show(x)}")
    v = float(x)
    if not math.isfinite(v):
        raise Invalid(f"{where} is {v}; give a finite number ({unit})")
    return v


def moment_pair(x: Any, where: str) -> tuple[float, float]:
    """One number (both bar directions) or a pair [direction 1, direction 2], kNm/m, >= 0."""
    if isinstance(x, (list, tuple, np.ndarray)):
        if len(x) != 2:
            raise Invalid(
                f"{where} has {len(x)} values; give one number (same in both bar directions) "
                "or a pair [direction 1, direction 2] (kNm/m)"
            )
        pair = tuple(number(v, f"{where}[{k + 1}]", "kNm/m") for k, v in enumerate(x))
        names = [f"{where}[1]", f"{where}[2]"]
    else:
        v = number(x, where, "kNm/m")
        pair = (v, v)
        names = [where, where]
    for name, v in zip(names, pair):
        if v < 0:
            raise Invalid(f"{name} is {fmt(v)} kNm/m; moment capacities must be >= 0 (0 = no bars)")
    return pair  # type: ignore[return-value]


def points(x: Any, where: str) -> np.ndarray:
    """A list of [x, y] pairs as an (m, 2) float64 array in m (no geometric checks)."""
    if isinstance(x, np.ndarray):
        x = x.tolist()
    if not isinstance(x, (list, tuple)):
        raise Invalid(f"{where} must be a list of [x, y] points (m), got {show(x)}")
    out = np.empty((len(x), 2))
    for k, p in enumerate(x):
        if not isinstance(p, (list, tuple)) or len(p) != 2 or not all(is_number(c) for c in p):
            raise Invalid(f"{where} vertex {k + 1} must be a pair of numbers [x, y] (m), got {show(p)}")
        if not all(math.isfinite(float(c)) for c in p):
            raise Invalid(f"{where} vertex {k + 1} is {show(p)}; coordinates must be finite numbers (m)")
        out[k] = (float(p[0]), float(p[1]))
    return out


def pair(x: Any, where: str, what: str = "[x, y] (m)") -> np.ndarray:
    """One pair of finite numbers as a (2,) float64 array; `what` names the pair in messages."""
    if isinstance(x, np.ndarray):
        x = x.tolist()
    if not isinstance(x, (list, tuple)) or len(x) != 2 or not all(is_number(c) for c in x):
        raise Invalid(f"{where} must be a pair of numbers {what}, got {show(x)}")
    if not all(math.isfinite(float(c)) for c in x):
        raise Invalid(f"{where} is {show(x)}; both numbers must be finite")
    return np.array([float(x[0]), float(x[1])])


def frozen(a: np.ndarray) -> np.ndarray:
    """A read-only contiguous float64 copy (or view) of `a`."""
    a = np.ascontiguousarray(a, dtype=np.float64)
    a.flags.writeable = False
    return a


# --- message helpers --------------------------------------------------------


def fmt(v: float) -> str:
    return f"{v:.6g}"


def pt(p) -> str:
    return f"({fmt(float(p[0]))}, {fmt(float(p[1]))})"


def edge_label(pts: np.ndarray, k: int) -> str:
    """'edge k (vertex k (x, y) to vertex k+1 (x, y))', 1-based, k given 0-based."""
    n = len(pts)
    k2 = (k + 1) % n
    return f"edge {k + 1} (vertex {k + 1} {pt(pts[k])} to vertex {k2 + 1} {pt(pts[k2])})"


def words(items) -> str:
    return ", ".join(f'"{w}"' for w in items)


def type_name(x: Any) -> str:
    if isinstance(x, str):
        return "text"
    if isinstance(x, bool):
        return "true/false"
    if isinstance(x, dict):
        return "a table"
    if isinstance(x, (list, tuple)):
        return "a list"
    return type(x).__name__


def show(x: Any) -> str:
    """Short description of a bad value for messages."""
    if isinstance(x, str):
        s = f'"{x}" (text)'
    elif isinstance(x, bool):
        s = f"{str(x).lower()} (true/false)"
    elif isinstance(x, dict):
        s = "a table"
    else:
        s = repr(x)
    return s if len(s) <= 60 else s[:57] + "..."
