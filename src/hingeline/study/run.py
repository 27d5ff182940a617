"""Solving a study's variants: in this process, in a local process pool, or on a Dask
cluster; done variants are read back from the store (store.py), not solved again.

Each variant is solved by `solve_variant` from its model as TOML text, so the same function
runs unchanged in a worker process or on a remote Dask worker (which needs hingeline
installed); it returns the files to store and the figures of the CSV row, and this process
writes them, so a remote worker needs no access to OUTDIR.

Units: m for positions, seconds for times; load factors are dimensionless.
May import: `hingeline.solve`, `hingeline.model`, `hingeline.outputs`, `hingeline.errors`,
the other study modules; dask.distributed only inside `connect` (an optional extra).
"""
from __future__ import annotations

import logging
import os
import tempfile
import time
from concurrent.futures import ProcessPoolExecutor, as_completed
from concurrent.futures.process import BrokenProcessPool
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Callable, Iterator

from ..errors import SolverError, UnstableSlabError
from ..model import model_from_toml
from ..solve import solve_cases
from .file import Study, StudyError
from .store import Store, fingerprint, to_toml
from .variants import Plan, Variant

log = logging.getLogger(__name__)

SOLVED = "solved"
#: How long to wait for a Dask scheduler to answer before giving up.
CONNECT_TIMEOUT = "10s"
CLUSTER_HINT = "install the cluster extra: pip install 'hingeline[cluster]'"


@dataclass(frozen=True)
class SolveOptions:
    """How every variant is solved (hingeline.solve_cases): nodes (one uniform mesh of about
    that many nodes) or mesh_size in m, else refinement to gap within time_limit s (None: the
    model's), lower_bound on or off; drawings:
    also store pattern.png, mechanism.png, deflection.png (and utilisation.png) per variant (not part of the
    fingerprint: it changes no figure)."""

    nodes: int | None = None
    mesh_size: float | None = None
    gap: float | None = None
    time_limit: float | None = None
    lower_bound: bool = True
    drawings: bool = False

    def solve_dict(self) -> dict:
        """The options that change a result (those the fingerprint covers)."""
        d = asdict(self)
        d.pop("drawings")
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


def solve_variant(model_text: str, options: SolveOptions) -> dict:
    """Solve one variant given as model TOML text; return {"status", "seconds", "load_factor",
    "lower_bound", "gap", "files": {name: bytes}} ("files" empty unless solved). A slab that
    is unstable or a solver failure gives status "failed: <message>" instead of raising."""
    from ..outputs.result_json import write_outputs

    model = model_from_toml(model_text, "variant model")
    t0 = time.perf_counter()
    try:
        result = solve_cases(model, options.nodes, options.mesh_size, options.lower_bound, options.gap,
                             options.time_limit)
    except (UnstableSlabError, SolverError) as exc:
        return {"status": f"failed: {exc}", "seconds": time.perf_counter() - t0, "files": {}}
    seconds = time.perf_counter() - t0
    with tempfile.TemporaryDirectory(prefix="hingeline-variant-") as tmp:
        paths = write_outputs(result, tmp, formats=("png",) if options.drawings else ())
        files = {p.name: p.read_bytes() for p in paths}
    lb = result.lower_bound.load_factor if result.lower_bound is not None else None
    return {"status": SOLVED, "seconds": seconds, "load_factor": float(result.load_factor),
            "lower_bound": None if lb is None else float(lb),
            "gap": None if result.gap is None else float(result.gap), "files": files}


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
            **{k: outcome.get(k) for k in ("status", "seconds", "load_factor", "lower_bound", "gap")}}


def _row(v: Variant, fp: str, rec: dict, reused: bool) -> Row:
    return Row(v.x, v.y, v.scale, v.values, rec.get("load_factor"), rec.get("lower_bound"), rec.get("gap"),
               rec.get("seconds"), rec["status"], fp if rec["status"] == SOLVED else "", reused)


def _local(tasks: list[tuple[str, str]], options: SolveOptions, jobs: int) -> Iterator[tuple[str, dict]]:
    if jobs == 1:
        for fp, text in tasks:
            yield fp, solve_variant(text, options)
        return
    pool = ProcessPoolExecutor(max_workers=jobs)
    try:
        futures = {pool.submit(solve_variant, text, options): fp for fp, text in tasks}
        for future in as_completed(futures):
            yield futures[future], future.result()
    except BrokenProcessPool:
        raise SolverError("a worker process stopped unexpectedly (out of memory?); run the study again "
                          "to resume, perhaps with fewer --jobs") from None
    finally:
        # An interrupted study stops at once; the variants done so far are stored.
        pool.shutdown(wait=False, cancel_futures=True)


def _dask(tasks: list[tuple[str, str]], options: SolveOptions, client) -> Iterator[tuple[str, dict]]:
    from dask.distributed import as_completed as dask_completed

    futures = {client.submit(solve_variant, text, options, key=f"hingeline-variant-{fp}", pure=False): fp
               for fp, text in tasks}
    try:
        for future in dask_completed(list(futures)):
            yield futures[future], future.result()
    finally:
        client.cancel(list(futures))


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
    if on_start is not None:
        on_start(list(rows.values()), len(tasks))
    jobs = jobs or os.cpu_count() or 1
    results = _dask(tasks, options, client) if client is not None else _local(tasks, options, jobs)
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
