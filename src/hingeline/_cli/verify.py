"""`hingeline verify MODEL.toml RESULT.json`: re-check a written result from the files alone."""
from __future__ import annotations

import argparse
from pathlib import Path

from ..model import read_model
from ..verify import ForeignResult, read_result, verify_result

HELP = ("re-check a result.json against its model file without solving: the mechanism by the work "
        "equation and the lower-bound moment field by equilibrium and yield (exit 1 if either fails)")

EXIT_CHECK_FAILED = 1


def add_args(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("model", type=Path, metavar="MODEL.toml", help="the model file that was solved")
    parser.add_argument("result", type=Path, metavar="RESULT.json", help="the result.json written for it")


def run(args: argparse.Namespace) -> int:
    model = read_model(args.model)
    try:
        v = verify_result(model, read_result(args.result), where=str(args.result))
    except ForeignResult as exc:
        print(f"{model.title or args.model}")
        print(f"verdict       the stored result does NOT belong to this model file: {exc}")
        return EXIT_CHECK_FAILED
    c = v.upper_check
    print(f"{model.title or args.model}")
    print(f"upper bound   stored {v.upper:.8g}, re-checked from the mechanism {c.load_factor:.8g} "
          f"(scaled-load work {c.factored:.8g} kNm, largest |w| on supports {c.max_support_w:.1e}): "
          f"{'agrees' if v.upper_agrees else 'DOES NOT AGREE'}")
    if v.lower is None:
        print("lower bound   none stored")
    else:
        fc = v.lower_check
        if fc is None:
            print(f"lower bound   stored {v.lower:.8g} without a moment field: NOT PROVEN")
        else:
            print(f"lower bound   stored {v.lower:.8g}; the stored field at {v.solved:.8g}: equilibrium residual "
                  f"{fc.relative:.1e} (relative), largest yield ratio {fc.yield_ratio:.9f}, proves "
                  f"{'nothing' if v.proven is None else f'{v.proven:.8g}'}: "
                  f"{'holds' if v.lower_holds else 'DOES NOT HOLD'}")
    for message in v.stored_errors:
        print(f"stored number DOES NOT RE-CHECK: {message}")
    print("verdict       " + ("the stored result re-checks" if v.ok else "the stored result does NOT re-check"))
    return 0 if v.ok else EXIT_CHECK_FAILED
