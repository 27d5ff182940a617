"""Command line: exit codes, error messages, files written, printed summary.

Tests marked "fake solver" replace `hingeline.solve` with a stand-in returning a
hand-built Result (a fan of triangles over the model's outline) to exercise the
command-line mechanics only; their numbers mean nothing structurally. The last
two tests run the real solver end to end.
"""
from __future__ import annotations

import json
from importlib import resources
import math
import subprocess
import sys
import types
from pathlib import Path

import numpy as np
import pytest

from hingeline._cli import demo as demo_cmd
from hingeline._cli.main import main
from hingeline.errors import SolverError, UnstableSlabError
from hingeline.model import model_from_toml, read_model
from hingeline.result import CertificateCheck, Mechanism, Result, SolveStats, Work, YieldLines

REPO = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((REPO / "examples").glob("*.toml"))

GOOD_MODEL = """\
title = "CLI test slab"
[slab]
outline = [[0.0, 0.0], [5.0, 0.0], [5.0, 4.0], [0.0, 4.0]]
edges = "simple"
[capacity]
sagging = 20.0
hogging = 20.0
[[load]]
type = "area"
value = 6.0
[analysis]
nodes = 150
"""


def write_model(tmp_path: Path, text: str, name: str = "slab.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


# --- bad input: exit code 2, "error:" naming the item, nothing written -------


@pytest.mark.parametrize(
    "text, item",
    [
        (GOOD_MODEL.replace("sagging = 20.0", "saging = 20.0"), "saging"),
        (GOOD_MODEL.replace('edges = "simple"', 'edges = ["simple", "simple", "fixed", "simple"]'), "slab.edges"),
        (GOOD_MODEL.replace("value = 6.0", "value = -6.0"), "load[1].value"),
        (GOOD_MODEL.replace("[capacity]\nsagging = 20.0\nhogging = 20.0\n", ""), "capacity"),
        (GOOD_MODEL.replace("outline = [[0.0", "outline = [[0.0,"), "TOML"),
    ],
)
def test_bad_model_file_exit_2_names_item_writes_nothing(tmp_path, capsys, text, item):
    model = write_model(tmp_path, text)
    outdir = tmp_path / "out"
    code = main(["solve", str(model), "-o", str(outdir)])
    captured = capsys.readouterr()
    assert code == 2
    assert captured.err.startswith("error: ")
    assert item in captured.err
    assert "Traceback" not in captured.err
    assert captured.out == ""
    assert not (outdir / "result.json").exists()
    assert not outdir.exists()


def test_missing_model_file_exit_2(tmp_path, capsys):
    missing = tmp_path / "no_such_slab.toml"
    code = main(["solve", str(missing), "-o", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("error: ") and "no_such_slab.toml" in err
    assert not (tmp_path / "out").exists()


def test_usage_errors_exit_2(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    model = write_model(tmp_path, GOOD_MODEL)
    assert main([]) == 2                                              # no subcommand
    assert main(["solve", str(model)]) == 2                           # -o missing
    assert main(["solve", str(model), "-o", "x", "--nodes", "ultra"]) == 2
    assert main(["frobnicate"]) == 2
    err = capsys.readouterr().err
    assert "ultra" in err
    assert main(["solve", str(model), "-o", "x", "--gap", "2"]) == 2
    assert "--gap" in capsys.readouterr().err
    assert main(["solve", str(model), "-o", "x", "--mesh-size", "-0.2"]) == 2
    assert "--mesh-size must be > 0 m" in capsys.readouterr().err
    assert main(["solve", str(model), "-o", "x", "--mesh-size", "fine"]) == 2
    assert "--mesh-size must be a number" in capsys.readouterr().err
    assert not Path("x").exists()


def test_help_and_version_exit_0(capsys):
    assert main(["--help"]) == 0
    assert "solve" in capsys.readouterr().out
    assert main(["--version"]) == 0
    assert capsys.readouterr().out.startswith("hingeline ")


def test_python_dash_m_runs():
    proc = subprocess.run([sys.executable, "-m", "hingeline", "--version"], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith("hingeline ")


# --- bundled demo and examples are valid models --------------------------------


def test_bundled_demo_model_is_valid_and_as_described():
    model = model_from_toml(demo_cmd.demo_text(), source="demo model")
    assert model.title
    assert len(model.slab.outline) >= 5                   # not a rectangle
    assert len(model.slab.openings) >= 2
    assert {"simple", "continuous", "free"} <= set(model.slab.edges)
    assert model.capacity.sagging[0] != model.capacity.sagging[1]      # orthotropic
    assert max(model.capacity.hogging) > 0
    assert any(ld.factored for ld in model.loads) and any(not ld.factored for ld in model.loads)
    assert model.analysis.nodes is None and model.analysis.mesh_size is None   # refined adaptively
    assert model.analysis.target_gap == 0.03


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_examples_are_valid_models_with_header(path):
    assert path.read_text(encoding="utf-8").startswith("# Example (invented scenario)")
    model = read_model(path)
    assert model.title


def test_there_are_examples():
    assert len(EXAMPLES) >= 2


# --- fake solver: command-line mechanics -------------------------------------


def fan_result(model, rotation: float = 0.01) -> Result:
    """Hand-built stand-in Result: triangles fanned from the outline's mean point."""
    outline = np.asarray(model.slab.outline, dtype=float)
    n = len(outline)
    centre = outline.mean(axis=0)
    vertices = np.vstack([outline, centre])
    triangles = np.array([[k, (k + 1) % n, n] for k in range(n)])
    w = np.r_[np.zeros(n), 0.05]
    start, end = outline.copy(), np.repeat(centre[None, :], n, axis=0)
    length = np.hypot(*(end - start).T)
    dissipation = 20.0 * rotation * length
    internal = float(dissipation.sum())
    return Result(
        model=model,
        load_factor=internal,
        yield_lines=YieldLines(start=start, end=end, rotation=np.full(n, rotation), sagging=np.ones(n, bool),
                               dissipation=dissipation, at_support=np.zeros(n, bool)),
        work=Work(internal=internal, factored=1.0, held=0.0),
        mechanism=Mechanism(vertices=vertices, triangles=triangles, w=w),
        stats=SolveStats(nodes=n + 1, slab_nodes=n + 1, candidate_lines=2 * n, lp_lines=2 * n, rounds=2,
                         max_violation=1.0, seconds=0.5, mesh_size=1.0),
        certificate=CertificateCheck(load_factor=internal, internal=internal, factored=1.0, held=0.0,
                                     max_support_w=0.0),
        warnings=("stand-in result for a command-line test",),
    )


@pytest.fixture
def fake_solver(monkeypatch):
    """Install stand-in `hingeline.solve` and `hingeline.cases` modules; returns the list of calls made."""
    calls: list[dict] = []
    behaviour: dict = {"raise": None}

    def solve(model, nodes=None, mesh_size=None, lower_bound=True, gap=None, time_limit=None):
        calls.append({"model": model, "nodes": nodes, "mesh_size": mesh_size,
                      "lower_bound": lower_bound, "gap": gap, "time_limit": time_limit})
        if behaviour["raise"] is not None:
            raise behaviour["raise"]
        return fan_result(model)

    module = types.ModuleType("hingeline.solve")
    module.solve = solve
    monkeypatch.setitem(sys.modules, "hingeline.solve", module)
    cases = types.ModuleType("hingeline.cases")
    cases.solve_cases = solve  # the stand-in models have no load cases
    monkeypatch.setitem(sys.modules, "hingeline.cases", cases)
    return types.SimpleNamespace(calls=calls, behaviour=behaviour)


def test_solve_writes_outputs_and_prints_summary(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    outdir = tmp_path / "out"
    code = main(["solve", str(model), "-o", str(outdir), "--nodes", "1100"])
    out = capsys.readouterr().out
    assert code == 0
    assert fake_solver.calls[0]["nodes"] == 1100
    assert fake_solver.calls[0]["lower_bound"] is True
    assert fake_solver.calls[0]["model"].title == "CLI test slab"
    assert sorted(p.name for p in outdir.iterdir()) == ["deflection.png", "deflection.svg", "mechanism.png",
                                                        "mechanism.svg", "pattern.png", "pattern.svg", "result.json"]
    data = json.loads((outdir / "result.json").read_text(encoding="utf-8"))
    expected = fan_result(read_model(model)).load_factor
    assert data["load_factor"] == expected
    assert f"load factor = {expected:#.5g}" in out
    assert "5 nodes" in out and "2 rounds" in out
    assert "agrees" in out
    assert "warning" in out and "stand-in result" in out
    assert "qualified engineer" in out
    assert "result.json" in out and "pattern.png" in out and "deflection.svg" in out


def test_solve_mesh_size_passed_through(tmp_path, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    assert main(["solve", str(model), "-o", str(tmp_path / "o"), "--mesh-size", "0.4"]) == 0
    assert fake_solver.calls[0]["mesh_size"] == 0.4
    assert fake_solver.calls[0]["nodes"] is None


def test_too_fine_mesh_size_option_exit_2_before_solving(tmp_path, capsys, fake_solver):
    # 1e-4 m elements on 5 m x 4 m: about 2.3e9 nodes (2 A / (sqrt(3) h^2)); refused with a
    # message naming the option, before anything is meshed or solved.
    model = write_model(tmp_path, GOOD_MODEL)
    assert main(["solve", str(model), "-o", str(tmp_path / "o"), "--mesh-size", "1e-4"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: --mesh-size = 0.0001 m would mesh the slab with about") and "nodes" in err
    assert fake_solver.calls == []
    assert not (tmp_path / "o").exists()


def test_too_fine_mesh_size_in_file_exit_2_before_meshing(tmp_path, capsys, monkeypatch):
    # analysis.mesh_size = 1e-4 m on a 6 m x 6 m slab: about 7e9 nodes (2 A / (sqrt(3) h^2), the
    # node density of equilateral triangles), which would exhaust memory inside the mesher. The
    # real solver refuses it from the estimate, naming the entry of the file, and writes nothing.
    import importlib

    def no_mesher(*args, **kwargs):
        raise AssertionError("the mesher was called")

    monkeypatch.setattr(importlib.import_module("hingeline.solve"), "mesh_domain", no_mesher)
    text = GOOD_MODEL.replace("[5.0, 0.0], [5.0, 4.0], [0.0, 4.0]", "[6.0, 0.0], [6.0, 6.0], [0.0, 6.0]")
    model = write_model(tmp_path, text.replace('nodes = 150', "mesh_size = 1e-4"))
    assert main(["solve", str(model), "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: analysis.mesh_size = 0.0001 m would mesh the slab with about"), err
    assert "Traceback" not in err
    assert not (tmp_path / "o").exists()


@pytest.mark.parametrize("exc, code", [(UnstableSlabError("the slab is a mechanism at zero load: free edges"), 2),
                                       (SolverError("HiGHS reported status 'time limit'"), 3)])
def test_solver_errors_map_to_exit_codes(tmp_path, capsys, fake_solver, exc, code):
    fake_solver.behaviour["raise"] = exc
    model = write_model(tmp_path, GOOD_MODEL)
    outdir = tmp_path / "out"
    assert main(["solve", str(model), "-o", str(outdir)]) == code
    err = capsys.readouterr().err
    assert err == f"error: {exc}\n"
    assert not outdir.exists()


def test_outdir_that_is_a_file_exit_2(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    blocker = tmp_path / "taken"
    blocker.write_text("not a folder", encoding="utf-8")
    assert main(["solve", str(model), "-o", str(blocker)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: output folder") and "taken" in err
    assert blocker.read_text(encoding="utf-8") == "not a folder"


def test_verbose_flag_accepted_in_both_places(tmp_path, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    assert main(["-v", "solve", str(model), "-o", str(tmp_path / "a")]) == 0
    assert main(["solve", "-v", str(model), "-o", str(tmp_path / "b")]) == 0


def test_demo_writes_default_folder_in_cwd(tmp_path, monkeypatch, capsys, fake_solver):
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "hingeline-demo" in out
    assert (tmp_path / "hingeline-demo" / "result.json").is_file()
    for name in ("pattern.png", "pattern.svg", "deflection.png", "deflection.svg"):
        assert (tmp_path / "hingeline-demo" / name).is_file()
    assert fake_solver.calls[0]["model"].title.startswith("Demo:")


def test_demo_custom_folder(tmp_path, capsys, fake_solver):
    assert main(["demo", "-o", str(tmp_path / "mine")]) == 0
    assert str(tmp_path / "mine") in capsys.readouterr().out
    assert (tmp_path / "mine" / "result.json").is_file()


# --- real solver --------------------------------------------------------------


def test_demo_end_to_end_with_solver(tmp_path, capsys):
    code = main(["demo", "-o", str(tmp_path / "demo")])
    out = capsys.readouterr().out
    assert code == 0
    data = json.loads((tmp_path / "demo" / "result.json").read_text(encoding="utf-8"))
    lf = data["load_factor"]
    assert math.isfinite(lf) and lf > 0
    assert data["certificate"]["load_factor"] == pytest.approx(lf, rel=1e-6)
    assert data["yield_lines"], "a collapse mechanism has yield lines"
    assert "DOES NOT AGREE" not in out and "agrees" in out
    assert (tmp_path / "demo" / "pattern.png").stat().st_size > 10_000
    assert (tmp_path / "demo" / "deflection.png").stat().st_size > 10_000
    assert b"<svg" in (tmp_path / "demo" / "deflection.svg").read_bytes()[:2000]
    # the lower bound is printed, stored and plotted
    lb = data["lower_bound"]["load_factor"]
    assert 0 < lb <= lf and f"lower bound = {lb:#.5g}" in out
    assert (tmp_path / "demo" / "utilisation.png").stat().st_size > 10_000

    # `hingeline verify` re-checks the written result from the files alone, and catches tampering:
    # a stored load factor or lower bound that its mechanism / moment field does not support.
    demo_model = str(resources.files("hingeline") / "data" / "demo.toml")
    result_json = tmp_path / "demo" / "result.json"
    capsys.readouterr()
    assert main(["verify", demo_model, str(result_json)]) == 0
    assert "the stored result re-checks" in capsys.readouterr().out
    for key, change in ((("load_factor",), 1.01), (("lower_bound", "load_factor"), 1.05)):
        bad = json.loads(result_json.read_text(encoding="utf-8"))
        target = bad
        for k in key[:-1]:
            target = target[k]
        target[key[-1]] *= change
        (tmp_path / "bad.json").write_text(json.dumps(bad), encoding="utf-8")
        assert main(["verify", demo_model, str(tmp_path / "bad.json")]) == 1
        assert "does NOT re-check" in capsys.readouterr().out
    bad = json.loads(result_json.read_text(encoding="utf-8"))
    bad["lower_bound"]["field"]["moments"][0][0][0] += 1.0      # one moment value off by 1 kNm/m
    (tmp_path / "bad.json").write_text(json.dumps(bad), encoding="utf-8")
    assert main(["verify", demo_model, str(tmp_path / "bad.json")]) == 1
    (tmp_path / "bad.json").write_text("{not json", encoding="utf-8")
    assert main(["verify", demo_model, str(tmp_path / "bad.json")]) == 2
    assert "bad.json" in capsys.readouterr().err


def test_solve_end_to_end_with_solver(tmp_path, capsys):
    model = write_model(tmp_path, GOOD_MODEL)
    code = main(["solve", str(model), "-o", str(tmp_path / "out")])
    out = capsys.readouterr().out
    assert code == 0
    data = json.loads((tmp_path / "out" / "result.json").read_text(encoding="utf-8"))
    assert f"load factor = {data['load_factor']:#.5g}" in out
    # simply supported isotropic rectangle a x b (b <= a), Johansen's yield-line solution:
    # p = 24 m / (b^2 (sqrt(3 + (b/a)^2) - b/a)^2); here a = 5, b = 4, m = 20 kNm/m, q = 6 kPa.
    # An upper bound on a finite set of lines lies at or above it (small tolerance for round-off).
    a, b, m, q = 5.0, 4.0, 20.0, 6.0
    lam_johansen = 24 * m / (b * b * (math.sqrt(3 + (b / a) ** 2) - b / a) ** 2) / q
    assert 0.999 * lam_johansen <= data["load_factor"] <= 1.15 * lam_johansen


def test_design_command_prints_the_scale(tmp_path, capsys):
    # Johansen: the simply supported square (m' = m) carries 24 m / L^2; 48 kPa on a 1 m square
    # with m = 1 kNm/m therefore needs a capacity scale of 2 (checked to 1e-6 in
    # tests/design/test_design.py; here the command's printing and exit code).
    model = write_model(tmp_path, """
[slab]
outline = [[0, 0], [1, 0], [1, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
hogging = 1.0
[[load]]
type = "area"
value = 48.0
[analysis]
nodes = 150
""")
    assert main(["design", str(model)]) == 0
    out = capsys.readouterr().out
    assert "capacity scale for load factor 1 = 2.0000" in out and "NOT adequate" in out
    assert main(["design", str(model), "--target", "-1"]) == 2


def test_no_lower_bound_flag_reaches_the_solver(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    assert main(["solve", str(model), "-o", str(tmp_path / "out"), "--no-lower-bound"]) == 0
    assert fake_solver.calls[0]["lower_bound"] is False
