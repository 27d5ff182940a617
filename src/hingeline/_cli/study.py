"""`hingeline study STUDY.toml -o OUTDIR`: solve every variant of a study and write the table,
the map, the line plots and the summary page (docs/study.md)."""
from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

from . import report
from .solve import add_mesh_args

HELP = ("solve every variant of a study file (an opening moved over a grid, values swept); write "
        "OUTDIR/study.csv, map.png, study.html and each variant under OUTDIR/variants/; resumes")


def _jobs(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--jobs must be a whole number of worker processes, got '{text}'") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"--jobs must be 1 or more, got '{text}'")
    return n


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("study", type=Path, metavar="STUDY.toml", help="study file (see docs/study.md)")
    parser.add_argument("-o", "--outdir", type=Path, required=True, metavar="OUTDIR",
                        help="folder for the outputs (created if missing; a run there before is resumed)")
    parser.add_argument("--jobs", type=_jobs, default=None, metavar="N",
                        help="local worker processes (default: all cores; 1 solves in this process)")
    add_mesh_args(parser, "every variant")
    parser.add_argument("--no-lower-bound", action="store_true", help="solve the upper bound only")
    parser.add_argument("--no-reuse", action="store_true",
                        help="solve each variant from scratch instead of starting its first LP from the active "
                             "lines of a solved neighbour (the load factors are the same; for comparing speed)")
    parser.add_argument("--drawings", action="store_true",
                        help="also draw each variant (pattern.png, deflection.png) in its folder")
    parser.add_argument("--scheduler", default=None, metavar="ADDRESS",
                        help="solve on the Dask cluster whose scheduler is at ADDRESS (e.g. tcp://host:8786); "
                             "needs the extra: pip install 'hingeline[cluster]'")


class _Progress:
    """A tqdm bar on stderr: variants done, time left, best and worst load factor so far
    (counting the variants read back from an earlier run)."""

    def __init__(self):
        self.bar = None
        self.low, self.high = math.inf, -math.inf

    def _note(self, row) -> None:
        if row.load_factor is not None:
            self.low, self.high = min(self.low, row.load_factor), max(self.high, row.load_factor)
        if self.bar is not None and self.low <= self.high:
            self.bar.set_postfix_str(f"best {self.high:.4g}, worst {self.low:.4g}", refresh=False)

    def start(self, rows_before: list, total: int) -> None:
        from tqdm import tqdm

        print(f"{len(rows_before)} variants done before, {total} to solve", file=sys.stderr)
        self.bar = tqdm(total=total, file=sys.stderr, unit="variant", desc="study", dynamic_ncols=True)
        for r in rows_before:
            self._note(r)

    def __call__(self, row, done: int, total: int) -> None:
        self._note(row)
        self.bar.update(1)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def run(args: argparse.Namespace) -> int:
    from ..study import SolveOptions, build_variants, read_study
    from ..study.outputs import write_study_outputs
    from ..study.run import connect, run_study

    # Everything that can be refused is checked before anything is solved or written.
    study = read_study(args.study)
    plan = build_variants(study)
    options = SolveOptions(nodes=args.nodes, mesh_size=args.mesh_size, gap=args.gap, time_limit=args.time_limit,
                           lower_bound=not args.no_lower_bound, drawings=args.drawings, reuse=not args.no_reuse)
    report.check_outdir(args.outdir)
    client = connect(args.scheduler) if args.scheduler else None
    print(f"{len(plan.variants)} variants, {len(plan.skipped)} positions skipped", file=sys.stderr)
    progress = _Progress()
    try:
        rows = run_study(study, plan, options, args.outdir, jobs=args.jobs, client=client,
                         on_start=progress.start, on_done=progress)
        paths = write_study_outputs(study, plan, rows, options, args.outdir)
    except OSError as exc:
        where = exc.filename or args.outdir
        raise report.OutputError(f"output folder '{args.outdir}': cannot write '{where}' "
                                 f"({exc.strerror or exc}); the variants stored so far are kept, "
                                 "free space or choose another folder with -o") from None
    finally:
        progress.close()
        if client is not None:
            client.close()
    _print_summary(study, rows, paths)
    return 0


def _print_summary(study, rows, paths) -> None:
    solved = [r for r in rows if r.status == "solved"]
    failed = [r for r in rows if r.status.startswith("failed")]
    print(study.title or study.model.title or str(study.path))
    if solved:
        low = min(solved, key=lambda r: r.load_factor)
        high = max(solved, key=lambda r: r.load_factor)
        print(f"load factor   lowest {low.load_factor:.4f}, highest {high.load_factor:.4f} "
              f"(upper bounds; {sum(r.load_factor >= study.target for r in solved)} of {len(solved)} "
              f"variants reach the target {study.target:g})")
    print(f"variants      {len(solved)} solved, {len(failed)} failed, "
          f"{sum(r.status.startswith('skipped') for r in rows)} positions skipped")
    print("written       " + ", ".join(str(p) for p in paths))
    print("caution       upper-bound method; punching shear, ductility, deflection and serviceability "
          "not checked; review by a qualified engineer under local codes")
