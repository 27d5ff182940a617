"""Calculation record (hingeline report): content, work balance, CLI, and a rendered page.

The model below is an invented test scenario (an L-shaped slab with an opening and
one free edge); its numbers are not check values for the analysis. The tests check
that the record states what the solve found and that its work equation balances.
"""
from __future__ import annotations

import dataclasses
import os
import re
import shutil
import subprocess
from html.parser import HTMLParser

import numpy as np
import pytest

from hingeline._cli.main import main
from hingeline.model import model_from_toml
from hingeline.outputs.record import build_report, report_data, write_report
from hingeline.result import CAUTIONS

L_SLAB = """\
# Invented test model: L-shaped landing slab with a service opening and one free edge.
title = "Test L-slab <b>bold</b> & co"

[slab]
outline = [[0.0, 0.0], [6.0, 0.0], [6.0, 3.0], [3.0, 3.0], [3.0, 5.0], [0.0, 5.0]]
edges = ["continuous", "simple", "simple", "free", "simple", "simple"]
thickness = 0.18

[[slab.opening]]
polygon = [[1.0, 1.0], [2.0, 1.0], [2.0, 1.8], [1.0, 1.8]]

[capacity]
sagging = 16.0
hogging = 20.0

[[load]]
type = "area"
name = "imposed office"
value = 4.5

[[load]]
type = "area"
name = "plant patch"
value = 3.0
region = [[4.0, 0.5], [5.5, 0.5], [5.5, 2.5], [4.0, 2.5]]

[[load]]
type = "area"
name = "self weight"
value = 6.0
scaled = false

[analysis]
nodes = 150
"""


class _Values(HTMLParser):
    """Collect data-value attributes, keyed by (table id or element id, row, column)."""

    def __init__(self):
        super().__init__()
        self.table = None
        self.row = -1
        self.values: dict[str, list[list[float]]] = {}
        self.ids: dict[str, float] = {}

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "table":
            self.table = a.get("id")
            self.values.setdefault(self.table, [])
        elif tag == "tr" and self.table is not None:
            self.values[self.table].append([])
        elif "data-value" in a:
            if tag == "td" and self.table is not None:
                self.values[self.table][-1].append(float(a["data-value"]))
            if "id" in a:
                self.ids[a["id"]] = float(a["data-value"])

    def handle_endtag(self, tag):
        if tag == "table":
            self.table = None


def _rows(values, table):
    return [r for r in values.values[table] if r]


@pytest.fixture(scope="module")
def coarse_report(tmp_path_factory):
    model = model_from_toml(L_SLAB, source="L-slab")
    out = tmp_path_factory.mktemp("report")
    path = write_report(model, out, nodes=150)
    return model, path, path.read_text(encoding="utf-8")


def test_report_states_load_factor_loads_and_cautions(coarse_report):
    model, path, text = coarse_report
    assert path.name == "report.html"
    v = _Values()
    v.feed(text)
    lf = v.ids["load-factor"]
    assert np.isfinite(lf) and lf > 0
    assert f"{lf:#.4g}" in text
    assert "upper bound" in text
    for load in model.loads:
        assert f"<td>{load.name}</td>" in text
    for caution in CAUTIONS:
        assert caution in text
    # every edge condition and the opening are listed
    assert text.count("<td>free</td>") == 1 and text.count("<td>continuous</td>") == 1
    assert "(1.000, 1.000), (2.000, 1.000), (2.000, 1.800), (1.000, 1.800)" in text
    # self-contained: drawings embedded, no scripts, nothing fetched from elsewhere
    import base64
    uris = re.findall(r'src="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"', text)
    assert len(uris) >= 1
    assert all(b"<path" in base64.b64decode(u) for u in uris)
    assert "<script" not in text.lower()
    assert not re.search(r'(src|href)="(?!data:)', text)
    # user text is escaped: the title's markup appears as text, not as tags
    assert "Test L-slab &lt;b&gt;bold&lt;/b&gt; &amp; co" in text
    assert "<b>bold</b>" not in text


def test_report_lower_bound_section(coarse_report):
    _, _, text = coarse_report
    assert "<h2>7. Lower bound</h2>" in text
    assert text.index("6. Warnings and independent check") < text.index("7. Lower bound") < text.index("8. Cautions")
    v = _Values()
    v.feed(text)
    lf, lower, gap = v.ids["load-factor"], v.ids["lower-bound"], v.ids["gap"]
    assert 0 < lower <= lf * (1 + 1e-6)
    assert gap == pytest.approx((lf - lower) / lf, rel=1e-9)
    assert f"λ<sub>lower</sub> = {lower:#.5g}" in text and f"{100 * gap:.1f} %" in text
    check = _rows(v, "lower-bound-check")            # one row per quantity of the re-check
    assert len(check) == 8
    relative, ratio, ratio_points = check[5][0], check[6][0], check[7][0]
    assert relative <= 1e-6 and ratio <= 1.0 and ratio_points <= ratio + 1e-9
    assert "Krabbenhoft and Damkilde" in text and "Nielsen and Hoang" in text
    # the template's own markup (subscripts in the re-check table) is printed as markup, not escaped
    assert "normal moment m<sub>n</sub> across a side" in text and "&lt;sub&gt;" not in text
    section = text[text.index("7. Lower bound"):text.index("8. Cautions")]
    assert 'alt="Utilisation of the lower-bound moment field" src="data:image/svg+xml;base64,' in section


def test_report_work_equation_balances(coarse_report):
    model, _, text = coarse_report
    v = _Values()
    v.feed(text)
    lf = v.ids["load-factor"]
    internal_rows = _rows(v, "internal-work")       # three groups, then their sum
    assert len(internal_rows) == 4
    groups = [r[0] for r in internal_rows[:3]]
    internal = internal_rows[3][0]
    assert sum(groups) == pytest.approx(internal, abs=1e-6)
    external_rows = _rows(v, "external-work")       # one per load, then factored and held sums
    assert len(external_rows) == len(model.loads) + 2
    per_load = [r[0] for r in external_rows[: len(model.loads)]]
    factored, held = external_rows[-2][0], external_rows[-1][0]
    assert factored == pytest.approx(sum(w for w, ld in zip(per_load, model.loads) if ld.factored), abs=1e-9)
    assert held == pytest.approx(sum(w for w, ld in zip(per_load, model.loads) if not ld.factored), abs=1e-9)
    assert held > 0                                   # the held load does work on a falling slab
    # the printed work equation: internal = held + load factor x factored
    assert internal == pytest.approx(held + lf * factored, abs=1e-6)
    # normalisation: the scaled loads do 1 kNm of work
    assert factored == pytest.approx(1.0, abs=1e-6)


def test_report_data_matches_the_result():
    model = model_from_toml(L_SLAB, source="L-slab")
    from hingeline import solve

    res = solve(model, nodes=150)
    data = report_data(model, res)
    bal = data["balance"]
    assert [r["nodes"] for r in data["refinement"]] == [res.stats.slab_nodes]
    assert bal["internal_sum"] == pytest.approx(res.work.internal, abs=1e-6)
    assert bal["internal"] == pytest.approx(bal["held"] + res.load_factor * bal["factored"], abs=1e-6)
    assert bal["factored"] == pytest.approx(res.work.factored, abs=1e-6)
    assert bal["held"] == pytest.approx(res.work.held, abs=1e-6)
    # a continuous edge is present and the mechanism hinges along it
    assert bal["groups"][2][1] > 0 and bal["groups"][2][2] > 0
    html_text = build_report(model, res, generated="test")
    assert "One mesh was solved" in html_text
    lb = data["lower_bound"]
    assert lb["load_factor"] == res.lower_bound.load_factor and lb["gap"] == pytest.approx(res.gap)
    # without a lower bound the section says why, and draws no utilisation plot
    for lower, says in ((None, "not computed"),
                        (dataclasses.replace(res.lower_bound, load_factor=None, reason="invented test reason"),
                         "No lower bound: invented test reason")):
        page = build_report(model, dataclasses.replace(res, lower_bound=lower), generated="test")
        section = page[page.index("7. Lower bound"):page.index("8. Cautions")]
        assert says in section and 'id="lower-bound"' not in section and "<img" not in section


def test_cli_report_writes_page_and_refinement_table(tmp_path, capsys):
    model_path = tmp_path / "l.toml"
    model_path.write_text(L_SLAB.replace("[analysis]\nnodes = 150\n", ""), encoding="utf-8")   # refined
    out = tmp_path / "out"
    # A gap the first step alone does not reach (about 8 % there), so the mesh is refined at least once.
    assert main(["report", str(model_path), "-o", str(out), "--gap", "0.03", "--time-limit", "15"]) == 0
    page = out / "report.html"
    assert page.is_file()
    assert str(page) in capsys.readouterr().out
    v = _Values()
    v.feed(page.read_text(encoding="utf-8"))
    steps = _rows(v, "refinement")                  # one row per mesh: upper and lower bound
    assert len(steps) >= 2
    assert all(np.isfinite(r[0]) and r[0] > 0 for r in steps)
    # each step's lower bound sits beside its upper bound, and below it
    assert all(0 < r[1] <= r[0] for r in steps)
    assert "Both bounds against nodes" in page.read_text(encoding="utf-8")
    assert list(out.iterdir()) == [page]            # no temporary files left


def test_cli_report_bad_input_names_item_and_writes_nothing(tmp_path, capsys):
    model_path = tmp_path / "bad.toml"
    model_path.write_text(L_SLAB.replace("value = 4.5", "value = -4.5"), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["report", str(model_path), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error:") and "load[1].value" in err
    assert not out.exists()


def test_cli_report_unwritable_folder_exit_2(tmp_path, capsys):
    model_path = tmp_path / "l.toml"
    model_path.write_text(L_SLAB, encoding="utf-8")
    blocker = tmp_path / "taken"
    blocker.write_text("a file where the folder should go", encoding="utf-8")
    assert main(["report", str(model_path), "-o", str(blocker), "--nodes", "150"]) == 2
    assert "output folder" in capsys.readouterr().err
    assert blocker.read_text(encoding="utf-8") == "a file where the folder should go"


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return None


def test_report_renders_in_headless_chromium(coarse_report, tmp_path):
    browser = _chromium()
    if browser is None:
        if os.environ.get("CI"):
            pytest.fail("chromium is not installed; CI must install the Debian packages chromium and chromium-driver")
        pytest.skip("chromium not installed (install Debian packages chromium, chromium-driver)")
    _, page, _ = coarse_report
    png = tmp_path / "page.png"
    cmd = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1200,2000",
           f"--screenshot={png}", page.resolve().as_uri()]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert png.is_file(), f"no screenshot (exit {proc.returncode}): {proc.stderr[-2000:]}"
    import matplotlib.image as mpimg

    img = mpimg.imread(png)                          # floats 0..1, (h, w, 3 or 4)
    assert img.shape[0] >= 1000 and img.shape[1] >= 1000
    rgb = np.round(img[..., :3] * 255).astype(np.uint8)
    non_white = np.any(rgb < 245, axis=2)
    assert non_white.mean() > 0.05                   # text, tables, boxes and the drawing
    colours = np.unique(rgb.reshape(-1, 3), axis=0)
    assert len(colours) > 50
    # the page's colours render (CSS applied): dark red of the caution box, dark blue of the headings
    for colour in ([0x8C, 0x1C, 0x13], [0x1B, 0x3F, 0x8B]):
        assert (np.abs(rgb.astype(int) - colour).sum(axis=2) < 40).sum() > 200


def test_the_record_reports_the_best_bound_of_each_kind():
    """Every step's upper bound is an upper bound and every proven lower bound a lower bound,
    so the record's headline is the lowest upper bound and its lower bound the highest one."""
    from hingeline import solve

    model = model_from_toml(L_SLAB.replace("[analysis]\nnodes = 150\n", ""), source="L-slab")
    res = solve(model, gap=0.005, time_limit=5)
    steps = res.refinement
    assert res.load_factor == min(st.load_factor for st in steps)
    assert res.lower_bound.load_factor == max(st.lower_bound for st in steps if st.lower_bound is not None)
    page = build_report(model, res, generated="test")
    assert "(upper reported)" in page and "(lower reported)" in page
