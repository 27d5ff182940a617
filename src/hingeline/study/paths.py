"""Plain paths to numeric values of a model's data, as a study's sweeps name them.

A path is a TOML dotted key read against the model file's tables: "capacity.hogging",
"analysis.mesh_size", "load.imposed.value" (the [[load]] named "imposed"), "load.2.value"
(the second [[load]], counting from 1), "slab.edges.3.fixity", "capacity.sagging.1" (the first
of a pair). Names with dots or spaces are quoted as in TOML: 'load."incl. partitions".value'.
Within a list a segment is a position (from 1) or the `name` of a table in it; an edge given
as a word ("continuous") becomes the table {type = "continuous"} when a key below it is set.
A key missing from a table is added (e.g. analysis.mesh_size); positions must exist.

Units: those of the value addressed (m, kPa, kNm/m, a fraction for fixity); nothing is
converted. Whether the new value makes a valid model is left to `hingeline.model`.
May import: the standard library and `hingeline.model.values`.
"""
from __future__ import annotations

import copy
import tomllib
from typing import Any

from ..model.values import is_number, show


class PathError(ValueError):
    """A path that does not lead to a numeric value of the model (the message names it)."""


def split_path(key: str) -> tuple[str, ...]:
    """The segments of a dotted `key`, parsed as a TOML dotted key (quotes allowed)."""
    if not isinstance(key, str) or not key.strip():
        raise PathError(f"{show(key)} is not a path; write it as text, e.g. \"load.imposed.value\"")
    try:
        tree = tomllib.loads(f"{key} = 0")
    except tomllib.TOMLDecodeError:
        raise PathError(f"'{key}' is not a plain path: use names joined by dots, quoting a name "
                        "that holds dots or spaces, e.g. 'load.\"incl. partitions\".value'") from None
    segments = []
    while isinstance(tree, dict):
        (name, tree), = tree.items()
        segments.append(name)
    return tuple(segments)


def _list_item(items: list, seg: str, where: str) -> int:
    """Index into `items` of the segment: a position from 1, or the name of a table in it."""
    if seg.isdigit():
        k = int(seg)
        if 1 <= k <= len(items):
            return k - 1
        raise PathError(f"'{where}' has {len(items)} entries; position {k} does not exist (count from 1)")
    names = [t.get("name") for t in items if isinstance(t, dict)]
    for i, t in enumerate(items):
        if isinstance(t, dict) and t.get("name") == seg:
            return i
    known = ", ".join(f'"{n}"' for n in names if isinstance(n, str)) or "none named"
    raise PathError(f"'{where}' has no entry named \"{seg}\" (names: {known}); "
                    "give its name or its position from 1")


def _step(node: Any, seg: str, where: str, last: bool) -> tuple[Any, Any]:
    """(container, index) of `seg` below `node`; tables missing on the way are added."""
    if isinstance(node, dict):
        if seg not in node and not last:
            node[seg] = {}
        return node, seg
    if isinstance(node, list):
        return node, _list_item(node, seg, where)
    raise PathError(f"'{where}' is {show(node)}, which holds no '{seg}'")


def locate(data: dict, key: str) -> tuple[Any, Any]:
    """(container, index) of the value `key` addresses in `data` (modified in place: tables
    missing on the way are added, an edge word below which a key is set becomes a table)."""
    segments = split_path(key)
    node: Any = data
    where = ""
    for i, seg in enumerate(segments):
        last = i == len(segments) - 1
        container, index = _step(node, seg, where or "the model", last)
        where = f"{where}.{seg}" if where else seg
        if last:
            return container, index
        node = container[index]
        if isinstance(node, str) and isinstance(container, list):
            # An edge written as a word; its keys (fixity) live in the table form.
            node = container[index] = {"type": node}
    raise AssertionError("unreachable")  # pragma: no cover


def check_numeric(data: dict, key: str) -> None:
    """Refuse a path whose present value is not a number (absent is fine: it is added)."""
    container, index = locate(copy.deepcopy(data), key)
    if isinstance(container, dict) and index not in container:
        return
    value = container[index]
    if isinstance(value, list) and value and all(is_number(v) for v in value):
        raise PathError(f"'{key}' is a list of {len(value)} numbers {show(value)}; "
                        f"sweep one of them as '{key}.1', '{key}.2', ...")
    if not is_number(value):
        raise PathError(f"'{key}' is {show(value)}, not a number")


def with_value(data: dict, key: str, value: float) -> dict:
    """A deep copy of `data` with the value at `key` set to `value`."""
    out = copy.deepcopy(data)
    container, index = locate(out, key)
    container[index] = value
    return out
