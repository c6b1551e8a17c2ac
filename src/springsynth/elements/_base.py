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

__all__ = ["Param", "ElementKind", "Params", "TOLERANCE_CLASSES", "FATIGUE_MODES", "FatigueLoad", "missing_declarations",
           "DENSITY_TO_G_PER_MM3", "RESOLUTIONS", "STEP_MM"]

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

#: what a parameter is made to when a study searches makeable designs (``[search] stock = "standard"``);
#: ``Param.resolution`` gives each parameter's class (declared by ``Param.step``, else from its unit)
RESOLUTIONS = {
    "stock": "a size from the stock list of the element's material (``Param.stock``: wire or strip)",
    "length": "a length to 0.1 mm (a drawing's practical resolution)",
    "fine": "a machined feature to 0.01 mm (wire EDM, grinding)",
    "offset": "a displacement set at assembly (a gap, a preload, a formed rise) to the study's offset_step_mm",
    "coils": "a quarter turn (active coils)",
    "free": "not rounded (a choice, a whole number, a force, a ratio)",
}
#: step of each fixed resolution class, mm (coils: turns); ``offset`` reads the study's offset_step_mm
STEP_MM = {"length": 0.1, "fine": 0.01, "coils": 0.25}

#: what a kind's fatigue check reads (``ElementKind.fatigue``); the criterion of each is in
#: :mod:`springsynth.checks.fatigue` (``CRITERIA``)
FATIGUE_MODES = {
    "normal": "bending or axial stress of a strip, plate or bar",
    "wire_bending": "bending stress of a round spring wire",
    "torsion": "torsional shear of coil-spring wire",
    "shear": "a shear stress (below a contact)",
    "elastomer": "the nominal strain of an elastomer",
}
#: stroke points over a duty cycle for a kind whose stress is not monotonic in the stroke
FATIGUE_GRID = 33


@dataclass(frozen=True)
class FatigueLoad:
    """One place of an element where fatigue is checked, over one duty cycle; arrays shape (n,).

    Attributes
    ----------
    mode : str
        A key of :data:`FATIGUE_MODES`: which criterion judges it.
    low, high : ndarray, shape (n,)
        The governing stress at the cycle's extremes, MPa (``elastomer``: nominal strain, -).
    ultimate : ndarray, shape (n,)
        Tensile strength of the material as made, MPa (wire: S_ut(d)).
    per_duty : ndarray, shape (n,)
        Stress cycles of this range per duty cycle (2 where the stress peaks inside the stroke,
        counted conservatively as two full cycles).
    """

    mode: str
    low: np.ndarray
    high: np.ndarray
    ultimate: np.ndarray
    per_duty: np.ndarray


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
    stock : str
        ``"wire"`` or ``"strip"``: a wire diameter or strip (sheet, plate) thickness bought in stock
        sizes; with ``stock = "standard"`` the search takes it from the material's stock list.
    step : str
        Its resolution class (a key of :data:`RESOLUTIONS`) where the default does not fit; by
        default ``stock`` for a stock size, ``length`` for a parameter in mm, ``coils`` for a
        number of coils, ``free`` otherwise.
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
    stock: str = ""
    step: str = ""

    @property
    def resolution(self) -> str:
        """Its resolution class, a key of :data:`RESOLUTIONS`."""
        if self.step:
            return self.step
        if self.stock:
            return "stock"
        if self.choices or self.integer:
            return "free"
        if self.unit == "mm":
            return "length"
        return "coils" if self.tolerance == "coils" else "free"

    @property
    def made_to(self) -> str:
        """Its resolution in words (``strip stock``, ``0.1 mm``, ``a quarter turn``, ``offset grid``, ``free``)."""
        r = self.resolution
        if r == "stock":
            return f"{self.stock} stock"
        if r == "offset":
            return "offset grid"
        if r == "coils":
            return "a quarter turn"
        return f"{STEP_MM[r]:g} mm" if r in STEP_MM else "free"

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
    monotonic_force : bool  force never falls as u grows (False for a snap-through kind with a
                            falling branch); a chain of links in series holds at most one link
                            whose force falls, and follows its loading path through it
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
    fatigue : str           what the fatigue check under a duty reads, a key of :data:`FATIGUE_MODES`
                            (default ``normal``; override :meth:`fatigue_loads` for several places)
    """

    name: str = ""
    title: str = ""
    params: tuple[Param, ...] = ()
    forms: tuple[str, ...] = ("strip",)
    validity: str = ""
    sources: tuple[str, ...] = ()
    stroke_note: str = ""
    monotonic_stress: bool = True
    monotonic_force: bool = True
    stress_note: str = ""
    glyph: str = ""
    verification: str = ""
    verify_quick: bool = True
    design_rules: frozenset[str] = frozenset()
    fatigue: str = "normal"
    extra: dict = field(default_factory=dict, compare=False, repr=False)

    # ---- kernels (override) ---------------------------------------------------------
    def force(self, p: Params, mat: MaterialArrays, u: np.ndarray) -> np.ndarray:
        """Force of one copy, N, shape (n, m), for strokes ``u`` >= 0 of shape (n, m).

        Must return a new, writable float array (the assembly scales it in place), point by
        point: the force at a stroke depends on that stroke alone, not on the others of the
        row (the assembly reads a row's force at rest from one of its points at rest).
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

    def stroke_reach(self, p: Params) -> np.ndarray:
        """Largest own stroke of the declared valid range, mm, shape (n,) (inf: no bound on the stroke).

        A chain tabulates each link's curve up to this stroke (or the chain's stroke, if
        smaller), so that a link whose valid range is short against the chain's stroke is
        still finely resolved; beyond it the link's curve is continued at its last slope and
        the link's validity margins flag the design.
        """
        return np.full(np.shape(next(iter(p.values())))[0], np.inf)

    def stroke_marks(self, p: Params) -> np.ndarray:
        """Own strokes a table of the force curve should include, mm, shape (n, k); NaN where a design has none.

        The corners of the curve (a bifurcation, the end of a ramp) and points where it bends
        sharply; a chain's table of the link (:mod:`springsynth.assembly.chains`) puts points
        there, so that its piecewise linear curve follows the kernel closely.
        """
        return np.empty((np.shape(next(iter(p.values())))[0], 0))

    # ---- fatigue (optional override) ------------------------------------------------
    def fatigue_ultimate(self, p: Params, mat: MaterialArrays) -> np.ndarray:
        """Tensile strength of the material as made, MPa, shape (n,) (default: its ``uts``)."""
        return mat.uts

    def fatigue_loads(self, p: Params, mat: MaterialArrays, u_lo: np.ndarray,
                      u_hi: np.ndarray) -> dict[str, FatigueLoad]:
        """The stress range of one duty cycle between the element strokes ``u_lo`` and ``u_hi`` (n,).

        Returns one :class:`FatigueLoad` per checked place, keyed by a short name (``""``:
        the governing stress of :meth:`stress`). With a monotonic stress the extremes are
        the stresses at the two strokes; otherwise the stroke is sampled and a stress that
        peaks (or dips) inside it counts as two cycles per duty cycle.
        """
        if self.monotonic_stress:
            s = self.stress(p, mat, np.stack([u_lo, u_hi], axis=1))
            per = np.ones(u_lo.shape)
        else:
            t = np.linspace(0.0, 1.0, FATIGUE_GRID)[None, :]
            s = self.stress(p, mat, u_lo[:, None] + (u_hi - u_lo)[:, None] * t)
            ends_lo, ends_hi = np.minimum(s[:, 0], s[:, -1]), np.maximum(s[:, 0], s[:, -1])
            tol = 1e-9 * np.maximum(np.abs(ends_hi), 1e-300)
            inside = (s.max(axis=1) > ends_hi + tol) | (s.min(axis=1) < ends_lo - tol)
            per = np.where(inside, 2.0, 1.0)
        return {"": FatigueLoad(self.fatigue, s.min(axis=1), s.max(axis=1), self.fatigue_ultimate(p, mat), per)}

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
    out += [f"{q.name}.stock (wire or strip)" for q in kind.params if q.stock not in ("", "wire", "strip")]
    out += [f"{q.name}.step (one of {', '.join(RESOLUTIONS)})" for q in kind.params
            if q.step and q.step not in RESOLUTIONS]
    if kind.fatigue not in FATIGUE_MODES:
        out.append(f"fatigue (one of {', '.join(FATIGUE_MODES)})")
    return out
