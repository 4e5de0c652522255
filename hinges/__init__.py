"""Hinge styles: a registry of recipes that turn a hinge line into hinge features and parts.

Built-in styles: ``knuckle``, ``print-in-place``, ``flexure``, ``tape`` and ``none``. Third parties
add their own with :func:`register_hinge_style`; a style is any object with ``name`` and
``design(ctx) -> HingeDesign`` (see :mod:`hinges.base`).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

from thickpanel.errors import HingeError

from .base import HingeContext, HingeDesign, HingeStyle
from .flexure import FlexureHinge
from .knuckle import KnuckleHinge
from .none import NoHinge
from .print_in_place import PrintInPlaceHinge
from .tape import TapeHinge

__all__ = [
    "available_hinge_styles",
    "get_hinge_style",
    "register_hinge_style",
    "HingeStyle",
    "HingeContext",
    "HingeDesign",
]

_STYLES: dict[str, Callable[..., HingeStyle]] = {
    "knuckle": KnuckleHinge,
    "print-in-place": PrintInPlaceHinge,
    "flexure": FlexureHinge,
    "tape": TapeHinge,
    "none": NoHinge,
}


def register_hinge_style(name: str, factory: Callable[..., HingeStyle]) -> None:
    """Register ``factory(**options) -> HingeStyle`` under ``name`` (must be new)."""
    if name in _STYLES:
        raise HingeError(f"hinge style {name!r} is already registered")
    _STYLES[name] = factory


def available_hinge_styles() -> list[str]:
    """Sorted names of every registered hinge style."""
    return sorted(_STYLES)


def get_hinge_style(name: str, **options: Any) -> HingeStyle:
    """The style ``name`` configured with ``options``.

    Unknown names and unknown options raise :class:`HingeError` listing the valid ones.
    """
    try:
        factory = _STYLES[name]
    except KeyError:
        raise HingeError(
            f"unknown hinge style {name!r}; available: {', '.join(available_hinge_styles())}"
        ) from None
    if dataclasses.is_dataclass(factory):
        known = {f.name for f in dataclasses.fields(factory) if f.name != "name"}
        bad = sorted(set(options) - known)
        if bad:
            raise HingeError(
                f"hinge style {name!r} has no option {', '.join(bad)}; options: "
                f"{', '.join(sorted(known))}"
            )
    try:
        return factory(**options)
    except TypeError as exc:
        raise HingeError(f"hinge style {name!r}: bad options {options!r}: {exc}") from None
