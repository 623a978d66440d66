"""Shared helpers for CLI options: quantities with units, checked at the edge."""

from __future__ import annotations

import argparse
import re
from collections.abc import Callable, Collection

from stackopt.errors import UnitError, did_you_mean
from stackopt.plausible import judge
from stackopt.units import Dimension, parse_quantity

_BARE = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$")


def _shown(text: str) -> str:
    """The user's text for a message: one line, at most 40 characters."""
    t = ascii(text)[1:-1]
    return t if len(t) <= 40 else t[:37] + "..."


def quantity(dim: Dimension, option: str, *, positive: bool = True,
             kind: str | None = None) -> Callable[[str], float]:
    """An argparse ``type=`` that parses ``"0.19mm"``/``"800MHz"``/bare SI into a float.

    With ``kind`` (a key of :data:`stackopt.plausible.RANGES`) the value must be
    plausible for that kind; a bare number outside it is refused with the unit the user
    probably meant. Errors are one line naming the fix; argparse adds the option's name
    and the parser turns it into an :class:`~stackopt.errors.InputError` (exit code 2).
    """

    def parse(text: str) -> float:
        if len(text) > 60:
            raise argparse.ArgumentTypeError(
                f"{_shown(text)} is too long for a {dim}; write a number of a few digits "
                "and a unit, e.g. 0.3mm")
        try:
            x = parse_quantity(text, dim)
        except UnitError as exc:
            raise argparse.ArgumentTypeError(f"{exc.message}; {exc.fix}") from None
        if positive and x <= 0:
            raise argparse.ArgumentTypeError(
                f"must be greater than zero, got {text!r}; give a positive {dim}")
        if kind is not None and x != 0:  # zero: the option's own rule decides
            verdict = judge(kind, x, bare=bool(_BARE.match(text)), written=text)
            if verdict is not None and verdict[0] == "error":
                raise argparse.ArgumentTypeError(f"{verdict[1]}; {verdict[2]}")
        return x

    parse.__name__ = dim  # argparse shows this in its messages
    return parse


def choice(names: Collection[str], what: str) -> Callable[[str], str]:
    """An argparse ``type=`` accepting one of ``names`` (the error lists them, with a
    did-you-mean); ``what`` names the option's value in the message (``"model"``)."""

    def parse(text: str) -> str:
        if text not in names:
            raise argparse.ArgumentTypeError(
                f"unknown {what} {text!r}{did_you_mean(text, names)}; "
                f"use one of: {', '.join(names)}")
        return text

    parse.__name__ = what
    return parse


def count(option: str, lo: int = 1, hi: int = 1000) -> Callable[[str], int]:
    """An argparse ``type=`` for a whole number in ``[lo, hi]``."""

    def parse(text: str) -> int:
        try:
            if len(text) > 40:
                raise ValueError
            n = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"expected a whole number, got '{_shown(text)}'; give an integer from {lo} "
                f"to {hi}") from None
        if not lo <= n <= hi:
            raise argparse.ArgumentTypeError(
                f"{n} is out of range; give an integer from {lo} to {hi}")
        return n

    parse.__name__ = "count"
    return parse


def lot_sizes(text: str) -> tuple[int, ...]:
    """An argparse ``type=`` for comma-separated lot sizes (``100,1000,10000``): whole
    numbers of boards, each once (:func:`~stackopt.model.scenario.check_lot_sizes`)."""
    from stackopt.model.scenario import check_lot_sizes

    try:
        return check_lot_sizes([t.strip() for t in text.split(",") if t.strip()])
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None
