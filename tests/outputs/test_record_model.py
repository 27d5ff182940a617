"""The calculation record's head, model section, solver status, numbered yield lines and the
appendix with the model file.

The models are invented test scenarios. Check values: the SHA-256 of the model file is
computed by hashlib from its bytes; the one-way slab (two opposite edges simply supported, two
free) collapses at q = 8 m / L^2, the plastic moment of a simply supported beam (q L^2 / 8 = m);
the units are those of docs/model-format.md.
"""
from __future__ import annotations

import dataclasses
import hashlib
import html
import re

import numpy as np
import pytest

from hingeline.model import model_from_toml, read_model
from hingeline.outputs.record import build_report
from hingeline.cases import solve_cases
from hingeline.outputs.record_model import method_items, model_tables
from hingeline.outputs.record_tables import lower_bound_table, status_words

FULL = """\
# Invented test model: <b>not bold</b> & co
title = "Record test bay"

[project]
job = "Reading room <extension>"
reference = "CALC-007"
revision = "C"
prepared_by = "A. Engineer"
checked_by = "B. Checker"

[slab]
outline = [[0.0, 0.0], [6.0, 0.0], [6.0, 4.0], [0.0, 4.0]]
edges = ["simple", {runs = [{type = "free", to = 1.5}, {type = "simple", to = 3.0}, {type = "free"}]},
         {type = "continuous", fixity = 0.6}, "continuous"]
thickness = 0.2

[capacity]
bar_angle = 0.0
[capacity.bars]
concrete = "C30/37"
steel = "B500B"
gamma_c = 1.5
gamma_s = 1.15
alpha_cc = 0.85
bottom_1 = {diameter = 12, spacing = 150, cover = 25}
bottom_2 = {diameter = 10, spacing = 200, cover = 37}
top_1 = {diameter = 10, spacing = 200, cover = 25}

[[load]]
type = "area"
name = "imposed"
value = 5.0

[[load]]
type = "line"
name = "partition"
value = 4.0
path = [[1.0, 2.0], [5.0, 2.0]]

[[load]]
type = "point"
name = "plant"
value = 12.0
at = [3.0, 1.0]

[[load]]
type = "self_weight"
unit_weight = 25.0
scaled = false

[[case]]
name = "all loads"
loads = ["imposed", "partition", "plant", "self weight"]

[[case]]
name = "no plant"
loads = ["imposed", "partition", "self weight"]

[analysis]
nodes = 150
"""

SQUARE = """\
title = "Simply supported square"
[slab]
outline = [[0.0, 0.0], [4.0, 0.0], [4.0, 4.0], [0.0, 4.0]]
edges = "simple"
[capacity]
sagging = 10.0
[[load]]
type = "area"
value = 6.0
[analysis]
nodes = 150
"""


# 4 m span between the simply supported edges x = 0 and x = 4, free along y = 0 and y = 2
ONE_WAY = (SQUARE.replace("Simply supported square", "One-way strip").replace("[4.0, 4.0], [0.0, 4.0]", "[4.0, 2.0], [0.0, 2.0]")
           .replace('edges = "simple"', 'edges = ["free", "simple", "free", "simple"]'))


@pytest.fixture(scope="module")
def full_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("model") / "reading_room.toml"
    path.write_bytes(FULL.encode("utf-8"))
    return path


@pytest.fixture(scope="module")
def full_page(full_file):
    model = read_model(full_file)
    result = solve_cases(model, nodes=150)
    return model, result, build_report(model, result, generated="2026-01-01 00:00 UTC")


@pytest.fixture(scope="module")
def one_way():
    model = model_from_toml(ONE_WAY)
    result = solve_cases(model, nodes=150)
    return model, result, build_report(model, result)


def _text(fragment: str) -> str:
    return html.unescape(re.sub(r"<[^>]+>", " ", fragment))


def _table(page: str, table_id: str) -> list[list[str]]:
    body = page.split(f'id="{table_id}"', 1)[1].split("</table>", 1)[0]
    return [[_text(c).strip() for c in re.findall(r"<t[dh][^>]*>(.*?)</t[dh]>", row, re.S)]
            for row in re.findall(r"<tr[^>]*>(.*?)</tr>", body, re.S)]


# --- model section, without solving ----------------------------------------------------


def test_partial_fixity_is_shown_as_such():
    tables = model_tables(model_from_toml(FULL))
    conditions = {(e["number"], e["extent"]): e["condition"] for e in tables["edges"]}
    assert conditions[(3, "whole edge, 6.000 m")] == "continuous, fixity 0.6"
    assert conditions[(4, "whole edge, 4.000 m")] == "continuous"        # fixity 1: fully continuous


def test_runs_keep_the_edge_number_of_the_outline():
    tables = model_tables(model_from_toml(FULL))
    rows = tables["edges"]
    assert [r["number"] for r in rows] == [1, 2, 2, 2, 3, 4]              # the file's four edges
    runs = [(r["extent"], r["condition"]) for r in rows if r["number"] == 2]
    assert runs == [("run 1 of 3: 0.000 to 1.500 m", "free"), ("run 2 of 3: 1.500 to 3.000 m", "simple"),
                    ("run 3 of 3: 3.000 to 4.000 m", "free")]
    second = [r for r in rows if r["number"] == 2]
    assert second[0]["start"] == "(6.000, 0.000)" and second[0]["end"] == "(6.000, 1.500)"


def test_clockwise_outline_rows_run_as_written():
    text = FULL.replace("[[0.0, 0.0], [6.0, 0.0], [6.0, 4.0], [0.0, 4.0]]",
                        "[[0.0, 0.0], [0.0, 4.0], [6.0, 4.0], [6.0, 0.0]]")
    text = text.replace('path = [[1.0, 2.0], [5.0, 2.0]]', 'path = [[1.0, 2.0], [5.0, 2.0]]')
    rows = model_tables(model_from_toml(text))["edges"]
    first = rows[0]
    assert first["number"] == 1 and first["start"] == "(0.000, 0.000)" and first["end"] == "(0.000, 4.000)"
    run = [r for r in rows if r["number"] == 2][0]
    assert run["start"] == "(0.000, 4.000)" and run["end"] == "(1.500, 4.000)"


def test_bar_schedule_inputs_are_listed():
    tables = model_tables(model_from_toml(FULL))
    mat = dict(tables["materials"])
    assert mat["concrete"] == "C30/37" and mat["steel"] == "B500B"
    assert mat["γ_c"] == "1.50" and mat["γ_s"] == "1.15" and mat["α_cc"] == "0.85"
    layers = {lay["name"]: lay for lay in tables["layers"]}
    assert (layers["bottom_1"]["diameter"], layers["bottom_1"]["spacing"], layers["bottom_1"]["cover"]) == (
        "12", "150", "25")
    assert (layers["bottom_2"]["diameter"], layers["bottom_2"]["spacing"], layers["bottom_2"]["cover"]) == (
        "10", "200", "37")
    assert "top_1" in layers
    # capacities given in kNm/m: no bar schedule to list
    assert model_tables(model_from_toml(SQUARE))["materials"] == []


def test_each_load_carries_the_unit_of_its_type():
    loads = {ld["name"]: ld for ld in model_tables(model_from_toml(FULL))["loads"]}
    assert loads["imposed"]["unit"] == "kPa"
    assert loads["partition"]["unit"] == "kN/m"
    assert loads["plant"]["unit"] == "kN"
    sw = loads["self weight"]
    assert sw["unit"] == "kPa" and sw["value"] == "5.000"                  # 25 kN/m³ x 0.2 m
    assert "25.000 kN/m³ × 0.200 m" in sw["where"]


def test_partial_factors_are_listed_with_the_design_value():
    # gamma_G = 1.35 and gamma_Q = 1.5: EN 1990 Table A1.2(B); the record's value is gamma x value
    text = (FULL.replace('name = "imposed"\nvalue = 5.0', 'name = "imposed"\nvalue = 5.0\ngamma = 1.5')
            .replace("unit_weight = 25.0", "unit_weight = 25.0\ngamma = 1.35"))
    model = model_from_toml(text)
    loads = {ld["name"]: ld for ld in model_tables(model)["loads"]}
    assert (loads["imposed"]["gamma"], loads["imposed"]["value"]) == ("1.5", "7.500")
    assert (loads["self weight"]["gamma"], loads["self weight"]["value"]) == ("1.35", "6.750")   # 1.35 x 25 x 0.2
    assert loads["plant"]["gamma"] == "1"
    assert method_items(model)["gamma"] and not method_items(model_from_toml(FULL))["gamma"]


def test_load_cases_list_their_loads():
    cases = model_tables(model_from_toml(FULL))["cases"]
    assert cases == [{"name": "all loads", "loads": "imposed, partition, plant, self weight"},
                     {"name": "no plant", "loads": "imposed, partition, self weight"}]


def test_method_lists_only_what_the_model_has():
    items = method_items(model_from_toml(SQUARE))
    assert not items["columns"] and not items["zones"] and not items["continuous"]
    assert not items["free"] and not items["line_loads"] and not items["point_loads"]
    full = method_items(model_from_toml(FULL))
    assert full["continuous"] and full["free"] and full["line_loads"] and full["point_loads"]
    assert not full["columns"] and not full["zones"]


# --- the page ------------------------------------------------------------------------------


def test_head_names_project_and_file(full_page, full_file):
    model, _, page = full_page
    head = page.split("<h2>1. Model</h2>", 1)[0]
    for value in ("Reading room &lt;extension&gt;", "CALC-007", "A. Engineer", "B. Checker"):
        assert value in head
    assert "Revision" in head and ">C<" in head
    digest = hashlib.sha256(full_file.read_bytes()).hexdigest()
    assert "reading_room.toml" in head and digest in head


def test_appendix_holds_the_model_file_verbatim_and_escaped(full_page):
    _, _, page = full_page
    appendix = page.split('id="model-file"', 1)[1].split("</pre>", 1)[0]
    assert "&lt;b&gt;not bold&lt;/b&gt; &amp; co" in appendix and "<b>not bold" not in page
    body = appendix.split(">", 1)[1]
    assert html.unescape(body) == FULL


def test_work_table_gives_each_load_its_unit(full_page):
    _, result, page = full_page
    rows = _table(page, "external-work")
    header, loads = rows[0], {r[0]: r for r in rows[1:]}
    assert "kPa" not in header[1]
    assert loads["partition"][1].endswith("kN/m") and loads["plant"][1].endswith(" kN")
    assert loads["imposed"][1].endswith("kPa")


def test_page_has_case_loads_and_partial_fixity(full_page):
    _, _, page = full_page
    assert "continuous, fixity 0.6" in page
    assert "no plant" in page and "imposed, partition, self weight" in page
    assert "Columns and walls" not in page.split("<h2>2.", 1)[1].split("<h2>3.", 1)[0]


def test_method_section_names_columns_when_there_are_some():
    model = model_from_toml(SQUARE + '\n[[column]]\nat = [2.0, 2.0]\nsize = [0.3, 0.3]\nconnection = "pinned"\n')
    assert method_items(model)["columns"]


@pytest.mark.parametrize("status, words", [
    ("Solved", "met its tolerances"),
    ("AlmostSolved", "loosened tolerances"),
    ("MaxIterations", "iteration limit"),
    ("InsufficientProgress", "stopped making progress"),
    ("NumericalError", "numerical"),
    ("PrimalInfeasible", "no field"),
])
def test_solver_status_in_words(status, words):
    text = status_words(status)
    assert words in text
    if status != "Solved" and status != "PrimalInfeasible":
        assert "re-check" in text


def test_solver_status_says_how_the_re_check_ended():
    assert "stands only if the re-check passes" in status_words("AlmostSolved")
    assert "re-checked independently and passed" in status_words("AlmostSolved", True)
    assert "did not pass" in status_words("AlmostSolved", False)
    assert status_words("Solved", True) == status_words("Solved")        # nothing to add when solved


def test_lower_bound_table_explains_the_status(one_way):
    _, result, _ = one_way
    lb = dataclasses.replace(result.lower_bound, status="AlmostSolved")
    table = lower_bound_table(dataclasses.replace(result, lower_bound=lb))
    assert "loosened tolerances" in table["check"]["status_text"]
    assert "re-checked independently and passed" in table["check"]["status_text"]   # it did pass


def test_yield_line_table_matches_the_closed_form(one_way):
    model, result, page = one_way
    rows = _table(page, "yield-lines")[1:]
    assert [int(r[0]) for r in rows] == list(range(1, len(result.yield_lines) + 1))
    works = np.array([float(r[6]) for r in rows])
    shares = np.array([float(r[7]) for r in rows])
    # no held loads: the internal work of the normalised mechanism is the load factor, which for
    # the one-way strip is 8 m / (q L^2) = 8 x 10 / (6 x 16) = 0.8333 (simply supported beam);
    # the coarse mesh's upper bound lies at or a little above it
    assert works.sum() == pytest.approx(result.load_factor, rel=1e-6)
    assert 80 / 96 * (1 - 1e-6) <= works.sum() <= 80 / 96 * 1.03
    assert shares.sum() == pytest.approx(100.0, abs=0.05 * len(rows))
    for r in rows:
        (x0, y0), (x1, y1) = (tuple(map(float, re.findall(r"-?\d+\.\d+", c))) for c in (r[1], r[2]))
        assert float(r[3]) == pytest.approx(np.hypot(x1 - x0, y1 - y0), abs=1e-3)
        assert r[5] in ("sagging", "hogging", "hogging, along a support")
    assert works[0] >= works[-1]


def test_summary_on_screen_explains_a_status_short_of_solved(one_way):
    import io

    from hingeline._cli.report import print_summary

    _, result, _ = one_way
    for status, shown in (("Solved", False), ("AlmostSolved", True)):
        lb = dataclasses.replace(result.lower_bound, status=status)
        out = io.StringIO()
        print_summary(dataclasses.replace(result, lower_bound=lb), [], out=out)
        assert ("loosened tolerances" in out.getvalue()) is shown
