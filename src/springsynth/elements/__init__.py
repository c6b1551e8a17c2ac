"""Registry of element kinds.

Every public module in this package (a name not starting with ``_``) that defines
``KIND`` is registered under ``KIND.name``. Adding a kind is adding one module.
"""

from __future__ import annotations

import importlib
import pkgutil
from functools import lru_cache

from springsynth.elements._base import TOLERANCE_CLASSES, ElementKind, Param, missing_declarations

__all__ = ["ElementKind", "Param", "TOLERANCE_CLASSES", "missing_declarations", "registry", "get_kind", "kind_names"]


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
