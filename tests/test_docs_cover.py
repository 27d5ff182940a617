"""Every command-line option and every model-file key is documented (README.md, docs/).

The documentation is what an engineer reads to write a model file and run the commands:
an option or key that exists only in the code is a defect of the documentation.
"""
from __future__ import annotations

import argparse
import importlib
import pkgutil
import re
from pathlib import Path

import pytest

import hingeline.model
from hingeline._cli.main import build_parser

REPO = Path(__file__).resolve().parents[1]
DOCS = "\n".join(p.read_text(encoding="utf-8") for p in [REPO / "README.md", *sorted((REPO / "docs").glob("*.md"))])
MODEL_FORMAT = (REPO / "docs" / "model-format.md").read_text(encoding="utf-8")


def _options():
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    for name, sp in sub.choices.items():
        for action in sp._actions:
            opts = tuple(action.option_strings)
            if opts and not {"--help", "--verbose"} & set(opts):
                yield name, opts


def _model_keys():
    keys = set()
    for info in pkgutil.iter_modules(hingeline.model.__path__):
        module = importlib.import_module(f"hingeline.model.{info.name}")
        for attr, value in vars(module).items():
            if attr.endswith("_KEYS"):
                groups = value.values() if isinstance(value, dict) else [value]
                keys.update(k for group in groups for k in group)
    return sorted(keys)


@pytest.mark.parametrize("command, options", sorted(set(_options())))
def test_every_option_is_documented(command, options):
    # An option is documented under any of its spellings (-o or --outdir).
    assert any(re.search(rf"(?<![\w-]){re.escape(o)}(?![\w-])", DOCS) for o in options), (command, options)


def test_the_model_keys_are_found():
    keys = _model_keys()
    assert {"outline", "edges", "sagging", "hogging", "fixity", "polygon", "mesh_size"} <= set(keys)


@pytest.mark.parametrize("key", _model_keys())
def test_every_model_key_is_documented(key):
    # As a key in a TOML example (key = ...), a table header ([key], [[key]], [x.key]) or in backticks.
    k = re.escape(key)
    assert re.search(rf"(^|[\s{{,\[])({k})\s*=|`{k}`|\[\[?([\w]+\.)?{k}\]", MODEL_FORMAT, re.M), key
