"""`hingeline study` end to end on a 4 m x 2 m simply supported panel with an opening moved
along its long axis: mirror symmetry of the results, each variant against its model solved
alone, the stored variants re-checking, resuming an interrupted study, skipped rows."""
from __future__ import annotations

import shutil

import pytest

import hingeline
from hingeline._cli.main import main
from hingeline.model import model_from_toml, read_model
from hingeline.study import run as study_run
from hingeline.verify import read_result, verify_result

from study_inputs import ALONG_AXIS, MESH, STRIP, line_study, read_rows, write_study


@pytest.fixture(scope="module")
def along_axis(tmp_path_factory):
    """The along-axis study solved once in this process (--jobs 1)."""
    folder = tmp_path_factory.mktemp("along")
    study = write_study(folder, ALONG_AXIS)
    out = folder / "out"
    assert main(["study", str(study), "-o", str(out), "--mesh-size", MESH, "--jobs", "1"]) == 0
    return study, out, read_rows(out / "study.csv")


def test_outputs_written(along_axis):
    _, out, rows = along_axis
    assert [r["status"] for r in rows] == ["solved"] * 5
    for name in ("study.csv", "map.png", "study.html"):
        assert (out / name).stat().st_size > 0
    html = (out / "study.html").read_text(encoding="utf-8")
    assert "qualified engineer" in html and "upper-bound" in html


def test_mirror_symmetry_about_mid_span(along_axis):
    """The panel, its supports and its load are symmetric about x = 2 m, so the true collapse
    load factor with the opening at x equals that with it at 4 - x (mechanics: a mechanism
    mirrored is a mechanism of the mirrored slab with the same work). Each variant brackets
    its true factor between lower_bound and load_factor (the lower- and upper-bound theorems),
    so the brackets of mirrored positions must overlap; the mesh is not symmetric, so the
    upper bounds themselves may differ by up to the gap."""
    _, _, rows = along_axis
    by_x = {round(float(r["x"]), 9): r for r in rows}
    assert sorted(by_x) == [0.8, 1.4, 2.0, 2.6, 3.2]
    for x in (0.8, 1.4):
        a, b = by_x[x], by_x[round(4.0 - x, 9)]
        assert float(a["y"]) == float(b["y"]) == 1.0
        low = max(float(a["lower_bound"]), float(b["lower_bound"]))
        high = min(float(a["load_factor"]), float(b["load_factor"]))
        assert low <= high * (1 + 1e-9), (x, a, b)


def test_each_variant_equals_its_model_solved_alone(along_axis):
    """The model of each row, built here by hand (the base panel with the opening's square
    centred at the row's x, y), solved alone, gives the row's load factor to 1e-6."""
    _, _, rows = along_axis
    for r in rows[::2]:
        x, y = float(r["x"]), float(r["y"])
        text = STRIP.replace("[[1.8, 0.8], [2.2, 0.8], [2.2, 1.2], [1.8, 1.2]]",
                             f"[[{x - 0.2}, {y - 0.2}], [{x + 0.2}, {y - 0.2}], [{x + 0.2}, {y + 0.2}], "
                             f"[{x - 0.2}, {y + 0.2}]]")
        alone = hingeline.solve(model_from_toml(text), mesh_size=float(MESH))
        assert float(r["load_factor"]) == pytest.approx(alone.load_factor, rel=1e-6, abs=0)


def test_stored_variants_verify(along_axis):
    _, out, rows = along_axis
    folder = out / "variants" / rows[0]["variant"]
    model = read_model(folder / "model.toml")
    v = verify_result(model, read_result(folder / "result.json"), where="result.json")
    assert v.ok
    assert main(["verify", str(folder / "model.toml"), str(folder / "result.json")]) == 0


def test_resume_solves_only_what_is_missing(tmp_path, along_axis, monkeypatch):
    """Interrupted run simulated: copy the finished study, delete two variants and the CSV;
    the run again solves those two only and writes the same figures (the two solved again
    may start from other carried lines: their load factors agree to the LP's tolerance)."""
    study, out, rows = along_axis
    shutil.copytree(study.parent, tmp_path / "again")
    again = tmp_path / "again" / "out"
    for r in rows[1:3]:
        shutil.rmtree(again / "variants" / r["variant"])
    (again / "study.csv").unlink()
    calls = []
    real = study_run.solve_carrying
    monkeypatch.setattr(study_run, "solve_carrying", lambda *a, **k: calls.append(1) or real(*a, **k))
    assert main(["study", str(tmp_path / "again" / "study.toml"), "-o", str(again), "--mesh-size", MESH,
                 "--jobs", "1"]) == 0
    assert len(calls) == 2
    new = read_rows(again / "study.csv")
    for k, (a, b) in enumerate(zip(rows, new)):
        for col in ("x", "y", "status", "variant"):
            assert a[col] == b[col]
        for col in ("load_factor", "lower_bound", "gap"):
            if k in (1, 2):
                assert float(a[col]) == pytest.approx(float(b[col]), rel=1e-6, abs=1e-9)
            else:
                assert a[col] == b[col]
    # And with everything there, nothing is solved.
    calls.clear()
    assert main(["study", str(tmp_path / "again" / "study.toml"), "-o", str(again), "--mesh-size", MESH,
                 "--jobs", "1"]) == 0
    assert calls == []


def test_other_options_solve_again(tmp_path, along_axis, monkeypatch):
    """The fingerprint covers the solve options: without the lower bound nothing is reused."""
    study, out, rows = along_axis
    shutil.copytree(study.parent, tmp_path / "copy")
    calls = []
    real = study_run.solve_carrying
    monkeypatch.setattr(study_run, "solve_carrying", lambda *a, **k: calls.append(1) or real(*a, **k))
    study2 = tmp_path / "copy" / "study.toml"
    study2.write_text(ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [0.8, 1.4]"), encoding="utf-8")
    assert main(["study", str(study2), "-o", str(tmp_path / "copy" / "out"), "--mesh-size", MESH,
                 "--jobs", "1", "--no-lower-bound"]) == 0
    assert len(calls) == 2
    new = read_rows(tmp_path / "copy" / "out" / "study.csv")
    assert all(r["lower_bound"] == "" for r in new)


def test_sweep_and_skipped_rows(tmp_path):
    """A sweep of the load value and a grid reaching the panel's edge: the positions that
    leave the slab are rows with their reason; the load factor scales as 1 / load (no held
    loads: the work equation is linear in the scaled load)."""
    study = write_study(tmp_path, line_study((0.0, 1.0), 1.0, 1.0,
                                             '[[sweep]]\nkey = "load.imposed.value"\nvalues = [10.0, 20.0]\n'))
    assert main(["study", str(study), "-o", str(tmp_path / "out"), "--mesh-size", MESH, "--jobs", "1",
                 "--no-lower-bound"]) == 0
    rows = read_rows(tmp_path / "out" / "study.csv")
    skipped = [r for r in rows if r["status"] != "solved"]
    assert [(r["x"], r["status"]) for r in skipped] == [("0.0", "skipped: leaves the slab")]
    solved = {r["load.imposed.value"]: float(r["load_factor"]) for r in rows if r["status"] == "solved"}
    # Exact: lambda * q is what the mechanism carries, so doubling q halves lambda.
    assert solved["10.0"] == pytest.approx(2 * solved["20.0"], rel=1e-6)
    assert (tmp_path / "out" / "sweep-1.png").stat().st_size > 0
