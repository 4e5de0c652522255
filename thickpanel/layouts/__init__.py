"""Layout generators: functions returning a :class:`~thickpanel.pattern.CreasePattern`.

Each generator module registers its public generators here with :func:`register_layout`.
:func:`available_layouts` lists the names; :func:`make_layout` builds one by name.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from typing import Any

from ..errors import PatternError
from ..pattern import CreasePattern

__all__ = ["register_layout", "available_layouts", "get_layout", "make_layout"]

LayoutFn = Callable[..., CreasePattern]
_REGISTRY: dict[str, LayoutFn] = {}
# modules that register layouts when imported; imported lazily on first registry use
_MODULES = ("classic", "spiral", "cylinder")


def register_layout(name: str, fn: LayoutFn) -> LayoutFn:
    """Register ``fn`` under ``name``; a duplicate name is refused."""
    if name in _REGISTRY and _REGISTRY[name] is not fn:
        raise ValueError(f"layout name {name!r} is already registered")
    _REGISTRY[name] = fn
    return fn


def _load() -> None:
    for mod in _MODULES:
        try:
            importlib.import_module(f"{__name__}.{mod}")
        except ModuleNotFoundError as exc:  # a module not written yet
            if exc.name != f"{__name__}.{mod}":
                raise


def available_layouts() -> list[str]:
    """Sorted names of every registered layout."""
    _load()
    return sorted(_REGISTRY)


def get_layout(name: str) -> LayoutFn:
    """The generator registered as ``name``; unknown names list the valid ones."""
    _load()
    try:
        return _REGISTRY[name]
    except KeyError:
        raise PatternError(
            f"unknown layout {name!r}; available layouts: {', '.join(sorted(_REGISTRY))}"
        ) from None


def make_layout(name: str, /, **params: Any) -> CreasePattern:
    """Build the layout ``name`` with keyword parameters (mm and degrees as each documents)."""
    return get_layout(name)(**params)
