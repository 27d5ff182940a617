"""Benchmark of `hingeline study`: a new 0.6 m x 0.6 m riser moved over the bundled demo floor.

The study (written to a temporary folder beside a copy of src/hingeline/data/demo.toml):
a square riser opening 0.6 m x 0.6 m, new to the demo, its centroid on a grid 0.7 m apart over
the whole bay (about 60 positions the riser can take; the rest are skipped: beyond the
splayed corner, on the stair void or the demo's own riser, on the filing-zone patch).

It solves the study from scratch three times: with 1 local worker and reuse (each variant's
first LP starts from a solved neighbour's active lines), with 1 worker without reuse
(--no-reuse), and with 2 workers and reuse. Each run is in a fresh process whose
environment sets one thread for BLAS and OpenMP, as the study sets for its worker
processes, so 1 and 2 workers are compared on equal terms. One table: total wall time of
each (solving, storing each variant, writing study.csv, map.png and study.html), the
speed-up of 2 workers, the ratio of the times without and with reuse and the LP rounds of
all variants with and without reuse (what reuse can save, whatever the load), the largest relative
difference of any variant's load factor between the runs, and a few variants' model files
solved alone in this process against their load factor in study.csv (to 1e-6). Only prints;
nothing is asserted about time. The load average before and after is printed too: on a
machine busy with other work the times say little.

    python benchmarks/study.py                      # 150 nodes per variant, checks 4 variants
    python benchmarks/study.py --small              # a dozen positions, for a quick check
    python benchmarks/study.py --nodes 450 --check 8
"""
from __future__ import annotations

import argparse
import csv
import datetime
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from importlib import resources
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(REPO / "src"))

from hingeline import read_model, solve  # noqa: E402
from hingeline.study import SolveOptions, build_variants, read_study, run_study  # noqa: E402
from hingeline.study.outputs import write_study_outputs  # noqa: E402
from hingeline.study.run import WORKER_THREADS  # noqa: E402

STUDY = """\
# Benchmark study (invented): where may a new 0.6 m x 0.6 m riser go in the demo office bay?
model = "demo.toml"
target = 1.4
[move_opening]
polygon = [[0.0, 0.0], [0.6, 0.0], [0.6, 0.6], [0.0, 0.6]]
step = 0.7
"""
#: --small: the riser's centroid within these limits only (m): 15 positions, 13 solved.
SMALL = "x = [1.0, 3.8]\ny = [1.0, 2.4]\n"
#: The runs: (name, worker processes, reuse).
RUNS = (("1 worker", 1, True), ("1 worker, no reuse", 1, False), ("2 workers", 2, True))


def _one_run(folder: Path, jobs: int, reuse: bool, nodes: int) -> None:
    """Solve the study in `folder` into folder/out-<jobs>-<reuse>; print the wall time (s)."""
    study = read_study(folder / "riser.toml")
    plan = build_variants(study)
    options = SolveOptions(nodes=nodes, reuse=reuse)
    out = folder / f"out-{jobs}-{int(reuse)}"
    t0 = time.perf_counter()
    rows = run_study(study, plan, options, out, jobs=jobs)
    write_study_outputs(study, plan, rows, options, out)
    print(json.dumps({"seconds": time.perf_counter() - t0}))


def _commit() -> str:
    try:
        out = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=REPO, capture_output=True,
                             text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--untracked-files=no"], cwd=REPO,
                               capture_output=True, text=True, check=True).stdout.strip()
        return out + ("+changes" if dirty else "")
    except (OSError, subprocess.CalledProcessError):
        return "unknown"


def _machine() -> str:
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return f"{cpu}, {os.cpu_count()} cores, Python {platform.python_version()}, {platform.system()}"


def _rows(out: Path) -> list[dict]:
    with open(out / "study.csv", newline="") as f:
        return list(csv.DictReader(f))


def _lp_rounds(out: Path, rows: list[dict]) -> int:
    """LP rounds of all solved variants (from variant.json): the part reuse can save."""
    return sum(json.loads((out / "variants" / r["variant"] / "variant.json").read_text())["lp_rounds"]
               for r in rows if r["status"] == "solved")


def _largest_difference(a: list[dict], b: list[dict]) -> float:
    diff = [abs(float(x["load_factor"]) - float(y["load_factor"])) / float(x["load_factor"])
            for x, y in zip(a, b) if x["status"] == "solved" and y["status"] == "solved"]
    return max(diff, default=float("nan"))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--nodes", type=int, default=150)
    ap.add_argument("--check", type=int, default=4, help="variants to re-solve alone (default 4)")
    ap.add_argument("--small", action="store_true", help="a dozen positions only (a quick check)")
    ap.add_argument("--one-run", nargs=3, metavar=("FOLDER", "JOBS", "REUSE"), help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.one_run:
        folder, jobs, reuse = args.one_run
        _one_run(Path(folder), int(jobs), reuse == "1", args.nodes)
        return

    load_before = os.getloadavg()[0]
    env = {**os.environ, **WORKER_THREADS}
    with tempfile.TemporaryDirectory(prefix="hingeline-study-bench-") as tmp:
        folder = Path(tmp)
        (folder / "demo.toml").write_text((resources.files("hingeline") / "data" / "demo.toml").read_text())
        (folder / "riser.toml").write_text(STUDY.replace("step = 0.7\n", "step = 0.7\n" + SMALL)
                                           if args.small else STUDY)
        plan = build_variants(read_study(folder / "riser.toml"))
        times, rows, rounds = {}, {}, {}
        for name, jobs, reuse in RUNS:
            done = subprocess.run([sys.executable, __file__, "--nodes", str(args.nodes), "--one-run", str(folder),
                                   str(jobs), str(int(reuse))], env=env, capture_output=True, text=True, check=True)
            times[name] = json.loads(done.stdout.strip().splitlines()[-1])["seconds"]
            rows[name] = _rows(folder / f"out-{jobs}-{int(reuse)}")
            rounds[name] = _lp_rounds(folder / f"out-{jobs}-{int(reuse)}", rows[name])
        last = folder / "out-2-1"
        map_ok = (last / "map.png").is_file() and (last / "map.png").stat().st_size > 0
        solved = [r for r in rows["2 workers"] if r["status"] == "solved"]
        picks = solved[:: max(1, len(solved) // max(1, args.check))][: args.check]
        worst = 0.0
        for r in picks:
            alone = solve(read_model(last / "variants" / r["variant"] / "model.toml"), nodes=args.nodes)
            worst = max(worst, abs(alone.load_factor - float(r["load_factor"])) / alone.load_factor)
        runs = _largest_difference(rows["1 worker"], rows["1 worker, no reuse"])
        runs = max(runs, _largest_difference(rows["1 worker"], rows["2 workers"]))

    one, two, scratch = times["1 worker"], times["2 workers"], times["1 worker, no reuse"]
    print(f"machine: {_machine()}")
    print(f"date: {datetime.date.today().isoformat()}, commit: {_commit()}, nodes: {args.nodes}")
    # The times mean little on a machine busy with other work: say how busy it was.
    print(f"load average (1 min) before: {load_before:.1f}, after: {os.getloadavg()[0]:.1f}")
    print()
    print("| positions on the grid | variants solved | skipped | total, 1 worker (s) | total, 2 workers (s) "
          "| speed-up | 1 worker, no reuse (s) | no reuse / reuse | LP rounds, reuse / no reuse "
          "| runs, largest rel. difference "
          "| checked alone | largest rel. difference | map drawn |")
    print("| " + " | ".join(["---:"] * 12) + " | --- |")
    print(f"| {len(plan.xs) * len(plan.ys)} | {len(solved)} | {len(plan.skipped)} | {one:.1f} | {two:.1f} "
          f"| {one / two:.2f} | {scratch:.1f} | {scratch / one:.2f} "
          f"| {rounds['1 worker']} / {rounds['1 worker, no reuse']} | {runs:.1e} | {len(picks)} | {worst:.1e} "
          f"| {'yes' if map_ok else 'NO'} |")


if __name__ == "__main__":
    main()
