"""``stackopt calc``: quick calculators (``via``, ``line``) for everyday questions."""

from __future__ import annotations

import argparse
import json
from collections.abc import Callable, Sequence
from typing import Any

from stackopt.cli.registry import CALCULATORS, help_of
from stackopt.cli.text import say


def calculator(compute: Callable[[argparse.Namespace], dict[str, Any]],
               render: Callable[[dict[str, Any]], str]) -> Callable[[argparse.Namespace], int]:
    """The ``func`` of a calculator: ``compute(args)``, then print it as one JSON object
    (``--json``) or as ``render``'s table; exit code 0."""

    def run(args: argparse.Namespace) -> int:
        result = compute(args)
        say(json.dumps(result) if args.json else render(result))
        return 0

    return run


def register(sub: argparse._SubParsersAction, argv: Sequence[str] = ()) -> None:
    """Add ``calc`` and its calculators (only the one ``argv`` names is imported)."""
    p = sub.add_parser("calc", help=help_of("calc"),
                       description="Quick calculators. Human-readable by default, --json for "
                       "scripts.", epilog="example: stackopt calc via --depth 0.19mm "
                       "--drill 0.3mm --freq 800MHz")
    calc_sub = p.add_subparsers(dest="calculator", metavar="CALCULATOR",
                                parser_class=type(p))
    from stackopt.cli.main import register_lazily

    register_lazily(calc_sub, CALCULATORS, argv)
    p.set_defaults(func=lambda args: (p.print_help(), 0)[1])
