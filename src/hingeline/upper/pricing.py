"""Candidate lines generated and priced block by block, never all held at once.

The node-to-node lines of discontinuity layout optimisation number about n^2 / 2 for
n nodes (45 million at 10,000 nodes), far too many to hold. CandidateSource makes
them on demand for a block of consecutive start nodes (pairs a < b with a in the
block), with exactly the admissibility tests, costs and work coefficients of
candidates.py and loadwork.py, so memory grows with nodes times block size. The one
thing computed for all nodes up front is the short list of pairs whose segment
passes through a third node (overlap removal).

Pricing: with duals u (2 per node, the compatibility rows), mu (the work row) and
z (the rows that hold supports inside the slab: islands of ground at rest, 3 each, then
bearing points of pinned columns at w = 0, 1 each), line i has s_i = (u_a - u_b) . t_i + mu f_i + z . e_i and violates
dual feasibility when s_i - (c_i+ - g_i) > 0 (sagging) or -s_i - (c_i- + g_i) > 0
(hogging). Violations are reported per unit length and unit capacity (m_ref).

Units: m, kN, kNm/m; f and g in kN (kNm of work per rad).
"""
from __future__ import annotations

from dataclasses import dataclass, field, fields, replace

import numpy as np
from scipy import sparse

from .candidates import THROUGH, Candidates, LineContext, blocked_keys, line_context, lines_for_pairs, pairs_in_rows
from .loadwork import bearing_rows, island_rows, load_coefficients

BLOCK_LINES = 1 << 18  # node pairs per block (memory of the order of 1 kB per pair at peak)
# Bytes of float32 copies of the blocks kept between rounds (about 24 per line). Making a
# block costs about 2.5 us per pair (at 10,000 nodes, 0.53 s per block, 100 s per pass over
# all blocks, dominated by the inside-the-slab crossings and the load work), while screening
# its copy costs a few percent of that; blocks beyond the budget are made again every round.
CACHE_BYTES = 2 << 30
# Screening margin: a copy's violation is raised by SCREEN times the size of its terms, 16
# times the float32 rounding (2^-24 per value), so that a line whose screened violation stays
# at or below the floor is proven to stay there exactly.
SCREEN = 1e-6


@dataclass(frozen=True, eq=False)
class LineSet:
    """Candidate lines with their work coefficients: f, g (c,) in kN for the factored and
    held loads; extra (c, r) sparse coefficients in the support rows (3 per island, 1 per bearing)."""

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
    block (and n at the end), so that a block holds about block_lines pairs. When all lines
    fit in one block they are made once and kept (held: that one block).
    """

    ctx: LineContext
    blocked: np.ndarray
    bounds: np.ndarray
    n_extra: int
    held: list = field(default_factory=list)
    copies: dict = field(default_factory=dict)

    @property
    def n_nodes(self) -> int:
        return len(self.ctx.nodes)

    def lines(self, pairs: np.ndarray) -> LineSet:
        """The admissible lines among `pairs` (p, 2), a < b, none through a third node."""
        cand = lines_for_pairs(self.ctx, pairs)
        p, q = self.ctx.nodes[cand.a], self.ctx.nodes[cand.b]
        f, g, _ = load_coefficients(self.ctx.model, self.ctx.domain.slab, p, q)
        if self.n_extra:
            extra = sparse.hstack([island_rows(p, q, self.ctx.domain.islands),
                                   bearing_rows(p, q, self.ctx.domain.bearings)], format="csr")
        else:
            extra = sparse.csr_matrix((len(p), 0))
        return LineSet(cand, f, g, extra)

    def blocks(self):
        """Every admissible line, as LineSets of consecutive start nodes."""
        n = self.n_nodes
        if len(self.bounds) == 2:
            if not self.held:
                self.held.append(self.lines(pairs_in_rows(n, 0, n, self.blocked)))
            yield self.held[0]
            return
        for start, stop in zip(self.bounds[:-1], self.bounds[1:]):
            yield self.lines(pairs_in_rows(n, int(start), int(stop), self.blocked))


    def priced(self, duals: np.ndarray, m_ref: float, floor: float, lp_keys: np.ndarray):
        """Every admissible line priced with `duals`, block by block. Yields (lines, their exact
        violations (violation(); -inf for the lines in lp_keys), an upper bound on the violation
        of the block's other lines (-inf if none), number of lines in the block); lines is None
        when no line of the block may violate beyond `floor`. Blocks kept
        as float32 copies are screened, and only their lines that may violate beyond `floor`
        are made again exactly."""
        n = self.n_nodes
        for k, block in enumerate(self._blocks_or_copies()):
            if isinstance(block, LineSet):
                viol = violation(block, duals, n, m_ref)
                viol[_in_sorted(block.keys(n), lp_keys)] = -np.inf
                kept = sum(c.nbytes for c in self.copies.values())
                if len(self.bounds) > 2 and kept + 24 * len(block) <= CACHE_BYTES:
                    self.copies[k] = _Copy.of(block)
                yield block, viol, -np.inf, len(block)
                continue
            bound = block.screen(self.ctx.nodes, duals, m_ref)
            bound[_in_sorted(block.a.astype(np.int64) * n + block.b, lp_keys)] = -np.inf
            maybe = bound > floor
            rest = float(bound[~maybe].max(initial=-np.inf))
            if not maybe.any():
                yield None, np.zeros(0), rest, len(bound)
                continue
            lines = self.lines(np.stack([block.a[maybe], block.b[maybe]], axis=1).astype(np.int64))
            yield lines, violation(lines, duals, n, m_ref), rest, len(bound)

    def _blocks_or_copies(self):
        n = self.n_nodes
        if len(self.bounds) == 2:
            yield from self.blocks()
            return
        for k, (start, stop) in enumerate(zip(self.bounds[:-1], self.bounds[1:])):
            yield self.copies.get(k) or self.lines(pairs_in_rows(n, int(start), int(stop), self.blocked))


def _in_sorted(keys: np.ndarray, sorted_keys: np.ndarray) -> np.ndarray:
    """Which of `keys` occur in the sorted array `sorted_keys`."""
    if not len(sorted_keys):
        return np.zeros(len(keys), bool)
    pos = np.minimum(np.searchsorted(sorted_keys, keys), len(sorted_keys) - 1)
    return sorted_keys[pos] == keys


@dataclass(frozen=True, eq=False)
class _Copy:
    """float32 copy of a block of lines, for screening: node pairs and the costs (kNm/rad)
    and work coefficients (kN) of each line; g and extra None where the block has none."""

    a: np.ndarray
    b: np.ndarray
    f: np.ndarray
    cost_plus: np.ndarray
    cost_minus: np.ndarray
    g: np.ndarray | None
    extra: sparse.csr_matrix | None

    @property
    def nbytes(self) -> int:
        extra = 0 if self.extra is None else self.extra.data.nbytes + self.extra.indices.nbytes
        g = 0 if self.g is None else self.g.nbytes
        return self.a.nbytes + self.b.nbytes + self.f.nbytes + 2 * self.cost_plus.nbytes + g + extra

    @staticmethod
    def of(lines: LineSet) -> _Copy:
        c, f32 = lines.cand, np.float32
        return _Copy(c.a.astype(np.int32), c.b.astype(np.int32), lines.f.astype(f32), c.cost_plus.astype(f32),
                     c.cost_minus.astype(f32), lines.g.astype(f32) if np.any(lines.g) else None,
                     lines.extra.astype(f32) if lines.extra.nnz else None)

    def screen(self, nodes: np.ndarray, duals: np.ndarray, m_ref: float) -> np.ndarray:
        """Upper bound of violation() of each line, from the copy."""
        n = len(nodes)
        d = nodes[self.b] - nodes[self.a]
        length = np.hypot(d[:, 0], d[:, 1])
        u = duals[: 2 * n].reshape(-1, 2)
        du = u[self.a] - u[self.b]
        st = (du[:, 0] * d[:, 0] + du[:, 1] * d[:, 1]) / length
        mf = duals[2 * n] * self.f
        s = st + mf
        size = np.abs(st) + np.abs(mf) + self.cost_plus + self.cost_minus
        if self.extra is not None:
            z = duals[2 * n + 1:]
            s += self.extra @ z
            size += abs(self.extra) @ np.abs(z)
        g = 0.0 if self.g is None else self.g
        if self.g is not None:
            size += 2 * np.abs(g)
        viol = np.maximum(s - (self.cost_plus - g), -s - (self.cost_minus + g))
        return (viol + SCREEN * size) / (m_ref * length)


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
    return CandidateSource(line_context(nodes, domain, model), blocked, bounds,
                           3 * len(domain.islands) + len(domain.bearings))


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
