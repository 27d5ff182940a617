"""Benchmark of `hingeline study`: a new 0.6 m x 0.6 m riser moved over the bundled demo floor.

The study (written to a temporary folder beside a copy of src/hingeline/data/demo.toml):
a square riser opening 0.6 m x 0.6 m, new to the demo, its centroid on a grid 0.7 m apart over
the whole bay (about 60 positions the riser can take; the rest are skipped: beyond the
splayed corner, on the stair void or the demo's own riser, on the filing-zone patch).

It solves the study twice from scratch, with 1 and with 2 local worker processes, and
prints one table: total wall time of each (solving, storing each variant and writing
study.csv, map.png and study.html), the speed-up, and a check of a few variants: each one's
model file solved alone in this process must give the load factor in study.csv to 1e-6.
Only prints; nothing is asserted about time. The load average before and after is printed
too: on a machine busy with other work the speed-up says little.

    python benchmarks/study.py                      # 150 nodes per variant, checks 4 variants
    python benchmarks/study.py --nodes 450 --check 8
"""
from __future__ import annotations

import argparse
import csv
import datetime
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

STUDY = """\
# Benchmark study (invented): where may a new 0.6 m x 0.6 m riser go in the demo office bay?
model = "demo.toml"
target = 1.4
[move_opening]
polygon = [[0.0, 0.0], [0.6, 0.0], [0.6, 0.6], [0.0, 0.6]]
step = 0.7
"""


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


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--nodes", type=int, default=150)
    ap.add_argument("--check", type=int, default=4, help="variants to re-solve alone (default 4)")
    args = ap.parse_args()

    load_before = os.getloadavg()[0]
    with tempfile.TemporaryDirectory(prefix="hingeline-study-bench-") as tmp:
        folder = Path(tmp)
        (folder / "demo.toml").write_text((resources.files("hingeline") / "data" / "demo.toml").read_text())
        (folder / "riser.toml").write_text(STUDY)
        study = read_study(folder / "riser.toml")
        plan = build_variants(study)
        options = SolveOptions(nodes=args.nodes)
        times, rows = {}, {}
        for jobs in (1, 2):
            out = folder / f"out-{jobs}"
            t0 = time.perf_counter()
            rows[jobs] = run_study(study, plan, options, out, jobs=jobs)
            paths = write_study_outputs(study, plan, rows[jobs], options, out)
            times[jobs] = time.perf_counter() - t0
        map_ok = (folder / "out-2" / "map.png").stat().st_size > 0 and any(p.name == "map.png" for p in paths)
        with open(folder / "out-2" / "study.csv", newline="") as f:
            solved = [r for r in csv.DictReader(f) if r["status"] == "solved"]
        picks = solved[:: max(1, len(solved) // max(1, args.check))][: args.check]
        worst = 0.0
        for r in picks:
            alone = solve(read_model(folder / "out-2" / "variants" / r["variant"] / "model.toml"),
                          nodes=args.nodes)
            worst = max(worst, abs(alone.load_factor - float(r["load_factor"])) / alone.load_factor)
        same = max(abs(a.load_factor - b.load_factor) / a.load_factor
                   for a, b in zip(rows[1], rows[2]) if a.load_factor is not None)
        seconds = sorted(r.seconds for r in rows[1] if r.seconds is not None)

    print(f"machine: {_machine()}")
    print(f"date: {datetime.date.today().isoformat()}, commit: {_commit()}, nodes: {args.nodes}")
    # The speed-up means little on a machine busy with other work: say how busy it was.
    print(f"load average (1 min) before: {load_before:.1f}, after: {os.getloadavg()[0]:.1f}")
    print()
    print("| positions on the grid | variants solved | skipped | median solve (s) | total, 1 worker (s) "
          "| total, 2 workers (s) | speed-up | 1 vs 2 workers, largest rel. difference "
          "| checked alone | largest rel. difference | map drawn |")
    print("| " + " | ".join(["---:"] * 10) + " | --- |")
    print(f"| {len(plan.xs) * len(plan.ys)} | {len(plan.variants)} | {len(plan.skipped)} "
          f"| {seconds[len(seconds) // 2]:.2f} | {times[1]:.1f} | {times[2]:.1f} | {times[1] / times[2]:.2f} "
          f"| {same:.1e} | {len(picks)} | {worst:.1e} | {'yes' if map_ok else 'NO'} |")


if __name__ == "__main__":
    main()
