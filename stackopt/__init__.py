"""stackopt: choose a PCB stackup by ground inductance, circuit effect and cost."""

from __future__ import annotations

from typing import Any

__version__ = "0.1.0"

__all__ = ["__version__", "optimize", "mitigation_ladder"]


def optimize(*args: Any, **kwargs: Any) -> Any:
    """Search the design space; see :func:`stackopt.search.api.optimize`."""
    from stackopt.search.api import optimize as _optimize

    return _optimize(*args, **kwargs)


def mitigation_ladder(result: Any) -> Any:
    """The two-layer mitigation ladder of a search result (``result.ladder``, computed once
    per result); see :func:`stackopt.search.ladder.mitigation_ladder`."""
    return result.ladder
