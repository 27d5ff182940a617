"""Engine benchmarks for hingeline: time and peak memory of the upper-bound engine at scale.

Usage::

    python benchmarks/engine.py                    # every case, one table
    python benchmarks/engine.py --cases square_fine,blocks --repeat 3
    python benchmarks/engine.py --cases floor_adaptive     # the floor refined to a 1 % bracket
    python benchmarks/engine.py --mem-cap-gb 6

Each run is a fresh process (multiprocessing, "spawn" context) under an address-space cap
(resource.setrlimit RLIMIT_AS), and its peak resident memory is read in that process
(resource.getrusage(RUSAGE_SELF).ru_maxrss, so it includes the interpreter and libraries).
Times are wall-clock seconds of hingeline.solve (mesh, candidate lines, LP rounds,
mechanism, certificate and, where stated, the lower bound), the median over the repeats.

Rows other workers add: if benchmarks/engine_numerics.py exists, its list ROWS of
zero-argument callables is run too, each in a fresh process; each returns a dict with the
keys of ROW_KEYS. No timing is asserted anywhere: this script only prints a table.
"""
from __future__ import annotations

import argparse
import importlib.util
import multiprocessing as mp
import os
import platform
import statistics
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from reference import _source_state  # noqa: E402  (same folder; the commit stamp of the tree)

ROW_KEYS = ("case", "nodes", "load_factor", "lower_bound", "reference", "cert_rel_diff", "seconds",
            "peak_mb", "note")

# An irregular floor plate invented for this benchmark (not a real building): an L-shaped
# outline (non-convex) 24 m x 16 m with a free edge along the inner corner, five openings
# (stairs, risers, a lift), one interior column and a point load from a piece of plant.
FLOOR = """
title = "Invented L-shaped floor plate (benchmark)"
[slab]
outline = [[0, 0], [24, 0], [24, 10], [16, 10], [16, 16], [0, 16]]
edges = ["continuous", "simple", "free", "simple", "continuous", "simple"]
[[slab.opening]]
polygon = [[2, 2], [4, 2], [4, 3.5], [2, 3.5]]
[[slab.opening]]
polygon = [[8, 11], [10.5, 11], [10.5, 13], [8, 13]]
[[slab.opening]]
polygon = [[19, 3], [21.5, 3], [21.5, 4.2], [19, 4.2]]
[[slab.opening]]
polygon = [[3, 12], [4.2, 12], [4.2, 14.6], [3, 14.6]]
[[slab.opening]]
polygon = [[13, 2.5], [14.5, 2.5], [14.5, 4], [13, 4]]
[[column]]
name = "C1"
at = [12, 7]
size = [0.4, 0.4]
[capacity]
sagging = 30.0
hogging = 40.0
[[load]]
type = "area"
value = 6.0
[[load]]
type = "point"
value = 60.0
at = [6.0, 9.0]
"""
FLOOR_10K = 0.19   # element size, m: about 10,000 nodes on FLOOR
FLOOR_2500 = 0.385  # element size, m: about 2,500 nodes on FLOOR

# Clamped unit square, m = m' = 1 kNm/m, q = 1 kPa: 42.851 m / L^2, Fox, Phil. Trans. R. Soc.
# A 277 (1974), exact for the square yield criterion.
SQUARE = """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "continuous"
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 1.0
"""
FOX = 42.851


def _solve(toml: str, mesh_size=None, nodes=None, lower_bound=False, block_lines=None, gap=None,
           time_limit=None) -> dict:
    """One solve in this process; the row's fields except peak_mb, note and case. Without
    mesh_size and nodes the mesh is refined adaptively to `gap` within `time_limit` (s)."""
    import hingeline
    from hingeline.upper import pricing

    if block_lines is not None:
        pricing.BLOCK_LINES = block_lines
    model = hingeline.model_from_toml(toml)
    t0 = time.perf_counter()
    r = hingeline.solve(model, nodes=nodes, mesh_size=mesh_size, lower_bound=lower_bound, gap=gap,
                        time_limit=time_limit)
    seconds = time.perf_counter() - t0
    lb = r.lower_bound.load_factor if r.lower_bound is not None else None
    return dict(nodes=r.stats.nodes, load_factor=r.load_factor, lower_bound=lb,
                cert_rel_diff=abs(r.certificate.load_factor - r.load_factor) / abs(r.load_factor),
                seconds=seconds, rounds=r.stats.rounds, lines=r.stats.candidate_lines,
                lp_lines=r.stats.lp_lines, lb_seconds=r.lower_bound.seconds if r.lower_bound else None,
                warnings=list(r.warnings),
                steps=[st.nodes for st in r.refinement] if r.target_gap is not None else None,
                gap=r.gap, stop=r.stop)


def floor_upper() -> dict:
    return dict(case="floor 10k, upper bound", reference=None, **_solve(FLOOR, mesh_size=FLOOR_10K))


def floor_both() -> dict:
    return dict(case="floor 10k, upper + lower", reference=None,
                **_solve(FLOOR, mesh_size=FLOOR_10K, lower_bound=True))


def square_fine() -> dict:
    return dict(case="clamped square, fine", reference=FOX, **_solve(SQUARE, nodes=1100))


def floor_adaptive() -> dict:
    # What an engineer runs on such a floor: refinement to a 1 % bracket (the default solve).
    return dict(case="floor, refined to 1 %", reference=None,
                **_solve(FLOOR, lower_bound=True, gap=0.01, time_limit=300.0))


def floor_blocks() -> dict:
    return dict(case="floor 2.5k, in blocks", reference=None, **_solve(FLOOR, mesh_size=FLOOR_2500))


def floor_at_once() -> dict:
    return dict(case="floor 2.5k, all at once", reference=None,
                **_solve(FLOOR, mesh_size=FLOOR_2500, block_lines=1 << 62))


# Targets (seconds, peak MB) of the engine at scale; a row says whether it met them.
TARGETS = {"floor_upper": (60.0, 2048.0), "floor_both": (180.0, None), "square_fine": (8.0, None)}

CASES = {"square_fine": (square_fine, 3), "blocks": (floor_blocks, 1), "at_once": (floor_at_once, 1),
         "floor_adaptive": (floor_adaptive, 1), "floor_upper": (floor_upper, 1), "floor_both": (floor_both, 1)}


def _child(fn, cap_bytes: int) -> dict:
    """Run fn in this (fresh) process under the memory cap; add peak_mb, or an error."""
    import resource

    sys.stdout.flush()
    os.dup2(2, 1)  # the HiGHS banner and any other library output go to stderr
    resource.setrlimit(resource.RLIMIT_AS, (cap_bytes, cap_bytes))
    try:
        out = fn()
    except (Exception, MemoryError) as exc:  # report, do not crash the table
        out = dict(case=getattr(fn, "__name__", "?"), error=f"{type(exc).__name__}: {exc}")
    out["peak_mb"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # KiB on Linux
    return out


def run_fresh(fn, cap_bytes: int) -> dict:
    with mp.get_context("spawn").Pool(processes=1, maxtasksperchild=1) as pool:
        return pool.apply(_child, (fn, cap_bytes))


def _median_row(runs: list[dict]) -> dict:
    ok = [r for r in runs if "error" not in r]
    if not ok:
        return runs[0]
    row = dict(ok[0])
    row["seconds"] = statistics.median(r["seconds"] for r in ok)
    row["peak_mb"] = max(r["peak_mb"] for r in ok)
    row["runs"] = len(ok)
    return row


def _fmt(v, spec: str) -> str:
    return "" if v is None else format(v, spec)


HEAD = (f"{'case':<28} {'nodes':>6} {'load factor':>12} {'lower bound':>12} {'reference':>9} "
        f"{'cert rel':>8} {'time s':>8} {'peak MB':>8}  note")


def print_row(r: dict) -> None:
    if "error" in r:
        print(f"{r.get('case', '?'):<28} FAILED: {r['error']}  (peak {r['peak_mb']:.0f} MB)", flush=True)
        return
    print(f"{r['case']:<28} {_fmt(r['nodes'], '6d'):>6} {_fmt(r['load_factor'], '12.6f'):>12} "
          f"{_fmt(r['lower_bound'], '12.6f'):>12} {_fmt(r['reference'], '9.3f'):>9} "
          f"{_fmt(r['cert_rel_diff'], '8.1e'):>8} {_fmt(r['seconds'], '8.1f'):>8} "
          f"{_fmt(r['peak_mb'], '8.0f'):>8}  {r.get('note', '')}", flush=True)


def _note(row: dict, key: str) -> None:
    """Our rows' note: rounds, lines, repeats, lower-bound time, warnings."""
    parts = [f"{row['rounds']} rounds, {row['lines']:,} candidate lines, {row['lp_lines']:,} in final LP"]
    if row.get("steps"):
        parts.insert(0, f"meshes of {' / '.join(f'{n:,}' for n in row['steps'])} slab nodes, gap "
                        f"{100 * row['gap']:.2f} %, stop: {row['stop']}; last mesh")
    if row.get("lb_seconds") is not None:
        parts.append(f"lower bound {row['lb_seconds']:.1f} s of it")
    if row["reference"]:
        parts.append(f"{(row['load_factor'] / row['reference'] - 1) * 100:+.2f} % vs reference")
    parts.append(f"median of {row['runs']}" if row["runs"] > 1 else "1 run")
    if key in TARGETS:
        secs, mb = TARGETS[key]
        missed = [w for w, bad in (("time", row["seconds"] > secs), ("memory", mb is not None and row["peak_mb"] > mb))
                  if bad]
        target = f"target < {secs:g} s" + (f", < {mb / 1024:g} GB" if mb else "")
        parts.append(f"{target}: {'MISSED (' + ', '.join(missed) + ')' if missed else 'met'}")
    parts += [f"warning: {w}" for w in row["warnings"]]
    row["note"] = "; ".join(parts)


def _extra_rows() -> list:
    if importlib.util.find_spec("engine_numerics") is None:  # benchmarks/ is on sys.path
        return []
    import engine_numerics

    return list(engine_numerics.ROWS)


def _machine() -> str:
    cpu = platform.processor() or "unknown CPU"
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
        mem = int(Path("/proc/meminfo").read_text().split()[1]) / 2**20
    except OSError:
        mem = float("nan")
    import highspy  # noqa: F401  (version below)
    from importlib.metadata import version

    return (f"{cpu}, {os.cpu_count()} cores, {mem:.0f} GB RAM, {platform.system()} {platform.release()}, "
            f"Python {platform.python_version()}, numpy {version('numpy')}, highspy {version('highspy')}")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--cases", default=None, help=f"comma-separated, from {', '.join(CASES)} (default: all)")
    ap.add_argument("--repeat", type=int, default=None,
                    help="runs per case (default: 3 for the clamped square, 1 for the large floors)")
    ap.add_argument("--mem-cap-gb", type=float, default=8.0, help="address-space cap of each run, GB")
    ap.add_argument("--no-extra", action="store_true", help="skip the rows of benchmarks/engine_numerics.py")
    args = ap.parse_args(argv)
    names = list(CASES) if args.cases is None else [n.strip() for n in args.cases.split(",") if n.strip()]
    if unknown := [n for n in names if n not in CASES]:
        ap.error(f"unknown case(s) {unknown}; known: {', '.join(CASES)}")
    cap = int(args.mem_cap_gb * 2**30)

    print(f"hingeline engine benchmarks, {time.strftime('%Y-%m-%d %H:%M')}, commit {_source_state()}")
    print(f"machine: {_machine()}; memory cap {args.mem_cap_gb:g} GB per run")
    print(HEAD)
    print("-" * len(HEAD), flush=True)
    # Rows are printed as they finish (a large case may take long); the comparison of blocks
    # with all lines at once is printed last, under the table.
    by_case = {}
    for name in names:
        fn, default_repeat = CASES[name]
        row = _median_row([run_fresh(fn, cap) for _ in range(args.repeat or default_repeat)])
        if "error" not in row:
            _note(row, name)
        by_case[name] = row
        print_row(row)
    if not args.no_extra:
        for fn in _extra_rows():
            print_row(run_fresh(fn, cap))
    blocks, at_once = by_case.get("blocks"), by_case.get("at_once")
    if blocks and at_once and "error" not in blocks and "error" not in at_once:
        same = abs(blocks["load_factor"] - at_once["load_factor"]) <= 1e-6 * abs(at_once["load_factor"])
        print(f"blocks vs all lines at once (same mesh): time x{blocks['seconds'] / at_once['seconds']:.2f}, "
              f"peak memory x{blocks['peak_mb'] / at_once['peak_mb']:.2f}, load factor "
              f"{'equal to 1e-6' if same else 'DIFFERENT'} "
              f"({blocks['load_factor']:.8g} vs {at_once['load_factor']:.8g})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
