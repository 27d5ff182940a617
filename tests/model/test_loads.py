"""Tests of model.loads: the [[load]] section (load list, types, values, names, regions).

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import numpy as np
import pytest
from model_inputs import HOLE, RECT, VALID_TOML, base, error_of

from hingeline.errors import ModelError
from hingeline.model import model_for_case, model_from_toml, parse_model


def test_empty_load_list():
    d = base()
    d["load"] = []
    assert "load" in error_of(d)


def test_single_bracket_load_table():
    text = VALID_TOML.replace('[[load]]\ntype = "area"\nvalue = 1.5\nfactored = false\nname = "finishes"\n', "")
    text = text.replace("[[load]]", "[load]")
    with pytest.raises(ModelError, match=r"\[\[load\]\]") as info:
        model_from_toml(text)
    assert "double brackets" in str(info.value)


@pytest.mark.parametrize("value", [0, -2.5, float("nan"), float("inf")])
def test_bad_load_value(value):
    d = base()
    d["load"].append({"type": "area", "value": value, "name": "wind"})
    msg = error_of(d)
    assert "load[2].value" in msg and '"wind"' in msg


def test_missing_load_value():
    d = base()
    del d["load"][0]["value"]
    assert "load[1] has no value" in error_of(d)


def test_unknown_load_type():
    d = base()
    d["load"].append({"type": "snow", "value": 3.0})
    msg = error_of(d)
    assert "load[2].type" in msg and '"snow"' in msg and 'available load types: "area"' in msg


def test_missing_load_type():
    d = base()
    del d["load"][0]["type"]
    msg = error_of(d)
    assert "load[1] has no type" in msg and '"area"' in msg


def test_no_factored_load():
    d = base()
    d["load"][0]["factored"] = False
    d["load"].append({"type": "area", "value": 1.0, "factored": False})
    assert "factored = true" in error_of(d)


def test_duplicate_load_names():
    d = base()
    d["load"] = [{"type": "area", "value": 1.0}, {"type": "area", "value": 2.0, "name": "load 1"}]
    msg = error_of(d)
    assert "load[2]" in msg and "load[1]" in msg and '"load 1"' in msg


# --- regions ---------------------------------------------------------------------------------


def test_region_sharing_the_slab_edge_is_valid():
    d = base()
    d["load"][0]["region"] = RECT
    np.testing.assert_array_equal(parse_model(d).loads[0].region, RECT)


def test_region_partly_outside():
    d = base()
    d["load"].append({"type": "area", "value": 1.0, "region": [[6, 4], [8, 4], [8, 5], [6, 5]]})
    msg = error_of(d)
    assert "load[2].region" in msg and "partly outside" in msg


def test_region_wholly_outside():
    d = base()
    d["load"][0]["region"] = [[10, 10], [11, 10], [11, 11], [10, 11]]
    msg = error_of(d)
    assert "load[1].region" in msg and "wholly outside" in msg


def test_region_overlapping_opening_names_load_and_opening():
    d = base()
    d["slab"]["opening"] = [{"polygon": [[5, 4], [6, 4], [6, 5], [5, 5]]}, {"polygon": HOLE}]
    d["load"].append({"type": "area", "value": 1.0, "name": "storage", "region": [[0, 0], [2, 0], [2, 2], [0, 2]]})
    msg = error_of(d)
    assert "load[2].region" in msg and '"storage"' in msg and "slab.opening[2]" in msg


def test_region_touching_opening_is_valid():
    d = base()
    d["slab"]["opening"] = [{"polygon": HOLE}]
    d["load"][0]["region"] = [[0, 0], [1, 0], [1, 2], [0, 2]]  # shares the opening's left side
    assert parse_model(d).loads[0].region is not None


# --- cases ---------------------------------------------------------------------------------------


def with_cases(cases) -> dict:
    d = base()
    d["load"] = [{"type": "area", "value": 5.0, "name": "imposed"},
                 {"type": "area", "value": 1.5, "name": "finishes", "factored": False}]
    d["case"] = cases
    return d


def test_model_for_case_keeps_only_the_case_loads():
    m = parse_model(with_cases([{"loads": ["imposed"]}, {"name": "all", "loads": ["finishes", "imposed"]}]))
    first, both = m.cases
    assert first.name == "case 1" and first.loads == ("imposed",)
    one = model_for_case(m, first)
    assert [ld.name for ld in one.loads] == ["imposed"] and one.cases == ()
    assert [ld.name for ld in model_for_case(m, both).loads] == ["imposed", "finishes"]   # file order


@pytest.mark.parametrize(
    "cases, expected",
    [
        ({"loads": ["imposed"]}, "case must be a list of tables: write each load case as [[case]]"),
        ([{"name": "a", "loads": ["imposed"]}, {"name": "a", "loads": ["imposed"]}],
         "case[2].name must be text in quotes, different for every case"),
        ([{"name": "a"}], "case[1] (\"a\") needs loads = "),
        ([{"name": "a", "loads": ["imposed", "snow"]}], "refers to load \"snow\""),
        ([{"name": "a", "loads": ["finishes"]}], "case[1] (\"a\") has no factored load"),
    ],
)
def test_bad_cases(cases, expected):
    assert expected in error_of(with_cases(cases))
