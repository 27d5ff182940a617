"""Tests of model.capacity: the [capacity] section given as moment capacities (bar schedules:
test_eurocode.py).

All geometry and values here are invented for testing the parsing and validation
mechanics only; no engineering result is checked.
"""
from __future__ import annotations

import pytest
from model_inputs import base, error_of

from hingeline.model import parse_model


def test_scalar_and_pair_capacities():
    d = base()
    d["capacity"] = {"sagging": [30, 12.5], "hogging": [0, 18]}
    m = parse_model(d)
    assert m.capacity.sagging == (30.0, 12.5)
    assert m.capacity.hogging == (0.0, 18.0)
    assert all(isinstance(v, float) for v in m.capacity.sagging + m.capacity.hogging)


def test_zero_hogging_is_valid():
    d = base()
    d["capacity"]["hogging"] = 0
    assert parse_model(d).capacity.hogging == (0.0, 0.0)


def test_zero_sagging_with_hogging_is_valid():
    d = base()
    d["capacity"] = {"sagging": 0, "hogging": 10}
    assert parse_model(d).capacity.sagging == (0.0, 0.0)


@pytest.mark.parametrize(
    "capacity, expected",
    [
        ({"sagging": -5.0}, "capacity.sagging is -5"),
        ({"sagging": [20, -1]}, "capacity.sagging[2] is -1"),
        ({"sagging": 20, "hogging": -3}, "capacity.hogging is -3"),
        ({"sagging": 20, "hogging": [float("inf"), 3]}, "capacity.hogging[1]"),
        ({"sagging": float("nan")}, "capacity.sagging"),
    ],
)
def test_bad_capacity_value(capacity, expected):
    d = base()
    d["capacity"] = capacity
    assert expected in error_of(d)


@pytest.mark.parametrize("capacity", [{"sagging": 0}, {"sagging": [0, 0], "hogging": 0}, {"sagging": 0, "hogging": [0, 0]}])
def test_no_positive_capacity(capacity):
    d = base()
    d["capacity"] = capacity
    assert "no positive capacity" in error_of(d)


# --- bar schedules (the capacities themselves: test_eurocode.py) ----------------------------------


def with_bars(**changes) -> dict:
    d = base()
    d["slab"]["thickness"] = 0.2
    bars = {"concrete": "C30/37", "steel": "B500B", "bottom_1": {"diameter": 12, "spacing": 150, "cover": 25}}
    bars.update(changes)
    d["capacity"] = {"bars": {k: v for k, v in bars.items() if v is not None}}
    return d


def test_bar_schedule_gives_sagging_in_direction_1_only():
    cap = parse_model(with_bars()).capacity
    assert cap.sagging[0] > 0 and cap.sagging[1] == 0.0 and cap.hogging == (0.0, 0.0)
    assert [layer.name for layer in cap.bars] == ["bottom_1"]


@pytest.mark.parametrize(
    "changes, expected",
    [
        ({"bottom_1": None}, "[capacity.bars] has no bottom bars"),
        ({"steel": None}, "[capacity.bars] has no steel"),
        ({"gamma_c": 0}, "capacity.bars.gamma_c = 0 must be > 0"),
        ({"top_1": {"diameter": 10, "cover": 25}}, "capacity.bars.top_1 has no spacing"),
        ({"top_1": {"diameter": 10, "spacing": 0, "cover": 25}}, "capacity.bars.top_1.spacing = 0 mm must be > 0"),
        ({"top_1": {"diameter": 10, "spacing": 200, "cover": -5}},
         "capacity.bars.top_1.cover = -5 mm must not be negative"),
        ({"top_1": 10}, "capacity.bars.top_1 must be a table"),
    ],
)
def test_bad_bar_schedule(changes, expected):
    assert expected in error_of(with_bars(**changes))


def test_bar_schedule_needs_the_slab_thickness():
    d = with_bars()
    del d["slab"]["thickness"]
    assert "[capacity.bars] needs the slab thickness" in error_of(d)


def test_bars_and_moment_capacities_together_are_refused():
    d = with_bars()
    d["capacity"]["sagging"] = 20.0
    assert "gives both bars and sagging/hogging" in error_of(d)
