"""The command registry: every ``stackopt`` command and calculator, its module and its
one-line help, in one place.

The command line imports a command's module only when that command runs, so that
``stackopt --version``, ``--help`` and the calculators start without pandas, pydantic,
matplotlib or pymoo. To add a command: write ``stackopt/cli/<name>.py`` with
``register(subparsers)`` (which calls ``subparsers.add_parser(NAME, help=help_of(NAME),
...)`` and sets ``func``), then add one entry here. Keep heavy imports inside the
functions that need them.
"""

from __future__ import annotations

from typing import NamedTuple

__all__ = ["Command", "COMMANDS", "CALCULATORS", "help_of"]


class Command(NamedTuple):
    """A sub-command: the module that registers it and its one-line help. A group of
    commands (``calc``) names its own table in ``group``; its ``register(sub, argv)`` is
    then given the words after its name, to register its members lazily in turn."""

    module: str
    help: str
    group: bool = False


#: Top-level commands, in the order ``stackopt --help`` lists them.
COMMANDS: dict[str, Command] = {
    "optimize": Command("stackopt.cli.optimize",
                        "search every stackup the fab can build; write the report"),
    "check": Command("stackopt.cli.check",
                     "validate a scenario (and cost table); show it in units"),
    "eval": Command("stackopt.cli.evaluate",
                    "score one stackup: inductance, attenuation, cost"),
    "calc": Command("stackopt.cli.calc",
                    "quick calculators: ground via inductance, line impedance",
                    group=True),
    "fit": Command("stackopt.cli.fit",
                   "fit a measured coupon's ground inductance; calibrate the via models"),
}

#: Calculators under ``stackopt calc``.
CALCULATORS: dict[str, Command] = {
    "via": Command("stackopt.cli.calc_via",
                   "inductance of a ground via (or a row of vias) down to a plane"),
    "line": Command("stackopt.cli.calc_line",
                    "trace impedance, or the width for a target impedance"),
}


def help_of(name: str, table: dict[str, Command] | None = None) -> str:
    """The one-line help of command (or, with ``table=CALCULATORS``, calculator) ``name``."""
    return (COMMANDS if table is None else table)[name].help
