"""Hand-drawn patterns shared by the tests of `hingeline.check` and of `hingeline check`.

Lengths m, deflections m (positive downward), one uniform load of 1 kPa and m = m' = 1 kNm/m
on the models of unit_slabs.model, so a load factor is the coefficient of m / L^2.
"""
from unit_slabs import SQUARE, model

RECT = model([[0, 0], [2, 0], [2, 1], [0, 1]], "simple")      # 2 m x 1 m
SIMPLE_SQUARE = model(SQUARE, "simple")

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


def diagonal(apex_w=(1.0, 1.0, 1.0, 1.0)) -> str:
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
