"""The resume store of a study: each variant's files under OUTDIR/variants/<fingerprint>/.

fingerprint: SHA-256 (hex) of the canonical JSON of the variant's model data and the solve
options (sorted keys, no spaces), so the same model solved the same way always lands in the
same folder and a changed model or option in a new one.

A variant's folder holds model.toml (the variant as a model file: `hingeline verify
model.toml result.json` re-checks it, `hingeline solve model.toml` solves it again),
result.json (and pattern.png, mechanism.png, deflection.png, utilisation.png with drawings) and, written
last, variant.json (its place in the study, the figures of the CSV row, the time taken). A
variant counts as done when variant.json reads back with status "solved" and result.json is
there; anything else is solved again. Each file is written under a temporary name and then
renamed, so an interrupted run leaves no half-written file.

Units: m for positions, seconds for times; load factors are dimensionless.
May import: the standard library.
"""
from __future__ import annotations

import hashlib
import json
import os
import re
import tomllib
from pathlib import Path
from typing import Any

RECORD = "variant.json"
MODEL = "model.toml"
RESULT = "result.json"
_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


def fingerprint(model: dict, options: dict) -> str:
    """SHA-256 hex digest of the canonical JSON of `model` (TOML tables) and `options`."""
    text = json.dumps({"model": model, "solve": options}, sort_keys=True, separators=(",", ":"),
                      ensure_ascii=False, allow_nan=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _toml_key(key: str) -> str:
    return key if _BARE_KEY.fullmatch(key) else json.dumps(key, ensure_ascii=False)


def _toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return repr(v)  # full precision; repr of a finite float is valid TOML
    if isinstance(v, str):
        # JSON string escapes are a subset of TOML basic-string escapes (no surrogates
        # with ensure_ascii=False).
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_toml_key(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(f"cannot write {type(v).__name__} as TOML")


def to_toml(data: dict, header: str = "") -> str:
    """TOML text of `data` (a model's tables), one top-level key a line with inline tables;
    `header` becomes comment lines on top. Reading the text back gives `data` again."""
    lines = [f"# {line}".rstrip() for line in header.splitlines()]
    lines += [f"{_toml_key(k)} = {_toml_value(v)}" for k, v in data.items()]
    text = "\n".join(lines) + "\n"
    if tomllib.loads(text) != data:  # pragma: no cover (a guard: the text must mean the data)
        raise ValueError("model data do not survive a round trip through TOML")
    return text


def write_atomic(path: Path, data: bytes) -> None:
    """Write `data` to `path` under a temporary name, then rename it into place."""
    tmp = path.with_name(f".{path.name}.tmp-{os.getpid()}")
    try:
        tmp.write_bytes(data)
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()


class Store:
    """The variants folder OUTDIR/variants (created on the first write)."""

    def __init__(self, folder: Path):
        self.folder = Path(folder)

    def path(self, fp: str) -> Path:
        return self.folder / fp

    def read(self, fp: str) -> dict | None:
        """The stored record of a done variant, or None when it is not done."""
        where = self.path(fp)
        try:
            record = json.loads((where / RECORD).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return None
        if not isinstance(record, dict) or record.get("status") != "solved" or not (where / RESULT).is_file():
            return None
        return record

    def write(self, fp: str, model_text: str, files: dict[str, bytes], record: dict) -> Path:
        """Write a solved variant: model.toml, its result files, then variant.json (last, as
        the mark that it is done). Returns the folder."""
        where = self.path(fp)
        where.mkdir(parents=True, exist_ok=True)
        write_atomic(where / MODEL, model_text.encode("utf-8"))
        for name, data in files.items():
            write_atomic(where / name, data)
        write_atomic(where / RECORD, (json.dumps(record, indent=1, allow_nan=False) + "\n").encode("utf-8"))
        return where
