"""Docstrings hold no control characters (a ``\\f`` or ``\\t`` from an unescaped ``\\frac``
or ``\\text`` in a non-raw string renders as garbage in help() and the docs)."""

from __future__ import annotations

import importlib
import inspect
import pkgutil
import re

import stackopt

_CONTROL = re.compile(r"[\x00-\x09\x0b-\x1f\x7f]")  # all but the newline


def _docstrings():
    for info in pkgutil.walk_packages(stackopt.__path__, "stackopt."):
        if info.name == "stackopt.__main__":  # runs the CLI on import
            continue
        mod = importlib.import_module(info.name)
        yield info.name, mod.__doc__
        for name, obj in vars(mod).items():
            if getattr(obj, "__module__", None) != mod.__name__:
                continue
            if inspect.isfunction(obj) or inspect.isclass(obj):
                yield f"{info.name}.{name}", obj.__doc__
            if inspect.isclass(obj):
                for attr, member in vars(obj).items():
                    doc = getattr(member, "__doc__", None)
                    if inspect.isfunction(member) or isinstance(member, property):
                        yield f"{info.name}.{name}.{attr}", doc


def test_no_docstring_holds_control_characters():
    bad = [(where, sorted({repr(c) for c in _CONTROL.findall(doc)}))
           for where, doc in _docstrings() if doc and _CONTROL.search(doc)]
    assert not bad, bad
