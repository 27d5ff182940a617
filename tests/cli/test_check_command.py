"""`hingeline check MODEL.toml PATTERN.toml` (_cli/check.py): printed result, exit codes.

Check values: the roof pattern's work equation at a = 0.5 (14.4, derived by hand in
tests/check/test_work.py) and Johansen's simply supported rectangle (14.1407, the closed
form cited in tests/check/test_optimise.py); 24 for the diagonal pattern on the simply
supported square (Johansen, textbook result).
"""
from __future__ import annotations

from hand_patterns import ROOF, diagonal

from hingeline._cli.main import main

RECT_MODEL = """
[slab]
outline = [[0, 0], [2, 0], [2, 1], [0, 1]]
edges = "simple"
[capacity]
sagging = 1.0
[[load]]
type = "area"
value = 1.0
"""


def test_cli_check(tmp_path, capsys):
    model = tmp_path / "rect.toml"
    model.write_text(RECT_MODEL)
    pattern = tmp_path / "roof.toml"
    pattern.write_text(ROOF)
    assert main(["check", str(model), str(pattern), "--no-compare", "--fixed"]) == 0
    out = capsys.readouterr().out
    assert "load factor by the work equation = 14.4" in out and "a = 0.5" in out
    assert main(["check", str(model), str(pattern), "--no-compare"]) == 0
    assert "load factor by the work equation = 14.1407" in capsys.readouterr().out   # Johansen, above

    bad = tmp_path / "bad.toml"
    bad.write_text(diagonal((1.0, 1.0, 2.0, 1.0)))
    assert main(["check", str(model), str(bad), "--no-compare"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "Traceback" not in err and "'north'" in err
    assert main(["check", str(model), str(tmp_path / "missing.toml"), "--no-compare"]) == 2
    assert "pattern file" in capsys.readouterr().err


def test_cli_compare(tmp_path, capsys):
    # The comparison with the optimised mechanism: both factors and the percentage are printed.
    model = tmp_path / "sq.toml"
    model.write_text('[slab]\noutline = [[0, 0], [1, 0], [1, 1], [0, 1]]\nedges = "simple"\n'
                     '[capacity]\nsagging = 1.0\n[[load]]\ntype = "area"\nvalue = 1.0\n')
    pattern = tmp_path / "diag.toml"
    pattern.write_text(diagonal())
    assert main(["check", str(model), str(pattern)]) == 0
    out = capsys.readouterr().out
    line = [s for s in out.splitlines() if s.startswith("optimised mechanism")][0]
    solved = float(line.rsplit("=", 1)[1])
    pct = 100 * (24.0 - solved) / solved
    assert f"{abs(pct):.2f} %" in out
