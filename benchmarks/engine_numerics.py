"""Numerical robustness of the engine: the same slab in other units, turned, or with rounded
coordinates. Each entry of ROWS is a zero-argument callable returning one table row:

    case, nodes, load_factor, lower_bound, reference, cert_rel_diff, seconds, peak_mb, note

cert_rel_diff: |certificate - load factor| / load factor (the certificate must agree to 1e-6).
peak_mb: peak resident memory of the process so far (resource.getrusage), so a row's own
figure needs a fresh process per row, as `python benchmarks/engine_numerics.py` does.
reference: Johansen's yield-line solution of the simply supported isotropic rectangle a x b,
q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2) (any yield-line text), where the case has one.

Usage (from the repository, with its src/ first on the path)::

    PYTHONPATH=src python benchmarks/engine_numerics.py     # every row, each in its own process
    PYTHONPATH=src python benchmarks/engine_numerics.py --rows 0,2

No timing is asserted anywhere: this script only prints.
"""
from __future__ import annotations

import argparse
import importlib.util
import multiprocessing as mp
import resource
import time
import tomllib
from functools import partial
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ROTATED = [[0, 0], [5.196152, 3.0], [3.196152, 6.464102], [-2.0, 3.464102]]   # 6 x 4 m turned 30 deg, 6 decimals


def _unit_slabs():
    """The test suite's shared helpers (Johansen's rectangle formula, the jitter of a model
    file), loaded from tests/unit_slabs.py without touching sys.path."""
    spec = importlib.util.spec_from_file_location("unit_slabs", ROOT / "tests" / "unit_slabs.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def johansen_rectangle(a: float, b: float, m: float) -> float:
    """Collapse load (kPa) of a simply supported isotropic rectangle, a the short side."""
    return _unit_slabs().johansen_rectangle(min(a, b), max(a, b), m)


def _rectangle_toml(outline, q, m=20.0, nodes=450, edges='"simple"', sagging=None, hogging=None):
    return f"""
[slab]
outline = {outline}
edges = {edges}
[capacity]
sagging = {sagging if sagging is not None else m}
hogging = {hogging if hogging is not None else m}
[[load]]
type = "area"
value = {q!r}
[analysis]
nodes = {nodes}
"""


def _solve(text_or_model, **kw):
    import hingeline

    model = hingeline.model_from_toml(text_or_model) if isinstance(text_or_model, str) else text_or_model
    t0 = time.perf_counter()
    r = hingeline.solve(model, **kw)
    return r, time.perf_counter() - t0


def _row(case, r, seconds, reference, note):
    lb = r.lower_bound.load_factor if r.lower_bound is not None else None
    return {
        "case": case, "nodes": r.stats.nodes, "load_factor": r.load_factor, "lower_bound": lb,
        "reference": reference, "cert_rel_diff": abs(r.certificate.load_factor - r.load_factor) / abs(r.load_factor),
        "seconds": seconds, "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0, "note": note,
    }


def _agrees(r) -> str:
    from hingeline.outputs.result_json import certificate_agrees

    return "agrees" if certificate_agrees(r) else "DOES NOT AGREE"


def scaled_by_1000() -> dict:
    """6 x 4.5 m, simply supported, m = m' = 20 kNm/m, 10 kPa, drawn 1,000 times larger:
    lengths x 1000, area loads / 1000^2, capacities kept, so the load factor is unchanged."""
    exact = johansen_rectangle(4.5, 6.0, 20.0) / 10.0
    small, _ = _solve(_rectangle_toml([[0, 0], [6, 0], [6, 4.5], [0, 4.5]], 10.0))
    large, seconds = _solve(_rectangle_toml([[0, 0], [6000, 0], [6000, 4500], [0, 4500]], 10.0 / 1000**2))
    note = (f"unscaled {small.load_factor:.10g} / lower {small.lower_bound.load_factor:.10g}; x1000 differs by "
            f"{abs(large.load_factor / small.load_factor - 1):.1e} (upper), "
            f"{abs(large.lower_bound.load_factor / small.lower_bound.load_factor - 1):.1e} (lower); gap "
            f"{100 * small.gap:.4f} % vs {100 * large.gap:.4f} %; certificate {_agrees(large)}")
    return _row("rect 6x4.5 x1000 (normal)", large, seconds, exact, note)


def rotated_user_case() -> dict:
    """The 6 x 4 m rectangle turned 30 deg, corners to 6 decimals, edges simple, simple, free,
    simple, bars [20, 12] along x, no top bars, 10 kPa (no closed form)."""
    r, seconds = _solve(_rectangle_toml(ROTATED, 10.0, edges='["simple", "simple", "free", "simple"]',
                                        sagging="[20, 12]", hogging=0))
    return _row("rotated 6x4, free edge, orthotropic (normal)", r, seconds, None,
                f"certificate {_agrees(r)}; warnings: {'; '.join(w[:60] for w in r.warnings) or 'none'}")


def rotated_isotropic() -> dict:
    """The same outline, all edges simple, m = m' = 20: Johansen's rectangle, and the unrotated
    6 x 4 m rectangle for comparison (different meshes: agreement to discretisation)."""
    exact = johansen_rectangle(4.0, 6.0, 20.0) / 10.0
    flat, _ = _solve(_rectangle_toml([[0, 0], [6, 0], [6, 4], [0, 4]], 10.0))
    r, seconds = _solve(_rectangle_toml(ROTATED, 10.0))
    return _row("rotated 6x4, simple, isotropic (normal)", r, seconds, exact,
                f"unrotated {flat.load_factor:.8g} (differs by {abs(r.load_factor / flat.load_factor - 1):.1e}); "
                f"certificate {_agrees(r)}")


def jittered(path: str, seed: int) -> dict:
    """A model file with every distinct point of the slab, loads and zones moved by up to
    1e-6 m (uniform random, seeded), solved at 150 nodes; note: the unjittered load factor."""
    import hingeline

    data = tomllib.loads((ROOT / path).read_text(encoding="utf-8"))
    moved_data = _unit_slabs().jittered(data, seed)
    plain, _ = _solve(hingeline.parse_model(data), nodes=150)
    r, seconds = _solve(hingeline.parse_model(moved_data), nodes=150)
    return _row(f"{Path(path).stem} jittered 1e-6 m, seed {seed} (coarse)", r, seconds, None,
                f"unjittered {plain.load_factor:.8g}; certificate {_agrees(r)}")


JITTER_CASES = [("examples/balcony_free_edge.toml", 1), ("examples/lift_core_opening.toml", 1),
                ("examples/plant_room_skew_bars.toml", 1), ("src/hingeline/data/demo.toml", 2)]

ROWS = [scaled_by_1000, rotated_user_case, rotated_isotropic,
        *[partial(jittered, path, seed) for path, seed in JITTER_CASES]]


def _child(k, queue):
    import os

    os.dup2(2, 1)   # whatever the libraries print goes to stderr, not into the table
    queue.put(ROWS[k]())


def _fmt(v, spec):
    return format("-", ">" + spec.split(".")[0]) if v is None else format(v, spec)


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", help="comma-separated row numbers (default: all)")
    args = parser.parse_args(argv)
    picks = [int(k) for k in args.rows.split(",")] if args.rows else range(len(ROWS))
    ctx = mp.get_context("spawn")
    print(f"{'case':52s} {'nodes':>5s} {'load factor':>13s} {'lower bound':>13s} {'reference':>11s} "
          f"{'cert rel':>8s} {'s':>6s} {'MB':>6s}  note")
    for k in picks:
        queue = ctx.Queue()
        proc = ctx.Process(target=_child, args=(k, queue))
        proc.start()
        row = queue.get()
        proc.join()
        print(f"{row['case']:52s} {row['nodes']:5d} {row['load_factor']:13.8g} {_fmt(row['lower_bound'], '13.8g')} "
              f"{_fmt(row['reference'], '11.6g')} {row['cert_rel_diff']:8.1e} {row['seconds']:6.1f} "
              f"{row['peak_mb']:6.0f}  {row['note']}", flush=True)


if __name__ == "__main__":
    main()
