"""The pattern file: hingeline's own TOML format for a hand-drawn yield-line pattern.

Holds the restricted expressions used for coordinates and deflections (numbers, parameter
names, + - * / ( ) and unary minus, parsed with `ast`, never `eval`), the free geometric
parameters, the region specifications as read (polygon and motion, not yet evaluated),
and `read_pattern` / `pattern_from_toml`, which validate the file and raise ModelError
naming the offending item (format: docs/hand-check.md).

Units: coordinates m, deflections w m (positive downward); parameters as used (usually m).
May import: `hingeline.errors` only (nothing here needs the model or the geometry).
"""
from __future__ import annotations

import ast
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from os import PathLike
from pathlib import Path
from typing import Any

from ..errors import ModelError

# --------------------------------------------------------------------------- expressions

_BINOPS = {ast.Add: lambda a, b: a + b, ast.Sub: lambda a, b: a - b,
           ast.Mult: lambda a, b: a * b, ast.Div: lambda a, b: a / b}


@dataclass(frozen=True, eq=False)
class Expr:
    """A coordinate or deflection: a number or an expression in the pattern's parameters.

    Allowed: numbers, parameter names, + - * / ( ) and unary minus. `where` names the item.
    """

    text: str
    tree: ast.AST
    where: str

    def value(self, params: Mapping[str, float]) -> float:
        try:
            v = _eval(self.tree, params)
        except ZeroDivisionError:
            raise ModelError(f"{self.where}: '{self.text}' divides by zero "
                             f"at {fmt_params(params)}") from None
        if not math.isfinite(v):
            raise ModelError(f"{self.where}: '{self.text}' is not finite at {fmt_params(params)}")
        return v


def _eval(node: ast.AST, params: Mapping[str, float]) -> float:
    if isinstance(node, ast.Expression):
        return _eval(node.body, params)
    if isinstance(node, ast.Constant):
        return float(node.value)
    if isinstance(node, ast.Name):
        return float(params[node.id])
    if isinstance(node, ast.UnaryOp):
        return -_eval(node.operand, params)
    if isinstance(node, ast.BinOp):
        return _BINOPS[type(node.op)](_eval(node.left, params), _eval(node.right, params))
    raise AssertionError(f"unchecked node {type(node).__name__}")  # pragma: no cover


def _check_tree(node: ast.AST, names: set[str], text: str, where: str) -> None:
    for n in ast.walk(node):
        if isinstance(n, (ast.Expression, ast.operator, ast.unaryop, ast.expr_context)):
            if isinstance(n, ast.operator) and type(n) not in _BINOPS:
                raise ModelError(f"{where}: '{text}' uses an operator that is not allowed; "
                                 "use only numbers, parameter names, + - * / ( ) and unary minus")
            if isinstance(n, ast.unaryop) and not isinstance(n, ast.USub):
                raise ModelError(f"{where}: '{text}': only unary minus is allowed")
            continue
        if isinstance(n, ast.Constant) and type(n.value) in (int, float):
            continue
        if isinstance(n, ast.Name):
            if n.id not in names:
                known = ", ".join(sorted(names)) or "none defined"
                raise ModelError(f"{where}: '{text}' uses '{n.id}', which is not a parameter "
                                 f"(parameters: {known}); define it under [parameters]")
            continue
        if isinstance(n, (ast.BinOp, ast.UnaryOp)):
            continue
        raise ModelError(f"{where}: '{text}' is not allowed; use only numbers, parameter names, "
                         "+ - * / ( ) and unary minus")


def _expr(raw: Any, names: set[str], where: str) -> Expr:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise ModelError(f"{where}: expected a number or an expression string, got {raw!r}")
    if isinstance(raw, (int, float)):
        if not math.isfinite(raw):
            raise ModelError(f"{where}: {raw!r} is not a finite number")
        return Expr(repr(raw), ast.Constant(float(raw)), where)
    try:
        tree = ast.parse(raw.strip(), mode="eval")
    except SyntaxError:
        raise ModelError(f"{where}: '{raw}' is not a valid expression") from None
    _check_tree(tree, names, raw, where)
    return Expr(raw, tree, where)


def fmt_params(params: Mapping[str, float]) -> str:
    """Parameter values for messages, e.g. "a = 0.5, b = 1.2"."""
    return ", ".join(f"{k} = {v:.6g}" for k, v in params.items()) or "(no parameters)"


# --------------------------------------------------------------------------- pattern file


@dataclass(frozen=True)
class Parameter:
    """A free geometric parameter: start value and bounds (units as used, usually m)."""

    name: str
    start: float
    min: float
    max: float


@dataclass(frozen=True, eq=False)
class RegionSpec:
    """One rigid region as read: polygon (expressions, m) and its motion.

    motion "axis": w = 0 on the line through axis[0], axis[1]; w = deflection at point.
    motion "points": w given at three non-collinear points (x, y, w).
    """

    name: str
    polygon: tuple[tuple[Expr, Expr], ...]
    motion: str
    axis: tuple[tuple[Expr, Expr], tuple[Expr, Expr]] | None = None
    point: tuple[Expr, Expr] | None = None
    deflection: Expr | None = None
    deflections: tuple[tuple[Expr, Expr, Expr], ...] | None = None


@dataclass(frozen=True, eq=False)
class Pattern:
    """A hand-drawn mechanism: free parameters and rigid regions. `source` prefixes messages."""

    parameters: tuple[Parameter, ...]
    regions: tuple[RegionSpec, ...]
    source: str = "pattern"

    def start_values(self) -> dict[str, float]:
        return {p.name: p.start for p in self.parameters}


def read_pattern(path: str | PathLike[str]) -> Pattern:
    """Read and validate a pattern file (TOML, see docs/hand-check.md); ModelError on bad input."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8")
    except FileNotFoundError:
        raise ModelError(f"pattern file '{p}' not found; check the path and file name") from None
    except IsADirectoryError:
        raise ModelError(f"pattern file '{p}' is a directory; give the path of a .toml file") from None
    except OSError as exc:
        raise ModelError(f"pattern file '{p}' cannot be read ({exc.strerror or exc})") from None
    except UnicodeDecodeError as exc:
        raise ModelError(f"pattern file '{p}' is not UTF-8 text (bad byte at position {exc.start})") from None
    return pattern_from_toml(text, source=str(p))


def pattern_from_toml(text: str, source: str = "pattern") -> Pattern:
    """Build and validate a pattern from TOML text; `source` prefixes error messages."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ModelError(f"{source}: not valid TOML ({exc})") from None
    try:
        return _parse_pattern(data, source)
    except ModelError as exc:
        raise ModelError(f"{source}: {exc}") from None


def _number(raw: Any, where: str) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw):
        raise ModelError(f"{where}: expected a finite number, got {raw!r}")
    return float(raw)


def _point(raw: Any, names: set[str], where: str, n: int = 2) -> tuple[Expr, ...]:
    if not isinstance(raw, list) or len(raw) != n:
        shape = "[x, y]" if n == 2 else "[x, y, w]"
        raise ModelError(f"{where}: expected {shape}, got {raw!r}")
    return tuple(_expr(v, names, f"{where}[{i}]") for i, v in enumerate(raw))


def _parse_pattern(data: dict, source: str) -> Pattern:
    unknown = set(data) - {"parameters", "region", "title"}
    if unknown:
        raise ModelError(f"unknown key(s) {sorted(unknown)}; expected [parameters] and [[region]] tables")
    params: list[Parameter] = []
    raw_params = data.get("parameters", {})
    if not isinstance(raw_params, dict):
        raise ModelError("[parameters] must be a table of name = {start, min, max}")
    for name, spec in raw_params.items():
        where = f"parameters.{name}"
        if not name.isidentifier():
            raise ModelError(f"{where}: a parameter name must be a plain identifier (letters, digits, _)")
        if not isinstance(spec, dict) or set(spec) != {"start", "min", "max"}:
            raise ModelError(f"{where}: expected {{start = ..., min = ..., max = ...}}, got {spec!r}")
        lo, hi, start = (_number(spec[k], f"{where}.{k}") for k in ("min", "max", "start"))
        if not lo < hi:
            raise ModelError(f"{where}: min ({lo:g}) must be below max ({hi:g})")
        if not lo <= start <= hi:
            raise ModelError(f"{where}: start ({start:g}) must lie within min .. max ({lo:g} .. {hi:g})")
        params.append(Parameter(name, start, lo, hi))
    names = {p.name for p in params}

    raw_regions = data.get("region")
    if not isinstance(raw_regions, list) or not raw_regions:
        raise ModelError("no [[region]] tables; a pattern needs at least one rigid region")
    regions: list[RegionSpec] = []
    seen: set[str] = set()
    for k, r in enumerate(raw_regions):
        if not isinstance(r, dict):
            raise ModelError(f"region[{k + 1}]: must be a table")
        name = r.get("name", f"region {k + 1}")
        if not isinstance(name, str) or not name.strip():
            raise ModelError(f"region[{k + 1}].name: expected a non-empty string")
        where = f"region '{name}'"
        if name in seen:
            raise ModelError(f"{where}: the name is used twice; give each region its own name")
        seen.add(name)
        allowed = {"name", "polygon", "axis", "point", "deflection", "deflections"}
        extra = set(r) - allowed
        if extra:
            raise ModelError(f"{where}: unknown key(s) {sorted(extra)}; allowed: {sorted(allowed)}")
        poly = r.get("polygon")
        if not isinstance(poly, list) or len(poly) < 3:
            raise ModelError(f"{where}.polygon: expected a list of at least 3 [x, y] points")
        polygon = tuple(_point(v, names, f"{where}.polygon[{i}]") for i, v in enumerate(poly))
        has_axis = any(key in r for key in ("axis", "point", "deflection"))
        if has_axis and "deflections" in r:
            raise ModelError(f"{where}: give either axis/point/deflection or deflections, not both")
        if "deflections" in r:
            d = r["deflections"]
            if not isinstance(d, list) or len(d) != 3:
                raise ModelError(f"{where}.deflections: expected three [x, y, w] points")
            pts = tuple(_point(v, names, f"{where}.deflections[{i}]", 3) for i, v in enumerate(d))
            regions.append(RegionSpec(name, polygon, "points", deflections=pts))
        elif has_axis:
            missing = [key for key in ("axis", "point", "deflection") if key not in r]
            if missing:
                raise ModelError(f"{where}: motion by axis needs axis, point and deflection; missing {missing}")
            ax = r["axis"]
            if not isinstance(ax, list) or len(ax) != 2:
                raise ModelError(f"{where}.axis: expected two points [[x, y], [x, y]]")
            axis = tuple(_point(v, names, f"{where}.axis[{i}]") for i, v in enumerate(ax))
            regions.append(RegionSpec(name, polygon, "axis", axis=axis,
                                      point=_point(r["point"], names, f"{where}.point"),
                                      deflection=_expr(r["deflection"], names, f"{where}.deflection")))
        else:
            raise ModelError(f"{where}: no motion; give axis, point and deflection, or deflections")
    return Pattern(tuple(params), tuple(regions), source)



def with_values(pattern: Pattern, given: Mapping[str, float] | None) -> dict[str, float]:
    """The pattern's start values updated with `given` (name -> value); unknown names refused."""
    values = pattern.start_values()
    if given is not None:
        unknown = set(given) - set(values)
        if unknown:
            raise ModelError(f"{pattern.source}: unknown parameter(s) {sorted(unknown)}")
        values.update({k: float(v) for k, v in given.items()})
    return values
