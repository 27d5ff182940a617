"""Candidate lines made and priced block by block: the same lines, the same load factor.

Closed forms (unit square, m = m' = 1 kNm/m, q = 1 kPa, so a load factor is the coefficient
of m / L^2): simply supported 24 (Johansen's diagonal pattern, exact); clamped 42.851 (Fox,
Phil. Trans. R. Soc. A 277, 1974, exact for the square yield criterion).
"""
import itertools

import numpy as np
import pytest
from unit_slabs import SQUARE, model

import hingeline
from hingeline.upper import pricing
from hingeline.upper.candidates import blocked_keys, pairs_in_rows


def brute_force_visible(nodes, rel_tol=1e-9, dist_tol=0.0):
    """Pairs (a < b) with no third node c strictly between them on the segment, by testing
    every triple: c projects inside the segment and lies within max(rel_tol |ac|, dist_tol)
    of its line (the definition blocked_keys implements with an angular sort)."""
    out = set()
    for a, b in itertools.combinations(range(len(nodes)), 2):
        d = nodes[b] - nodes[a]
        length = np.hypot(*d)
        through = False
        for c in range(len(nodes)):
            if c in (a, b):
                continue
            e = nodes[c] - nodes[a]
            t = (e @ d) / length**2
            dist = abs(d[0] * e[1] - d[1] * e[0]) / length
            if 0 < t < 1 and dist <= max(rel_tol * np.hypot(*e), dist_tol):
                through = True
                break
        if not through:
            out.add((a, b))
    return out


def points_with_collinear_runs(seed):
    """Random points plus exact collinear runs: a 4 x 4 integer grid (rows, columns and
    diagonals) and five points on one slanted line."""
    rng = np.random.default_rng(seed)
    grid = np.array([[i, j] for i in range(4) for j in range(4)], float)
    slanted = np.array([[0.5 + k, 0.25 + 0.5 * k] for k in range(5)])
    pts = np.vstack([grid, slanted, rng.uniform(-1, 5, (25, 2))])
    return pts[rng.permutation(len(pts))]


@pytest.mark.parametrize("seed", [0, 1])
def test_blocked_pairs_equal_brute_force_in_any_blocks(seed):
    nodes = points_with_collinear_runs(seed)
    n = len(nodes)
    expected = brute_force_visible(nodes)
    assert len(expected) < n * (n - 1) // 2 - 20  # the collinear runs do block pairs
    for rows_per_block in (1, 7, None):
        blocked = blocked_keys(nodes, rows_per_block=rows_per_block)
        for step in (1, 5, n):
            got = np.concatenate([pairs_in_rows(n, s, min(n, s + step), blocked) for s in range(0, n, step)])
            assert {tuple(p) for p in got.tolist()} == expected
            assert len(got) == len(expected)  # no pair twice


def test_pair_passing_within_distance_tolerance_is_blocked():
    # A node 1e-7 m off the segment from (0, 0) to (2, 0) lies on it for dist_tol = 1e-6 m, but
    # not by angle alone (1e-7 rad seen from either end, far above rel_tol = 1e-9).
    nodes = np.array([[0.0, 0.0], [1.0, 1e-7], [2.0, 0.0], [1.0, 1.0]])
    for dist_tol, blocked in ((0.0, False), (1e-6, True)):
        got = {tuple(p) for p in pairs_in_rows(4, 0, 4, blocked_keys(nodes, dist_tol=dist_tol)).tolist()}
        assert ((0, 2) not in got) == blocked
        assert got == brute_force_visible(nodes, dist_tol=dist_tol)


@pytest.mark.parametrize("edges, exact, above", [("simple", 24.0, 1e-4), ("continuous", 42.851, 0.03)])
def test_small_blocks_give_the_load_factor_of_all_lines_at_once(monkeypatch, edges, exact, above):
    # 997 node pairs per block cuts the coarse square's lines into dozens of blocks, screened
    # from their float32 copies or (no copy budget) made again every round; 2^62 makes them all
    # at once, in one block kept between rounds. Pricing proves the optimum over all lines every
    # way, so the load factors agree to the pricing tolerance. The margin above the clamped
    # value is the coarse mesh's (node positions only; common practice, no source).
    results = []
    for block, budget in ((997, pricing.CACHE_BYTES), (997, 0), (1 << 62, 0)):
        monkeypatch.setattr(pricing, "BLOCK_LINES", block)
        monkeypatch.setattr(pricing, "CACHE_BYTES", budget)
        r = hingeline.solve(model(SQUARE, edges), lower_bound=False)
        assert r.stats.max_violation <= 1e-7
        results.append(r.load_factor)
    for lf in results:
        assert lf == pytest.approx(results[-1], rel=1e-6)
        assert exact * (1 - 1e-6) <= lf <= exact * (1 + above)


def test_small_blocks_hold_fewer_lines_at_once():
    # The point of blocks: no block holds more than its share of the pairs.
    m = model(SQUARE, "continuous")
    from hingeline.geometry.domain import build_domain
    from hingeline.geometry.mesh import mesh_domain, mesh_size_for

    size = mesh_size_for(m, 150)
    domain = build_domain(m, margin=size)
    nodes = mesh_domain(domain, m, size).nodes
    source = pricing.candidate_source(nodes, domain, m, block_lines=997)
    sizes = [len(b) for b in source.blocks()]
    n = len(nodes)
    assert len(sizes) >= n * (n - 1) // 2 // 997
    assert max(sizes) <= 997 + n  # a block ends at the first row boundary past its share
