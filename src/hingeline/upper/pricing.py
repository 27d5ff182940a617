"""Candidate lines generated and priced block by block, never all held at once.

The node-to-node lines of discontinuity layout optimisation number about n^2 / 2 for
n nodes (45 million at 10,000 nodes), far too many to hold. CandidateSource makes
them on demand for a block of consecutive start nodes (pairs a < b with a in the
block), with exactly the admissibility tests, costs and work coefficients of
candidates.py and loadwork.py, so memory grows with nodes times block size. The one
thing computed for all nodes up front is the short list of pairs whose segment
passes through a third node (overlap removal).

Pricing: with duals u (2 per node, the compatibility rows), mu (the work row) and
z (island rows), line i has s_i = (u_a - u_b) . t_i + mu f_i + z . e_i and violates
dual feasibility when s_i - (c_i+ - g_i) > 0 (sagging) or -s_i - (c_i- + g_i) > 0
(hogging). Violations are reported per unit length and unit capacity (m_ref).

Units: m, kN, kNm/m; f and g in kN (kNm of work per rad).
"""
from __future__ import annotations

from dataclasses import dataclass, fields, replace

import numpy as np
from scipy import sparse

from .candidates import THROUGH, Candidates, LineContext, blocked_keys, line_context, lines_for_pairs, pairs_in_rows
from .loadwork import island_rows, load_coefficients

BLOCK_LINES = 1 << 18  # node pairs per block (memory of the order of 1 kB per pair at peak)


@dataclass(frozen=True, eq=False)
class LineSet:
    """Candidate lines with their work coefficients: f, g (c,) in kN for the factored and
    held loads; extra (c, r) sparse coefficients in the island rows (r = 3 per island)."""

    cand: Candidates
    f: np.ndarray
    g: np.ndarray
    extra: sparse.csr_matrix

    def __len__(self) -> int:
        return len(self.cand)

    def keys(self, n_nodes: int) -> np.ndarray:
        """a * n_nodes + b for every line (a < b): a unique key per node pair."""
        return self.cand.a.astype(np.int64) * n_nodes + self.cand.b

    def take(self, idx: np.ndarray) -> LineSet:
        c = replace(self.cand, **{fl.name: getattr(self.cand, fl.name)[idx] for fl in fields(self.cand)})
        return LineSet(c, self.f[idx], self.g[idx], self.extra[idx])


def concat(sets: list[LineSet]) -> LineSet:
    """The lines of all `sets`, in order."""
    first = sets[0].cand
    c = replace(first, **{fl.name: np.concatenate([getattr(s.cand, fl.name) for s in sets])
                          for fl in fields(first)})
    return LineSet(c, np.concatenate([s.f for s in sets]), np.concatenate([s.g for s in sets]),
                   sparse.vstack([s.extra for s in sets], format="csr"))


@dataclass(frozen=True, eq=False)
class CandidateSource:
    """All admissible node-to-node lines of a mesh, made block by block.

    blocked: sorted keys of the pairs through a third node; bounds: first start node of each
    block (and n at the end), so that a block holds about block_lines pairs.
    """

    ctx: LineContext
    blocked: np.ndarray
    bounds: np.ndarray
    n_extra: int

    @property
    def n_nodes(self) -> int:
        return len(self.ctx.nodes)

    def lines(self, pairs: np.ndarray) -> LineSet:
        """The admissible lines among `pairs` (p, 2), a < b, none through a third node."""
        cand = lines_for_pairs(self.ctx, pairs)
        p, q = self.ctx.nodes[cand.a], self.ctx.nodes[cand.b]
        f, g, _ = load_coefficients(self.ctx.model, self.ctx.domain.slab, p, q)
        if self.n_extra:
            extra = island_rows(p, q, self.ctx.domain.islands)
        else:
            extra = sparse.csr_matrix((len(p), 0))
        return LineSet(cand, f, g, extra)

    def blocks(self):
        """Every admissible line, as LineSets of consecutive start nodes."""
        n = self.n_nodes
        for start, stop in zip(self.bounds[:-1], self.bounds[1:]):
            yield self.lines(pairs_in_rows(n, int(start), int(stop), self.blocked))


def candidate_source(nodes: np.ndarray, domain, model, block_lines: int | None = None) -> CandidateSource:
    """CandidateSource for `nodes` with blocks of about block_lines node pairs (default
    BLOCK_LINES; a block as large as n^2 makes all lines at once)."""
    n = len(nodes)
    block_lines = block_lines or BLOCK_LINES
    blocked = blocked_keys(nodes, rows_per_block=max(1, block_lines // max(n, 1)), dist_tol=THROUGH * domain.tol)
    # Start node a has n - 1 - a partners b > a: cut the rows where the running count of
    # pairs passes each multiple of block_lines.
    per_row = np.arange(n - 1, -1, -1, dtype=np.int64)
    cum = np.concatenate([[0], np.cumsum(per_row)])
    cuts = np.searchsorted(cum, np.arange(block_lines, cum[-1], block_lines), side="right") - 1
    bounds = np.unique(np.concatenate([[0], cuts, [n]]))
    return CandidateSource(line_context(nodes, domain, model), blocked, bounds, 3 * len(domain.islands))


def violation(lines: LineSet, duals: np.ndarray, n_nodes: int, m_ref: float) -> np.ndarray:
    """Largest dual-feasibility violation of each line (sagging or hogging) per unit length
    and unit capacity: > 0 where adding the line could lower the load factor."""
    c = lines.cand
    u = duals[: 2 * n_nodes].reshape(-1, 2)
    du = u[c.a] - u[c.b]
    s = du[:, 0] * c.tangent[:, 0] + du[:, 1] * c.tangent[:, 1] + duals[2 * n_nodes] * lines.f
    if lines.extra.shape[1]:
        s += lines.extra @ duals[2 * n_nodes + 1:]
    return np.maximum(s - (c.cost_plus - lines.g), -s - (c.cost_minus + lines.g)) / (m_ref * c.length)


def total_force(model, domain) -> float:
    """Total factored force of the loads, kN."""
    empty = np.zeros((0, 2))
    return load_coefficients(model, domain.slab, empty, empty)[2]
