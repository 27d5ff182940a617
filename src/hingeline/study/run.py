"""Solving a study's variants: in this process, in a local process pool, or on a Dask
cluster; done variants are read back from the store (store.py), not solved again.

Each variant is solved by `solve_variant` from its model as TOML text, so the same function
runs unchanged in a worker process or on a remote Dask worker (which needs hingeline
installed); it returns the files to store and the figures of the CSV row, and this process
writes them, so a remote worker needs no access to OUTDIR.

Reuse. On one uniform mesh (nodes or mesh_size, from the options or the model), each
variant also returns the end points (m) of its mechanism's active lines, and this process
hands them to the next variant it submits: order.py picks the waiting variant nearest to
the one just solved and the nearest solved variant's lines, which go into the first LP of
its solve (cases.py `solve_carrying`). Only the speed changes: the LP stops only when
pricing proves its optimum over every admissible line. Under adaptive refinement nothing is
handed on (the first mesh's vertex steers the refinement). The fingerprint does not cover
reuse, so a study resumes either way.

Threads. Local workers are separate processes started (spawn) with OMP_NUM_THREADS,
OPENBLAS_NUM_THREADS, MKL_NUM_THREADS and RAYON_NUM_THREADS set to 1 (WORKER_THREADS):
the workers are the parallelism, and threaded BLAS inside each of them competed for the
same cores (demo at 150 nodes, writing one variant's result: 2.7 to 4.4 s of CPU with
OpenBLAS's default threads, 1.5 to 1.8 s with one). HiGHS (upper/highs.py) and Clarabel (lower/program.py) are
set to one thread everywhere.

Units: m for positions, seconds for times; load factors are dimensionless.
May import: `hingeline.cases`, `hingeline.model`, `hingeline.outputs`, `hingeline.errors`,
the other study modules; dask.distributed only inside `connect` (an optional extra).
"""
from __future__ import annotations

import logging
import multiprocessing
import os
import tempfile
import time
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from contextlib import contextmanager
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Callable, Iterator

from ..cases import solve_carrying
from ..errors import SolverError, UnstableSlabError
from ..model import model_from_toml
from .file import Study, StudyError
from .order import Order, places
from .store import Store, fingerprint, to_toml
from .variants import Plan, Variant

log = logging.getLogger(__name__)

SOLVED = "solved"
#: How long to wait for a Dask scheduler to answer before giving up.
CONNECT_TIMEOUT = "10s"
CLUSTER_HINT = "install the cluster extra: pip install 'hingeline[cluster]'"
#: The environment of local worker processes: one thread each in BLAS, OpenMP and Rayon.
WORKER_THREADS = {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1", "MKL_NUM_THREADS": "1",
                  "RAYON_NUM_THREADS": "1"}


@dataclass(frozen=True)
class SolveOptions:
    """How every variant is solved (hingeline.solve_cases): nodes (one uniform mesh of about
    that many nodes) or mesh_size in m, else refinement to gap within time_limit s (None: the
    model's), lower_bound on or off. Not part of the fingerprint, as they change no load
    factor: drawings, also store pattern.png, mechanism.png, deflection.png (and
    utilisation.png) per variant; reuse, start each variant from a solved neighbour's
    active lines (on one uniform mesh only)."""

    nodes: int | None = None
    mesh_size: float | None = None
    gap: float | None = None
    time_limit: float | None = None
    lower_bound: bool = True
    drawings: bool = False
    reuse: bool = True

    def solve_dict(self) -> dict:
        """The options that change a result (those the fingerprint covers)."""
        d = asdict(self)
        d.pop("drawings")
        d.pop("reuse")
        return d


@dataclass(frozen=True)
class Row:
    """One line of study.csv.

    x, y: the moving opening's centroid, m (None without [move_opening]); scale: its size
    factor or None; values: one per sweep; load_factor (upper bound), lower_bound (None when
    skipped or not proven) and gap (upper - lower) / upper; seconds: wall time of the solve;
    status: "solved", "skipped: <reason>" or "failed: <message>"; fingerprint: the variant's
    folder name under OUTDIR/variants ("" when skipped); reused: read back from the store.
    """

    x: float | None
    y: float | None
    scale: float | None
    values: tuple[float, ...]
    load_factor: float | None = None
    lower_bound: float | None = None
    gap: float | None = None
    seconds: float | None = None
    status: str = SOLVED
    fingerprint: str = ""
    reused: bool = False


def solve_variant(model_text: str, options: SolveOptions, carried: tuple | None = None) -> dict:
    """Solve one variant given as model TOML text; return {"status", "seconds", "load_factor",
    "lower_bound", "gap", "files": {name: bytes}, "lines", "carried_lines", "lp_rounds"}
    ("files" empty unless solved). carried: a solved neighbour's "lines" (the end points, m,
    of its active lines per load case) for the first LP; "lines": this variant's, None when
    there is nothing to hand on (reuse off, refinement, failure); "carried_lines": how many
    carried lines its first LPs held. A slab that is unstable or a solver failure gives
    status "failed: <message>" instead of raising."""
    from ..outputs.result_json import write_outputs

    model = model_from_toml(model_text, "variant model")
    t0 = time.perf_counter()
    try:
        result, lines, n_carried = solve_carrying(model, options.nodes, options.mesh_size, options.lower_bound,
                                                  options.gap, options.time_limit,
                                                  carried if options.reuse else None)
    except (UnstableSlabError, SolverError) as exc:
        return {"status": f"failed: {exc}", "seconds": time.perf_counter() - t0, "files": {}, "lines": None}
    seconds = time.perf_counter() - t0
    with tempfile.TemporaryDirectory(prefix="hingeline-variant-") as tmp:
        paths = write_outputs(result, tmp, formats=("png",) if options.drawings else ())
        files = {p.name: p.read_bytes() for p in paths}
    lb = result.lower_bound.load_factor if result.lower_bound is not None else None
    return {"status": SOLVED, "seconds": seconds, "load_factor": float(result.load_factor),
            "lower_bound": None if lb is None else float(lb),
            "gap": None if result.gap is None else float(result.gap), "files": files,
            "lines": lines if options.reuse and lines else None, "carried_lines": n_carried,
            "lp_rounds": result.stats.rounds}


def connect(address: str):
    """A dask.distributed Client connected to the scheduler at `address` (raises StudyError when
    Dask is not installed or the scheduler cannot be reached)."""
    try:
        from dask.distributed import Client
    except ImportError:
        raise StudyError(f"--scheduler needs Dask, which is not installed; {CLUSTER_HINT}") from None
    try:
        return Client(address, timeout=CONNECT_TIMEOUT)
    except (OSError, TimeoutError, ValueError) as exc:
        raise StudyError(f"--scheduler {address}: cannot connect ({exc}); check the address "
                         "(e.g. tcp://host:8786) and that the scheduler is running") from None


def _header(study: Study, v: Variant) -> str:
    where = [] if v.x is None else [f"moving opening centroid ({v.x:g}, {v.y:g}) m"]
    where += [] if v.scale is None else [f"size factor {v.scale:g}"]
    where += [f"{s.key} = {val!r}" for s, val in zip(study.sweeps, v.values)]
    return (f"Variant of {study.model_path.name} in the study {study.path.name}:\n" + ", ".join(where))


def _record(study: Study, v: Variant, fp: str, outcome: dict, options: SolveOptions) -> dict:
    return {"fingerprint": fp, "x": v.x, "y": v.y, "scale": v.scale,
            "values": {s.key: val for s, val in zip(study.sweeps, v.values)},
            "solve": options.solve_dict(),
            **{k: outcome.get(k) for k in ("status", "seconds", "load_factor", "lower_bound", "gap",
                                           "carried_lines", "lp_rounds")}}


def _row(v: Variant, fp: str, rec: dict, reused: bool) -> Row:
    return Row(v.x, v.y, v.scale, v.values, rec.get("load_factor"), rec.get("lower_bound"), rec.get("gap"),
               rec.get("seconds"), rec["status"], fp if rec["status"] == SOLVED else "", reused)


@contextmanager
def _worker_environment():
    """WORKER_THREADS set in this process's environment while it starts workers (they inherit
    it, and read it when they import numpy); the previous values restored after."""
    saved = {k: os.environ.get(k) for k in WORKER_THREADS}
    os.environ.update(WORKER_THREADS)
    try:
        yield
    finally:
        for k, v in saved.items():
            if v is None:
                os.environ.pop(k, None)
            else:
                os.environ[k] = v


def _ordered(tasks: list[tuple[str, str]], where, slots: int, submit, first_done):
    """(fingerprint, outcome) of every task (fingerprint, model text), solved in the order of
    order.py (`where`: the places of the tasks), `slots` at a time through
    submit(task, lines) -> future and first_done(futures) -> the done ones."""
    order = Order(where)
    running = {}

    def start(pick) -> None:
        if pick is not None:
            k, lines = pick
            running[submit(tasks[k], lines)] = k

    for _ in range(min(slots, len(tasks))):
        start(order.take())
    while running:
        for future in first_done(list(running)):
            k = running.pop(future)
            outcome = future.result()
            order.solved(k, outcome.pop("lines", None))
            start(order.take(k))
            yield tasks[k][0], outcome


class _Here:
    """The 'future' of a variant solved in this process: solved when its result is asked for
    (so that each variant is stored before the next is solved)."""

    def __init__(self, text: str, options: SolveOptions, lines):
        self.args = (text, options, lines)

    def result(self) -> dict:
        return solve_variant(*self.args)


def _local(tasks: list[tuple[str, str]], where, options: SolveOptions, jobs: int) -> Iterator[tuple[str, dict]]:
    if jobs == 1:
        yield from _ordered(tasks, where, 1, lambda task, lines: _Here(task[1], options, lines),
                            lambda futures: futures)
        return
    with _worker_environment():
        pool = ProcessPoolExecutor(max_workers=jobs, mp_context=multiprocessing.get_context("spawn"))
        try:
            yield from _ordered(tasks, where, jobs,
                                lambda task, lines: pool.submit(solve_variant, task[1], options, lines),
                                lambda futures: wait(futures, return_when=FIRST_COMPLETED).done)
        except BrokenProcessPool:
            raise SolverError("a worker process stopped unexpectedly (out of memory? or, from a script, run_study "
                              "called outside `if __name__ == \"__main__\":`); run the study again to resume, "
                              "perhaps with fewer --jobs") from None
        finally:
            # An interrupted study stops at once; the variants done so far are stored.
            pool.shutdown(wait=False, cancel_futures=True)


def _dask(tasks: list[tuple[str, str]], where, options: SolveOptions, client) -> Iterator[tuple[str, dict]]:
    from dask.distributed import wait as dask_wait

    submitted = []

    def submit(task, lines):
        fp, text = task
        submitted.append(client.submit(solve_variant, text, options, lines, key=f"hingeline-variant-{fp}",
                                       pure=False))
        return submitted[-1]

    slots = max(1, sum(client.nthreads().values()))
    try:
        yield from _ordered(tasks, where, slots, submit,
                            lambda futures: dask_wait(futures, return_when="FIRST_COMPLETED").done)
    finally:
        client.cancel(submitted)


def run_study(study: Study, plan: Plan, options: SolveOptions, outdir: str | os.PathLike,
              jobs: int | None = None, client=None,
              on_start: Callable[[list[Row], int], None] | None = None,
              on_done: Callable[[Row, int, int], None] | None = None) -> list[Row]:
    """Solve every variant of `plan` not yet done in OUTDIR/variants and return the rows of
    study.csv: the variants in plan order, then the skipped positions.

    jobs: local worker processes (default: all cores; 1 solves in this process); client: a
    dask.distributed Client (see `connect`), used instead of local processes when given.
    on_start(rows read back, number to solve) is called before solving, on_done(row, done,
    total) after each variant solved in this run.
    """
    store = Store(Path(outdir) / "variants")
    keyed = [(v, fingerprint(v.model, options.solve_dict())) for v in plan.variants]
    rows: dict[str, Row] = {}
    todo: dict[str, tuple[Variant, str]] = {}
    for v, fp in keyed:
        rec = store.read(fp)
        if rec is not None and (not options.drawings or (store.path(fp) / "pattern.png").is_file()):
            rows[fp] = _row(v, fp, rec, reused=True)
        elif fp not in todo:
            todo[fp] = (v, to_toml(v.model, _header(study, v)))
    log.info("%d variants: %d done before, %d to solve", len(keyed), len(rows), len(todo))
    tasks = [(fp, text) for fp, (_, text) in todo.items()]
    where = places(study, [v for v, _ in todo.values()])
    if on_start is not None:
        on_start(list(rows.values()), len(tasks))
    jobs = jobs or os.cpu_count() or 1
    results = _dask(tasks, where, options, client) if client is not None else _local(tasks, where, options, jobs)
    for n, (fp, outcome) in enumerate(results, start=1):
        v, text = todo[fp]
        rec = _record(study, v, fp, outcome, options)
        if outcome["status"] == SOLVED:
            store.write(fp, text, outcome["files"], rec)
        else:
            log.warning("variant %s: %s", fp[:12], outcome["status"])
        rows[fp] = _row(v, fp, rec, reused=False)
        if on_done is not None:
            on_done(rows[fp], n, len(tasks))
    out = [rows[fp] for _, fp in keyed]
    for s in plan.skipped:
        out.append(Row(s.x, s.y, s.scale, s.values, status=f"skipped: {s.reason}"))
    return out


__all__ = ["CLUSTER_HINT", "Row", "SOLVED", "SolveOptions", "connect", "run_study", "solve_variant"]
