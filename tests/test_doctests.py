"""The examples in the package's docstrings run as part of the suite (``>>>`` lines are
documentation a reader copies; a stale one is a bug)."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import stackopt

MODULES = sorted(info.name for info in pkgutil.walk_packages(stackopt.__path__, "stackopt.")
                 if info.name != "stackopt.__main__")  # that one runs the CLI on import


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    mod = importlib.import_module(name)
    res = doctest.testmod(mod, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE,
                          report=True, verbose=False)
    assert res.failed == 0, f"{res.failed} docstring example(s) of {name} failed"


def test_the_package_has_examples():
    finder = doctest.DocTestFinder()
    total = sum(len(t.examples) for n in MODULES
                for t in finder.find(importlib.import_module(n)))
    assert total >= 10
