"""``stackopt calc``: quick calculators (``via``, ``line``) for everyday questions."""

from __future__ import annotations

import argparse
import importlib

#: Calculator modules; each defines ``register(subparsers)``.
CALCULATORS = ("stackopt.cli.calc_via", "stackopt.cli.calc_line")


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
