"""Turn pydantic validation errors into one-line :class:`InputError` messages that name
the file, line, key path, the bad value and the fix ("did you mean ...?")."""

from __future__ import annotations

import re
from collections.abc import Sequence
from typing import Any, TypeVar

from pydantic import BaseModel, ValidationError

from stackopt.errors import InputError, StackoptError, did_you_mean
from stackopt.inputs.yamlio import Document

M = TypeVar("M", bound=BaseModel)

__all__ = ["validate_model"]

#: pydantic wording -> the words of a YAML file
_PLAIN = ((r"Input should be a valid tuple", "expected a list ([a, b] or '- ' lines)"),
          (r"Input should be a valid dictionary( or instance of \w+)?",
           "expected a section of 'key: value' entries"))


def _fields_at(model: type[BaseModel], loc: Sequence[str | int]) -> list[str]:
    """Field names allowed at ``loc`` (best effort, for 'did you mean')."""
    cls: Any = model
    for part in loc:
        if isinstance(part, int) or cls is None:
            continue
        info = getattr(cls, "model_fields", {}).get(part)
        if info is None:
            return []
        ann = info.annotation
        cls = None
        for cand in (ann, *getattr(ann, "__args__", ())):
            for sub in (cand, *getattr(cand, "__args__", ())):
                if isinstance(sub, type) and issubclass(sub, BaseModel):
                    cls = sub
                    break
            if cls is not None:
                break
    return list(getattr(cls, "model_fields", {}).keys()) if cls is not None else []


def _clean_loc(loc: Sequence[Any]) -> list[str | int]:
    # pydantic adds tags for unions / function validators; keep real keys only
    out: list[str | int] = []
    for p in loc:
        if isinstance(p, int):
            out.append(p)
        elif isinstance(p, str) and not (p.startswith("function-") or "[" in p):
            out.append(p)
    return out


def validate_model(model: type[M], doc: Document, prefix: Sequence[str | int] = (),
                   data: Any = None) -> M:
    """Validate ``data`` (default ``doc.data``) as ``model``; raise a located InputError."""
    payload = doc.data if data is None else data
    if payload is None:
        raise doc.error("the file is empty", list(prefix), fix="see the documented example")
    if not isinstance(payload, dict):
        raise doc.error(f"expected a mapping of keys, got {type(payload).__name__}",
                        list(prefix), fix="see the documented example")
    try:
        return model.model_validate(payload)
    except ValidationError as exc:
        errs = exc.errors(include_url=False)
        # a misspelt required key shows as 'missing' *and* 'unknown': name the typo
        err = next((e for e in errs if e["type"] == "extra_forbidden"), errs[0])
        loc = list(prefix) + _clean_loc(err["loc"])
        kind = err["type"]
        value = err.get("input")
        if kind == "extra_forbidden":
            parent = _clean_loc(err["loc"])[:-1]
            name = str(loc[-1])
            allowed = _fields_at(model, parent)
            hint = did_you_mean(name, allowed)
            raise doc.error(f"unknown key '{name}'{hint}", loc,
                            fix=f"allowed keys here: {', '.join(allowed)}" if allowed
                            else "remove it") from None
        if kind == "missing":
            raise doc.error("required key is missing", loc,
                            fix=f"add '{loc[-1]}' (see the documented example)") from None
        ctx_err = (err.get("ctx") or {}).get("error")
        if isinstance(ctx_err, StackoptError) and isinstance(ctx_err, InputError):
            msg, fix = ctx_err.message, ctx_err.fix
            loc += ctx_err.key_parts  # a cross-field rule names the key below its model
        else:
            msg = err["msg"].removeprefix("Value error, ")
            fix = None
            for old, new in _PLAIN:  # pydantic's words for YAML's
                msg = re.sub(old, new, msg)
        if kind == "literal_error" and isinstance(value, str):
            choices = re.findall(r"'([^']*)'", str((err.get("ctx") or {}).get("expected", "")))
            hint = did_you_mean(value, choices)
        else:
            hint = ""
        got = ""
        if not isinstance(value, dict):  # a whole section: its rule already says what
            shown = repr(value) if not isinstance(value, list | tuple) else "a list"
            got = f" (got {shown[:57] + '...' if len(shown) > 60 else shown})"
        raise doc.error(f"{msg}{got}{hint}", loc, fix=fix) from None
