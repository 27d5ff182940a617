"""Columns and walls under the slab: islands of ground inside the analysis domain."""
import numpy as np
import pytest

import hingeline

CORNERS = """
[slab]
outline = [[0, 0], [6, 0], [6, 6], [0, 6]]
edges = "free"
{columns}
[capacity]
sagging = 10.0
hogging = 10.0
[[load]]
type = "area"
value = 1.0
[analysis]
resolution = "coarse"
"""


def corner_columns(a, connection="pinned"):
    at = [(a / 2, a / 2), (6 - a / 2, a / 2), (6 - a / 2, 6 - a / 2), (a / 2, 6 - a / 2)]
    return "\n".join(f'[[column]]\nat = [{x}, {y}]\nsize = [{a}, {a}]\nconnection = "{connection}"' for x, y in at)


def test_square_on_four_corner_columns_folds_along_a_centre_line():
    # Hand work equation, folding along the centre line x = L/2, each half rotating about the
    # line through the inner corners of its two columns (column size a, both senses free at
    # pinned faces): internal 2 m L / (L/2 - a) per unit apex deflection, external
    # q L ((L/2 - a)^2 - a^2) / (L/2 - a) (the strip x < a lifts), so
    # lambda = 2 m / (q ((L/2 - a)^2 - a^2)); a -> 0 gives the textbook 8 m / L^2.
    # The fold is not admissible by itself: next to each column the lifting strip must hinge
    # round the column face (w = 0 there), which costs a little more. Measured: the solver's
    # mechanism is that fold plus four short hogging hinges at the columns, 4.0 % above it.
    m, q, L, a = 10.0, 1.0, 6.0, 0.06
    fold = 2 * m / (q * ((L / 2 - a) ** 2 - a**2))
    r = hingeline.solve(hingeline.model_from_toml(CORNERS.format(columns=corner_columns(a))))
    assert fold <= r.load_factor <= fold * 1.05
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)
    # The fold governs: sagging lines across the whole slab carry most of the work. By the
    # square's symmetry the folds along x = L/2 and along y = L/2 are equally good, and so is
    # any mix of the two, so the lines may lie on either centre line.
    yl = r.yield_lines
    on_centre = np.any([np.all(np.abs(np.stack([yl.start[:, k], yl.end[:, k]]) - L / 2) < 1e-9, axis=0)
                        for k in (0, 1)], axis=0)
    assert yl.dissipation[on_centre & yl.sagging].sum() > 0.9 * r.work.internal


INTERIOR = """
[slab]
outline = [[0, 0], [6, 0], [6, 4], [0, 4]]
edges = "simple"
{support}
[capacity]
sagging = 10.0
hogging = 8.0
[[load]]
type = "area"
value = 5.0
[analysis]
resolution = "coarse"
"""


def test_monolithic_column_is_never_weaker_than_pinned():
    # Upper-bound theorem: the monolithic column allows every mechanism of the pinned one and
    # makes hinges at its faces cost m' instead of nothing, so it cannot be weaker; either column
    # adds a support, so neither can be weaker than the slab without it.
    none = hingeline.solve(hingeline.model_from_toml(INTERIOR.format(support="")))
    col = '[[column]]\nat = [3.0, 2.0]\nsize = [0.4, 0.4]\nconnection = "{}"'
    pinned = hingeline.solve(hingeline.model_from_toml(INTERIOR.format(support=col.format("pinned"))))
    mono = hingeline.solve(hingeline.model_from_toml(INTERIOR.format(support=col.format("monolithic"))))
    assert pinned.load_factor > none.load_factor
    assert mono.load_factor >= pinned.load_factor * (1 - 1e-9)
    for r in (pinned, mono):
        assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)
        assert not [w for w in r.warnings if "compatible" in w]


def test_wall_across_the_slab_makes_two_spans():
    # A pinned wall on the line x = 3 across a 6 x 4 simply supported slab splits it into two
    # 3 x 4 simply supported panels (the wall rotates freely: a simple support to each). The
    # panel short side is 3 - 0.1 = 2.9 m (wall 0.2 m thick); Johansen's rectangle formula gives
    # q = 24 m / (a^2 (sqrt(3 + (a/b)^2) - a/b)^2) with a = 2.9, b = 4.
    wall = '[[wall]]\npath = [[3.0, 0.0], [3.0, 4.0]]\nconnection = "pinned"'
    r = hingeline.solve(hingeline.model_from_toml(INTERIOR.format(support=wall).replace("hogging = 8.0", "hogging = 10.0")))
    a, b, m = 2.9, 4.0, 10.0
    johansen = 24 * m / (a * a * ((3 + (a / b) ** 2) ** 0.5 - a / b) ** 2) / 5.0
    assert johansen * (1 - 1e-3) <= r.load_factor <= johansen * 1.03
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


@pytest.mark.parametrize("support, item", [
    ('[[column]]\nat = [7.0, 2.0]\nsize = [0.4, 0.4]', "column\\[1\\] at"),
    ('[[column]]\nat = [3.0, 2.0]', "column\\[1\\]: give either size"),
    ('[[column]]\nat = [3.0, 2.0]\ndiameter = 0.3\nconnection = "glued"', "column\\[1\\].connection"),
    ('[[wall]]\npath = [[3.0, 1.0], [8.0, 1.0]]', "wall\\[1\\].path leaves"),
    ('[[column]]\nat = [3.0, 2.0]\nsize = [0.4, 0.4]\n[[column]]\nat = [3.1, 2.0]\nsize = [0.4, 0.4]', "overlap"),
])
def test_bad_supports_name_the_item(support, item):
    with pytest.raises(hingeline.ModelError, match=item):
        hingeline.model_from_toml(INTERIOR.format(support=support))


RUNS = """
[slab]
outline = [[0, 0], [4, 0], [4, 4], [0, 4]]
edges = {edges}
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 1.0
[analysis]
resolution = "coarse"
"""


def test_edge_runs_equal_added_vertices():
    # Splitting an edge into runs is the same model as adding the vertices by hand (definition).
    runs = hingeline.solve(hingeline.model_from_toml(RUNS.format(
        edges='["simple", "simple", {runs = [{type = "free", to = 1.5}, {type = "simple"}]}, "simple"]')))
    by_hand = hingeline.solve(hingeline.model_from_toml(RUNS.format(edges='["simple", "simple", "free", "simple", "simple"]')
                                                        .replace("[4, 4], [0, 4]]", "[4, 4], [2.5, 4], [0, 4]]")))
    assert runs.load_factor == pytest.approx(by_hand.load_factor, rel=1e-9)
    assert runs.certificate.load_factor == pytest.approx(runs.load_factor, rel=1e-6)


def test_partial_fixity_lies_between_simple_and_continuous():
    # Solver.md section 5: continuous edges with m' = m give exactly twice the simply supported
    # load factor with m' = 0 (24 -> 48 m/L^2 scale for the square); a fixity f mobilises f m' on
    # the edges, so the load factor lies between the simple and the fully fixed values, and f = 0
    # is the simple edge.
    fixed = hingeline.solve(hingeline.model_from_toml(RUNS.format(edges='"continuous"')))
    half = hingeline.solve(hingeline.model_from_toml(RUNS.format(
        edges='[{type = "continuous", fixity = 0.5}, {type = "continuous", fixity = 0.5}, '
              '{type = "continuous", fixity = 0.5}, {type = "continuous", fixity = 0.5}]')))
    zero = hingeline.solve(hingeline.model_from_toml(RUNS.format(
        edges='[{type = "continuous", fixity = 0.0}, "simple", "simple", "simple"]')))
    simple = hingeline.solve(hingeline.model_from_toml(RUNS.format(edges='"simple"')))
    assert simple.load_factor < half.load_factor < fixed.load_factor
    assert zero.load_factor == pytest.approx(simple.load_factor, rel=1e-9)
    assert half.certificate.load_factor == pytest.approx(half.load_factor, rel=1e-6)
    with pytest.raises(hingeline.ModelError, match="fixity"):
        hingeline.model_from_toml(RUNS.format(edges='[{type = "simple", fixity = 0.5}, "simple", "simple", "simple"]'))


def test_point_load_on_a_column_is_refused():
    support = '[[column]]\nat = [3.0, 2.0]\nsize = [0.4, 0.4]\n[[load]]\ntype = "point"\nvalue = 5.0\nat = [3.0, 2.0]'
    with pytest.raises(hingeline.ModelError, match="stands on column\\[1\\]"):
        hingeline.model_from_toml(INTERIOR.format(support=support))
