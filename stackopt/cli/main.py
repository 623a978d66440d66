"""The ``stackopt`` command: a thin layer that parses, calls the library and prints.

Exit codes: 0 success (an infeasible search is an answer, not a failure), 2 a user error
(one line on stderr), 1 an internal error (with how to report it). ``--debug`` shows the
traceback.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from stackopt import __version__
from stackopt.errors import InputError, StackoptError

#: Sub-command modules; each defines ``register(subparsers)`` which sets ``func``.
COMMANDS = ("stackopt.cli.calc", "stackopt.cli.optimize", "stackopt.cli.check",
            "stackopt.cli.evaluate")


class _Parser(argparse.ArgumentParser):
    """argparse that raises a one-line InputError instead of printing usage and exiting."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise InputError(f"{message}", key=self.prog,
                         fix=f"see '{self.prog} --help'")


def build_parser() -> argparse.ArgumentParser:
    """The full argument parser (sub-commands registered from :data:`COMMANDS`)."""
    parser = _Parser(
        prog="stackopt",
        description="Choose a PCB stackup: ground inductance, circuit effect and cost, "
        "searched together and shown as a Pareto front.",
        epilog="example: stackopt optimize            (runs the built-in demo)",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"stackopt {__version__}")
    parser.add_argument("--debug", action="store_true", help="show tracebacks on errors")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        try:
            mod = importlib.import_module(name)
        except ModuleNotFoundError as exc:  # a command not built yet
            if exc.name == name:
                continue
            raise
        mod.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the CLI and return the exit code (never raises for user errors)."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    try:
        parser = build_parser()
        args = parser.parse_args(argv)
        if not getattr(args, "func", None):
            parser.print_help()
            return 0
        return int(args.func(args) or 0)
    except StackoptError as exc:
        if debug:
            raise
        print(f"stackopt: error: {exc}", file=sys.stderr)
        return getattr(exc, "exit_code", 2)
    except KeyboardInterrupt:
        print("stackopt: interrupted; no partial output was kept", file=sys.stderr)
        return 130
    except Exception as exc:  # noqa: BLE001 - the last line of defence
        if debug:
            raise
        print(f"stackopt: internal error: {type(exc).__name__}: {exc}. This is a bug; "
              "please report it with the command and input files (rerun with --debug "
              "for the traceback).", file=sys.stderr)
        return 1


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())
