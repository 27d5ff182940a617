"""Entry point of the `hingeline` command: argument parsing, logging, error mapping.

Exit codes: 0 success; 1 `verify` found a stored result that does not re-check; 2 bad input (model errors, unstable slab, outputs that
cannot be written, bad command-line arguments); 3 solver failure; 141 stdout closed by its reader (e.g. piped into `head`).
"""
from __future__ import annotations

import argparse
import logging
import os
import sys

from ..errors import HingelineError, SolverError
from . import check, demo, design, record, solve, study, verify

#: Subcommand name -> module with add_args(parser) and run(args) -> int.
COMMANDS = {
    "solve": solve,
    "demo": demo,
    "report": record,
    "check": check,
    "design": design,
    "verify": verify,
    "study": study,
}

EXIT_OK = 0
EXIT_BAD_INPUT = 2
EXIT_SOLVER = 3
EXIT_BROKEN_PIPE = 141  # 128 + SIGPIPE: what a shell reports for a pipeline stage whose reader stopped


def _version() -> str:
    from ..outputs.result_json import hingeline_version

    return hingeline_version()


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="hingeline",
        description=(
            "Plastic collapse load factor and governing yield-line pattern of reinforced-concrete "
            "floor slabs (upper-bound yield-line analysis by discontinuity layout optimisation)."
        ),
        epilog="Results need review by a qualified engineer under local codes.",
    )
    parser.add_argument("--version", action="version", version=f"hingeline {_version()}")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress (level INFO) to stderr")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, module in COMMANDS.items():
        sp = sub.add_parser(name, help=module.HELP, description=module.HELP)
        sp.add_argument("-v", "--verbose", action="store_true", default=argparse.SUPPRESS,
                        help="log progress (level INFO) to stderr")
        module.add_args(sp)
        sp.set_defaults(handler=module.run)
    return parser


def _setup_logging(verbose: bool) -> None:
    root = logging.getLogger("hingeline")
    if not any(getattr(h, "_hingeline_cli", False) for h in root.handlers):
        handler = logging.StreamHandler(sys.stderr)
        handler.setFormatter(logging.Formatter("%(levelname)s %(name)s: %(message)s"))
        handler._hingeline_cli = True  # type: ignore[attr-defined]
        root.addHandler(handler)
    root.setLevel(logging.INFO if verbose else logging.WARNING)


def main(argv: list[str] | None = None) -> int:
    """Run the `hingeline` command with `argv` (default sys.argv[1:]); return the exit code."""
    try:
        code = _dispatch(argv)
        sys.stdout.flush()  # inside the try: a reader that stopped shows up here, not at exit
        return code
    except BrokenPipeError:
        # The reader of stdout stopped (`hingeline solve ... | head -1`): end quietly. Point
        # stdout at /dev/null so the interpreter's final flush does not raise again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_BROKEN_PIPE


def _dispatch(argv: list[str] | None) -> int:
    words = sys.argv[1:] if argv is None else argv
    if any(w == "--resolution" or w.startswith("--resolution=") for w in words):
        from ..model import resolution_replacement

        print(f"error: --resolution is no longer an option: {resolution_replacement('--nodes')}", file=sys.stderr)
        return EXIT_BAD_INPUT
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: --help/--version (0) or a usage error (2)
        return exc.code if isinstance(exc.code, int) else EXIT_BAD_INPUT
    if getattr(args, "handler", None) is None:
        parser.print_help(sys.stderr)
        return EXIT_BAD_INPUT
    _setup_logging(getattr(args, "verbose", False))
    try:
        return args.handler(args)
    except SolverError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_SOLVER
    except HingelineError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("error: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
