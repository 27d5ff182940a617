"""Study files refused by name (exit 2, nothing written), sweep paths, grid positions and the
reasons positions are skipped; no solves."""
from __future__ import annotations

import tomllib

import pytest

from hingeline._cli.main import main
from hingeline.study import build_variants, read_study
from hingeline.study.file import StudyError
from hingeline.study.paths import PathError, check_numeric, split_path, with_value
from hingeline.study.store import fingerprint, to_toml
from hingeline.study.variants import grid_axis

from study_inputs import ALONG_AXIS, STRIP, line_study, write_study

BAD = [
    # (study file text, words the message must hold)
    (ALONG_AXIS.replace("step = 0.6", "stepp = 0.6"), ["stepp", "move_opening", "step"]),
    (ALONG_AXIS.replace('model = "panel.toml"', 'model = "nowhere.toml"'), ["nowhere.toml", "not found"]),
    (ALONG_AXIS.replace('model = "panel.toml"\n', ""), ["model"]),
    (ALONG_AXIS.replace("opening = 1", "opening = 3"), ["move_opening.opening = 3", "1 opening"]),
    (ALONG_AXIS.replace("step = 0.6", "step = -0.5"), ["move_opening.step", "-0.5"]),
    (ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [3.2, 0.8]"), ["move_opening.x", "swap"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "load.wind.value"\nvalues = [1.0]\n', ["sweep[1].key", "wind", "imposed"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "loads.imposed.value"\nvalues = [1.0]\n', ["sweep[1]", "loads"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "load.imposed.value"\nvalues = [-1.0]\n', ["sweep[1]", "-1.0"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "load.imposed.value"\nvalues = ["ten"]\n', ["sweep[1].values[1]"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "title"\nvalues = [1.0]\n', ["sweep[1].key", "not a number"]),
    (ALONG_AXIS + '[[sweep]]\nkey = "load.imposed.value"\nvalues = [1.0]\nunit = "kPa"\n', ["unit", "sweep[1]"]),
    (ALONG_AXIS.replace("target = 3.0", "target = -1"), ["target"]),
    (ALONG_AXIS.replace("x = [0.8, 3.2]", "x = [9.0, 9.5]"), ["every one of the", "leaves the slab"]),
    ('model = "panel.toml"\n', ["nothing varies"]),
    ("model = [", ["not valid TOML"]),
]


@pytest.mark.parametrize("text, words", BAD, ids=range(len(BAD)))
def test_bad_study_refused_by_name(tmp_path, capsys, text, words):
    study = write_study(tmp_path, text)
    out = tmp_path / "out"
    assert main(["study", str(study), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "Traceback" not in err
    for w in words:
        assert w in err, (w, err)
    assert not out.exists()


def test_missing_study_file(tmp_path, capsys):
    assert main(["study", str(tmp_path / "absent.toml"), "-o", str(tmp_path / "out")]) == 2
    assert "absent.toml" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("argv, words", [(["--jobs", "0"], ["--jobs"]), (["--mesh-size", "-1"], ["--mesh-size"])])
def test_bad_options_refused(tmp_path, capsys, argv, words):
    study = write_study(tmp_path, ALONG_AXIS)
    assert main(["study", str(study), "-o", str(tmp_path / "out"), *argv]) == 2
    assert all(w in capsys.readouterr().err for w in words)
    assert not (tmp_path / "out").exists()


def test_scheduler_without_dask(tmp_path, capsys, monkeypatch):
    import sys
    monkeypatch.setitem(sys.modules, "dask.distributed", None)  # import fails as if not installed
    study = write_study(tmp_path, ALONG_AXIS)
    assert main(["study", str(study), "-o", str(tmp_path / "out"), "--scheduler", "tcp://127.0.0.1:1"]) == 2
    assert "pip install 'hingeline[cluster]'" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_grid_is_centred_and_keeps_whole_steps():
    assert grid_axis(0.8, 3.2, 0.6).tolist() == [0.8, 1.4, 2.0, 2.6, 3.2]
    assert grid_axis(0.0, 1.0, 0.4).tolist() == [0.1, 0.5, 0.9]
    assert grid_axis(1.0, 1.0, 0.5).tolist() == [1.0]


OBSTACLES = """\
title = "Test slab with a column, a second opening and a patch load"
[slab]
outline = [[0.0, 0.0], [6.0, 0.0], [6.0, 3.0], [0.0, 3.0]]
edges = "simple"
[[slab.opening]]
polygon = [[0.8, 1.3], [1.2, 1.3], [1.2, 1.7], [0.8, 1.7]]
[[slab.opening]]
polygon = [[2.8, 1.3], [3.2, 1.3], [3.2, 1.7], [2.8, 1.7]]
[capacity]
sagging = 10.0
[[column]]
name = "C1"
at = [4.0, 1.5]
size = [0.3, 0.3]
[[load]]
type = "area"
value = 5.0
[[load]]
type = "area"
name = "tank"
value = 8.0
region = [[4.7, 1.0], [5.3, 1.0], [5.3, 2.0], [4.7, 2.0]]
"""


def test_skip_reasons(tmp_path):
    """Opening 1 moved along y = 1.5 m in 1 m steps: x = 0 leaves the slab, x = 3 hits opening
    2, x = 4 hits the column, x = 5 overlaps the tank's load, x = 1 and 2 fit."""
    study = write_study(tmp_path, line_study((0.0, 6.0), 1.5, 1.0), model=OBSTACLES)
    plan = build_variants(read_study(study))
    reasons = {s.x: s.reason for s in plan.skipped}
    assert reasons == {0.0: "leaves the slab", 3.0: "hits opening 2", 4.0: "hits C1",
                       5.0: 'overlaps the region of load "tank"', 6.0: "leaves the slab"}
    assert sorted(v.x for v in plan.variants) == [1.0, 2.0]
    moved = plan.variants[0].model["slab"]["opening"]
    assert len(moved) == 2 and moved[1]["polygon"] == [[2.8, 1.3], [3.2, 1.3], [3.2, 1.7], [2.8, 1.7]]


def test_new_polygon_and_scale(tmp_path):
    """A new opening given as a polygon at two sizes: the variants keep the model's opening
    and add the new one, scaled about its centroid."""
    study = write_study(tmp_path, """\
model = "panel.toml"
[move_opening]
polygon = [[0.0, 0.0], [0.2, 0.0], [0.2, 0.2], [0.0, 0.2]]
step = 1.0
x = [1.0, 1.0]
y = [0.5, 0.5]
scale = [1.0, 2.0]
""")
    plan = build_variants(read_study(study))
    assert [v.scale for v in plan.variants] == [1.0, 2.0]
    new = plan.variants[1].model["slab"]["opening"]
    assert len(new) == 2 and new[1]["polygon"] == [[0.8, 0.3], [1.2, 0.3], [1.2, 0.7], [0.8, 0.7]]


def test_paths():
    data = tomllib.loads(STRIP)
    assert split_path('load."incl. partitions".value') == ("load", "incl. partitions", "value")
    assert with_value(data, "load.imposed.value", 7.5)["load"][0]["value"] == 7.5
    assert with_value(data, "load.1.value", 7.5)["load"][0]["value"] == 7.5
    assert with_value(data, "analysis.mesh_size", 0.3)["analysis"] == {"mesh_size": 0.3}
    edged = dict(data, slab=dict(data["slab"], edges=["continuous", "simple", "simple", "simple"]))
    assert with_value(edged, "slab.edges.1.fixity", 0.5)["slab"]["edges"][0] == {"type": "continuous",
                                                                                   "fixity": 0.5}
    assert data["load"][0]["value"] == 10.0  # the base is not changed
    pair = dict(data, capacity={"sagging": [10.0, 8.0]})
    with pytest.raises(PathError, match="capacity.sagging.1"):
        check_numeric(pair, "capacity.sagging")
    with pytest.raises(PathError, match="position 5"):
        check_numeric(data, "load.5.value")


def test_toml_round_trip_and_fingerprint():
    data = tomllib.loads(STRIP)
    data["title"] = 'quotes " and \\ and ünïcode'
    assert tomllib.loads(to_toml(data, "a header\nof two lines")) == data
    opts = {"nodes": None, "mesh_size": 0.4, "gap": None, "time_limit": None, "lower_bound": True}
    same = tomllib.loads(to_toml(data))
    assert fingerprint(data, opts) == fingerprint(same, dict(reversed(list(opts.items()))))
    assert fingerprint(data, opts) != fingerprint(data, {**opts, "lower_bound": False})
    assert fingerprint(data, opts) != fingerprint(with_value(data, "load.imposed.value", 10.5), opts)


def test_study_error_is_a_hingeline_error():
    from hingeline.errors import HingelineError
    assert issubclass(StudyError, HingelineError)


def test_example_study_reads():
    """The example study in examples/studies/ names its model beside it and builds variants."""
    from pathlib import Path
    path = Path(__file__).resolve().parents[2] / "examples" / "studies" / "lab_floor_duct.toml"
    study = read_study(path)
    plan = build_variants(study)
    assert study.move.opening == 2 and study.move.scale == (1.0, 1.5)
    assert len(plan.variants) > 0 and len(plan.skipped) > 0
    assert {v.values for v in plan.variants} == {(4.5,), (9.0,)}
