"""The element protocol: what every kind of spring or flexure provides.

A *kind* is one module in :mod:`springsynth.elements` that defines ``KIND``, an
instance of a subclass of :class:`ElementKind`. The registry finds it by itself.

Conventions for every kernel method
-----------------------------------
``p``     mapping of parameter name -> ndarray, shape (n,), physical units (mm, N, -).
          Categorical parameters (``Param.choices``) arrive as float indices 0., 1., ...
``mat``   :class:`~springsynth.model.materials.MaterialArrays`, fields of shape (n,).
``u``     ndarray, shape (n, m): the element's own stroke, u >= 0 (the assembly has
          already subtracted the gap or added the preload and clipped at 0).
``u_max`` ndarray, shape (n,): the largest stroke the element sees in service.

Returned forces are in N (positive resists the stroke), stresses in MPa, sizes in
mm and masses in g. No Python loop over the population axis, no I/O.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from springsynth.model.materials import MaterialArrays

__all__ = ["Param", "ElementKind", "Params", "TOLERANCE_CLASSES", "missing_declarations", "DENSITY_TO_G_PER_MM3"]

Params = Mapping[str, np.ndarray]

#: manufacturing tolerance classes a parameter may declare (the tolerance analysis gives each its process)
TOLERANCE_CLASSES = {
    "linear": "a linear dimension, made by the material's process (machined metal, moulded polymer or rubber)",
    "width": "a strip width: slit edge for metal strip, else as linear",
    "strip": "a strip or plate thickness: rolled metal strip, moulded polymer or rubber",
    "wire": "a drawn wire diameter",
    "coiling": "a coil spring's mean diameter or free length, set by coiling",
    "coils": "a coil spring's number of active coils (position of the coil ends)",
    "tension": "a coil spring's initial tension",
    "set_radius": "a prestressed strip's natural radius, set by forming",
    "none": "not perturbed (a choice, or a quantity the process does not scatter)",
}


@dataclass(frozen=True)
class Param:
    """One dimension of an element kind.

    Attributes
    ----------
    name : str
        Name with its unit suffix, as written in design files (``length_mm``).
    unit : str
        ``mm``, ``N`` or ``-``.
    lo, hi : float
        Bounds accepted in a design and searched over.
    log : bool
        Search on a log scale (the range spans a decade or more).
    integer : bool
        Whole numbers only.
    choices : tuple of str
        Categorical parameter: the design file gives one of these strings; kernels
        receive its index as a float.
    thickness : bool
        A section thickness or wire diameter: subject to ``limits.min_thickness_mm``.
    doc : str
        One line for the catalogue.
    tolerance : str
        Its manufacturing tolerance class, a key of :data:`TOLERANCE_CLASSES` (the tolerance
        analysis maps the class and the material to a process and its tolerance).
    """

    name: str
    unit: str
    lo: float
    hi: float
    log: bool = False
    integer: bool = False
    choices: tuple[str, ...] = ()
    thickness: bool = False
    doc: str = ""
    tolerance: str = ""

    def __post_init__(self):
        if self.choices:
            object.__setattr__(self, "lo", 0.0)
            object.__setattr__(self, "hi", float(len(self.choices) - 1))
        if not self.lo <= self.hi:
            raise ValueError(f"{self.name}: lo > hi")


@dataclass(frozen=True)
class ElementKind:
    """Base of every element kind; subclasses override the kernel methods.

    Class attributes a kind sets
    ----------------------------
    name : str              the ``kind`` string in design files
    title : str             one line for people
    params : tuple[Param]   its dimensions, in a fixed order
    forms : tuple[str]      material forms it is made from (``wire``, ``strip``, ``bulk``, ``elastomer``)
    validity : str          the declared validity range, in words
    sources : tuple[str]    published sources of the model
    stroke_note : str       what the stroke ``u`` is for this kind
    monotonic_stress : bool governing stress rises monotonically with u, so its peak over
                            a stroke is reached at ``u_max`` (lets the search evaluate it once)
    glyph : str             its symbol in the schematics, a name the report draws (``GLYPHS`` in
                            :mod:`springsynth.report.schematic`)
    verification : str      its independent solver for ``springsynth verify``, a name of
                            :data:`springsynth.checks.verify.SOLVERS` (``"none"``: reported as not verified)
    verify_quick : bool     the solver takes well under a second, so the top designs of every run
                            are verified automatically (False: left to ``springsynth verify``)
    design_rules : frozenset[str]
                            names of :meth:`validity_margins` that are rules of the trade (a maker's
                            range, such as a coil spring's index 4..12), not limits of the model: the
                            forces stay exact beyond them, the part is only harder to make. Every
                            other margin marks where the model's accuracy ends. A margin name means
                            the same in every kind that uses it.
    """

    name: str = ""
    title: str = ""
    params: tuple[Param, ...] = ()
    forms: tuple[str, ...] = ("strip",)
    validity: str = ""
    sources: tuple[str, ...] = ()
    stroke_note: str = ""
    monotonic_stress: bool = True
    stress_note: str = ""
    glyph: str = ""
    verification: str = ""
    verify_quick: bool = True
    design_rules: frozenset[str] = frozenset()
    extra: dict = field(default_factory=dict, compare=False, repr=False)

    # ---- kernels (override) ---------------------------------------------------------
    def force(self, p: Params, mat: MaterialArrays, u: np.ndarray) -> np.ndarray:
        """Force of one copy, N, shape (n, m), for strokes ``u`` >= 0 of shape (n, m).

        Must return a new, writable array (the assembly scales it in place).
        """
        raise NotImplementedError

    def stress(self, p: Params, mat: MaterialArrays, u: np.ndarray) -> np.ndarray:
        """Governing stress of one copy, MPa, shape (n, m) (compared with :meth:`allowable`)."""
        raise NotImplementedError

    def allowable(self, p: Params, mat: MaterialArrays) -> np.ndarray:
        """Allowable value of the governing stress, MPa, shape (n,)."""
        return mat.yield_

    def validity_margins(self, p: Params, mat: MaterialArrays, u_max: np.ndarray) -> dict[str, np.ndarray]:
        """Normalised margins, each shape (n,), <= 0 inside the model's valid range.

        Write each as ``demand / bound - 1`` (or ``bound / demand - 1`` for a lower
        bound) so that 0.1 means "10 % beyond the bound". Names are short snake_case
        phrases that a designer can read (``spring_index``, ``solid_height``). Name the
        margins that are rules of the trade rather than model limits in :attr:`design_rules`.
        """
        return {}

    def box(self, p: Params, u_max: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Bounding box of one copy over its stroke, mm, each shape (n,).

        Returns ``(along, across_1, across_2)``: the extent along the stroke axis
        (including the space swept up to ``u_max``) and the two extents across it.
        """
        raise NotImplementedError

    def mass(self, p: Params, mat: MaterialArrays, u_max: np.ndarray) -> np.ndarray:
        """Mass of one copy, g, shape (n,) (``u_max`` for kinds whose material in use grows with the stroke)."""
        raise NotImplementedError

    def extra_outputs(self, p: Params, mat: MaterialArrays, u: np.ndarray) -> dict[str, np.ndarray]:
        """Further kind-specific results along the stroke, each shape (n, m) (default: none).

        Names carry their unit suffix (``parasitic_mm``); ``springsynth evaluate`` shows
        every one a kind returns. Values are per copy, on the element's own stroke ``u``.
        """
        return {}

    # ---- search coordinates (optional override) ------------------------------------
    @property
    def search_params(self) -> tuple[Param, ...]:
        """Coordinates the genetic search moves in (default: the parameters themselves).

        A kind whose valid designs fill only a thin slice of its parameter box (a coil
        spring must keep its index D/d within 4..12) may search in coordinates that
        follow the design rules instead, mapped back by :meth:`from_search`.
        """
        return self.params

    def from_search(self, q: Params) -> dict[str, np.ndarray]:
        """Parameters from search coordinates ``q`` (names of :attr:`search_params`), each (n,)."""
        return dict(q)

    def to_search(self, p: Params) -> dict[str, np.ndarray]:
        """Inverse of :meth:`from_search`."""
        return dict(p)

    # ---- helpers --------------------------------------------------------------------
    def peak_stress_ratio(self, p: Params, mat: MaterialArrays, u: np.ndarray) -> np.ndarray:
        """Largest stress / allowable over the strokes ``u`` (n, m), shape (n,)."""
        s = self.stress(p, mat, u)
        return np.max(s, axis=1) / self.allowable(p, mat)

    def param(self, name: str) -> Param:
        for q in self.params:
            if q.name == name:
                return q
        raise KeyError(name)

    @property
    def param_names(self) -> tuple[str, ...]:
        return tuple(q.name for q in self.params)

    def summary(self, values: Mapping[str, float]) -> str:
        """Short readable description of one element, e.g. ``blade_guided L=24 b=6 t=0.25``."""
        parts = []
        for q in self.params:
            v = values[q.name]
            if q.choices:
                parts.append(q.choices[int(round(v))])
            else:
                sym = _SYMBOLS.get(q.name, q.name)
                parts.append(f"{sym}={int(round(v))}" if q.integer else f"{sym}={v:.3g}")
        return f"{self.name} " + " ".join(parts)


#: short symbols for the topology summary (unknown names are shown in full)
_SYMBOLS = {
    "length_mm": "L", "width_mm": "b", "thickness_mm": "t", "rise_mm": "h", "wire_diameter_mm": "d",
    "mean_diameter_mm": "D", "active_coils": "Na", "free_length_mm": "L0", "initial_tension_N": "Fi",
    "natural_radius_mm": "Rn", "radius_mm": "R", "notch_radius_mm": "R",
}


#: kg/m^3 * mm^3 -> g
DENSITY_TO_G_PER_MM3 = 1e-6


def missing_declarations(kind: ElementKind) -> list[str]:
    """What ``kind`` has not declared of what every kind must (empty when complete)."""
    out = [a for a in ("name", "title", "glyph", "verification", "validity") if not getattr(kind, a)]
    if not kind.sources:
        out.append("sources")
    out += [f"{q.name}.tolerance" for q in kind.params if q.tolerance not in TOLERANCE_CLASSES]
    return out
