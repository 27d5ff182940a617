"""`hingeline demo [-o OUTDIR]`: solve the bundled demo model and write its outputs."""
from __future__ import annotations

import argparse
from importlib import resources
from pathlib import Path

from ..model import model_from_toml
from . import report
from .solve import write_files

HELP = "solve the bundled demo slab and write its outputs to a folder (default hingeline-demo/)"

DEFAULT_OUTDIR = Path("hingeline-demo")


def demo_text() -> str:
    """TOML text of the bundled demo model."""
    return (resources.files("hingeline") / "data" / "demo.toml").read_text(encoding="utf-8")


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("-o", "--outdir", type=Path, default=DEFAULT_OUTDIR, metavar="OUTDIR",
                        help=f"folder for the outputs (default: {DEFAULT_OUTDIR}/ in the current directory)")


def run(args: argparse.Namespace) -> int:
    model = model_from_toml(demo_text(), source="demo model")
    report.check_outdir(args.outdir)
    from ..solve import solve

    result = solve(model)
    paths = write_files(result, args.outdir)
    report.print_summary(result, paths)
    print(f"demo outputs in folder: {args.outdir}")
    return 0
