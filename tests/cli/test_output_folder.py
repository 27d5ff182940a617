"""Command line: the output folder is checked before any solve, holds no files of an earlier
run beside a new result, and output piped into a reader that stops ends quietly.

Uses the stand-in solver of test_cli.py (its numbers mean nothing structurally).
"""
from __future__ import annotations

import os
import sys

import pytest
from test_cli import GOOD_MODEL, fake_solver, write_model  # noqa: F401  (fake_solver is a fixture)

from hingeline._cli.main import EXIT_BROKEN_PIPE, main


def test_outdir_naming_a_file_is_refused_before_solving(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    blocker = tmp_path / "taken.txt"
    blocker.write_text("not a folder", encoding="utf-8")
    assert main(["solve", str(model), "-o", str(blocker)]) == 2
    assert fake_solver.calls == []
    err = capsys.readouterr().err
    assert "taken.txt" in err and "existing file" in err and "-o" in err
    assert blocker.read_text(encoding="utf-8") == "not a folder"


def test_outdir_below_a_file_is_refused_before_solving(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    blocker = tmp_path / "taken.txt"
    blocker.write_text("not a folder", encoding="utf-8")
    assert main(["solve", str(model), "-o", str(blocker / "out")]) == 2
    assert fake_solver.calls == []
    assert "cannot be created" in capsys.readouterr().err


@pytest.mark.parametrize("command", ["report", "demo"])
def test_other_commands_refuse_a_file_as_outdir_before_solving(tmp_path, capsys, fake_solver, command):
    blocker = tmp_path / "taken.txt"
    blocker.write_text("not a folder", encoding="utf-8")
    args = [command, "-o", str(blocker)]
    if command == "report":
        args.insert(1, str(write_model(tmp_path, GOOD_MODEL)))
    assert main(args) == 2
    assert fake_solver.calls == []
    assert "existing file" in capsys.readouterr().err


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0,
                    reason="file permissions do not bind the superuser")
def test_outdir_without_write_permission_is_refused_before_solving(tmp_path, capsys, fake_solver):
    model = write_model(tmp_path, GOOD_MODEL)
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    try:
        assert main(["solve", str(model), "-o", str(locked / "out")]) == 2
    finally:
        locked.chmod(0o700)
    assert fake_solver.calls == []
    assert "no permission" in capsys.readouterr().err


def test_drawings_of_an_earlier_run_are_removed(tmp_path, capsys, fake_solver):
    """An earlier run with the lower bound (or with PDF drawings) left utilisation.* and
    *.pdf; the new result has no lower-bound field, so those would describe another solve."""
    model = write_model(tmp_path, GOOD_MODEL)
    outdir = tmp_path / "out"
    outdir.mkdir()
    for name in ("utilisation.png", "utilisation.svg", "pattern.pdf", "notes.txt"):
        (outdir / name).write_text("from an earlier run", encoding="utf-8")
    assert main(["solve", str(model), "-o", str(outdir), "--no-lower-bound"]) == 0
    assert sorted(p.name for p in outdir.iterdir()) == ["deflection.png", "deflection.svg", "mechanism.png",
                                                        "mechanism.svg", "notes.txt", "pattern.png", "pattern.svg",
                                                        "result.json"]
    assert (outdir / "notes.txt").read_text(encoding="utf-8") == "from an earlier run"


def test_stdout_closed_by_its_reader_ends_quietly(tmp_path, monkeypatch, fake_solver):
    """`hingeline solve ... | head -0`: the reader is gone before the summary is printed.
    stdout is line-buffered here so the failed write shows up inside the command, as it
    does at the latest on the final flush of a real run."""
    model = write_model(tmp_path, GOOD_MODEL)
    read_end, write_end = os.pipe()
    os.close(read_end)
    stdout = open(write_end, "w", buffering=1, encoding="utf-8")
    monkeypatch.setattr(sys, "stdout", stdout)
    try:
        code = main(["solve", str(model), "-o", str(tmp_path / "out")])
        print("after the command", flush=True)  # stdout now leads nowhere: no second error
    finally:
        monkeypatch.undo()
        stdout.close()
    assert code == EXIT_BROKEN_PIPE
    assert (tmp_path / "out" / "result.json").is_file()


def test_collapse_under_held_loads_alone_is_drawn_and_stored(tmp_path, capsys):
    """Johansen: the simply supported square with m' = m carries 24 m / L^2; 30 kPa held on the
    unit square with m = 1 collapses at 24 / 30 = 0.8 times it, before any scaled load."""
    import json

    text = GOOD_MODEL.replace("[[load]]", '[[load]]\ntype = "area"\nvalue = 30.0\nscaled = false\n[[load]]', 1)
    text = text.replace("[[0.0, 0.0], [5.0, 0.0], [5.0, 4.0], [0.0, 4.0]]", "[[0, 0], [1, 0], [1, 1], [0, 1]]")
    text = text.replace("sagging = 20.0\nhogging = 20.0", "sagging = 1.0\nhogging = 1.0")
    model = write_model(tmp_path, text)
    outdir = tmp_path / "out"
    assert main(["solve", str(model), "-o", str(outdir), "--no-lower-bound", "--nodes", "150"]) == 2
    captured = capsys.readouterr()
    assert "held" in captured.err and "mechanism is written" in captured.out
    data = json.loads((outdir / "result.json").read_text(encoding="utf-8"))
    assert data["load_factor"] == pytest.approx(0.8, rel=0.01)
    assert (outdir / "pattern.png").is_file()
    assert any("held loads alone" in w for w in data["warnings"])
