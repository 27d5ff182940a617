"""Do two versions of hingeline give the same results? Snapshot, then compare.

Usage::

    python benchmarks/same_results.py snapshot DIR      # solve everything below, write DIR/
    python benchmarks/same_results.py compare OLD NEW   # exit 1 if any stored number differs

A snapshot runs the command line (the most stable surface of the package) on the bundled
demo, every model in examples/ and the reference slabs of reference.py, and stores for each:
result.json (``solve``, every float at full precision), and the printed output of
``design`` and of ``check`` for the hand patterns in examples/patterns/, and the calculation
record (``report``) of the demo and the podium deck as HTML text, drawings and date masked.

``compare`` requires the result.json files to be equal value for value, bit for bit, except
the fields that hold wall-clock times (any key named ``seconds``); printed output is compared
line by line with times ("12.3 s", and the time column of the record's convergence table) masked and
the snapshot's own folders replaced by names. Use it around a change that must not alter
behaviour, such as a reorganisation of the modules.
"""
from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
TIME_KEYS = {"seconds"}
TIME_TEXT = re.compile(r"\d+(\.\d+)?\s*s\b")
# The last cell of a row of the record's convergence table (after the LP rounds): wall-clock seconds.
RECORD_TIME = re.compile(r'(<td class="num">\d+</td><td class="num">)\d+\.\d+(</td></tr>)')
DATA_URI = re.compile(r"data:image/[a-z+]+;base64,[A-Za-z0-9+/=]+")
STAMP = re.compile(r"\d{4}-\d\d-\d\d \d\d:\d\d UTC")
RECORDS = ("demo", "example-podium_deck_on_columns")   # calculation records compared as HTML text


def _models() -> dict[str, Path]:
    """Name -> model file: demo, examples, reference slabs (written to a temporary folder)."""
    sys.path.insert(0, str(HERE))
    from reference import CASES  # noqa: PLC0415 - the benchmark's own case list

    tmp = Path(tempfile.mkdtemp(prefix="hingeline-same-"))
    models = {"demo": ROOT / "src" / "hingeline" / "data" / "demo.toml"}
    models |= {f"example-{p.stem}": p for p in sorted((ROOT / "examples").glob("*.toml"))}
    for name, case in CASES.items():
        path = tmp / f"{name}.toml"
        path.write_text(case.toml)
        models[f"reference-{name}"] = path
    return models


def _run(args: list[str], folders: dict[str, str]) -> str:
    """Printed output of one command, with the folders of this snapshot replaced by names."""
    done = subprocess.run([sys.executable, "-m", "hingeline", *args], capture_output=True, text=True)
    text = f"exit {done.returncode}\n{done.stdout}"
    for folder, name in folders.items():
        text = text.replace(folder, name)
    return text


def snapshot(out: Path) -> None:
    out.mkdir(parents=True, exist_ok=True)
    models = _models()
    folders = {str(out): "<snapshot>", str(models["reference-ss_square"].parent): "<models>", str(ROOT): "<repo>"}
    for name, model in models.items():
        folder = out / name
        printed = _run(["solve", str(model), "-o", str(folder)], folders)
        (out / f"{name}.solve.txt").write_text(printed)
        (out / f"{name}.design.txt").write_text(_run(["design", str(model)], folders))
        print(f"{name}: {printed.splitlines()[0]}", flush=True)
        if name in RECORDS:
            record = out / f"{name}-record"
            _run(["report", str(model), "-o", str(record)], folders)
            html = (record / "report.html").read_text()
            html = STAMP.sub("<date>", DATA_URI.sub("<drawing>", html))
            for folder, label in folders.items():
                html = html.replace(folder, label)
            (out / f"{name}.record.txt").write_text(html)
            shutil.rmtree(record)
    for pattern in sorted((ROOT / "examples" / "patterns").glob("*_pattern.toml")):
        model = pattern.with_name(pattern.name.replace("_pattern", "_model"))
        (out / f"check-{pattern.stem}.txt").write_text(_run(["check", str(model), str(pattern)], folders))
        print(f"check {pattern.stem}", flush=True)


def _diff(a, b, path: str, found: list[str]) -> None:
    if isinstance(a, dict) and isinstance(b, dict):
        for key in sorted(set(a) | set(b)):
            if key in TIME_KEYS:
                continue
            if key not in a or key not in b:
                found.append(f"{path}.{key}: present on one side only")
            else:
                _diff(a[key], b[key], f"{path}.{key}", found)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            found.append(f"{path}: length {len(a)} != {len(b)}")
        for k, (x, y) in enumerate(zip(a, b)):
            _diff(x, y, f"{path}[{k}]", found)
    elif a != b and not (a != a and b != b):   # NaN == NaN here
        found.append(f"{path}: {a!r} != {b!r}")


def compare(old: Path, new: Path) -> int:
    found: list[str] = []
    old_files = sorted(p.relative_to(old) for p in old.rglob("*") if p.suffix in {".json", ".txt"})
    for rel in old_files:
        if not (new / rel).exists():
            found.append(f"{rel}: missing in {new}")
        elif rel.suffix == ".json":
            _diff(json.loads((old / rel).read_text()), json.loads((new / rel).read_text()), str(rel), found)
        else:
            a, b = (RECORD_TIME.sub(r"\1<t>\2", TIME_TEXT.sub("<t>", (d / rel).read_text())).splitlines()
                    for d in (old, new))
            found += [f"{rel}: {x!r} != {y!r}" for x, y in zip(a, b) if x != y]
            if len(a) != len(b):
                found.append(f"{rel}: {len(a)} lines != {len(b)} lines")
    print(f"compared {len(old_files)} files: {len(found)} differences")
    for line in found[:50]:
        print("  " + line)
    return 1 if found else 0


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if len(argv) == 2 and argv[0] == "snapshot":
        snapshot(Path(argv[1]))
        return 0
    if len(argv) == 3 and argv[0] == "compare":
        return compare(Path(argv[1]), Path(argv[2]))
    print(__doc__)
    return 2


if __name__ == "__main__":
    sys.exit(main())
