"""The ``stackopt`` command: a thin layer that parses, calls the library and prints.

Exit codes: 0 success (an infeasible search is an answer, not a failure), 2 a user error
(one line on stderr), 1 an internal error (with how to report it). ``--debug`` (before or
after the command name) shows the traceback. Legal but unusual inputs are reported by the
library as :class:`~stackopt.errors.StackoptWarning`; they are printed here, one
``stackopt: warning: ...`` line each, before the command's result or error.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
import warnings
from collections.abc import Sequence

from stackopt import __version__
from stackopt.cli.registry import COMMANDS, Command
from stackopt.cli.text import clean
from stackopt.errors import InputError, Interrupted, StackoptError, StackoptWarning


class _Parser(argparse.ArgumentParser):
    """argparse that raises a one-line InputError instead of printing usage and exiting;
    every (sub-)parser takes ``--debug``."""

    def __init__(self, *args, **kwargs) -> None:
        super().__init__(*args, **kwargs)
        # SUPPRESS: a sub-command's default must not undo the top-level flag
        self.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                          help="show tracebacks on errors")

    def error(self, message: str) -> None:  # type: ignore[override]
        raise InputError(f"{message}", key=self.prog,
                         fix=f"see '{self.prog} --help'")


def register_lazily(sub: argparse._SubParsersAction, table: dict[str, Command],
                    argv: Sequence[str]) -> None:
    """Register the commands of ``table``: the one ``argv`` names (its first word that is
    not an option) from its module, with all its options; every other as a stub that only
    carries its help line, so that nothing a command does not use is imported. A group
    (``calc``) is handed the words after its name."""
    import importlib

    words = [a for a in argv if not a.startswith("-")]
    selected = words[0] if words and words[0] in table else None
    for name, cmd in table.items():
        if name != selected:
            sub.add_parser(name, help=cmd.help, add_help=False)
        elif not cmd.group:
            importlib.import_module(cmd.module).register(sub)
        else:
            rest = list(argv)[list(argv).index(name) + 1:]
            importlib.import_module(cmd.module).register(sub, rest)


def build_parser(argv: Sequence[str] = ()) -> argparse.ArgumentParser:
    """The argument parser; of the sub-commands in :data:`COMMANDS` only the one named in
    ``argv`` is imported and registered in full (pass every name to get them all)."""
    parser = _Parser(
        prog="stackopt",
        description="Choose a PCB stackup: ground inductance, circuit effect and cost, "
        "searched together and shown as a Pareto front.",
        epilog="example: stackopt optimize            (runs the built-in demo)",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"stackopt {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    register_lazily(sub, COMMANDS, argv)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the CLI and return the exit code (never raises for user errors)."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    with warnings.catch_warnings():  # restores the filters and showwarning afterwards
        if not debug:  # numerical warnings of the library are noise to a user
            warnings.simplefilter("ignore")
        warnings.simplefilter("always", StackoptWarning)
        warnings.showwarning = _WarningPrinter(warnings.showwarning)
        with _signals_raise():
            return _run(argv, debug)


@contextlib.contextmanager
def _signals_raise():
    """SIGINT, SIGTERM and SIGHUP raise :class:`~stackopt.errors.Interrupted` (so that the
    output writer can clean up and say what is in the folder) for the command's run."""
    import signal
    import threading

    names = [n for n in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, n)]
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def raise_it(signum, frame):
        raise Interrupted(signum)

    old = {n: signal.signal(getattr(signal, n), raise_it) for n in names}
    try:
        yield
    finally:
        for n, h in old.items():
            signal.signal(getattr(signal, n), h)


class _WarningPrinter:
    """``warnings.showwarning`` for the CLI: a StackoptWarning is one
    ``stackopt: warning: ...`` line on stderr (each text once); others as Python shows them."""

    def __init__(self, fallback) -> None:
        self.fallback = fallback
        self.seen: set[str] = set()

    def __call__(self, message, category, filename, lineno, file=None, line=None) -> None:
        if not isinstance(message, StackoptWarning):
            self.fallback(message, category, filename, lineno, file, line)
            return
        text = str(message)
        if text not in self.seen:
            self.seen.add(text)
            print(f"stackopt: warning: {clean(text)}", file=sys.stderr)


def _run(argv: list[str], debug: bool) -> int:
    try:
        parser = build_parser(argv)
        args = parser.parse_args(argv)
        if not getattr(args, "func", None):
            parser.print_help()
            return 0
        return int(args.func(args) or 0)
    except StackoptError as exc:
        if debug:
            raise
        print(f"stackopt: error: {clean(str(exc))}", file=sys.stderr)
        return getattr(exc, "exit_code", 2)
    except KeyboardInterrupt as exc:
        print(f"stackopt: {_interrupted(exc)}", file=sys.stderr)
        return getattr(exc, "exit_code", 130)
    except BrokenPipeError:  # `stackopt check x.yaml | head`: the reader left; not a bug
        with contextlib.suppress(OSError, ValueError):
            sys.stdout = open(os.devnull, "w")  # noqa: SIM115 - Python's own advice
        return 1
    except Exception as exc:  # noqa: BLE001 - the last line of defence
        if debug:
            raise
        text = clean(" ".join(f"{type(exc).__name__}: {exc}".split()))
        if len(text) > 300:
            text = text[:297] + "..."
        print(f"stackopt: internal error: {text}. This is a bug; please report it with the "
              "command and input files (rerun with --debug for the traceback).",
              file=sys.stderr)
        return 1


def _interrupted(exc: KeyboardInterrupt) -> str:
    """One line saying what an interrupt left in the output folder (true by construction
    of :mod:`stackopt.outputs.resultdir`)."""
    out = getattr(exc, "out", None)
    if out is None:
        return "interrupted; nothing was written"
    if getattr(exc, "committed", False):
        return f"interrupted after the new result was complete; {clean(str(out))} holds it"
    return (f"interrupted; the previous contents of {clean(str(out))} are intact "
            "(nothing of this run was kept)")


def entry() -> None:
    """Console-script entry point.

    The process ends as soon as the command is over and its output is flushed: every file
    it wrote is closed (and renamed into place), every process it started has been
    waited for, and tearing down the interpreter's objects one by one (a tenth of a
    second after the demo) would only keep the shell waiting. atexit handlers do not run
    here; code that needs them calls :func:`main`.
    """
    code = main()
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except BrokenPipeError:  # e.g. piped into head: what was read is all that was wanted
        pass
    os._exit(code)
