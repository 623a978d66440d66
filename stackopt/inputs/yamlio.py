"""Read YAML safely: no object construction, duplicate keys are errors, every key's
line and column remembered so that later validation errors can point at the file.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from stackopt.errors import InputError

KeyPath = tuple[str | int, ...]

#: Largest input file read (bytes); scenarios and cost tables are a few kB.
MAX_BYTES = 20_000_000
#: Most YAML nodes built from one file (aliases expand at every use, so a few lines can
#: otherwise ask for billions: the "billion laughs" pattern).
MAX_NODES = 1_000_000

__all__ = ["Document", "load_yaml", "parse_yaml_text"]


@dataclass(frozen=True)
class Document:
    """Parsed YAML data plus the (line, column) of every key path (1-based)."""

    data: Any
    file: str
    marks: dict[KeyPath, tuple[int, int]] = field(default_factory=dict)

    def where(self, path: Sequence[str | int]) -> tuple[int | None, int | None]:
        """Line and column of ``path``, or of its longest known prefix."""
        p = tuple(path)
        while p:
            if p in self.marks:
                return self.marks[p]
            p = p[:-1]
        return self.marks.get((), (None, None))

    def error(self, message: str, path: Sequence[str | int], fix: str | None = None) -> InputError:
        """Build an :class:`InputError` located at ``path`` in this document."""
        line, col = self.where(path)
        return InputError(message, file=self.file, key=list(path), line=line, column=col, fix=fix)


class _Loader(yaml.SafeLoader):
    pass


#: Tags of plain mappings and lists (anything else, e.g. ``!!python/object``, is refused).
_PLAIN_TAGS = ("tag:yaml.org,2002:map", "tag:yaml.org,2002:seq")


class _TooBig(Exception):
    pass


def _walk(loader: _Loader, node: yaml.Node, path: KeyPath, marks: dict, file: str,
          budget: list[int]) -> Any:
    budget[0] -= 1
    if budget[0] < 0:
        raise _TooBig
    marks.setdefault(path, (node.start_mark.line + 1, node.start_mark.column + 1))
    if isinstance(node, yaml.MappingNode | yaml.SequenceNode) and node.tag not in _PLAIN_TAGS:
        raise InputError(f"the YAML tag {node.tag!r} is not allowed", file=file,
                         key=list(path), line=node.start_mark.line + 1,
                         column=node.start_mark.column + 1,
                         fix="remove the '!' tag; write plain lists and 'key: value' entries")
    if isinstance(node, yaml.MappingNode):
        # keys written here (not merged in with '<<: *anchor'): only these can clash
        own = {id(k) for k, _ in node.value if k.tag != "tag:yaml.org,2002:merge"}
        loader.flatten_mapping(node)
        out: dict[Any, Any] = {}
        written: set[Any] = set()
        for key_node, value_node in node.value:
            key = _scalar(loader, key_node, path, file)
            if isinstance(key, list | dict):
                raise InputError("a mapping key must be a plain word", file=file,
                                 key=list(path), line=key_node.start_mark.line + 1,
                                 column=key_node.start_mark.column + 1,
                                 fix="write 'name: value'")
            if id(key_node) in own:
                if key in written:
                    raise InputError(f"duplicate key {key!r}", file=file,
                                     key=list(path) + [key],
                                     line=key_node.start_mark.line + 1,
                                     column=key_node.start_mark.column + 1,
                                     fix="keep one of them; YAML would silently keep only "
                                     "the last")
                written.add(key)
                out.pop(key, None)  # a written key overrides a merged one (YAML merge)
            sub = path + (key if isinstance(key, int) else str(key),)
            marks[sub] = (key_node.start_mark.line + 1, key_node.start_mark.column + 1)
            out[key] = _walk(loader, value_node, sub, marks, file, budget)
        return out
    if isinstance(node, yaml.SequenceNode):
        return [_walk(loader, n, path + (i,), marks, file, budget)
                for i, n in enumerate(node.value)]
    return _scalar(loader, node, path, file)


#: Plain scalars YAML 1.1 reads as something other than the decimal number they look
#: like: octal (0100 = 64), hex/binary, base 60 (1:30 = 90).
_SURPRISE = re.compile(r"[-+]?(0[0-9_]+|0[oxb][0-9a-fA-F_]+|[0-9][0-9_]*(:[0-5]?[0-9])+"
                       r"(\.[0-9_]*)?)")
#: Longest number accepted in a file (digits); longer ones are not a board's values.
MAX_DIGITS = 40


def _scalar(loader: _Loader, node: yaml.Node, path: KeyPath, file: str) -> Any:
    """A scalar's value, refusing YAML 1.1 surprises and over-long numbers."""
    where = {"file": file, "key": list(path), "line": node.start_mark.line + 1,
             "column": node.start_mark.column + 1}
    text = node.value if isinstance(node, yaml.ScalarNode) else None
    plain = isinstance(node, yaml.ScalarNode) and node.style is None
    if plain and isinstance(text, str):
        if node.tag in ("tag:yaml.org,2002:int", "tag:yaml.org,2002:float") and \
                _SURPRISE.fullmatch(text):
            body = text.lstrip("+-")
            how = ("base 60" if ":" in body else "hex" if body[:2] in ("0x", "0X") else
                   "binary" if body[:2] == "0b" else "octal")
            meant = (text[0] * (text[0] in "+-") + body.lstrip("0_") if how == "octal"
                     else "the decimal number you mean")
            try:
                got = f" {loader.construct_object(node)!r}"
            except ValueError:
                got = ""
            raise InputError(f"{text} is read by YAML 1.1 as{got} ({how}), not the number "
                             "it looks like", fix=f"write {meant}, or quote it: '{text}'",
                             **where)
        if sum(c.isdigit() for c in text) > MAX_DIGITS and node.tag in (
                "tag:yaml.org,2002:int", "tag:yaml.org,2002:float"):
            raise InputError(f"a number of {sum(c.isdigit() for c in text)} digits is "
                             "too long", fix=f"write at most {MAX_DIGITS} digits (use an "
                             "exponent, e.g. 1e6, and a unit)", **where)
    try:
        return loader.construct_object(node, deep=True)
    except ValueError as exc:  # e.g. an integer beyond Python's digit limit
        raise InputError(f"cannot read this value ({' '.join(str(exc).split())[:80]})",
                         fix="write a plain number of a few digits with its unit",
                         **where) from None


def parse_yaml_text(text: str, file: str = "<text>") -> Document:
    """Parse YAML text into a :class:`Document` (see :func:`load_yaml`)."""
    marks: dict[KeyPath, tuple[int, int]] = {}
    loader = None
    try:
        loader = _Loader(text)
        node = loader.get_single_node()
        data = None if node is None else _walk(loader, node, (), marks, file, [MAX_NODES])
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark else None
        col = mark.column + 1 if mark else None
        problem = exc.problem or exc.context or "YAML syntax error"
        raise InputError(f"YAML syntax error: {problem}", file=file, line=line, column=col,
                         fix="check indentation, colons and quotes near that line") from None
    except yaml.reader.ReaderError as exc:  # a control character: not a text file
        line = text.count("\n", 0, exc.position) + 1
        col = exc.position - (text.rfind("\n", 0, exc.position) + 1) + 1
        raise InputError(f"character {exc.character!r} is not allowed in YAML", file=file,
                         line=line, column=col,
                         fix="remove it; save the file as plain UTF-8 text") from None
    except yaml.YAMLError as exc:
        msg = " ".join(str(exc).split())
        raise InputError(f"YAML error: {msg}", file=file, fix="check the file's syntax") from None
    except (RecursionError, _TooBig):
        raise InputError("the YAML is nested too deeply, refers to itself or expands to "
                         "too much data through aliases (&name / *name)", file=file,
                         fix="write the values out plainly; a scenario or cost table needs "
                         "no aliases") from None
    finally:
        if loader is not None:
            loader.dispose()
    return Document(data=data, file=file, marks=marks)


def load_yaml(path: str | Path) -> Document:
    """Read a YAML file with a safe loader.

    Raises
    ------
    InputError
        The file is missing, unreadable, not UTF-8, not YAML, or has duplicate keys.
    """
    p = Path(path)
    try:
        if p.exists() and not p.is_dir() and not p.is_file():
            raise InputError("is not a regular file (a device, pipe or socket)", file=p,
                             fix="name a .yaml file")
        with p.open("rb") as fh:
            raw = fh.read(MAX_BYTES + 1)
    except FileNotFoundError:
        raise InputError("file not found", file=p, fix="check the path") from None
    except IsADirectoryError:
        raise InputError("is a folder, not a file", file=p, fix="name a .yaml file") from None
    except OSError as exc:
        raise InputError(f"cannot read file ({exc.strerror})", file=p,
                         fix="check the path and its permissions") from None
    if len(raw) > MAX_BYTES:
        raise InputError(f"file is larger than {MAX_BYTES // 1_000_000} MB; it is not a "
                         "scenario or cost table", file=p, fix="check the path")
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"not UTF-8 text (byte {exc.start})", file=p,
                         fix="save the file as UTF-8 YAML") from None
    if "\x00" in text:
        raise InputError("file contains NUL bytes; it is not a YAML text file", file=p,
                         fix="save the file as UTF-8 YAML")
    return parse_yaml_text(text, str(p))
