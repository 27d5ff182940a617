"""Pinned columns as bearing points: both bounds against closed forms.

Usage::

    python benchmarks/pinned_columns.py                          # 150 and 450 nodes
    python benchmarks/pinned_columns.py --nodes 1100

Slabs (m, kPa, kNm/m; sagging = hogging = 10, uniform 1 kPa):

- ``corners``: 6 m square, free edges, four 0.05 m pinned columns centred on its corners.
  Closed form 8 m / L^2, exact for m' = m (fold mechanism and a matching moment field,
  derived in tests/upper/test_pinned_columns.py, whose models and closed forms this script
  uses).
- ``inset``: the same with the columns centred 0.025 m in from both edges (wholly under the
  slab). Closed form: the fold about the lines through the column centres,
  8 m / (L (L - 4c)), c = 0.025 m (work equation, derived; an upper bound).
- ``16-gon``: regular 16-gon of circumradius 3 m, simply supported, on a central 0.3 m pinned
  column. Closed form: the plateau mechanism (the slab falls round the bearing through a fan of
  zero radius), q r^2 = 6 min over x of (m' + m + m / (1 - x)) / (1 + x + x^2), r the inradius
  (work equation, derived; an upper bound: the exact value may lie below).

Columns: load factor (upper bound), lower bound (re-checked field), the closed form and its
kind, err % = (load factor - closed form) / closed form, LB err % the same for the lower
bound, gap % = (load factor - lower bound) / load factor, certificate agreement and seconds.
Flags: LB>UB! (a bug), LB>exact! or UB<exact! (a bound on the wrong side of an exact value),
LB>mech! (a lower bound above a mechanism's load factor).

No timing is asserted anywhere: this script only prints a table.
"""
from __future__ import annotations

import argparse
import datetime
import importlib.util
import os
import platform
import subprocess
import time
from pathlib import Path

import hingeline

ROOT = Path(__file__).resolve().parent.parent


def _slabs():
    """The test suite's models and closed forms of these slabs, loaded from
    tests/upper/test_pinned_columns.py without touching sys.path (one derivation of each)."""
    spec = importlib.util.spec_from_file_location("pinned_slabs", ROOT / "tests" / "upper" / "test_pinned_columns.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def cases():
    """name -> (model text at 150 nodes, closed form, kind)."""
    t = _slabs()
    c = 0.025
    inset = [(c, c), (t.L - c, c), (t.L - c, t.L - c), (c, t.L - c)]
    corners = [(0, 0), (t.L, 0), (t.L, t.L), (0, t.L)]
    return {
        "corners": (t.SQUARE.format(columns=t.columns(corners)), t.corner_bearings(0.0), "exact"),
        "inset": (t.SQUARE.format(columns=t.columns(inset)), t.corner_bearings(c), "mechanism"),
        "16-gon": (t.POLYGON.format(outline=t.regular_polygon(16, 3.0), column=t.CENTRE_COLUMN),
                   t.plateau_mechanism(16, 3.0), "mechanism"),
    }


def header() -> str:
    try:
        commit = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT, capture_output=True,
                                text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--untracked-files=no"], cwd=ROOT,
                               capture_output=True, text=True, check=False).stdout.strip()
        commit += " (with uncommitted changes)" if dirty else ""
    except (OSError, subprocess.CalledProcessError):
        commit = "unknown"
    machine = f"{platform.machine()}, {os.cpu_count()} cores, {platform.system()} {platform.release()}"
    date = datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M UTC")
    return f"machine: {machine}; Python {platform.python_version()}\ndate: {date}; commit: {commit}"


def fmt(x, spec: str) -> str:
    return "-" if x is None else format(x, spec)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--nodes", default="150,450")
    args = ap.parse_args()
    print(header())
    print()
    print("| case | res | load factor | lower bound | closed form | kind | err % | LB err % | gap % | "
          "cert. rel.diff | time s | flags |")
    print("| --- | --- | ---: | ---: | ---: | --- | ---: | ---: | ---: | ---: | ---: | --- |")
    for res in args.nodes.split(","):
        for name, (text, closed, kind) in cases().items():
            t0 = time.perf_counter()
            r = hingeline.solve(hingeline.model_from_toml(text.replace('nodes = 150', f'nodes = {res}')))
            seconds = time.perf_counter() - t0
            lf = r.load_factor
            lb = r.lower_bound.load_factor if r.lower_bound is not None else None
            flags = []
            if lb is not None and lb > lf * (1 + 1e-6):
                flags.append("LB>UB!")
            if kind == "exact" and lf < closed * (1 - 1e-6):
                flags.append("UB<exact!")
            if lb is not None and lb > closed * (1 + 1e-6):
                flags.append("LB>exact!" if kind == "exact" else "LB>mech!")
            if lb is None:
                flags.append("NO LB")
            cert = abs(r.certificate.load_factor - lf) / lf
            print(f"| {name} | {res} | {lf:.5f} | {fmt(lb, '.5f')} | {closed:.5f} | {kind} | "
                  f"{100 * (lf - closed) / closed:+.2f} | {fmt(None if lb is None else 100 * (lb - closed) / closed, '+.2f')} | "
                  f"{fmt(None if lb is None else 100 * (lf - lb) / lf, '.2f')} | {cert:.1e} | {seconds:.1f} | "
                  f"{' '.join(flags)} |", flush=True)


if __name__ == "__main__":
    main()
