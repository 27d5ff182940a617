"""Adaptive refinement against uniform refinement, side by side in one run.

    python benchmarks/refinement.py                 # all four cases, one table
    python benchmarks/refinement.py --cases clamped_square --uniform-budget 120
    python benchmarks/refinement.py --repeat 3      # every time the median of three runs

For each case the adaptive solve (hingeline.solve with the case's target gap and time limit)
is run first; then uniform refinement (one uniform mesh after another, 150, 225, 338, ...
nodes on the slab, each 1.5 times the last, solved with both bounds) until a mesh reaches the gap the adaptive
solve reached, or the uniform budget of time is spent. Printed: the adaptive bracket, its
stop reason, steps and time; the uniform meshes' time to the same gap, summed over the
sequence (what uniform refinement costs) and for its last mesh alone (what it costs when
the right mesh is known beforehand); and the ratios of those times to the adaptive time.

Targets (the task that introduced refinement):
  clamped square      upper bound within 0.5 % of 42.851 and gap <= 1 % in < 20 s; adaptive >= 3x faster
  simply supp. square both bounds within 0.1 % of 24
  demo, podium deck   gap <= 3 % in < 60 s each; podium adaptive >= 3x faster
Check values: clamped square 42.851 m/L^2, Fox, "Limit analysis for plates: the exact
solution for a clamped square plate of isotropic homogeneous material obeying the square
yield criterion and loaded by uniform pressure", Phil. Trans. R. Soc. A 277 (1974); simply
supported square 24 m/L^2, Johansen's yield-line solution (e.g. Kennedy and Goodchild,
Practical Yield Line Design, 2004). Each solve runs in this process, one after another.
"""
from __future__ import annotations

import argparse
import datetime
import platform
import statistics
import subprocess
import time
from dataclasses import replace
from importlib.resources import files
from pathlib import Path

import hingeline

ROOT = Path(__file__).resolve().parents[1]

SQUARE = """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "{edges}"
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 1.0
"""

# name -> (model text or path, target gap, time limit s, reference or None, its source)
CASES = {
    # Asked for 0.7 %: the upper bound is two to three times further from Fox's value than the
    # lower bound, so when the gap first falls under 1 % it is still 0.53 to 0.66 % above it
    # (measured with refine.py's GAP_SHARE from 0.6 to 1.0); asked for 0.7 %, 0.33 to 0.44 %.
    "clamped_square": (SQUARE.format(edges="continuous"), 0.007, 20.0, 42.851, "Fox 1974"),
    "simply_supported_square": (SQUARE.format(edges="simple"), 0.002, 60.0, 24.0, "Johansen"),
    "demo": ("demo", 0.03, 60.0, None, ""),
    "podium_deck": (ROOT / "examples" / "podium_deck_on_columns.toml", 0.03, 60.0, None, ""),
}


def load(spec) -> hingeline.Model:
    """The case's model with its [analysis] mesh settings cleared (so that it refines)."""
    if spec == "demo":
        model = hingeline.model_from_toml(files("hingeline.data").joinpath("demo.toml").read_text(), source="demo")
    elif isinstance(spec, Path):
        model = hingeline.read_model(spec)
    else:
        model = hingeline.model_from_toml(spec)
    return replace(model, analysis=replace(model.analysis, nodes=None, mesh_size=None))


def gap_of(r) -> float:
    lb = r.lower_bound.load_factor if r.lower_bound is not None else None
    return float("inf") if lb is None else (r.load_factor - lb) / r.load_factor


def _timed(fn, repeat: int):
    """(the result of the first of `repeat` runs of fn, the median of their wall times in s);
    prints a note when a repeat gives another load factor."""
    first, times = None, []
    for _ in range(repeat):
        t0 = time.perf_counter()
        r = fn()
        times.append(time.perf_counter() - t0)
        if first is None:
            first = r
        elif r.load_factor != first.load_factor:
            print(f"  note: a repeat gave load factor {r.load_factor!r} against {first.load_factor!r}")
    return first, statistics.median(times)


def run_case(name: str, budget: float, repeat: int = 1) -> dict:
    spec, target, limit, ref, source = CASES[name]
    model = load(spec)
    ad, t_ad = _timed(lambda: hingeline.solve_cases(model, gap=target, time_limit=limit), repeat)
    reached = gap_of(ad)
    out = {"name": name, "target": target, "limit": limit, "ref": ref, "source": source, "adaptive": ad,
           "t_ad": t_ad, "gap": reached}
    # Uniform refinement to the same gap (never asking less than the target).
    want = max(reached, 0.0)
    total, nodes, last = 0.0, 150, None
    while True:
        r, dt = _timed(lambda: hingeline.solve_cases(model, nodes=nodes), repeat)
        total += dt
        last = (nodes, r, dt)
        print(f"  {name}: uniform {nodes} nodes: upper {r.load_factor:.6g}, gap {100 * gap_of(r):.3f} %, "
              f"{dt:.1f} s (total {total:.1f} s)", flush=True)
        if gap_of(r) <= want * (1 + 1e-9) or total > budget:
            break
        nodes = int(round(nodes * 1.5))
    out.update(uniform_total=total, uniform_last=last, uniform_reached=gap_of(last[1]) <= want * (1 + 1e-9))
    return out


def _commit() -> str:
    try:
        return subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT, capture_output=True,
                              text=True).stdout.strip()
    except OSError:
        return "?"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", default=",".join(CASES), help="comma-separated case names")
    ap.add_argument("--uniform-budget", type=float, default=400.0,
                    help="most seconds spent on the uniform meshes of one case (default 400)")
    ap.add_argument("--repeat", type=int, default=1,
                    help="runs of every solve; times are the medians (default 1)")
    args = ap.parse_args()
    rows = [run_case(n, args.uniform_budget, max(args.repeat, 1)) for n in args.cases.split(",")]
    print(f"\nmachine: {platform.machine()}, {platform.processor() or platform.platform()}; "
          f"date: {datetime.date.today().isoformat()}; commit: {_commit()}; times: median of {max(args.repeat, 1)}")
    head = ("case", "target", "upper", "lower", "gap %", "ref err %", "stop", "steps", "nodes", "adaptive s",
            "uniform nodes", "uniform gap %", "uniform sum s", "uniform last s", "ratio sum", "ratio last")
    print(" | ".join(head))
    print(" | ".join("---" for _ in head))
    for o in rows:
        ad = o["adaptive"]
        lb = ad.lower_bound.load_factor if ad.lower_bound is not None else None
        err = "" if o["ref"] is None else f"{100 * (ad.load_factor - o['ref']) / o['ref']:+.3f} / " + (
            "-" if lb is None else f"{100 * (lb - o['ref']) / o['ref']:+.3f}")
        n_last, r_last, t_last = o["uniform_last"]
        reached = "" if o["uniform_reached"] else " (not reached)"
        print(" | ".join([
            o["name"], f"{100 * o['target']:.1f} % in {o['limit']:.0f} s", f"{ad.load_factor:.5f}",
            "-" if lb is None else f"{lb:.5f}", f"{100 * o['gap']:.3f}", err, ad.stop, str(len(ad.refinement)),
            str(ad.refinement[-1].nodes if ad.refinement else ad.stats.slab_nodes), f"{o['t_ad']:.1f}",
            f"{r_last.stats.slab_nodes}{reached}", f"{100 * gap_of(r_last):.3f}", f"{o['uniform_total']:.1f}",
            f"{t_last:.1f}", f"{o['uniform_total'] / o['t_ad']:.2f}", f"{t_last / o['t_ad']:.2f}"]))
    print("\nupper / lower: the lowest upper bound and highest proven lower bound of the adaptive solve; ref err: "
          "both against the reference (upper / lower). ratio sum: time of the uniform sequence 150, 225, 338, ... "
          "nodes up to the first mesh reaching the adaptive gap, over the adaptive time; ratio last: that mesh alone.")


if __name__ == "__main__":
    main()
