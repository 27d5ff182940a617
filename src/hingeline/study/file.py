"""Reading a study file (TOML) into a validated `Study`.

A study names a base model (relative to the study file) and what varies:

    model = "floor.toml"          # base model
    target = 1.0                  # load factor whose contour the map draws (default 1.0)
    title = "..."                 # optional
    [move_opening]                # optional: an opening moved over a grid of centre positions
    opening = 1                   # the model's opening that moves (from 1) ... or
    polygon = [[x, y], ...]       # ... a new opening, m, at its first position
    step = 0.5                    # m between grid positions, > 0
    x = [xmin, xmax]              # optional limits of the centre, m
    y = [ymin, ymax]
    scale = [0.8, 1.0]            # optional sizes, factors on the opening about its centroid
    [[sweep]]                     # zero or more: a numeric value of the model over a list
    key = "load.imposed.value"    # plain path (see paths.py)
    values = [5.0, 7.5]

At least one of [move_opening] and [[sweep]] is needed. Every problem is a `StudyError`
"study file '<path>': <item> ...; <what to do>" naming the item (move_opening.step,
sweep[2].key, ...), raised before anything is solved or written.

Units: m for positions and steps; sweep values in the unit of the value they replace.
May import: tomllib, shapely, `hingeline.model`, `hingeline.errors`.
"""
from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import HingelineError, ModelError
from ..model import Model, parse_model
from ..model.values import Invalid, check_keys, is_number, number, points, show
from .paths import PathError, check_numeric, split_path, with_value

STUDY_KEYS = ("model", "target", "title", "move_opening", "sweep")
MOVE_KEYS = ("opening", "polygon", "step", "x", "y", "scale")
SWEEP_KEYS = ("key", "values")
#: Most grid positions a study may hold (a bigger grid is almost surely a step typed in mm).
MAX_POSITIONS = 20000


class StudyError(HingelineError):
    """A study file that cannot be used (exit code 2); the message names the item."""


@dataclass(frozen=True)
class MoveOpening:
    """The opening that moves.

    opening: its position (from 1) among the base model's openings, or None for a new one.
    polygon: its vertices at the base position, m. step: m between grid centres, > 0.
    x, y: (min, max) limits of the centre, m, or None (then from the slab, see variants.py).
    scale: size factors about the centroid, each > 0; () when not swept (size as given).
    """

    opening: int | None
    polygon: tuple[tuple[float, float], ...]
    step: float
    x: tuple[float, float] | None = None
    y: tuple[float, float] | None = None
    scale: tuple[float, ...] = ()


@dataclass(frozen=True)
class Sweep:
    """A numeric value of the model (plain path `key`) taken over `values`."""

    key: str
    values: tuple[float, ...]


@dataclass(frozen=True, eq=False)
class Study:
    """A validated study: the base model as data (`base`, the TOML tables) and as a `Model`."""

    path: Path
    model_path: Path
    base: dict
    model: Model
    target: float
    move: MoveOpening | None
    sweeps: tuple[Sweep, ...]
    title: str = ""


def read_study(path: str | Path) -> Study:
    """Read and validate the study file at `path` and the base model it names."""
    p = Path(path)
    where = f"study file '{p}'"
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise StudyError(f"{where} not found; check the path and file name") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise StudyError(f"{where} cannot be read ({exc}); give a UTF-8 .toml file") from None
    except tomllib.TOMLDecodeError as exc:
        raise StudyError(f"{where}: not valid TOML: {exc}; fix the syntax there") from None
    try:
        return _parse(data, p)
    except (Invalid, PathError) as exc:
        raise StudyError(f"{where}: {exc}") from None


def _parse(data: dict, path: Path) -> Study:
    check_keys(data, STUDY_KEYS, "the top level of the study file")
    if "model" not in data:
        raise Invalid('model is missing; name the base model file, e.g. model = "floor.toml" '
                      "(relative to the study file)")
    if not isinstance(data["model"], str) or not data["model"].strip():
        raise Invalid(f"model must name the base model file in quotes (relative to the study file), "
                      f"got {show(data['model'])}")
    model_path = path.parent / data["model"]
    base = _read_base(model_path)
    model = parse_model(base, str(model_path))
    target = number(data.get("target", 1.0), "target", "load factor")
    if target <= 0:
        raise Invalid(f"target is {target:g}; give the load factor to map, > 0 (e.g. 1.0)")
    title = data.get("title", "")
    if not isinstance(title, str):
        raise Invalid(f"title must be text in quotes, got {show(title)}")
    move = _parse_move(data["move_opening"], base) if "move_opening" in data else None
    sweeps = _parse_sweeps(data.get("sweep", []), base, model_path, move)
    if move is None and not sweeps:
        raise Invalid("nothing varies; add a [move_opening] table or a [[sweep]] table")
    return Study(path=path, model_path=model_path, base=base, model=model, target=target, move=move,
                 sweeps=sweeps, title=title)


def _read_base(model_path: Path) -> dict:
    try:
        return tomllib.loads(model_path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise Invalid(f"model: base model '{model_path}' not found (paths are relative to the study "
                      "file); check the path") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise Invalid(f"model: base model '{model_path}' cannot be read ({exc})") from None
    except tomllib.TOMLDecodeError as exc:
        raise ModelError(f"{model_path}: not valid TOML: {exc}; fix the syntax there") from None


def _limits(t: dict, axis: str) -> tuple[float, float] | None:
    if axis not in t:
        return None
    v = t[axis]
    where = f"move_opening.{axis}"
    if not isinstance(v, list) or len(v) != 2:
        raise Invalid(f"{where} must be a pair [{axis}min, {axis}max] in m, got {show(v)}")
    lo, hi = (number(c, f"{where}[{k + 1}]", "m") for k, c in enumerate(v))
    if lo > hi:
        raise Invalid(f"{where} = [{lo:g}, {hi:g}]: the minimum is above the maximum; swap them")
    return lo, hi


def _parse_move(t: Any, base: dict) -> MoveOpening:
    if not isinstance(t, dict):
        raise Invalid(f"move_opening must be a table [move_opening], got {show(t)}")
    check_keys(t, MOVE_KEYS, "[move_opening]")
    if ("opening" in t) == ("polygon" in t):
        raise Invalid("move_opening needs exactly one of opening (an opening of the model, from 1) "
                      "and polygon (a new opening, [[x, y], ...] in m)")
    if "opening" in t:
        k = t["opening"]
        openings = base.get("slab", {}).get("opening", [])
        if not isinstance(k, int) or isinstance(k, bool):
            raise Invalid(f"move_opening.opening must be a whole number (from 1), got {show(k)}")
        if not 1 <= k <= len(openings):
            raise Invalid(f"move_opening.opening = {k}: the model has {len(openings)} opening(s) "
                          f"(slab.opening, counted from 1); give one of 1..{len(openings)} or a polygon"
                          if openings else f"move_opening.opening = {k}: the model has no openings; "
                          "give polygon = [[x, y], ...] for a new one")
        poly = points(openings[k - 1].get("polygon"), f"slab.opening[{k}].polygon")
    else:
        k = None
        poly = points(t["polygon"], "move_opening.polygon")
        if len(poly) < 3:
            raise Invalid(f"move_opening.polygon has {len(poly)} vertices; give at least 3 [x, y] (m)")
    if "step" not in t:
        raise Invalid("move_opening.step is missing; give the distance between grid positions in m")
    step = number(t["step"], "move_opening.step", "m")
    if step <= 0:
        raise Invalid(f"move_opening.step is {step:g} m; give a distance > 0 between grid positions (m)")
    scale = t.get("scale", [1.0])
    if not isinstance(scale, list) or not scale:
        raise Invalid(f"move_opening.scale must be a non-empty list of size factors, got {show(scale)}")
    factors = tuple(number(s, f"move_opening.scale[{i + 1}]", "size factor") for i, s in enumerate(scale))
    for i, s in enumerate(factors):
        if s <= 0:
            raise Invalid(f"move_opening.scale[{i + 1}] is {s:g}; a size factor must be > 0")
    if len(set(factors)) != len(factors):
        raise Invalid("move_opening.scale repeats a factor; list each size once")
    return MoveOpening(opening=k, polygon=tuple(map(tuple, poly.tolist())), step=step,
                       x=_limits(t, "x"), y=_limits(t, "y"), scale=factors if "scale" in t else ())


def _parse_sweeps(raw: Any, base: dict, model_path: Path, move: MoveOpening | None) -> tuple[Sweep, ...]:
    if isinstance(raw, dict) or not isinstance(raw, list):
        raise Invalid("sweep must be a list of tables: write each as [[sweep]] (double brackets)")
    out: list[Sweep] = []
    for i, t in enumerate(raw):
        where = f"sweep[{i + 1}]"
        if not isinstance(t, dict):
            raise Invalid(f"{where} must be a table [[sweep]], got {show(t)}")
        check_keys(t, SWEEP_KEYS, f"[[sweep]] {where}")
        if "key" not in t or "values" not in t:
            raise Invalid(f"{where} needs key (a plain path such as \"load.imposed.value\") and values (a list)")
        key = t["key"]
        try:
            segments = split_path(key)
            check_numeric(base, key)
        except PathError as exc:
            raise Invalid(f"{where}.key: {exc}") from None
        if any(s.key == key or split_path(s.key) == segments for s in out):
            raise Invalid(f"{where}.key '{key}' is swept twice; give each key once")
        if move and move.opening and segments[:3] == ("slab", "opening", str(move.opening)):
            raise Invalid(f"{where}.key '{key}' changes the opening that [move_opening] moves; "
                          "sweep it by move_opening.scale or leave it out")
        values = t["values"]
        if not isinstance(values, list) or not values:
            raise Invalid(f"{where}.values must be a non-empty list of numbers, got {show(values)}")
        nums = []
        for j, v in enumerate(values):
            if not is_number(v) or not math.isfinite(v):
                raise Invalid(f"{where}.values[{j + 1}] must be a finite number, got {show(v)}")
            try:
                parse_model(with_value(base, key, v), "model")
            except ModelError as exc:
                raise Invalid(f"{where}: {key} = {v} makes the model invalid: "
                              f"{str(exc).removeprefix('model: ')}") from None
            nums.append(v)
        if len(set(nums)) != len(nums):
            raise Invalid(f"{where}.values repeats a value; list each once")
        out.append(Sweep(key=key, values=tuple(nums)))
    return tuple(out)
