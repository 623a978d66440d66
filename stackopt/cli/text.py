"""The one sanitizer for user text on the terminal.

Names and descriptions from a scenario, cost table or command line may hold anything:
ANSI escape sequences that recolour or clear the terminal, other control characters, or
bidirectional overrides (U+202E) that make text read backwards. Everything the CLI prints
goes through :func:`clean` (one line) or :func:`say` (keeps its own line breaks), which
drop escape sequences and replace every other control or format character (Unicode
categories Cc and Cf) with ``?``; letters of every script are kept as they are.
"""

from __future__ import annotations

import re
import sys
import unicodedata

__all__ = ["clean", "say"]

#: CSI / OSC / two-character escape sequences (ECMA-48).
_ESCAPES = re.compile(r"\x1b\[[0-?]*[ -/]*[@-~]|\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)?"
                      r"|\x9b[0-?]*[ -/]*[@-~]|\x1b[@-Z\\-_]?")


def _safe_char(c: str) -> str:
    return "?" if unicodedata.category(c) in ("Cc", "Cf") else c


def clean(text: str, keep_newlines: bool = False) -> str:
    """``text`` without escape sequences and with every control or format character
    replaced by ``?`` (tabs and, with ``keep_newlines``, line breaks kept)."""
    text = _ESCAPES.sub("", str(text))
    lines = text.split("\n") if keep_newlines else [text]
    return "\n".join("".join(" " if c == "\t" else _safe_char(c) for c in ln)
                     for ln in lines)


def say(*parts: object, file=None, end: str = "\n") -> None:
    """``print`` for the CLI: user text cleaned (line breaks of the CLI's own kept)."""
    print(clean(" ".join(str(p) for p in parts), keep_newlines=True),
          file=sys.stdout if file is None else file, end=end)
