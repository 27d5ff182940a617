"""Output mechanics: result_to_dict, write_outputs, plot_pattern.

The Result objects here are built by hand (a 4 m x 4 m square slab with the
four-triangle pyramid mechanism: corners fixed, centre deflecting). They only
exercise the output code; they are not solver results. The work values are
nevertheless consistent: for a simply supported square of side a under a
uniform load q with isotropic moment m, the pyramid gives q = 24 m / a^2
(Johansen's yield-line theory; any yield-line text), i.e. load factor 1.5 m / q
for a = 4 m, which the fixture reproduces from its own line data.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest
from matplotlib.axes import Axes
from matplotlib.collections import LineCollection

from hingeline.outputs import result_json as output
from hingeline.model import Analysis, AreaLoad, Capacity, Model, Slab
from hingeline.outputs.result_json import certificate_agrees, result_to_dict, write_outputs
from hingeline.outputs.plots import plot_pattern
from hingeline.result import (
    CAUTIONS,
    CertificateCheck,
    Mechanism,
    Result,
    SolveStats,
    Work,
    YieldLines,
)

A = 4.0     # side, m
Q = 10.0    # factored area load, kPa
M = 20.0    # isotropic sagging capacity, kNm/m
MH = 15.0   # hogging capacity, kNm/m


def pyramid_result(continuous_bottom: bool = False, title: str = "hand-built square") -> Result:
    """Square 4 m x 4 m, pyramid mechanism; optionally edge 0 (y = 0) continuous."""
    corners = np.array([[0.0, 0.0], [A, 0.0], [A, A], [0.0, A]])
    edges = ("continuous", "simple", "simple", "simple") if continuous_bottom else ("simple",) * 4
    model = Model(
        slab=Slab(outline=corners, edges=edges, openings=(np.array([[2.8, 1.6], [3.4, 1.6], [3.4, 2.2], [2.8, 2.2]]),)),
        capacity=Capacity(sagging=(M, M), hogging=(MH, MH)),
        loads=(AreaLoad(value=Q, name="imposed"),),
        analysis=Analysis(nodes=150),
        title=title,
    )
    # normalise: factored work q * (a^2 / 3) * w_c = 1 kNm
    w_c = 3.0 / (Q * A * A)
    centre = np.array([A / 2, A / 2])
    theta = w_c / math.sqrt(2.0)            # rotation across each diagonal
    half_diag = A / math.sqrt(2.0)
    start = [c for c in corners]
    end = [centre] * 4
    rotation = [theta] * 4
    sagging = [True] * 4
    dissipation = [M * theta * half_diag] * 4
    at_support = [False] * 4
    if continuous_bottom:
        start.append(corners[0])
        end.append(corners[1])
        rotation.append(w_c / (A / 2))      # facet slope next to the edge
        sagging.append(False)
        dissipation.append(MH * (w_c / (A / 2)) * A)
        at_support.append(True)
    internal = float(np.sum(dissipation))
    stats = SolveStats(nodes=5, slab_nodes=5, candidate_lines=10, lp_lines=8, rounds=1,
                       max_violation=1.0, seconds=0.01, mesh_size=2.0)
    return Result(
        model=model,
        load_factor=internal,
        yield_lines=YieldLines(
            start=np.array(start), end=np.array(end), rotation=np.array(rotation),
            sagging=np.array(sagging), dissipation=np.array(dissipation), at_support=np.array(at_support),
        ),
        work=Work(internal=internal, factored=1.0, held=0.0),
        mechanism=Mechanism(
            vertices=np.vstack([corners, centre]),
            triangles=np.array([[0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4]]),
            w=np.array([0.0, 0.0, 0.0, 0.0, w_c]),
        ),
        stats=stats,
        certificate=CertificateCheck(load_factor=internal, internal=internal, factored=1.0, held=0.0,
                                     max_support_w=0.0),
        warnings=("hand-built test data",),
    )


def test_fixture_reproduces_closed_form_square():
    # q = 24 m / a^2 for the simply supported square (Johansen); lambda = 24 m / (a^2 q)
    assert pyramid_result().load_factor == pytest.approx(24.0 * M / (A * A * Q), rel=1e-12)


def test_result_to_dict_round_trips_through_json_exactly():
    res = pyramid_result(continuous_bottom=True)
    d = result_to_dict(res)
    back = json.loads(json.dumps(d))
    assert back == d
    assert back["load_factor"] == res.load_factor            # bit for bit
    assert back["mechanism"]["w"] == [float(x) for x in res.mechanism.w]
    assert back["mechanism"]["triangles"] == res.mechanism.triangles.tolist()


def test_result_to_dict_contents():
    res = pyramid_result(continuous_bottom=True)
    d = result_to_dict(res)
    assert d["title"] == "hand-built square"
    assert isinstance(d["hingeline_version"], str) and d["hingeline_version"]
    assert len(d["yield_lines"]) == 5
    senses = [line["sense"] for line in d["yield_lines"]]
    assert senses.count("sagging") == 4 and senses.count("hogging") == 1
    hog = d["yield_lines"][4]
    assert hog["start"] == [0.0, 0.0] and hog["end"] == [A, 0.0]
    assert hog["at_support"] is True
    assert hog["rotation"] == res.yield_lines.rotation[4]
    assert sum(line["dissipation"] for line in d["yield_lines"]) == pytest.approx(d["work"]["internal"])
    assert set(d["work"]) == {"internal", "factored", "held"}
    assert set(d["stats"]) == {"nodes", "slab_nodes", "candidate_lines", "lp_lines", "rounds",
                               "max_violation", "seconds", "mesh_size"}
    assert isinstance(d["stats"]["nodes"], int)
    assert set(d["certificate"]) == {"load_factor", "internal", "factored", "held", "max_support_w"}
    assert d["cautions"] == list(CAUTIONS)
    assert d["warnings"] == ["hand-built test data"]
    assert d["units"]["length"] == "m" and d["units"]["moment"] == "kNm/m" and d["units"]["work"] == "kNm"
    assert d["model"]["edges"] == ["continuous", "simple", "simple", "simple"]
    assert len(d["model"]["openings"]) == 1
    assert d["model"]["loads"][0] == {"type": "area", "name": "imposed", "value": Q, "region": None,
                                      "factored": True, "gamma": 1.0}


def test_result_names_project_and_model_file():
    # The fingerprint is hashlib's SHA-256 of the file's bytes (FIPS 180-4), as the model stores it.
    import dataclasses
    import hashlib

    from hingeline.model.types import Project, Source

    res = pyramid_result(continuous_bottom=True)
    assert result_to_dict(res)["source"] is None                       # built in memory, no file
    assert result_to_dict(res)["project"]["job"] == ""
    text = "title = 'bay'\n"
    model = dataclasses.replace(res.model, project=Project(job="Reading room", checked_by="B. Checker"),
                                source=Source("bay.toml", hashlib.sha256(text.encode()).hexdigest(), text))
    d = result_to_dict(dataclasses.replace(res, model=model))
    assert d["source"] == {"name": "bay.toml", "sha256": hashlib.sha256(b"title = 'bay'\n").hexdigest()}
    assert d["project"] == {"job": "Reading room", "reference": "", "revision": "", "prepared_by": "",
                            "checked_by": "B. Checker"}


def test_non_finite_floats_become_null():
    res = pyramid_result()
    stats = SolveStats(nodes=5, slab_nodes=5, candidate_lines=10, lp_lines=8, rounds=1,
                       max_violation=float("inf"), seconds=0.01, mesh_size=2.0)
    res = Result(model=res.model, load_factor=res.load_factor, yield_lines=res.yield_lines, work=res.work,
                 mechanism=res.mechanism, stats=stats, certificate=res.certificate)
    d = result_to_dict(res)
    assert d["stats"]["max_violation"] is None
    json.dumps(d, allow_nan=False)  # would raise on NaN/inf


def test_certificate_agrees():
    res = pyramid_result()
    assert certificate_agrees(res)
    off = CertificateCheck(load_factor=res.load_factor * 1.01, internal=0.0, factored=1.0, held=0.0,
                           max_support_w=0.0)
    bad = Result(model=res.model, load_factor=res.load_factor, yield_lines=res.yield_lines, work=res.work,
                 mechanism=res.mechanism, stats=res.stats, certificate=off)
    assert not certificate_agrees(bad)


def test_write_outputs_creates_json_and_both_plots(tmp_path):
    res = pyramid_result(continuous_bottom=True)
    outdir = tmp_path / "nested" / "out"
    paths = write_outputs(res, outdir)
    assert sorted(p.name for p in paths) == ["deflection.png", "mechanism.png", "pattern.png", "result.json"]
    data = json.loads((outdir / "result.json").read_text(encoding="utf-8"))
    assert data["load_factor"] == res.load_factor
    png = (outdir / "pattern.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert len(png) > 10_000
    defl = (outdir / "deflection.png").read_bytes()
    assert defl[:8] == b"\x89PNG\r\n\x1a\n" and len(defl) > 10_000
    assert defl != png
    # no temp files left
    assert sorted(p.name for p in outdir.iterdir()) == ["deflection.png", "mechanism.png", "pattern.png", "result.json"]


def test_write_outputs_other_formats(tmp_path):
    paths = write_outputs(pyramid_result(), tmp_path, formats=("svg", "pdf"))
    assert sorted(p.name for p in paths) == ["deflection.pdf", "deflection.svg", "mechanism.pdf", "mechanism.svg",
                                             "pattern.pdf", "pattern.svg", "result.json"]
    for stem in ("pattern", "deflection"):
        assert (tmp_path / f"{stem}.pdf").read_bytes()[:5] == b"%PDF-"
        assert b"<svg" in (tmp_path / f"{stem}.svg").read_bytes()[:2000]


def test_write_outputs_png_and_svg_are_the_same_plots(tmp_path):
    write_outputs(pyramid_result(), tmp_path, formats=("png", "svg"))
    assert sorted(p.name for p in tmp_path.iterdir()) == ["deflection.png", "deflection.svg", "mechanism.png",
                                                          "mechanism.svg", "pattern.png", "pattern.svg", "result.json"]
    # the contour plot's colour-bar label and the pattern's legend are in the SVG text
    assert b"w / w_max" in (tmp_path / "deflection.svg").read_bytes()
    assert b"sagging yield line" in (tmp_path / "pattern.svg").read_bytes()


def test_write_outputs_writes_nothing_when_the_second_plot_fails(tmp_path, monkeypatch):
    real = output._render_plot

    def fails_on_deflection(result, fmt, kind="pattern", *rest):
        if kind == "deflection":
            raise RuntimeError("rendering failed")
        return real(result, fmt, kind, *rest)

    monkeypatch.setattr(output, "_render_plot", fails_on_deflection)
    outdir = tmp_path / "out"
    with pytest.raises(RuntimeError):
        write_outputs(pyramid_result(), outdir, formats=("png", "svg"))
    assert not outdir.exists()


def test_write_outputs_rejects_unknown_format(tmp_path):
    with pytest.raises(ValueError, match="bmp"):
        write_outputs(pyramid_result(), tmp_path / "out", formats=("bmp",))
    assert not (tmp_path / "out").exists()


def test_write_outputs_writes_nothing_when_rendering_fails(tmp_path, monkeypatch):
    def broken(*args, **kwargs):
        raise RuntimeError("rendering failed")

    monkeypatch.setattr(output, "_render_plot", broken)
    outdir = tmp_path / "out"
    with pytest.raises(RuntimeError):
        write_outputs(pyramid_result(), outdir)
    assert not outdir.exists()


def _yield_line_collections(ax: Axes) -> dict[str, LineCollection]:
    return {c.get_label(): c for c in ax.collections
            if isinstance(c, LineCollection) and c.get_label().startswith("yield lines")}


def test_plot_pattern_draws_yield_lines_and_returns_axes():
    ax = plot_pattern(pyramid_result(continuous_bottom=True))
    assert isinstance(ax, Axes)
    yl = _yield_line_collections(ax)
    # the hogging line lies along the continuous edge: drawn as a hinge along a support
    assert set(yl) == {"yield lines (sagging)", "yield lines (hogging, along supports)"}
    assert len(yl["yield lines (sagging)"].get_segments()) == 4
    assert len(yl["yield lines (hogging, along supports)"].get_segments()) == 1
    # sagging and hogging differ in colour and in line style
    sag, hog = yl["yield lines (sagging)"], yl["yield lines (hogging, along supports)"]
    assert not np.allclose(sag.get_colors()[0], hog.get_colors()[0])
    assert sag.get_linestyle()[0] != hog.get_linestyle()[0]
    assert "load factor = " + f"{pyramid_result(True).load_factor:#.4g}" in ax.get_title()
    assert ax.get_xlabel() == "x (m)" and ax.get_ylabel() == "y (m)"
    assert ax.get_aspect() == 1.0
    assert ax.get_legend() is not None
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("sagging" in s for s in labels) and any("hogging" in s for s in labels)
    assert any("continuous" in s for s in labels) and any("simply supported" in s for s in labels)


def test_plot_pattern_line_weight_grows_with_rotation():
    ax = plot_pattern(pyramid_result(continuous_bottom=True))
    res = pyramid_result(continuous_bottom=True)
    yl = _yield_line_collections(ax)
    w_sag = yl["yield lines (sagging)"].get_linewidths()[0]
    w_hog = yl["yield lines (hogging, along supports)"].get_linewidths()[0]
    # each diagonal rotates more (w_c / sqrt 2) than the hogging line at the support (w_c / 2)
    assert res.yield_lines.rotation[0] > res.yield_lines.rotation[4]
    assert w_sag > w_hog


def test_plot_pattern_shades_deflection_with_colour_bar():
    ax = plot_pattern(pyramid_result())
    colour_bars = list(ax.child_axes)   # beside the plot, as tall as it
    assert len(colour_bars) == 1
    assert colour_bars[0].get_ylabel() == "w / w_max"   # the shading is w over its largest value


def test_plot_pattern_uses_given_axes():
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure()
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    assert plot_pattern(pyramid_result(), ax=ax) is ax
