"""Tests of model.values: typed values (numbers, points, true/false, text) and the check of table
keys.

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import pytest
from model_inputs import HOLE, VALID_TOML, base, error_of

from hingeline.errors import ModelError
from hingeline.model import model_from_toml


@pytest.mark.parametrize(
    "mutate, expected",
    [
        (lambda d: d["slab"]["outline"].__setitem__(2, [7.2, "5.4"]), "slab.outline vertex 3"),
        (lambda d: d["slab"]["outline"].__setitem__(1, [7.2, 0.0, 1.0]), "slab.outline vertex 2"),
        (lambda d: d["slab"]["outline"].__setitem__(1, 7.2), "slab.outline vertex 2"),
        (lambda d: d["slab"]["outline"].__setitem__(3, [float("nan"), 5.4]), "slab.outline vertex 4"),
        (lambda d: d["slab"].__setitem__("outline", "square"), "slab.outline"),
        (lambda d: d["capacity"].__setitem__("sagging", "20"), "capacity.sagging"),
        (lambda d: d["capacity"].__setitem__("sagging", [20, float("inf")]), "capacity.sagging[2]"),
        (lambda d: d["capacity"].__setitem__("sagging", [1, 2, 3]), "capacity.sagging"),
        (lambda d: d["capacity"].__setitem__("hogging", True), "capacity.hogging"),
        (lambda d: d["capacity"].__setitem__("bar_angle", float("nan")), "capacity.bar_angle"),
        (lambda d: d["load"][0].__setitem__("value", "5"), "load[1].value"),
        (lambda d: d["load"][0].__setitem__("factored", "yes"), "load[1].factored"),
        (lambda d: d["load"][0].__setitem__("name", 7), "load[1].name"),
        (lambda d: d["slab"].__setitem__("thickness", "thick"), "slab.thickness"),
        (lambda d: d.__setitem__("title", 3), "title"),
        (lambda d: d.__setitem__("slab", 5), "slab"),
        (lambda d: d.__setitem__("analysis", "fine"), "analysis"),
        (lambda d: d["slab"].__setitem__("edges", 4), "slab.edges"),
    ],
)
def test_wrong_types(mutate, expected):
    d = base()
    mutate(d)
    assert expected in error_of(d)


def test_non_finite_from_toml():
    text = VALID_TOML.replace("value = 5.0", "value = nan")
    with pytest.raises(ModelError, match=r"load\[1\]\.value is nan"):
        model_from_toml(text)


@pytest.mark.parametrize(
    "mutate, key, where",
    [
        (lambda d: d["slab"].__setitem__("thicknes", 0.2), "thicknes", "[slab]"),
        (lambda d: d["capacity"].__setitem__("hoging", 3), "hoging", "[capacity]"),
        (lambda d: d["load"][0].__setitem__("valeu", 3), "valeu", "load[1]"),
        (lambda d: d.__setitem__("analysis", {"mesh": 0.2}), "mesh", "[analysis]"),
        (lambda d: d["slab"].__setitem__("opening", [{"polygon": HOLE, "depth": 1}]), "depth", "slab.opening[1]"),
    ],
)
def test_unknown_key_in_table(mutate, key, where):
    d = base()
    mutate(d)
    msg = error_of(d)
    assert f"'{key}'" in msg and where in msg and "allowed keys" in msg


def test_unknown_key_suggests_close_match():
    d = base()
    d["slab"]["thicknes"] = 0.2
    assert "did you mean 'thickness'" in error_of(d)
