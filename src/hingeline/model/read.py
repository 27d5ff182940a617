"""Reading a model: file, TOML text or dict -> validated `Model`, and `model_for_case`.

Holds the public entry points (`read_model`, `model_from_toml`, `parse_model`), the check of
the top-level keys, the order in which the sections are read, the checks that span sections
(something supports the slab; no point load stands on a support), and [analysis].
Every failure is a `ModelError` "<source>: <item> ...; <what to do>" naming the first problem.

Units: m, kN, kNm/m, kPa; angles in degrees in the file.
May import: tomllib, shapely, `hingeline.errors` and the other model modules.
"""
from __future__ import annotations

import hashlib
import tomllib
from dataclasses import replace
from os import PathLike
from pathlib import Path
from typing import Any

import shapely

from ..errors import ModelError
from .capacity import parse_capacity
from .loads import UNIT_WEIGHT, parse_cases, parse_loads
from .slab import parse_slab
from .supports import parse_supports, parse_zones
from .types import OLD_RESOLUTION_NODES, Analysis, LoadCase, Model, Project, Source
from .values import Invalid, check_keys, fmt, number, required_table, show, type_name

# Allowed keys of each table. To support a new section, add its key here, write its parser
# in a module of its own, and call the parser from _parse.
TOP_KEYS = ("title", "slab", "capacity", "load", "analysis", "zone", "column", "wall", "case", "project")
ANALYSIS_KEYS = ("nodes", "mesh_size", "target_gap", "time_limit")
PROJECT_KEYS = ("job", "reference", "revision", "prepared_by", "checked_by")


def read_model(path: str | PathLike[str]) -> Model:
    """Read and validate a model from a TOML file (units m, kN, kNm/m, kPa).

    Raises ModelError naming the file when it is missing, unreadable, not UTF-8,
    not valid TOML (with the line/column tomllib reports) or not a valid model.
    The model keeps the file's name, the SHA-256 of its bytes and its text (`Model.source`).
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
    model = _from_text(text, str(p))
    return replace(model, source=Source(name=p.name, sha256=hashlib.sha256(raw).hexdigest(), text=text))


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

    project = _parse_project(data.get("project", {}))
    slab, geo = parse_slab(required_table(data, "slab", "add a [slab] table with outline and edges"))
    cap_t = required_table(data, "capacity", "add a [capacity] table with at least sagging = <kNm/m>")
    capacity = parse_capacity(cap_t, slab.thickness)
    loads = parse_loads(data.get("load"), geo, slab.thickness)
    # a self-weight keeps its unit weight (kN/m^3), which the record prints beside the kPa
    raws = list(data.get("load") or ())
    if len(raws) == len(loads):
        loads = tuple(replace(ld, unit_weight=float(raw.get("unit_weight", UNIT_WEIGHT)))
                      if isinstance(raw, dict) and raw.get("type") == "self_weight" else ld
                      for raw, ld in zip(raws, loads))

    if "analysis" in data:
        an_t = data["analysis"]
        if not isinstance(an_t, dict):
            raise Invalid(f"analysis must be a table [analysis], got {show(an_t)}")
        analysis = _parse_analysis(an_t)
    else:
        analysis = Analysis()

    zones = parse_zones(data.get("zone", []), geo)
    supports = parse_supports(data.get("column", []), data.get("wall", []), geo, slab.thickness)
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
                 supports=supports, cases=cases, project=project)


def _parse_project(t: Any) -> Project:
    """The optional [project] table: job, reference, revision, prepared_by, checked_by (text)."""
    if not isinstance(t, dict):
        raise Invalid(f"project must be a table [project], got {show(t)}")
    check_keys(t, PROJECT_KEYS, "[project]")
    for key, value in t.items():
        if not isinstance(value, str):
            raise Invalid(f"project.{key} must be text in quotes, got {show(value)}")
    return Project(**t)


def _parse_analysis(t: dict) -> Analysis:
    if "resolution" in t:
        raise Invalid(f"analysis.resolution is no longer read: {resolution_replacement('analysis.nodes')}")
    check_keys(t, ANALYSIS_KEYS, "[analysis]")
    nodes = None
    if "nodes" in t:
        v = t["nodes"]
        if isinstance(v, bool) or not isinstance(v, int) or v < 20:
            raise Invalid(f"analysis.nodes = {show(v)}; give a whole number of nodes >= 20 (e.g. 450) or leave "
                          "it out for adaptive refinement")
        nodes = v
    mesh_size = None
    if "mesh_size" in t:
        mesh_size = number(t["mesh_size"], "analysis.mesh_size", "m")
        if mesh_size <= 0:
            raise Invalid(
                f"analysis.mesh_size is {fmt(mesh_size)} m; give an element size > 0 (m) or leave it out"
            )
    if nodes is not None and mesh_size is not None:
        raise Invalid("analysis.nodes and analysis.mesh_size both set one uniform mesh; keep one of them")
    target_gap = 0.03
    if "target_gap" in t:
        target_gap = number(t["target_gap"], "analysis.target_gap", "")
        if not 0 < target_gap < 1:
            raise Invalid(f"analysis.target_gap is {fmt(target_gap)}; give (upper - lower) / upper as a number "
                          "between 0 and 1, e.g. 0.03")
    time_limit = 120.0
    if "time_limit" in t:
        time_limit = number(t["time_limit"], "analysis.time_limit", "s")
        if time_limit <= 0:
            raise Invalid(f"analysis.time_limit is {fmt(time_limit)} s; give a time > 0 s, e.g. 120")
    return Analysis(nodes=nodes, mesh_size=mesh_size, target_gap=target_gap, time_limit=time_limit)


def resolution_replacement(option: str) -> str:
    """What replaces the preset mesh words, worded for `option` ("analysis.nodes" or "--nodes")."""
    pairs = ", ".join(f"{w} = {n}" for w, n in OLD_RESOLUTION_NODES.items())
    gap = "--gap" if option.startswith("--") else "analysis.target_gap"
    return (f"use {option} for one uniform mesh of about that many nodes ({pairs}), or leave it out to refine "
            f"the mesh until the bounds are within {gap} of each other")


def model_for_case(model: Model, case: LoadCase) -> Model:
    """The model with only the loads of `case` (and no cases)."""
    return replace(model, loads=tuple(ld for ld in model.loads if ld.name in case.loads), cases=())
