"""Moment capacity from a bar schedule against hand calculations to EN 1992-1-1."""
import pytest

import hingeline
from hingeline.model.eurocode import BarLayer, Materials, layer_capacity, stress_block

MODEL = """
[slab]
outline = [[0, 0], [6, 0], [6, 5], [0, 5]]
edges = "simple"
thickness = 0.20
[capacity.bars]
concrete = "C30/37"
steel = "B500B"
bottom_1 = {{diameter = 12, spacing = 150, cover = 25}}
bottom_2 = {{diameter = 12, spacing = 150, cover = 37}}
{top}
[[load]]
type = "area"
value = 10.0
[analysis]
nodes = 150
"""


def test_one_layer_by_hand():
    # Hand calculation, EN 1992-1-1: C30/37, B500, gamma_c = 1.5, gamma_s = 1.15, alpha_cc = 1.0
    # (3.1.6(1) recommended value), lambda = 0.8, eta = 1.0 (3.1.7(3), f_ck <= 50 MPa).
    # H12 @ 150, cover 25 mm, h = 200 mm:
    #   A_s = pi 12^2 / 4 * 1000 / 150 = 753.98 mm^2/m;  d = 200 - 25 - 6 = 169 mm
    #   f_cd = 20 MPa, f_yd = 434.78 MPa;  x = 753.98 * 434.78 / (0.8 * 20 * 1000) = 20.49 mm
    #   M_Rd = 753.98 * 434.78 * (169 - 0.4 * 20.49) / 1e6 = 52.71 kNm/m;  x/d = 0.121
    lc = layer_capacity(BarLayer("bottom_1", 12, 150, 25), 200, Materials("C30/37", "B500B"))
    assert lc.area == pytest.approx(753.98, abs=0.01)
    assert lc.d == 169
    assert lc.x == pytest.approx(20.49, abs=0.01)
    assert lc.moment == pytest.approx(52.71, abs=0.01)
    assert lc.xu_d == pytest.approx(0.121, abs=0.001)


def test_high_strength_stress_block():
    # EN 1992-1-1 3.1.7(3): for C70/85, lambda = 0.8 - 20/400 = 0.75, eta = 1 - 20/200 = 0.9;
    # Table 3.1: eps_cu3 = (2.6 + 35 ((90 - 70)/100)^4) / 1000 = 0.002656.
    lam, eta, eps = stress_block(70)
    assert (lam, eta) == pytest.approx((0.75, 0.9))
    assert eps == pytest.approx(0.002656, rel=1e-9)


def test_model_with_bars_solves_and_warns_on_ratio():
    # Without top bars the ratio check does not apply; with H16 @ 100 top bars the top/bottom ratio
    # exceeds 2.0 (common practice limit for plastic analysis) and a warning is raised.
    plain = hingeline.model_from_toml(MODEL.format(top=""))
    assert plain.capacity.sagging[0] == pytest.approx(52.71, abs=0.01)
    assert plain.capacity.hogging == (0.0, 0.0)
    assert not plain.capacity.warnings
    strong = hingeline.model_from_toml(MODEL.format(top="top_1 = {diameter = 16, spacing = 100, cover = 25}"))
    assert any("0.5 to 2.0" in w for w in strong.capacity.warnings)
    r = hingeline.solve(strong)
    assert any("0.5 to 2.0" in w for w in r.warnings)
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)


def test_unknown_key_in_bar_schedule():
    with pytest.raises(hingeline.ModelError, match="concrete_x"):
        hingeline.model_from_toml(MODEL.format(top="concrete_x = 1"))


@pytest.mark.parametrize("change, item", [
    (('"C30/37"', '"C33/40"'), "capacity.bars.concrete"),
    (('"B500B"', '"S355"'), "capacity.bars.steel"),
    (("cover = 25}", "cover = 190}"), "capacity.bars.bottom_1"),
    (("thickness = 0.20", ""), "thickness"),
])
def test_bad_bar_schedules_name_the_item(change, item):
    text = MODEL.format(top="").replace(*change)
    with pytest.raises(hingeline.ModelError, match=item.replace(".", r"\.")):
        hingeline.model_from_toml(text)


def test_over_reinforced_layer_is_refused():
    # H25 @ 75 in a 120 mm slab, C20/25: x/d far above the yield limit 0.0035/(0.0035+0.00217)=0.617.
    text = MODEL.format(top="").replace("thickness = 0.20", "thickness = 0.12").replace('"C30/37"', '"C20/25"') \
        .replace("bottom_1 = {diameter = 12, spacing = 150", "bottom_1 = {diameter = 25, spacing = 60")
    with pytest.raises(hingeline.ModelError, match="over-reinforced"):
        hingeline.model_from_toml(text)


def test_detailing_limits_of_en_1992_1_1():
    from hingeline.model.eurocode import fctm, max_spacing, min_area

    # Table 3.1 tabulates f_ctm = 2.9 MPa for C30/37 and 4.4 MPa for C60/75 (values recalled from memory).
    assert fctm(30) == pytest.approx(2.9, abs=0.01)
    assert fctm(60) == pytest.approx(4.4, abs=0.05)
    # 9.3.1.1(3): principal bars at most 3h and 400 mm (recommended values, recalled from memory).
    assert max_spacing(120) == 360 and max_spacing(200) == 400
    # 9.2.1.1(1): A_s,min = 0.26 f_ctm / f_yk b d, not less than 0.0013 b d.
    c30 = Materials("C30/37", "B500B")
    assert min_area(170, c30) == pytest.approx(0.26 * fctm(30) / 500 * 1000 * 170)
    c12 = Materials("C12/15", "B500B")   # 0.26 * 1.57 / 500 = 0.00082 < 0.0013
    assert min_area(170, c12) == pytest.approx(0.0013 * 1000 * 170)


def test_wide_or_light_bar_layers_are_warned_by_clause():
    wide = hingeline.model_from_toml(MODEL.format(top="top_1 = {diameter = 12, spacing = 450, cover = 25}"))
    assert any("top_1" in w and "9.3.1.1(3)" in w for w in wide.capacity.warnings)
    assert any("top_1" in w and "9.2.1.1(1)" in w for w in wide.capacity.warnings)   # 251 mm2/m < 0.0015 b d
    plain = hingeline.model_from_toml(MODEL.format(top=""))
    assert not [w for w in plain.capacity.warnings if "9.3.1.1" in w or "9.2.1.1" in w]
