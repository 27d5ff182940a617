"""Random slabs (seeded): every solve must carry a certificate that re-checks.

Star-shaped outlines with mixed edges, skew orthotropic bars, an opening and a
held load. This is a self-consistency check of the pipeline (the LP's load
factor against the independent work equation of its own mechanism, w = 0 on
supports), not a check of a collapse value; it found two real faults (a GEOS
overlay failure and a HiGHS failure) while it was written. The lower bound must exist
for each (a wider run of 39 slabs with point and line loads and columns gave gaps of 0.2
to 11 % at 150 nodes, all with the lower bound below the load factor).
"""
import numpy as np
import pytest
import shapely

import hingeline


def random_model(seed, hogging=None):
    """Random slab number `seed`; hogging (kNm/m) replaces its random top-bar capacity when
    given (the random draws stay the same, so the slab is otherwise unchanged)."""
    rng = np.random.default_rng(seed)
    while True:
        n = int(rng.integers(4, 9))
        ang = np.sort(rng.uniform(0, 2 * np.pi, n))
        rad = rng.uniform(2, 4, n)
        pts = np.c_[rad * np.cos(ang), rad * np.sin(ang)].round(3)
        poly = shapely.Polygon(pts)
        if poly.is_valid:
            break
    edges = [str(e) for e in rng.choice(["simple", "continuous", "free"], n, p=[0.45, 0.35, 0.2])]
    edges[0] = "simple" if all(e == "free" for e in edges) else edges[0]
    c = np.array(poly.representative_point().coords[0])
    s = rng.uniform(0.2, 0.5)
    opening = shapely.Polygon([c + [-s, -s], c + [s, -s], c + [s, s], c + [-s, s]])
    openings = [{"polygon": np.asarray(opening.exterior.coords)[:-1].tolist()}] if poly.buffer(-0.05).contains(opening) else []
    data = {
        "slab": {"outline": pts.tolist(), "edges": edges, "opening": openings},
        "capacity": {"sagging": [float(rng.uniform(5, 20)), float(rng.uniform(5, 20))],
                     "hogging": float(rng.uniform(0, 20)), "bar_angle": float(rng.uniform(0, 90))},
        "load": [{"type": "area", "value": 5.0},
                 {"type": "area", "value": 0.5, "scaled": False}],
        "analysis": {"nodes": 150},
    }
    if not openings:
        del data["slab"]["opening"]
    if hogging is not None:
        data["capacity"]["hogging"] = float(hogging)
    return hingeline.parse_model(data)


# Seed 79 made Triangle loop for ever (a fill-strip node a rounding error off a supported
# edge, left unsplit by GEOS; mesh._split_at_points mends it).
@pytest.mark.parametrize("seed", [*range(8), 79])
def test_random_slab_certificate(seed):
    model = random_model(seed)
    try:
        r = hingeline.solve(model)
    except hingeline.UnstableSlabError:
        pytest.skip("this random slab cannot carry its held load: nothing to certify")
    assert r.load_factor > 0
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)
    # No warning that the certificate disagrees or that the rotations leave w != 0 on a support
    # or planes that do not meet (solve.py checks both before it sets w = 0 on supports).
    assert not [w for w in r.warnings if "certificate" in w or "compatible" in w]
    # A lower bound exists and re-checks (conftest.py also asserts lower <= upper).
    assert r.lower_bound.load_factor is not None, r.warnings


# Without top bars the bound used to be 0 beside free edges and openings; seeds 2 and 8 also
# ended with reduced accuracy or a numerical error in the cone solver (solved again with the
# next settings, or kept as they re-check). Every random slab has a supported edge and
# positive sagging capacity, so a positive lower bound must be found; the gap limit of 15 % is
# this project's target at 150 nodes (measured 5.1, 5.3 and 10.4 % for these seeds,
# benchmarks/lower_no_top_bars.py --random).
@pytest.mark.parametrize("seed", [0, 2, 8])
def test_random_slab_without_top_bars_has_a_lower_bound(seed):
    r = hingeline.solve(random_model(seed, hogging=0.0))
    assert r.lower_bound.load_factor is not None and r.lower_bound.load_factor > 0, r.warnings
    assert r.gap <= 0.15
