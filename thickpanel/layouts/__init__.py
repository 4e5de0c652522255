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

__all__ = [
    "register_layout",
    "register_panel_estimate",
    "available_layouts",
    "get_layout",
    "make_layout",
    "panel_estimate",
    "check_layout_size",
]

LayoutFn = Callable[..., CreasePattern]
_REGISTRY: dict[str, LayoutFn] = {}
EstimateFn = Callable[..., int]
_ESTIMATES: dict[str, EstimateFn] = {}
# modules that register layouts when imported; imported lazily on first registry use
_MODULES = ("classic", "spiral", "cylinder", "hub_wrap")


def register_layout(name: str, fn: LayoutFn) -> LayoutFn:
    """Register ``fn`` under ``name``; a duplicate name is refused."""
    if name in _REGISTRY and _REGISTRY[name] is not fn:
        raise ValueError(f"layout name {name!r} is already registered")
    _REGISTRY[name] = fn
    return fn


def register_panel_estimate(name: str, fn: EstimateFn) -> EstimateFn:
    """Register a cheap panel-count estimate for layout ``name`` (same keywords as the generator).

    The estimate is checked against :data:`thickpanel.limits.MAX_PANELS` before the generator runs,
    so a size the machine cannot compute is refused at once instead of running out of memory.
    """
    _ESTIMATES[name] = fn
    return fn


def panel_estimate(name: str, params: dict[str, Any]) -> int | None:
    """Estimated panel count of layout ``name`` with ``params`` (None when no estimate is registered
    or the parameters are not numbers the estimate can use)."""
    _load()
    fn = _ESTIMATES.get(name)
    if fn is None:
        return None
    try:
        return int(fn(**params))
    except (TypeError, ValueError, OverflowError):  # the generator reports bad parameters itself
        return None


def check_layout_size(name: str, params: dict[str, Any]) -> None:
    """Raise PatternError when layout ``name`` with ``params`` would exceed the panel limit."""
    from ..limits import MAX_PANELS

    n = panel_estimate(name, params)
    if n is not None and n > MAX_PANELS:
        raise PatternError(
            f"layout {name!r} with these parameters would have about {n:,} panels; the limit is "
            f"{MAX_PANELS:,} panels (reduce the counts, e.g. {', '.join(_count_keys(params)) or 'the sizes'})"
        )


def _count_keys(params: dict[str, Any]) -> list[str]:
    return [f"{k} = {v}" for k, v in params.items() if isinstance(v, int) and not isinstance(v, bool) and v > 1]


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
    """Build the layout ``name`` with keyword parameters (mm and degrees as each documents).

    Sizes beyond :data:`thickpanel.limits.MAX_PANELS` panels are refused before generating.
    """
    fn = get_layout(name)
    check_layout_size(name, params)
    return fn(**params)
