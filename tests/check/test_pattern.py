"""Hand check of drawn yield-line patterns (handcheck.py, `hingeline check`).

Check values are closed forms of Johansen's yield-line theory or work equations
derived by hand in the comments beside them. The work equation of a rigid-region
pattern is exact (no mesh error: the triangulation follows every region boundary),
so tolerances are round-off (1e-9 relative) except where an optimiser is involved.
"""
from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from hingeline import ModelError, check_mechanism, model_from_toml
from hingeline._cli.main import main
from hingeline.check import check_pattern, pattern_from_toml, pattern_mechanism, read_pattern

ROOT = Path(__file__).resolve().parents[2]


def _model(outline, edges, sagging=1.0, hogging=1.0, extra=""):
    pts = ", ".join(f"[{x}, {y}]" for x, y in outline)
    edges = edges if isinstance(edges, str) else "[" + ", ".join(f'"{e}"' for e in edges) + "]"
    edges = f'"{edges}"' if not edges.startswith("[") else edges
    return model_from_toml(f"""
[slab]
outline = [{pts}]
edges = {edges}
{extra}
[capacity]
sagging = {sagging}
hogging = {hogging}
[[load]]
type = "area"
value = 1.0
""")


RECT = _model([(0, 0), (2, 0), (2, 1), (0, 1)], "simple")      # 2 m x 1 m, m = m' = 1 kNm/m, q = 1 kPa

# Johansen's roof pattern for the 2 x 1 rectangle: ridge along y = 0.5 between the apexes
# (a, 0.5) and (2 - a, 0.5); each region rotates about its own supported edge; w = 1 on the ridge.
ROOF = """
[parameters]
a = {start = 0.5, min = 0.05, max = 0.95}
[[region]]
name = "south"
polygon = [[0, 0], [2, 0], ["2 - a", 0.5], ["a", 0.5]]
axis = [[0, 0], [2, 0]]
point = ["a", 0.5]
deflection = 1.0
[[region]]
name = "east"
polygon = [[2, 0], [2, 1], ["2 - a", 0.5]]
axis = [[2, 0], [2, 1]]
point = ["2 - a", 0.5]
deflection = 1.0
[[region]]
name = "north"
polygon = [[2, 1], [0, 1], ["a", 0.5], ["2 - a", 0.5]]
axis = [[2, 1], [0, 1]]
point = ["a", 0.5]
deflection = 1.0
[[region]]
name = "west"
polygon = [[0, 1], [0, 0], ["a", 0.5]]
deflections = [[0, 0, 0], [0, 1, 0], ["a", 0.5, 1]]
"""

# Two apex distances, a (west) and b (east), optimised together (Nelder-Mead).
ROOF2 = ROOF.replace('a = {start = 0.5, min = 0.05, max = 0.95}',
                     'a = {start = 0.3, min = 0.05, max = 0.95}\nb = {start = 0.8, min = 0.05, max = 0.95}') \
            .replace('"2 - a"', '"2 - b"')


def _diagonal(apex_w=(1.0, 1.0, 1.0, 1.0)) -> str:
    """Unit square, four triangles meeting at the centre, each about its own edge."""
    corners = [(0, 0), (1, 0), (1, 1), (0, 1)]
    names = ["south", "east", "north", "west"]
    out = []
    for k, name in enumerate(names):
        p, q = corners[k], corners[(k + 1) % 4]
        out.append(f"""
[[region]]
name = "{name}"
polygon = [[{p[0]}, {p[1]}], [{q[0]}, {q[1]}], [0.5, 0.5]]
axis = [[{p[0]}, {p[1]}], [{q[0]}, {q[1]}]]
point = [0.5, 0.5]
deflection = {apex_w[k]}
""")
    return "".join(out)


def johansen_rectangle(L_short, L_long, m=1.0):
    """Johansen, simply supported isotropic rectangle, q = 24 m / (L^2 (sqrt(3 + (L/B)^2) - L/B)^2),
    L the short side, B the long side (e.g. Kennedy & Goodchild, Practical Yield Line Design,
    Concrete Centre 2004, simply supported rectangular slabs; formula recalled from memory and
    re-derived: it is the minimum over a of the work equation in test_roof_fixed_a)."""
    r = L_short / L_long
    return 24.0 * m / (L_short**2 * (math.sqrt(3.0 + r**2) - r) ** 2)


def test_roof_optimised_equals_johansen():
    hc = check_pattern(RECT, pattern_from_toml(ROOF))
    expected = johansen_rectangle(1.0, 2.0)          # = 14.1407 for 1 x 2 (formula above)
    assert abs(expected - 14.1407) < 1e-4
    assert hc.optimised
    assert hc.load_factor == pytest.approx(expected, rel=1e-6)
    # Optimal apex distance, from lambda(a) = (8 + 2/a) / (1 - a/3) of test_roof_fixed_a:
    # (8 + 2/a)' (1 - a/3) + (8 + 2/a)/3 = 0  ->  -2/a^2 + 2/(3a) + 8/3 + 2/(3a) = 0
    # -> 8 a^2 + 4 a - 6 = 0  ->  a = (-4 + sqrt(16 + 192)) / 16 = (sqrt(208) - 4) / 16 (hand derivation)
    assert hc.parameters["a"] == pytest.approx((math.sqrt(208.0) - 4.0) / 16.0, rel=1e-4)


def test_roof_fixed_a():
    # Hand work equation (m = 1 kNm/m, q = 1 kPa, ridge deflection 1 m):
    # internal: each region dissipates m * theta * (length of its support edge) for a simply
    # supported slab (projection rule): south, north: theta = 1/0.5, edge 2 m -> 4 each;
    # east, west: theta = 1/a, edge 1 m -> 1/a each.  D = 8 + 2/a.
    # external: volume under the roof = middle prism (2 - 2a) * 0.5 plus the two end parts
    # (each integral over x in [0, a] of 0.5 - (1 - x/a)^2 / 2 = a/3): V = 1 - a + 2a/3 = 1 - a/3.
    # lambda(a) = (8 + 2/a) / (1 - a/3); at a = 0.5: 12 / (5/6) = 14.4; at a = 0.3: 14.6667/0.9 = 16.2963.
    pat = pattern_from_toml(ROOF)
    hc = check_pattern(RECT, pat, optimise=False)
    assert not hc.optimised and hc.parameters == {"a": 0.5}
    assert hc.load_factor == pytest.approx(14.4, rel=1e-9)
    hc3 = check_pattern(RECT, pat, optimise=False, values={"a": 0.3})
    assert hc3.load_factor == pytest.approx((8 + 2 / 0.3) / (1 - 0.1), rel=1e-9)
    # Energy table: sums to the internal work; the ridge (south | north, 2 - 2a = 1 m long) turns
    # by 1/0.5 + 1/0.5 = 4 rad per metre of ridge deflection; scaled by 1/V = 6/5 -> 4.8 kNm.
    assert sum(b.work for b in hc.boundaries) == pytest.approx(hc.internal, rel=1e-12)
    ridge = {b.between: b for b in hc.boundaries}["south | north"]
    assert ridge.length == pytest.approx(1.0) and ridge.work == pytest.approx(4.8, rel=1e-9)
    assert dict(hc.work_per_load)["load 1"] == pytest.approx(1.0, rel=1e-12)   # normalised
    # The mechanism is an ordinary certificate: check_mechanism gives the same factor.
    assert check_mechanism(RECT, hc.mechanism).load_factor == pytest.approx(14.4, rel=1e-9)
    raw = pattern_mechanism(RECT, pat)              # unscaled: ridge at w = 1 m as drawn
    assert raw.w.max() == pytest.approx(1.0, rel=1e-12)


def test_two_parameters_optimised_together():
    # Same slab; independent apex distances must both reach the optimum of test_roof_optimised.
    hc = check_pattern(RECT, pattern_from_toml(ROOF2))
    assert hc.load_factor == pytest.approx(johansen_rectangle(1.0, 2.0), rel=1e-6)
    assert hc.parameters["a"] == pytest.approx(hc.parameters["b"], rel=1e-3)


def test_clamped_square_diagonals_48():
    # Johansen, clamped (continuous) isotropic square, diagonal pattern: q = 48 m / L^2 with
    # m = m' (textbook result, e.g. Johansen, Yield-line theory, C&CA 1962; recalled from memory).
    # Hand: sagging 4 regions * theta 2 * edge 1 = 8, hogging 4 edges * 1 * 2 = 8, volume 1/3.
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "continuous")
    hc = check_pattern(model, pattern_from_toml(_diagonal()))
    assert hc.load_factor == pytest.approx(48.0, rel=1e-9)
    hinge = sum(b.work for b in hc.boundaries if b.kind == "hinge")
    support = sum(b.work for b in hc.boundaries if b.kind == "continuous")
    assert hinge == pytest.approx(24.0, rel=1e-9) and support == pytest.approx(24.0, rel=1e-9)
    assert all(b.rotation < 0 for b in hc.boundaries if b.kind == "continuous")   # hogging


def test_simply_supported_square_24():
    # Johansen, simply supported isotropic square: q = 24 m / L^2 (textbook result; hand: 8 / (1/3)).
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "simple")
    hc = check_pattern(model, pattern_from_toml(_diagonal()))
    assert hc.load_factor == pytest.approx(24.0, rel=1e-9)
    assert all(b.rotation > 0 for b in hc.boundaries if b.kind == "hinge")        # sagging


def test_held_load_and_opening():
    # Held load: work equation lambda * W_f + W_h = D; with the diagonal pattern on the simply
    # supported unit square, D / W_f = 24 and W_h / W_f = 1 (equal 1 kPa loads) -> lambda = 23.
    held = model_from_toml("""
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
[[load]]
type = "area"
value = 1.0
[[load]]
type = "area"
value = 1.0
factored = false
""")
    hc = check_pattern(held, pattern_from_toml(_diagonal()))
    assert hc.load_factor == pytest.approx(23.0, rel=1e-9)
    # Central 0.2 x 0.2 opening (the regions run across it and are clipped). Hand work equation:
    # the half-diagonals outside the opening, 4 x 0.4 sqrt(2) m, turn by 2 sqrt(2) rad -> D = 6.4;
    # load: pyramid volume 1/3 minus the part over the opening, where w = 1 - 2 max(|u|, |v|)
    # (mean of max(|u|,|v|) over a square of half-side h is 2h/3): 0.04 (1 - 2 * 0.2/3) = 0.034667.
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "simple",
                   extra="[[slab.opening]]\npolygon = [[0.4, 0.4], [0.6, 0.4], [0.6, 0.6], [0.4, 0.6]]")
    hc = check_pattern(model, pattern_from_toml(_diagonal()))
    assert hc.load_factor == pytest.approx(6.4 / (1 / 3 - 0.04 * (1 - 0.4 / 3)), rel=1e-9)


def test_incompatible_regions_named():
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "simple")
    with pytest.raises(ModelError) as err:
        check_pattern(model, pattern_from_toml(_diagonal((1.0, 1.0, 1.5, 1.0))))
    msg = str(err.value)
    assert "'north'" in msg and ("'east'" in msg or "'west'" in msg) and "(0.5, 0.5)" in msg


def test_moving_support_named():
    # The south triangle given w = 0.2 at (1, 0), a corner on the supported south edge.
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "simple")
    text = _diagonal().replace(
        'axis = [[0, 0], [1, 0]]\npoint = [0.5, 0.5]\ndeflection = 1.0',
        'deflections = [[0, 0, 0], [1, 0, 0.2], [0.5, 0.5, 1]]')
    with pytest.raises(ModelError) as err:
        check_pattern(model, pattern_from_toml(text))
    msg = str(err.value)
    assert "region 'south'" in msg and "(1, 0)" in msg and "simple edge" in msg


def test_cover_and_overlap_named():
    model = _model([(0, 0), (1, 0), (1, 1), (0, 1)], "simple")
    gap = _diagonal().replace("polygon = [[1, 1], [0, 1], [0.5, 0.5]]", "polygon = [[1, 1], [0, 1], [0.5, 0.6]]")
    with pytest.raises(ModelError, match=r"covered by no region.*'north'"):
        check_pattern(model, pattern_from_toml(gap))
    over = _diagonal().replace("polygon = [[1, 1], [0, 1], [0.5, 0.5]]", "polygon = [[1, 1], [0, 1], [0.5, 0.4]]")
    with pytest.raises(ModelError, match=r"regions '\w+' and '\w+' overlap") as err:
        check_pattern(model, pattern_from_toml(over))
    assert "'north'" in str(err.value)


@pytest.mark.parametrize("expr, words", [
    ('__import__("os").getcwd()', "not allowed"),
    ("a ** 2", "operator that is not allowed"),
    ("c + 1", "'c', which is not a parameter"),
    ("a +", "not a valid expression"),
])
def test_expressions_restricted(expr, words):
    # Only numbers, parameter names, + - * / ( ) and unary minus are evaluated (ast, no eval).
    text = ROOF.replace('["2 - a", 0.5], ["a", 0.5]]', f"['{expr}', 0.5], [\"a\", 0.5]]", 1)
    assert text != ROOF
    with pytest.raises(ModelError) as err:
        pattern_from_toml(text)
    assert words in str(err.value) and "region 'south'.polygon[2][0]" in str(err.value)


def test_cli_check(tmp_path, capsys):
    model = tmp_path / "rect.toml"
    model.write_text("""
[slab]
outline = [[0, 0], [2, 0], [2, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
[[load]]
type = "area"
value = 1.0
""")
    pattern = tmp_path / "roof.toml"
    pattern.write_text(ROOF)
    assert main(["check", str(model), str(pattern), "--no-compare", "--fixed"]) == 0
    out = capsys.readouterr().out
    assert "load factor by the work equation = 14.4" in out and "a = 0.5" in out
    assert main(["check", str(model), str(pattern), "--no-compare"]) == 0
    assert "load factor by the work equation = 14.1407" in capsys.readouterr().out   # Johansen, above

    bad = tmp_path / "bad.toml"
    bad.write_text(_diagonal((1.0, 1.0, 2.0, 1.0)))
    assert main(["check", str(model), str(bad), "--no-compare"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "Traceback" not in err and "'north'" in err
    assert main(["check", str(model), str(tmp_path / "missing.toml"), "--no-compare"]) == 2
    assert "pattern file" in capsys.readouterr().err


def test_cli_compare(tmp_path, capsys):
    # The comparison with the optimised mechanism: both factors and the percentage are printed.
    model = tmp_path / "sq.toml"
    model.write_text('[slab]\noutline = [[0, 0], [1, 0], [1, 1], [0, 1]]\nedges = "simple"\n'
                     '[capacity]\nsagging = 1.0\n[[load]]\ntype = "area"\nvalue = 1.0\n')
    pattern = tmp_path / "diag.toml"
    pattern.write_text(_diagonal())
    assert main(["check", str(model), str(pattern)]) == 0
    out = capsys.readouterr().out
    line = [s for s in out.splitlines() if s.startswith("optimised mechanism")][0]
    solved = float(line.rsplit("=", 1)[1])
    pct = 100 * (24.0 - solved) / solved
    assert f"{abs(pct):.2f} %" in out


@pytest.mark.parametrize("stem", ["workshop_bay", "plant_deck"])
def test_example_patterns(stem):
    folder = ROOT / "examples" / "patterns"
    from hingeline import read_model

    model = read_model(folder / f"{stem}_model.toml")
    hc = check_pattern(model, read_pattern(folder / f"{stem}_pattern.toml"))
    start = check_pattern(model, read_pattern(folder / f"{stem}_pattern.toml"), optimise=False)
    # Optimising can only lower the factor (self-consistency, not a collapse value).
    assert 0 < hc.load_factor <= start.load_factor
    assert sum(b.work for b in hc.boundaries) == pytest.approx(hc.internal, rel=1e-9)
    assert hc.max_support_w <= 1e-9 * np.abs(hc.mechanism.w).max()
