"""Checks applied to every solve in the suite.

On every model the suite solves, the lower bound must not exceed the load factor
(the lower-bound and upper-bound theorems bracket the same collapse factor; a violation is a
bug in one of the two), and the field behind it must re-check as in equilibrium and inside
the capacities (fieldcheck.py). Wrapping the solver's lower-bound step applies this to every
test model, not only to the ones written for the lower bound.
"""
import sys

import pytest

import hingeline  # noqa: F401  (loads hingeline.solve)

_solve_module = sys.modules["hingeline.solve"]
_original = _solve_module.lower_bound_on_mesh
LOWER_BOUNDS_SEEN = []


def _checked(model, domain, mesh, upper, warnings):
    lb = _original(model, domain, mesh, upper, warnings)
    if lb.load_factor is not None:
        assert lb.load_factor <= upper * (1 + 1e-6), (
            f"lower bound {lb.load_factor} above the load factor {upper} for {model.title!r}")
        assert lb.check.in_equilibrium, lb.check
        assert lb.check.yield_ratio <= 1.0 and lb.check.yield_ratio_points <= 1.0, lb.check
    LOWER_BOUNDS_SEEN.append((model.title, upper, lb.load_factor))
    return lb


@pytest.fixture(autouse=True)
def _every_lower_bound_below_upper(monkeypatch):
    monkeypatch.setattr(_solve_module, "lower_bound_on_mesh", _checked)
