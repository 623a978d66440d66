"""``stackopt calc``: quick calculators (``via``, ``line``) for everyday questions."""

from __future__ import annotations

import argparse
import importlib
import json
from collections.abc import Callable
from typing import Any

#: Calculator modules; each defines ``register(subparsers)``.
CALCULATORS = ("stackopt.cli.calc_via", "stackopt.cli.calc_line")


def calculator(compute: Callable[[argparse.Namespace], dict[str, Any]],
               render: Callable[[dict[str, Any]], str]) -> Callable[[argparse.Namespace], int]:
    """The ``func`` of a calculator: ``compute(args)``, then print it as one JSON object
    (``--json``) or as ``render``'s table; exit code 0."""

    def run(args: argparse.Namespace) -> int:
        result = compute(args)
        print(json.dumps(result) if args.json else render(result))
        return 0

    return run


def register(sub: argparse._SubParsersAction) -> None:
    """Add ``calc`` and its calculators."""
    p = sub.add_parser("calc", help="quick calculators: ground via inductance, line impedance",
                       description="Quick calculators. Human-readable by default, --json for "
                       "scripts.", epilog="example: stackopt calc via --depth 0.19mm "
                       "--drill 0.3mm --freq 800MHz")
    calc_sub = p.add_subparsers(dest="calculator", metavar="CALCULATOR",
                                parser_class=type(p))
    for name in CALCULATORS:
        try:
            mod = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name == name:
                continue
            raise
        mod.register(calc_sub)
    p.set_defaults(func=lambda args: (p.print_help(), 0)[1])
