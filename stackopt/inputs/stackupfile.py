"""Read a stackup file (``selected.yaml`` format) for ``stackopt eval``."""

from __future__ import annotations

from pathlib import Path

from stackopt.inputs.validate import validate_model
from stackopt.inputs.yamlio import load_yaml
from stackopt.model.stackupfile import StackupFile

__all__ = ["load_stackup_file"]


def load_stackup_file(path: str | Path) -> StackupFile:
    """Load and validate; errors are one line naming file, line and key."""
    return validate_model(StackupFile, load_yaml(path))
