"""Tiny invented slabs and study files shared by the study tests (kept small: a few
variants at a large element size each, so the whole folder runs in well under a minute)."""
from __future__ import annotations

import csv
from pathlib import Path

#: Element size (m) of every solve in these tests: about 70 nodes on the 4 m x 2 m strip.
MESH = "0.4"

#: A 4 m x 2 m panel simply supported on all four edges, isotropic bottom bars, uniform
#: load, with a 0.4 m square opening on its long axis (y = 1 m). Invented for the tests.
STRIP = """\
title = "Test panel, simply supported all round"
[slab]
outline = [[0.0, 0.0], [4.0, 0.0], [4.0, 2.0], [0.0, 2.0]]
edges = "simple"
[[slab.opening]]
polygon = [[1.8, 0.8], [2.2, 0.8], [2.2, 1.2], [1.8, 1.2]]
[capacity]
sagging = 10.0
[[load]]
type = "area"
name = "imposed"
value = 10.0
"""

#: The opening moved along the long axis, centroid from x = 0.8 to 3.2 m: 5 positions
#: mirrored about mid-span x = 2 m.
ALONG_AXIS = """\
model = "panel.toml"
target = 3.0
[move_opening]
opening = 1
step = 0.6
x = [0.8, 3.2]
y = [1.0, 1.0]
"""


def line_study(x: tuple[float, float], y: float, step: float, extra: str = "") -> str:
    """A study moving opening 1 of panel.toml along the line at `y` (m) between x[0] and
    x[1] (m), `step` apart, followed by `extra` (more tables)."""
    return (f'model = "panel.toml"\n[move_opening]\nopening = 1\nstep = {step}\n'
            f"x = [{x[0]}, {x[1]}]\ny = [{y}, {y}]\n{extra}")


def write_study(folder: Path, study: str, model: str = STRIP) -> Path:
    """Write panel.toml and study.toml into `folder`; return the study file's path."""
    (folder / "panel.toml").write_text(model, encoding="utf-8")
    path = folder / "study.toml"
    path.write_text(study, encoding="utf-8")
    return path


def read_rows(path: Path) -> list[dict]:
    with open(path, newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))
