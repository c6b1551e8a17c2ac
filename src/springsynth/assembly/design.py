"""A design as value objects: branches in parallel, each one element or a chain of elements in series.

A mechanism is a set of *branches* acting in parallel on one stroke. A branch is
either one :class:`Element` (``count`` identical copies in parallel, with a gap or
preload) or a :class:`Chain`: links in series (the same force through each,
deflections add), each link an :class:`Element` with its own count, the chain as a
whole with a count and a gap or preload. The *parts* of a design are its elements in
slot order, chain links included (:attr:`Design.parts`, :func:`iter_elements`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterator, Mapping, Union

from springsynth.elements import get_kind
from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.study import Duty

__all__ = ["Element", "Chain", "Branch", "Design", "MAX_COUNT", "iter_elements"]

#: most identical copies of one element a design may ask for
MAX_COUNT = 1000
#: offsets smaller than this are left out of the readable topology summary, mm
_SHOWN_OFFSET_MM = 0.001


def _offset_words(offset_mm: float) -> str:
    if offset_mm >= _SHOWN_OFFSET_MM:
        return f" gap {offset_mm:.3g}"
    if offset_mm <= -_SHOWN_OFFSET_MM:
        return f" preload {-offset_mm:.3g}"
    return ""


@dataclass(frozen=True)
class Element:
    """One element of a design: a kind, a material, ``count`` identical copies in parallel.

    ``params`` maps each of the kind's parameter names to a number (or, for a
    categorical parameter, one of its choices). As a link of a :class:`Chain` its
    ``offset_mm`` is 0 (the chain carries the gap or preload).
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
        return f"{self.count}x {base} [{self.material}]" + _offset_words(self.offset_mm)


@dataclass(frozen=True)
class Chain:
    """Links in series: the same force through each, their deflections add.

    Attributes
    ----------
    links : tuple of Element
        At least two, in order along the stroke; each link's ``count`` copies act in
        parallel inside the link; a link has no offset of its own.
    count : int
        Identical copies of the whole chain in parallel.
    offset_mm : float
        Gap (> 0) or preload (< 0) of the chain as a whole, mm.

    Notes
    -----
    At most one link may be of a kind whose force falls with stroke (an arch,
    ``ElementKind.monotonic_force = False``): the loading path through one falling link
    is a single curve; two would make it branch (see :mod:`springsynth.assembly.chains`).
    """

    links: tuple[Element, ...]
    count: int = 1
    offset_mm: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "links", tuple(self.links))
        if len(self.links) < 2:
            raise InputError(f"a chain needs at least 2 links, got {len(self.links)}; "
                             "write a single element as [[element]]", where="chain")
        for i, e in enumerate(self.links):
            if e.offset_mm != 0.0:
                raise InputError(f"link {i + 1} has offset_mm {e.offset_mm!r}; chain links have no offset of "
                                 "their own, give the chain's offset_mm", where="chain")
        falling = [e.kind for e in self.links if not get_kind(e.kind).monotonic_force]
        if len(falling) > 1:
            raise InputError(f"a chain may hold at most one link whose force falls with stroke, got "
                             f"{len(falling)} ({', '.join(falling)}); put the others in their own branches",
                             where="chain")

    def summary(self) -> str:
        inner = " > ".join(e.summary() for e in self.links)
        return f"{self.count}x chain({inner})" + _offset_words(self.offset_mm)


Branch = Union[Element, Chain]


@dataclass(frozen=True)
class Design:
    """A mechanism: branches in parallel (elements or chains), with the materials they name resolved.

    The branches are kept in the order a design file lists them: the single elements
    first, then the chains (each group in the order given), so that a design, its file
    and its slots always number their parts alike.

    Attributes
    ----------
    branches : tuple of Element or Chain
    materials : mapping of str to Material
    name : str
    duty : Duty or None
        The service it must survive (a design file's ``[duty]``), or None.
    """

    branches: tuple[Branch, ...]
    materials: Mapping[str, Material]
    name: str = "design"
    duty: Duty | None = None
    duty: Duty | None = None

    def __post_init__(self):
        br = tuple(self.branches)
        object.__setattr__(self, "branches", tuple(b for b in br if not isinstance(b, Chain))
                           + tuple(b for b in br if isinstance(b, Chain)))
        if not self.branches:
            raise InputError("a design needs at least one [[element]] or [[chain]]", where=self.name)
        for i, (_, e) in enumerate(iter_elements(self)):
            if e.material not in self.materials:
                raise InputError(f"material {e.material!r} is not resolved", where=f"{self.name} element {i + 1}")

    @property
    def parts(self) -> tuple[Element, ...]:
        """Every element in slot order, chain links included."""
        return tuple(e for _, e in iter_elements(self))

    @property
    def elements(self) -> tuple[Element, ...]:
        """The same as :attr:`parts` (every element, chain links included, in slot order)."""
        return self.parts

    @property
    def layout(self) -> tuple[tuple[int, int], ...]:
        """For every part: (branch index, link index within its chain; 0 for a single element)."""
        out = []
        for b, br in enumerate(self.branches):
            out += [(b, k) for k in range(len(br.links))] if isinstance(br, Chain) else [(b, 0)]
        return tuple(out)

    @property
    def has_chain(self) -> bool:
        return any(isinstance(b, Chain) for b in self.branches)

    def topology(self) -> str:
        return " + ".join(b.summary() for b in self.branches)


def iter_elements(design: Design) -> Iterator[tuple[str, Element]]:
    """Every element of ``design`` with its label, in slot order: ``("e1", element), ("e2", ...)``.

    Chain links are included, each as an element of its own (its ``count`` is the copies
    inside the link; the chain's own count and offset are on the :class:`Chain`).
    """
    j = 0
    for br in design.branches:
        for e in (br.links if isinstance(br, Chain) else (br,)):
            j += 1
            yield f"e{j}", e
