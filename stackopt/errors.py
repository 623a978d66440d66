"""One error path for the whole tool.

Every user mistake becomes a :class:`StackoptError` subclass whose ``str()`` is a single
line naming where (file, line, key path), what (the bad value) and the fix. The CLI turns
these into exit code 2; anything else is an internal error (exit code 1).
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable, Sequence
from pathlib import Path

__all__ = [
    "StackoptError",
    "InputError",
    "UnitError",
    "ModelError",
    "OutputError",
    "Interrupted",
    "StackoptWarning",
    "did_you_mean",
    "format_key_path",
    "one_line",
]


def format_key_path(path: Sequence[str | int] | str | None) -> str:
    """Return ``a.b[2].c`` for ``("a", "b", 2, "c")``."""
    if path is None:
        return ""
    if isinstance(path, str):
        return path
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += ("." if out else "") + str(part)
    return out


def did_you_mean(word: str, choices: Iterable[str]) -> str:
    """Return ``" (did you mean 'x'?)"`` for the closest choice, or ``""``.

    A choice that differs only in letter case or by two swapped letters (``kd`` for
    ``dk``) wins; otherwise the closest by :func:`difflib.get_close_matches`.
    """
    w = str(word)
    opts = [str(c) for c in choices]
    lw = w.lower()
    close = [c for c in opts if c.lower() == lw]
    close = close or [c for c in opts if len(c) == len(w) and sorted(c.lower()) == sorted(lw)
                      and sum(a != b for a, b in zip(c.lower(), lw, strict=True)) == 2]
    close = close or difflib.get_close_matches(w, opts, n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""


def one_line(message: str, *, file: str | None = None, key: str = "",
             line: int | None = None, column: int | None = None,
             fix: str | None = None) -> str:
    """``file:line:column: key: message; fix`` on one line (the parts that are known)."""
    where = ""
    if file:
        where = file
        if line is not None:
            where += f":{line}"
            if column is not None:
                where += f":{column}"
    head = ": ".join(p for p in (where, key) if p)
    text = f"{head}: {message}" if head else message
    if fix:
        text += f"; {fix}"
    return " ".join(text.split())  # always one line


class StackoptError(Exception):
    """Base of every error a user can cause; its message is one line."""

    exit_code = 2


class _Located(Exception):
    """The located one-line message :class:`InputError` and :class:`StackoptWarning` share.

    Keeps the parts (``message``, ``file``, ``key``, ``line``, ``column``, ``fix``) as
    attributes and passes :func:`one_line` of them to the exception's own ``__init__``.
    """

    def __init__(
        self,
        message: str,
        *,
        file: str | Path | None = None,
        key: Sequence[str | int] | str | None = None,
        line: int | None = None,
        column: int | None = None,
        fix: str | None = None,
    ) -> None:
        self.message = message
        self.file = str(file) if file is not None else None
        self.key = format_key_path(key)
        #: the key path as parts (``["elements", 2, "name"]``; a string key as one part)
        self.key_parts: list[str | int] = ([] if key is None else [key] if isinstance(
            key, str) else list(key))
        self.line = line
        self.column = column
        self.fix = fix
        super().__init__(self._render())

    def _render(self) -> str:
        return one_line(self.message, file=self.file, key=self.key, line=self.line,
                        column=self.column, fix=self.fix)


class InputError(_Located, ValueError, StackoptError):
    """A value in a file or on the command line is wrong.

    Parameters
    ----------
    message : str
        What is wrong, e.g. ``"thickness must be positive, got -0.1 mm"``.
    file : str or Path, optional
        The file it came from.
    key : sequence or str, optional
        Key path inside the file (``("stackup", 2, "thickness")``) or the CLI option.
    line, column : int, optional
        1-based position in the file, where known.
    fix : str, optional
        What would be accepted.
    """

    def located(
        self,
        *,
        file: str | Path | None = None,
        line: int | None = None,
        column: int | None = None,
        prefix: Sequence[str | int] | None = None,
    ) -> InputError:
        """Return a copy with file/line filled in (and the key path prefixed)."""
        key = self.key
        if prefix:
            pre = format_key_path(prefix)
            key = f"{pre}.{key}" if key and not key.startswith("[") else f"{pre}{key}"
        err = type(self).__new__(type(self))
        InputError.__init__(
            err,
            self.message,
            file=file if file is not None else self.file,
            key=key,
            line=line if line is not None else self.line,
            column=column if column is not None else self.column,
            fix=self.fix,
        )
        return err


class StackoptWarning(_Located, UserWarning):
    """A legal but unusual input value (e.g. a Dk above 10, a requirement above 20 GHz).

    The library only *issues* these (``warnings.warn(StackoptWarning(...))``); it never
    prints. The CLI collects them and prints one ``stackopt: warning: ...`` line each;
    library users see them through Python's :mod:`warnings` machinery (and may filter
    them or turn them into errors there). ``str()`` is one line, located like
    :class:`InputError`.
    """


class UnitError(InputError):
    """A quantity could not be parsed or has the wrong dimension."""


class ModelError(InputError):
    """A model name or combination of inputs outside what a model supports."""


class OutputError(OSError, StackoptError):
    """An output folder or file cannot be written (or would overwrite without --force)."""


class Interrupted(KeyboardInterrupt):
    """SIGINT, SIGTERM or SIGHUP arrived (the CLI turns each into this exception).

    ``out`` is the output folder concerned (if any) and ``committed`` whether the new
    result was already complete there when the signal came; the exit code is
    128 + the signal number (130 for SIGINT, 143 for SIGTERM).
    """

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum
        self.out: Path | None = None
        self.committed = False

    @property
    def exit_code(self) -> int:
        """128 + the signal number, as shells report it."""
        return 128 + self.signum
