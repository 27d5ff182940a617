"""Load factors printed and plotted in significant digits, the mm warning on screen, and one
test of certificate agreement behind the solver's warning, the summary and `verify`.

The slab is the simply supported isotropic 6 x 4.5 m rectangle (m = m' = 20 kNm/m, 1 kPa) with
its coordinates typed in mm (6000 x 4500): Johansen's formula q = 24 m / (a^2 (sqrt(3 + (a/b)^2)
- a/b)^2) (any yield-line text) then gives a load factor near 1.4e-5, which fixed decimals print
as 0.000.
"""
import io
import sys
from dataclasses import replace

import pytest
from unit_slabs import johansen_rectangle, model

import hingeline
from hingeline._cli.report import print_summary
from hingeline.outputs.plots import plot_pattern
from hingeline.outputs.result_json import certificate_agrees
from hingeline.result import load_factor_text
from hingeline.verify import Verification

MM_OUTLINE = [[0, 0], [6000, 0], [6000, 4500], [0, 4500]]


@pytest.fixture(scope="module")
def mm_result():
    return hingeline.solve(model(MM_OUTLINE, "simple", sagging=20.0, hogging=20.0), lower_bound=False)


def test_tiny_load_factor_in_significant_digits(mm_result):
    lf = mm_result.load_factor
    exact = johansen_rectangle(4500.0, 6000.0, m=20.0)     # Johansen, about 1.4e-5 (q = 1 kPa)
    assert exact * (1 - 1e-3) <= lf <= exact * 1.01
    title = plot_pattern(mm_result).get_title()
    assert f"load factor = {lf:#.4g}" in title and "0.000" not in title
    out = io.StringIO()
    print_summary(mm_result, [], out=out)
    text = out.getvalue()
    assert f"load factor = {lf:#.5g}" in text and "load factor = 0.0000" not in text
    # the mm warning is shown on screen
    assert "warning" in text and "typed in mm" in text


def test_load_factor_text():
    assert load_factor_text(1.5) == "1.5000"
    assert load_factor_text(0.00054321) == "0.00054321"
    assert load_factor_text(24.0, 4) == "24.00"


def test_one_agreement_test_for_warning_summary_and_verify(monkeypatch):
    # A load factor of 0.01 and a re-check off by 2e-6 of it (2e-8 absolute) disagree: the
    # tolerance is relative to the load factor, whatever its size, in all three places.
    solve_module = sys.modules["hingeline.solve"]
    real = solve_module.check_mechanism

    def off(model, mech):
        chk = real(model, mech)
        return replace(chk, load_factor=chk.load_factor * (1 + 2e-6))

    monkeypatch.setattr(solve_module, "check_mechanism", off)
    r = hingeline.solve(model([[0, 0], [6, 0], [6, 4.5], [0, 4.5]], "simple", sagging=0.01, hogging=0.01),
                        lower_bound=False)
    assert r.load_factor < 0.02
    assert any(w.startswith("certificate check disagrees") for w in r.warnings)
    assert not certificate_agrees(r)
    out = io.StringIO()
    print_summary(r, [], out=out)
    assert "DOES NOT AGREE" in out.getvalue()
    w_max = float(abs(r.mechanism.w).max())
    assert not Verification(r.load_factor, r.certificate, None, None, None, None, w_max).upper_agrees
    good = replace(r.certificate, load_factor=r.load_factor * (1 + 5e-7))
    assert Verification(r.load_factor, good, None, None, None, None, w_max).upper_agrees
