"""Reading a model: file, TOML text or dict -> validated `Model`, and `model_for_case`.

Holds the public entry points (`read_model`, `model_from_toml`, `parse_model`), the check of
the top-level keys, the order in which the sections are read, the checks that span sections
(something supports the slab; no point load stands on a support), and [analysis].
Every failure is a `ModelError` "<source>: <item> ...; <what to do>" naming the first problem.

Units: m, kN, kNm/m, kPa; angles in degrees in the file.
May import: tomllib, shapely, `hingeline.errors` and the other model modules.
"""
from __future__ import annotations

import tomllib
from dataclasses import replace
from os import PathLike
from pathlib import Path
from typing import Any

import shapely

from ..errors import ModelError
from .capacity import parse_capacity
from .loads import parse_cases, parse_loads
from .slab import parse_slab
from .supports import parse_supports, parse_zones
from .types import RESOLUTIONS, Analysis, LoadCase, Model
from .values import Invalid, check_keys, fmt, number, required_table, show, type_name, words

# Allowed keys of each table. To support a new section, add its key here, write its parser
# in a module of its own, and call the parser from _parse.
TOP_KEYS = ("title", "slab", "capacity", "load", "analysis", "zone", "column", "wall", "case")
ANALYSIS_KEYS = ("resolution", "mesh_size")


def read_model(path: str | PathLike[str]) -> Model:
    """Read and validate a model from a TOML file (units m, kN, kNm/m, kPa).

    Raises ModelError naming the file when it is missing, unreadable, not UTF-8,
    not valid TOML (with the line/column tomllib reports) or not a valid model.
    """
    p = Path(path)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise ModelError(f"model file '{p}' not found; check the path and file name") from None
    except IsADirectoryError:
        raise ModelError(f"model file '{p}' is a directory; give the path of a .toml file") from None
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise ModelError(f"model file '{p}' cannot be read ({reason}); check that it exists and is readable") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ModelError(
            f"model file '{p}' is not UTF-8 text (bad byte at position {exc.start}); save it as UTF-8"
        ) from None
    return _from_text(text, str(p))


def model_from_toml(text: str, source: str = "model") -> Model:
    """Build and validate a model from TOML text; `source` prefixes error messages."""
    if not isinstance(text, str):
        raise ModelError(f"{source}: TOML text must be a string, got {type(text).__name__}")
    return _from_text(text, source)


def _from_text(text: str, source: str) -> Model:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ModelError(f"{source}: not valid TOML: {exc}; fix the syntax there") from None
    return parse_model(data, source)


def parse_model(data: dict, source: str = "model") -> Model:
    """Build and validate a Model from an already-parsed dict (the TOML structure).

    Polygons are returned counter-clockwise as read-only float64 (k, 2) arrays
    without a closing repeat; a clockwise outline is reversed (keeping its first
    vertex first) and its edge labels re-mapped to the same physical edges.
    Raises ModelError ("<source>: <item> ...; <what to do>") on the first problem.
    """
    try:
        return _parse(data)
    except Invalid as exc:
        raise ModelError(f"{source}: {exc}") from None


def _parse(data: Any) -> Model:
    if not isinstance(data, dict):
        raise Invalid(f"the model must be a table of sections, got {type_name(data)}")
    check_keys(data, TOP_KEYS, "the top level of the file")

    title = data.get("title", "")
    if not isinstance(title, str):
        raise Invalid(f"title must be text in quotes, got {show(title)}")

    slab, geo = parse_slab(required_table(data, "slab", "add a [slab] table with outline and edges"))
    cap_t = required_table(data, "capacity", "add a [capacity] table with at least sagging = <kNm/m>")
    capacity = parse_capacity(cap_t, slab.thickness)
    loads = parse_loads(data.get("load"), geo, slab.thickness)

    if "analysis" in data:
        an_t = data["analysis"]
        if not isinstance(an_t, dict):
            raise Invalid(f"analysis must be a table [analysis], got {show(an_t)}")
        analysis = _parse_analysis(an_t)
    else:
        analysis = Analysis()

    zones = parse_zones(data.get("zone", []), geo)
    supports = parse_supports(data.get("column", []), data.get("wall", []), geo)
    if all(e == "free" for e in slab.edges) and not supports:
        raise Invalid(
            "slab.edges: every edge is \"free\", so nothing supports the slab; "
            "make at least one edge \"simple\" or \"continuous\", or add a [[column]] or [[wall]]"
        )
    for i, ld in enumerate(loads):
        for sp in supports:
            if hasattr(ld, "at") and sp.polygon.buffer(-geo.tol).contains(shapely.Point(ld.at)):
                raise Invalid(f"load[{i + 1}] (\"{ld.name}\") stands on {sp.name}: it goes straight into the "
                              "support and does no work on the slab; move it onto the slab or leave it out")
    cases = parse_cases(data.get("case", []), loads)
    return Model(slab=slab, capacity=capacity, loads=loads, analysis=analysis, title=title, zones=zones,
                 supports=supports, cases=cases)


def _parse_analysis(t: dict) -> Analysis:
    check_keys(t, ANALYSIS_KEYS, "[analysis]")
    resolution = t.get("resolution", "normal")
    if not isinstance(resolution, str) or resolution not in RESOLUTIONS:
        raise Invalid(
            f"analysis.resolution = {show(resolution)} is not a resolution; use one of {words(RESOLUTIONS)}"
        )
    mesh_size = None
    if "mesh_size" in t:
        mesh_size = number(t["mesh_size"], "analysis.mesh_size", "m")
        if mesh_size <= 0:
            raise Invalid(
                f"analysis.mesh_size is {fmt(mesh_size)} m; give an element size > 0 (m) or leave it out"
            )
    return Analysis(resolution=resolution, mesh_size=mesh_size)


def model_for_case(model: Model, case: LoadCase) -> Model:
    """The model with only the loads of `case` (and no cases)."""
    return replace(model, loads=tuple(ld for ld in model.loads if ld.name in case.loads), cases=())
