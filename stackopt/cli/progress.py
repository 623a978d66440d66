"""Progress on stderr for long runs (searches, Monte Carlo), drawn by tqdm.

Shown only when stderr is a terminal and ``--quiet`` is not given; tqdm is imported only
then, so quick commands and piped runs import nothing extra.
"""

from __future__ import annotations

import sys
from typing import Any

__all__ = ["Progress"]


class Progress:
    """A ``progress(done, total)`` callable for the library's long loops.

    Parameters
    ----------
    what : str
        What is counted, shown before the bar ("searching", "Monte Carlo").
    enabled : bool
        False for ``--quiet``; a stderr that is not a terminal disables it too.
    unit : str
        What one step is ("eval", "build").
    """

    def __init__(self, what: str, enabled: bool = True, stream: Any = None,
                 unit: str = "eval") -> None:
        self.what = what
        self.unit = unit
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = bool(enabled and isatty is not None and isatty())
        self._bar: Any = None

    def __call__(self, done: int, total: int) -> None:
        """Show ``done`` of ``total`` (the bar starts on the first call)."""
        if not self.enabled:
            return
        if self._bar is None:
            from tqdm import tqdm  # lazy: only an interactive run pays for the import

            self._bar = tqdm(total=total, desc=f"  {self.what}", unit=self.unit,
                             file=self.stream, leave=False, dynamic_ncols=True)
        self._bar.total = total
        self._bar.update(max(done - self._bar.n, 0))

    def close(self) -> None:
        """Remove the bar (nothing was printed if it never started)."""
        if self._bar is not None:
            self._bar.close()
            self._bar = None

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
