"""Checks of option values given in a design file against the callable that takes them.

Layout parameters, thickness-method options and hinge options are passed as keywords to a
registered callable. Before any work, each value is checked against what that callable declares:

- the type of its default (a number where the default is a number, never ``true``/``false``;
  text where it is text; true/false where it is a bool), and finite numbers no larger in magnitude
  than :data:`thickpanel.limits.MAX_COORDINATE_MM`;
- the choices its numpy-style docstring lists as ``name : {"a", "b"}``.

A refusal is a message naming the key path, the value and what is allowed, so the loader can raise
``DesignFileError`` (exit 2) instead of the stage failing later (exit 1).
"""

from __future__ import annotations

import inspect
import math
import re
from collections.abc import Callable, Mapping
from typing import Any

from .limits import MAX_COORDINATE_MM

__all__ = ["option_problems", "docstring_choices"]

_CHOICES = re.compile(r"^\s*(\w+)\s*:\s*\{([^}]*)\}", re.MULTILINE)
_QUOTED = re.compile(r"""["']([^"']*)["']""")


def docstring_choices(fn: Callable[..., Any]) -> dict[str, tuple[str, ...]]:
    """``{parameter: allowed strings}`` from lines ``name : {"a", "b"}`` of ``fn``'s docstring."""
    doc = inspect.getdoc(fn) or ""
    out: dict[str, tuple[str, ...]] = {}
    for m in _CHOICES.finditer(doc):
        vals = tuple(_QUOTED.findall(m.group(2)))
        if vals:
            out[m.group(1)] = vals
    return out


def _default_kind(default: Any) -> str | None:
    if isinstance(default, bool):
        return "bool"
    if isinstance(default, int | float):
        return "number"
    if isinstance(default, str):
        return "text"
    return None


def _annotation_kind(ann: Any) -> str | None:
    """``bool``/``number``/``text`` for simple annotations (``float | None`` is a number), else None."""
    if ann is inspect.Parameter.empty:
        return None
    text = ann if isinstance(ann, str) else getattr(ann, "__name__", str(ann))
    parts = {t.strip() for t in text.replace("Optional[", "").replace("]", "").split("|")} - {"None"}
    if parts == {"bool"}:
        return "bool"
    if parts and parts <= {"float", "int"}:
        return "number"
    if parts == {"str"}:
        return "text"
    return None


def option_problems(fn: Callable[..., Any], opts: Mapping[str, Any], where: str) -> list[str]:
    """Messages for option values that ``fn`` cannot take (empty when all are fine).

    Parameters
    ----------
    fn : callable
        The layout generator, thickness method or hinge-style factory.
    opts : mapping
        Option name -> value as read from the design file.
    where : str
        Key-path prefix for messages, e.g. ``"[method] options."``.
    """
    try:
        params = inspect.signature(fn).parameters
    except (TypeError, ValueError):
        return []
    choices = docstring_choices(fn)
    out: list[str] = []
    for name, value in opts.items():
        p = params.get(name)
        path = f"{where}{name}"
        if isinstance(value, int | float) and not isinstance(value, bool):
            try:
                f = float(value)
            except OverflowError:
                f = math.inf
            if not math.isfinite(f) or abs(f) > MAX_COORDINATE_MM:
                out.append(f"{path} = {value!r} must be a finite number no larger than {MAX_COORDINATE_MM:g}")
                continue
        if p is None:
            continue
        kind = _annotation_kind(p.annotation)
        if kind is None and p.default is not inspect.Parameter.empty:
            kind = _default_kind(p.default)
        if kind == "bool" and not isinstance(value, bool):
            out.append(f"{path} = {value!r} must be true or false")
        elif kind == "number" and (isinstance(value, bool) or not isinstance(value, int | float)):
            out.append(f"{path} = {value!r} must be a number")
        elif kind == "text" and not isinstance(value, str):
            out.append(f"{path} = {value!r} must be text (in double quotes)")
        if name in choices and isinstance(value, str) and value not in choices[name]:
            allowed = ", ".join(repr(c) for c in choices[name])
            out.append(f"{path} = {value!r} is not allowed; one of {allowed}")
    return out
