"""Load cases and self-weight."""
import pytest

import hingeline
from hingeline._cli.main import main

MODEL = """
title = "Two-bay strip with pattern loading (test)"
[slab]
outline = [[0, 0], [8, 0], [8, 3], [0, 3]]
edges = "simple"
thickness = 0.2
[[wall]]
path = [[4.0, 0.0], [4.0, 3.0]]
connection = "monolithic"
[capacity]
sagging = 12.0
hogging = 12.0
[[load]]
type = "self_weight"
scaled = false
[[load]]
type = "area"
name = "imposed left"
value = 5.0
region = [[0, 0], [3.9, 0], [3.9, 3], [0, 3]]
[[load]]
type = "area"
name = "imposed right"
value = 5.0
region = [[4.1, 0], [8, 0], [8, 3], [4.1, 3]]
[[case]]
name = "both bays"
loads = ["self weight", "imposed left", "imposed right"]
[[case]]
name = "left bay only"
loads = ["self weight", "imposed left"]
[analysis]
nodes = 150
"""


def test_self_weight_is_unit_weight_times_thickness():
    # 25 kN/m^3 for reinforced concrete (common practice, no source) x 0.2 m = 5.0 kPa.
    m = hingeline.model_from_toml(MODEL)
    sw = [ld for ld in m.loads if ld.name == "self weight"][0]
    assert sw.value == pytest.approx(5.0) and not sw.factored
    m2 = hingeline.model_from_toml(MODEL.replace('type = "self_weight"', 'type = "self_weight"\nunit_weight = 24.0'))
    assert [ld for ld in m2.loads if ld.name == "self weight"][0].value == pytest.approx(4.8)
    with pytest.raises(hingeline.ModelError, match="thickness"):
        hingeline.model_from_toml(MODEL.replace("thickness = 0.2", ""))


def test_cases_are_solved_and_the_lowest_governs():
    # Every case is solved; the governing case is the one with the lowest load factor (definition),
    # and its result (the case's own loads) carries a certificate that re-checks.
    r = hingeline.solve_cases(hingeline.model_from_toml(MODEL))
    table = dict(r.cases)
    assert set(table) == {"both bays", "left bay only"}
    assert r.load_factor == min(table.values()) and table[r.case] == r.load_factor
    assert r.certificate.load_factor == pytest.approx(r.load_factor, rel=1e-6)
    # Every case carries its own lower bound, below its own load factor (the two theorems
    # per case); the governing result's lower bound is its case's.
    lowers = dict(zip(table, r.case_lower_bounds))
    assert all(0 < lowers[n] <= table[n] * (1 + 1e-6) for n in table)
    assert lowers[r.case] == r.lower_bound.load_factor


@pytest.mark.parametrize("case, item", [
    ('[[case]]\nname = "x"\nloads = ["nothing"]', 'refers to load "nothing"'),
    ('[[case]]\nname = "x"\nloads = ["self weight"]', "no scaled load"),
])
def test_bad_cases(case, item):
    text = MODEL.split("[[case]]")[0] + case + "\n[analysis]\nnodes = 150\n"
    with pytest.raises(hingeline.ModelError, match=item):
        hingeline.model_from_toml(text)


def test_cli_prints_the_case_table(tmp_path, capsys):
    path = tmp_path / "cases.toml"
    path.write_text(MODEL)
    assert main(["solve", str(path), "-o", str(tmp_path / "out")]) == 0
    out = capsys.readouterr().out
    assert "'left bay only'" in out and "governs" in out


def test_report_names_every_case(tmp_path):
    from hingeline.outputs.record import write_report

    page = write_report(hingeline.model_from_toml(MODEL), tmp_path, nodes=150).read_text()
    assert "both bays" in page and "left bay only" in page
