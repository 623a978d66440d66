"""The package is clean under the repo's own ruff and mypy configuration (pyproject.toml).

Both tools are in the ``test`` extra; where one is missing the check is skipped.
"""

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _tool(name: str) -> list[str]:
    pytest.importorskip(name)
    return [sys.executable, "-m", name]


def test_ruff_finds_nothing():
    run = subprocess.run([*_tool("ruff"), "check", "--no-cache", "stackopt", "tests",
                          "benchmarks"], cwd=ROOT, capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr


@pytest.mark.slow
def test_mypy_finds_nothing(tmp_path):
    run = subprocess.run([*_tool("mypy"), "--cache-dir", str(tmp_path), "stackopt"],
                         cwd=ROOT, capture_output=True, text=True)
    assert run.returncode == 0, run.stdout + run.stderr

