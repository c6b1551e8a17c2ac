"""A design as value objects: elements (a kind, a material, copies, a gap or preload) in parallel."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

from springsynth.elements import get_kind
from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.study import Duty

__all__ = ["Element", "Design", "MAX_COUNT"]

#: most identical copies of one element a design may ask for
MAX_COUNT = 1000
#: offsets smaller than this are left out of the readable topology summary, mm
_SHOWN_OFFSET_MM = 0.001




@dataclass(frozen=True)
class Element:
    """One element of a design: a kind, a material, ``count`` identical copies in parallel.

    ``params`` maps each of the kind's parameter names to a number (or, for a
    categorical parameter, one of its choices).
    """

    kind: str
    material: str
    count: int = 1
    offset_mm: float = 0.0
    params: Mapping[str, float | str] = field(default_factory=dict)

    def values(self) -> dict[str, float]:
        """Parameters as floats (categorical choices as their index)."""
        k = get_kind(self.kind)
        out = {}
        for q in k.params:
            v = self.params[q.name]
            out[q.name] = float(q.choices.index(v)) if q.choices else float(v)
        return out

    def summary(self) -> str:
        base = get_kind(self.kind).summary(self.values())
        s = f"{self.count}x {base} [{self.material}]"
        if self.offset_mm >= _SHOWN_OFFSET_MM:
            s += f" gap {self.offset_mm:.3g}"
        elif self.offset_mm <= -_SHOWN_OFFSET_MM:
            s += f" preload {-self.offset_mm:.3g}"
        return s


@dataclass(frozen=True)
class Design:
    """A mechanism: elements in parallel, with the materials they name resolved.

    ``duty``: the service it must survive (a design file's ``[duty]``), or None.
    """

    elements: tuple[Element, ...]
    materials: Mapping[str, Material]
    name: str = "design"
    duty: Duty | None = None

    def __post_init__(self):
        object.__setattr__(self, "elements", tuple(self.elements))
        if not self.elements:
            raise InputError("a design needs at least one [[element]]", where=self.name)
        for i, e in enumerate(self.elements):
            if e.material not in self.materials:
                raise InputError(f"material {e.material!r} is not resolved", where=f"{self.name} element {i + 1}")

    def topology(self) -> str:
        return " + ".join(e.summary() for e in self.elements)
