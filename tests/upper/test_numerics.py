"""Scale-free numerics: the same slab in other units, turned, or with rounded coordinates.

Metamorphic checks (a change of input that must not change the answer) anchored to a closed
form: Johansen's yield-line solution for the simply supported isotropic rectangle a x b
(a short), q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2) (any yield-line text; tests/unit_slabs.py),
which the solver, an upper bound on a finite mesh, must meet from above.
"""
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest
from unit_slabs import jittered, johansen_rectangle

import hingeline
from hingeline.errors import UnstableSlabError
from hingeline.model.scaling import MM_SUSPECT_SIZE
from hingeline.outputs.result_json import certificate_agrees

ROOT = Path(__file__).resolve().parents[2]


def rectangle(scale, q=10.0, m=20.0, held="", nodes=150, outline=None, edges='"simple"'):
    """The 6 x 4.5 m rectangle, simply supported, isotropic m = m', drawn `scale` times larger.

    The load factor is m / (q L^2) times a number fixed by the shape: lengths x s with the
    capacities kept and area loads / s^2 keep it (the load q L^2 on the slab and the moment
    per unit width are unchanged)."""
    outline = outline or [[0, 0], [6 * scale, 0], [6 * scale, 4.5 * scale], [0, 4.5 * scale]]
    return hingeline.model_from_toml(f"""
[slab]
outline = {outline}
edges = {edges}
[capacity]
sagging = {m}
hogging = {m}
[[load]]
type = "area"
value = {q / scale**2!r}
{held}
[analysis]
nodes = {nodes}
""")


def compat_warnings(result):
    return [w for w in result.warnings if "certificate" in w or "compatible" in w]


@pytest.fixture(scope="module")
def unscaled_and_scaled():
    return hingeline.solve(rectangle(1.0)), hingeline.solve(rectangle(1000.0))


def test_scaled_by_1000_equals_unscaled(unscaled_and_scaled):
    small, large = unscaled_and_scaled
    # Johansen, 6 x 4.5 m, m = 20 kNm/m, q = 10 kPa: lambda = 24 m / (q a^2 (sqrt(3 + r^2) - r)^2).
    exact = johansen_rectangle(4.5, 6.0, m=20.0) / 10.0
    assert small.load_factor >= exact * (1 - 1e-3)
    assert small.load_factor <= exact * 1.01
    # Lengths x 1000, area loads / 1000^2, capacities kept: the same load factor and bracket.
    assert large.load_factor == pytest.approx(small.load_factor, rel=1e-6)
    assert large.lower_bound.load_factor == pytest.approx(small.lower_bound.load_factor, rel=1e-6)
    assert large.gap == pytest.approx(small.gap, abs=1e-7)   # the gap is a difference: compared absolutely
    assert large.lower_bound.load_factor <= large.load_factor
    for r in (small, large):
        assert certificate_agrees(r) and not compat_warnings(r), r.warnings
        assert r.stats.max_violation <= 1e-7
        assert not any("stopped before proving" in w for w in r.warnings)


def test_scaled_result_is_in_the_models_units(unscaled_and_scaled):
    small, large = unscaled_and_scaled
    # Same mechanism drawn 1000 times larger under the same total load: deflections per kNm of
    # work are the same, rotations 1000 times smaller, hinge work the same, points 1000 times further.
    assert np.abs(large.mechanism.w).max() == pytest.approx(np.abs(small.mechanism.w).max(), rel=1e-6)
    assert large.yield_lines.rotation.max() == pytest.approx(small.yield_lines.rotation.max() / 1000, rel=1e-6)
    assert large.yield_lines.dissipation.sum() == pytest.approx(small.yield_lines.dissipation.sum(), rel=1e-6)
    assert large.mechanism.vertices.max() == pytest.approx(1000 * small.mechanism.vertices.max(), rel=1e-9)
    assert large.stats.mesh_size == pytest.approx(1000 * small.stats.mesh_size, rel=1e-9)
    field_small, field_large = small.lower_bound.field, large.lower_bound.field
    assert np.abs(field_large.moments).max() == pytest.approx(np.abs(field_small.moments).max(), rel=1e-4)
    assert field_large.nodes.max() == pytest.approx(1000 * field_small.nodes.max(), rel=1e-9)


def test_capacities_and_loads_scaled_together():
    # Capacities and loads both x 1000 (a change of force unit): the load factor is unchanged.
    base = hingeline.solve(rectangle(1.0), lower_bound=False)
    big = hingeline.solve(rectangle(1.0, q=10.0e3, m=20.0e3), lower_bound=False)
    assert big.load_factor == pytest.approx(base.load_factor, rel=1e-6)
    assert certificate_agrees(big)


def test_mm_warning():
    # A slab 6000 x 4500 "m" across: more than MM_SUSPECT_SIZE (500 m, common practice, no
    # source), so coordinates typed in mm are suspected; the 6 m slab gets no such warning.
    assert MM_SUSPECT_SIZE == 500.0
    mm = hingeline.solve(rectangle(1000.0, q=10.0e6), lower_bound=False)
    assert any("typed in mm" in w and "6000 m" in w for w in mm.warnings), mm.warnings
    assert not any("typed in mm" in w for w in hingeline.solve(rectangle(1.0), lower_bound=False).warnings)


def test_mm_hint_when_the_slab_cannot_carry_its_held_loads():
    # Typed in mm, the slab's own weight is a million times too heavy: the error says why.
    held = '[[load]]\ntype = "area"\nvalue = 5.0\nscaled = false'
    with pytest.raises(UnstableSlabError, match="typed in mm"):
        hingeline.solve(rectangle(1.0, held=held, outline=[[0, 0], [6000, 0], [6000, 4500], [0, 4500]]),
                        lower_bound=False)


ROTATED = [[0, 0], [5.196152, 3.0], [3.196152, 6.464102], [-2.0, 3.464102]]   # 6 x 4 m turned 30 deg, 6 decimals


def test_rotated_rectangle_certificate_agrees():
    # The case that failed: corners rounded to 6 decimals, one free edge, no top bars; two nodes
    # 2e-8 m off each other's lines made nearly coincident hinges whose rotations were lost.
    model = hingeline.model_from_toml(f"""
[slab]
outline = {ROTATED}
edges = ["simple", "simple", "free", "simple"]
[capacity]
sagging = [20, 12]
hogging = 0
[[load]]
type = "area"
value = 10.0
[analysis]
nodes = 450
""")
    r = hingeline.solve(model, lower_bound=False)
    assert certificate_agrees(r) and not compat_warnings(r), r.warnings
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


def test_rotated_rectangle_equals_unrotated():
    # Rotation invariance, isotropic m = m' (so bars need no turning): both are upper bounds on
    # Johansen's value for the 6 x 4 m rectangle. The two meshes differ (the mesher is not
    # rotation-equivariant), so they agree to the discretisation, here 0.1 %, not to solver tolerance.
    exact = johansen_rectangle(4.0, 6.0, m=20.0) / 10.0
    flat = hingeline.solve(rectangle(1.0, outline=[[0, 0], [6, 0], [6, 4], [0, 4]]), lower_bound=False)
    turned = hingeline.solve(rectangle(1.0, outline=ROTATED), lower_bound=False)
    for r in (flat, turned):
        assert certificate_agrees(r) and not compat_warnings(r), r.warnings
        assert exact * (1 - 1e-3) <= r.load_factor <= exact * 1.005
    assert turned.load_factor == pytest.approx(flat.load_factor, rel=1e-3)


# The podium deck is left out: a load region corner lies on the middle of an outline edge, so
# its jitter puts the region outside the slab or makes a near-zero angle the mesher cannot refine.
JITTERED = [("examples/balcony_free_edge.toml", s) for s in (0, 1)] + \
           [("examples/lift_core_opening.toml", s) for s in (0, 1, 3)] + \
           [("examples/plant_room_skew_bars.toml", 1), ("src/hingeline/data/demo.toml", 2)]


@pytest.mark.parametrize("path, seed", JITTERED)
def test_jittered_outline_certificate_agrees(path, seed):
    # Self-consistency (no published value): the certificate re-checks the mechanism to 1e-6.
    # lift_core_opening with seed 1 disagreed by 4e-6 before compatibility was restored.
    data = jittered(tomllib.loads((ROOT / path).read_text(encoding="utf-8")), seed)
    r = hingeline.solve(hingeline.parse_model(data), nodes=150, lower_bound=False)
    assert certificate_agrees(r) and not compat_warnings(r), r.warnings
    assert math.isfinite(r.load_factor) and r.load_factor > 0
