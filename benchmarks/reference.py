"""Reference benchmark set for hingeline: accuracy, problem size, time and memory.

Usage::

    python benchmarks/reference.py                      # all cases at 450 nodes + clamped_square at 1100
    python benchmarks/reference.py --nodes 150  # all cases on one uniform mesh of about 150 nodes
    python benchmarks/reference.py --cases ss_square,clamped_square --repeat 3

Each solve runs in a fresh process (multiprocessing, "spawn" context), so the peak
resident memory read in the child (resource.getrusage(RUSAGE_SELF).ru_maxrss) belongs
to that case alone (it includes the interpreter and the imported libraries).

All cases: unit lengths (m), one uniform area load q = 1 kPa over the whole slab,
so the load factor is the collapse load in kPa, i.e. the coefficient of m / L^2.

The lower bound is computed in the same solve; its columns: "lower bd" (the
value), "LB err %" against the reference, "gap %" = (load factor - lower bound) / load
factor, and "LB s" (the lower-bound stage's own time, included in "time s").

Flags in the last column:
  LB>REF!      lower bound above the reference: every reference here is exact or an upper
               bound on the exact value, so this is a bug (the lower bound would be unsafe).
  LB>UB!       lower bound above the load factor: a bug in one of the two.
  gap>target   gap larger than the lower bound's target (square cases: 3 % at 450 nodes, 1.5 % at 1100).
  UNSAFE?      load factor more than 0.1 % BELOW the reference (hingeline gives upper
               bounds, so a value below an exact reference points at a bug; for a
               reference that is itself only an upper bound it may be legitimate).
  over target  |error| larger than the case's error target.

No timing is asserted anywhere: this script only prints a table.
"""
from __future__ import annotations

import argparse
import math
import multiprocessing as mp
import statistics
import sys
import time
from dataclasses import dataclass, field

UNSAFE_TOL = 0.001  # 0.1 %: flag a load factor this far below its reference (round-off allowance)


# --------------------------------------------------------------------------- references


def johansen_rectangle(a: float, b: float, m: float = 1.0) -> float:
    """Collapse load (kPa) of a simply supported isotropic rectangle a x b, a the short side.

    Johansen's yield-line pattern (two triangles, two trapezoids), optimised over the
    position of the inner hinge points:
        q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2)
    Source: Johansen's rectangle solution, standard yield-line theory (recalled, not
    looked up).
    Check: a = b gives 24 m / a^2 (sqrt(4) - 1 = 1), the simply supported square.
    """
    if a > b:
        a, b = b, a
    r = a / b
    return 24.0 * m / (a * a * (math.sqrt(3.0 + r * r) - r) ** 2)


@dataclass(frozen=True)
class Case:
    name: str
    toml: str
    reference: float
    source: str                      # short label for the table
    source_long: str                 # full citation / derivation, printed under the table
    target: dict[int, float | None] = field(default_factory=dict)  # nodes -> |error| limit, %
    default_target: float | None = None
    gap_target: dict[int, float] = field(default_factory=dict)     # nodes -> gap limit, % (lower bound)

    def target_for(self, nodes: int) -> float | None:
        return self.target.get(nodes, self.default_target)


def _outline_toml(points) -> str:
    return "[" + ", ".join(f"[{x:.12g}, {y:.12g}]" for x, y in points) + "]"


def _toml(outline, edges, sagging="1.0", hogging="1.0", q=1.0) -> str:
    edges_toml = f'"{edges}"' if isinstance(edges, str) else "[" + ", ".join(f'"{e}"' for e in edges) + "]"
    return (
        "[slab]\n"
        f"outline = {_outline_toml(outline)}\n"
        f"edges = {edges_toml}\n\n"
        "[capacity]\n"
        f"sagging = {sagging}\n"
        f"hogging = {hogging}\n\n"
        "[[load]]\n"
        'type = "area"\n'
        f"value = {q}\n"
    )


UNIT_SQUARE = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]  # counter-clockwise


def _polygon(n: int, inradius: float):
    """Regular n-gon with the given inradius, vertices at inradius / cos(pi/n), CCW."""
    rv = inradius / math.cos(math.pi / n)
    return [(rv * math.cos(2 * math.pi * (k + 0.5) / n), rv * math.sin(2 * math.pi * (k + 0.5) / n))
            for k in range(n)]


# Orthotropic square: capacities m (x bars) and mu*m (y bars). Johansen's affinity
# theorem: same load as the isotropic slab of capacity m with sides Lx and Ly/sqrt(mu).
MU = 0.5
ORTHO_REF = johansen_rectangle(1.0, 1.0 / math.sqrt(MU))

CASES: dict[str, Case] = {c.name: c for c in [
    Case(
        "ss_square",
        _toml(UNIT_SQUARE, "simple"),
        reference=24.0,
        source="exact, Nielsen&Hoang (recalled)",
        source_long=("24 m/L^2, exact: Johansen's diagonal pattern with a matching lower-bound "
                     "moment field; Nielsen & Hoang, Limit Analysis and Concrete Plasticity "
                     "(recalled, not looked up)."),
        default_target=0.1,
        gap_target={450: 3.0, 1100: 1.5},
    ),
    Case(
        "clamped_square",
        _toml(UNIT_SQUARE, "continuous"),
        reference=42.851,
        source="Fox 1974 (exact, sq. criterion)",
        source_long=("42.851 m/L^2: Fox, Phil. Trans. R. Soc. A 277 (1974); exact for the "
                     "square yield criterion."),
        target={450: 1.5, 1100: 0.7},   # none stated for 150 nodes
        gap_target={450: 3.0, 1100: 1.5},
    ),
    Case(
        "ss_rectangle_1x2",
        _toml([(0.0, 0.0), (2.0, 0.0), (2.0, 1.0), (0.0, 1.0)], "simple"),
        reference=johansen_rectangle(1.0, 2.0),
        source="Johansen rectangle formula",
        source_long=("24 m/(a^2 (sqrt(3+(a/b)^2) - a/b)^2) with a = 1, b = 2, computed in code "
                     "(johansen_rectangle); Johansen's pattern."),
        default_target=0.5,
    ),
    Case(
        "square_three_simple_one_free",
        _toml(UNIT_SQUARE, ["simple", "simple", "free", "simple"]),   # edge 2 = top edge, free
        reference=johansen_rectangle(1.0, 2.0),
        source="half of 1x2 rect. (upper bd)",
        source_long=("Johansen's pattern of the 1 x 2 rectangle cut on its axis of symmetry "
                     "(the cut becomes the free edge): same formula, a = 1, b = 2. An upper "
                     "bound; the exact value may lie slightly below."),
        default_target=1.0,
    ),
    Case(
        "ss_polygon_24",
        _toml(_polygon(24, 1.0), "simple"),
        reference=6.0,
        source="pyramid mechanism 6m/r^2",
        source_long=("6 m/r^2, r = inradius = 1: pyramid mechanism of a regular polygon, "
                     "internal work m * perimeter / r = external work q * area / 3 (area = "
                     "perimeter * r / 2), for any regular polygon; the circle's exact value "
                     "is 6 m/R^2."),
        default_target=1.0,
    ),
    Case(
        "orthotropic_square",
        _toml(UNIT_SQUARE, "simple", sagging=f"[1.0, {MU}]", hogging=f"[1.0, {MU}]"),
        reference=ORTHO_REF,
        source="affinity + rect. formula",
        source_long=(f"Johansen's affinity theorem (mu = {MU}): isotropic rectangle 1 x "
                     f"1/sqrt(mu) = 1 x {1 / math.sqrt(MU):.5f}, Johansen rectangle formula "
                     f"computed in code = {ORTHO_REF:.5f}."),
        default_target=1.0,
    ),
]}


# --------------------------------------------------------------------------- worker


def _run_case(name: str, nodes: int) -> dict:
    """Solve one case; runs in a fresh spawned process."""
    import os
    import resource

    # Send anything the libraries print to stdout (e.g. the HiGHS banner) to stderr,
    # so the parent's table on stdout stays clean; results come back via the pool.
    sys.stdout.flush()
    os.dup2(2, 1)
    try:
        import hingeline

        case = CASES[name]
        model = hingeline.model_from_toml(case.toml, source=name)
        t0 = time.perf_counter()
        r = hingeline.solve(model, nodes=nodes)
        wall = time.perf_counter() - t0
        s = r.stats
        out = dict(
            ok=True,
            load_factor=float(r.load_factor),
            certificate=float(r.certificate.load_factor),
            nodes=int(s.nodes), slab_nodes=int(s.slab_nodes),
            candidate_lines=int(s.candidate_lines), lp_lines=int(s.lp_lines),
            rounds=int(s.rounds), solve_seconds=float(s.seconds), wall=wall,
            warnings=list(r.warnings),
            lower=None if r.lower_bound is None else r.lower_bound.load_factor,
            lower_seconds=None if r.lower_bound is None else float(r.lower_bound.seconds),
        )
    except Exception as exc:  # report, do not crash the table
        out = dict(ok=False, error=f"{type(exc).__name__}: {exc}")
    # Linux reports ru_maxrss in KiB.
    out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    return out


def run_in_fresh_process(name: str, nodes: int) -> dict:
    ctx = mp.get_context("spawn")
    with ctx.Pool(processes=1, maxtasksperchild=1) as pool:
        return pool.apply(_run_case, (name, nodes))


# --------------------------------------------------------------------------- table

COLUMNS = [
    ("case", 28, "<"), ("res", 6, "<"), ("load factor", 11, ">"), ("reference", 9, ">"),
    ("source", 31, "<"), ("err %", 8, ">"), ("target %", 8, ">"), ("nodes slab/all", 14, ">"),
    ("cand. lines", 11, ">"), ("LP lines", 8, ">"), ("rounds", 6, ">"), ("time s", 7, ">"),
    ("peak MB", 7, ">"), ("cert. rel.diff", 14, ">"), ("lower bd", 9, ">"), ("LB err %", 8, ">"),
    ("gap %", 6, ">"), ("LB s", 5, ">"), ("flags", 0, "<"),
]


def _fmt_row(values) -> str:
    return " | ".join(f"{v:{a}{w}}" if w else str(v) for v, (_, w, a) in zip(values, COLUMNS)).rstrip()


def row_for(case: Case, nodes: int, runs: list[dict]) -> tuple[str, list[str]]:
    notes: list[str] = []
    first = runs[0]
    target = case.target_for(nodes)
    tgt = "n/a" if target is None else f"{target:g}"
    if not first["ok"]:
        vals = [case.name, nodes, "FAILED", f"{case.reference:.4f}", case.source, "", tgt,
                "", "", "", "", "", f"{max(r['peak_mb'] for r in runs):.0f}", "", "", "", "", "", "ERROR"]
        notes.append(f"{case.name} @ {nodes}: {first['error']}")
        return _fmt_row(vals), notes
    lf = first["load_factor"]
    err = (lf - case.reference) / case.reference * 100.0
    cert = abs(first["certificate"] - lf) / abs(lf)
    flags = []
    if lf < case.reference * (1.0 - UNSAFE_TOL):
        flags.append("UNSAFE?")
    if target is not None and abs(err) > target:
        flags.append("over target")
    lower = first["lower"]
    if lower is None:
        lb_cols = ["none", "", "", ""]
    else:
        gap = (lf - lower) / lf * 100.0
        lb_cols = [f"{lower:.5f}", f"{(lower - case.reference) / case.reference * 100.0:+.3f}", f"{gap:.2f}",
                   f"{statistics.median(r['lower_seconds'] for r in runs if r['ok']):.2f}"]
        if lower > case.reference * (1 + 1e-6):
            flags.append("LB>REF!")
        if lower > lf * (1 + 1e-6):
            flags.append("LB>UB!")
        if nodes in case.gap_target and gap > case.gap_target[nodes]:
            flags.append("gap>target")
    times = [r["wall"] for r in runs if r["ok"]]
    lfs = {round(r["load_factor"], 10) for r in runs if r["ok"]}
    if len(lfs) > 1:
        notes.append(f"{case.name} @ {nodes}: load factor differed between repeats: {sorted(lfs)}")
    for w in first["warnings"]:
        notes.append(f"{case.name} @ {nodes}: warning: {w}")
    vals = [
        case.name, nodes, f"{lf:.5f}", f"{case.reference:.4f}", case.source, f"{err:+.3f}", tgt,
        f"{first['slab_nodes']}/{first['nodes']}", str(first["candidate_lines"]), str(first["lp_lines"]),
        str(first["rounds"]), f"{statistics.median(times):.2f}",
        f"{max(r['peak_mb'] for r in runs):.0f}", f"{cert:.1e}", *lb_cols, " ".join(flags),
    ]
    return _fmt_row(vals), notes


def _source_state() -> str:
    """Commit of the tree under test, '+dirty' when src/ differs from it (read-only git calls)."""
    import subprocess
    from pathlib import Path

    root = Path(__file__).resolve().parent.parent
    try:
        head = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=root, capture_output=True,
                              text=True, timeout=10).stdout.strip()
        dirty = subprocess.run(["git", "--no-optional-locks", "diff", "--quiet", "HEAD", "--", "src"],
                               cwd=root, capture_output=True, timeout=10).returncode != 0
    except (OSError, subprocess.SubprocessError):
        return "unknown"
    return (head or "unknown") + ("+dirty" if dirty else "")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--nodes", type=int, default=None,
                    help="run every case on one uniform mesh of about N nodes (default: 450, plus clamped_square at 1100)")
    ap.add_argument("--cases", default=None, help="comma-separated case names (default: all)")
    ap.add_argument("--repeat", type=int, default=1, help="time each case N times; the median is printed")
    args = ap.parse_args(argv)

    names = list(CASES) if args.cases is None else [n.strip() for n in args.cases.split(",") if n.strip()]
    unknown = [n for n in names if n not in CASES]
    if unknown:
        ap.error(f"unknown case(s) {unknown}; known: {', '.join(CASES)}")
    if args.repeat < 1:
        ap.error("--repeat must be >= 1")

    if args.nodes is not None:
        jobs = [(n, args.nodes) for n in names]
    else:
        jobs = [(n, 450) for n in names]
        if "clamped_square" in names:
            jobs.append(("clamped_square", 1100))

    header = _fmt_row([c[0] for c in COLUMNS])
    print(f"hingeline reference benchmarks  ({time.strftime('%Y-%m-%d %H:%M')}, "
          f"{mp.cpu_count()} CPUs, repeat={args.repeat}, Python {sys.version.split()[0]}, "
          f"source {_source_state()})")
    print(header)
    print("-" * len(header))
    all_notes: list[str] = []
    for name, res in jobs:
        runs = [run_in_fresh_process(name, res) for _ in range(args.repeat)]
        line, notes = row_for(CASES[name], res, runs)
        print(line, flush=True)
        all_notes += notes

    print()
    print("err % = (load factor - reference) / reference; time s = median wall time of hingeline.solve "
          "in the child; peak MB = max ru_maxrss of the child process (includes interpreter and imports); "
          "cert. rel.diff = |certificate load factor - load factor| / load factor.")
    print("Sources:")
    for name in dict.fromkeys(n for n, _ in jobs):
        print(f"  {name}: {CASES[name].source_long}")
    if all_notes:
        print("Notes:")
        for n in all_notes:
            print(f"  {n}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
