"""Registry of element kinds.

Every public module in this package (a name not starting with ``_``) that defines
``KIND`` is registered under ``KIND.name``. Adding a kind is adding one module.
"""

from __future__ import annotations

import importlib
import math
import pkgutil
from functools import lru_cache
from typing import Mapping

from springsynth.elements._base import (
    FATIGUE_MODES,
    TOLERANCE_CLASSES,
    ElementKind,
    FatigueLoad,
    Param,
    missing_declarations,
)
from springsynth.model.numbers import pct_text

__all__ = ["ElementKind", "Param", "TOLERANCE_CLASSES", "FATIGUE_MODES", "FatigueLoad", "missing_declarations", "registry",
           "get_kind", "kind_names", "design_rule_names", "split_margins", "margin_text"]


@lru_cache(maxsize=1)
def registry() -> dict[str, ElementKind]:
    """All registered kinds, keyed by name, in a stable (alphabetical) order."""
    found: dict[str, ElementKind] = {}
    for info in sorted(pkgutil.iter_modules(__path__), key=lambda i: i.name):
        if info.name.startswith("_"):
            continue
        mod = importlib.import_module(f"{__name__}.{info.name}")
        kind = getattr(mod, "KIND", None)
        if isinstance(kind, ElementKind):
            if kind.name in found:
                raise RuntimeError(f"element kind {kind.name!r} registered twice")
            missing = missing_declarations(kind)
            if missing:
                raise RuntimeError(f"element kind {info.name} does not declare {', '.join(missing)} "
                                   "(see DEVELOPERS.md, 'Add an element kind')")
            found[kind.name] = kind
    return found


def kind_names() -> tuple[str, ...]:
    return tuple(registry())


def get_kind(name: str) -> ElementKind:
    """The kind called ``name``; raises KeyError when unknown."""
    return registry()[name]


@lru_cache(maxsize=1)
def design_rule_names() -> frozenset[str]:
    """Names of validity margins that are rules of the trade in the kinds that declare them
    (``ElementKind.design_rules``); every other margin is a limit of a model."""
    return frozenset().union(*(k.design_rules for k in registry().values()))


def split_margins(margins: Mapping[str, float]) -> tuple[dict[str, float], dict[str, float]]:
    """``(model limits, design rules)``: named margins split by their category.

    Parameters
    ----------
    margins : mapping of str -> float
        Margins of one design (``<= 0`` inside), e.g. those beyond their bound.
    """
    rules = design_rule_names()
    return ({k: v for k, v in margins.items() if k not in rules}, {k: v for k, v in margins.items() if k in rules})


def margin_text(margins: Mapping[str, float]) -> str:
    """``buckling +12.0 %, spring_index +4.2 %``: margins beyond their bound in words, worst first
    (``model failed`` for a margin that is not a number)."""
    items = sorted(margins.items(), key=lambda kv: -kv[1] if math.isfinite(kv[1]) else -math.inf)
    return ", ".join(f"{k} +{pct_text(100 * v, decimals=1)}" if math.isfinite(v) else f"{k} (model failed)"
                     for k, v in items)
