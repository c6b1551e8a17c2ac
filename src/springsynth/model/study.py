"""What a study asks for, as validated value objects: the envelope, the limits and the search options.

The defaults of every optional key live here, once: ``DEFAULTS`` is read off the
dataclasses' own defaults.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import MISSING, dataclass, fields, replace
from pathlib import Path
from typing import TYPE_CHECKING, Any, Mapping

import numpy as np

from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.target import Target

if TYPE_CHECKING:   # the kinds are elements (the layer above); a study only holds them
    from springsynth.elements import ElementKind

__all__ = ["Envelope", "Limits", "SearchOptions", "StockSizes", "Duty", "Study", "DEFAULTS", "OBJECTIVES",
           "BASE_OBJECTIVES", "MAXIMISED", "STOCK_MODES", "curve_grid"]

#: objectives every search minimises, in this order (the first three columns of ``Scores.F``)
BASE_OBJECTIVES = ("curve_error_pct", "stress_ratio", "size_mm3")
#: every objective a study may name in ``[search] objectives`` (the base three, then optional ones)
OBJECTIVES = BASE_OBJECTIVES + ("fatigue_ratio", "in_spec_share")
#: objectives maximised (the search minimises ``1 - value`` in their place; tables report the value)
MAXIMISED = ("in_spec_share",)
#: values of ``[search] stock``: sizes from the stock lists and practical resolution, or every value free
STOCK_MODES = ("standard", "continuous")
#: most cycles a duty may ask for (no fatigue data reach further)
MAX_CYCLES = 1e12


@dataclass(frozen=True)
class Envelope:
    """Bounding box the whole mechanism must fit in, mm."""

    length_mm: float
    width_mm: float
    height_mm: float

    def __post_init__(self):
        for k in ("length_mm", "width_mm", "height_mm"):
            v = getattr(self, k)
            if not (isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) and v > 0):
                raise InputError(f"{k} must be a positive number of mm, got {v!r}", where="[envelope]")


@dataclass(frozen=True)
class Limits:
    stress_ratio: float = 0.8
    min_thickness_mm: float = 0.05
    max_mass_g: float = math.inf
    #: designs whose curve error exceeds this are not worth showing (a constraint)
    max_error_pct: float = 20.0
    #: largest fatigue ratio (1 / the Goodman factor of safety) under the study's [duty]
    fatigue_ratio: float = 1.0
    #: least share of parts inside the band under process tolerances (0: no such constraint)
    in_spec_share: float = 0.0
    #: the band where the target gives none: +- this % of the target force (Target.spec_band)
    band_pct: float = 10.0

    def __setstate__(self, state: dict) -> None:
        """Unpickle (a checkpoint), filling limits added since it was written with their defaults."""
        self.__dict__.update({**_defaults(type(self)), **state})


@dataclass(frozen=True)
class SearchOptions:
    """The ``[search]`` table. ``max_elements`` counts every element, chain links included;
    ``max_chain`` is the most links in one chain (1: elements in parallel only)."""

    kinds: tuple[ElementKind, ...]
    materials: tuple[Material, ...]
    max_elements: int = 3
    max_chain: int = 2
    max_count: int = 4
    population: int = 120
    generations: int = 80
    seed: int = 1
    polish: bool = True
    verify_top: int = 5
    robust: bool = False
    #: objectives minimised: the base three, then any of the optional ones (``OBJECTIVES``)
    objectives: tuple[str, ...] = BASE_OBJECTIVES
    #: "standard": wire diameters and strip thicknesses from the stock lists, lengths to 0.1 mm, coils to a
    #: quarter turn, gaps and preloads to ``offset_step_mm``; "continuous": every value free
    stock: str = "standard"
    #: grid of gaps, preloads and formed rises under ``stock = "standard"``, mm
    offset_step_mm: float = 0.05

    def __setstate__(self, state: dict) -> None:
        """Unpickle (a checkpoint), filling options added since it was written: a search from before
        chains existed searched elements in parallel only (``max_chain = 1``)."""
        state = dict(state)
        state.setdefault("max_chain", 1)
        state.setdefault("stock", "continuous")     # before stock sizes, every value was free
        for f in fields(self):
            if f.name not in state and f.default is not MISSING:
                state[f.name] = f.default
        self.__dict__.update(state)

    @property
    def links_per_chain(self) -> int:
        """Links a chain may have in this search: ``max_chain``, at most ``max_elements``."""
        return max(1, min(self.max_chain, self.max_elements))


@dataclass(frozen=True)
class StockSizes:
    """The ``[stock]`` table: a study's own stock sizes, mm, ascending (empty: the shipped lists).

    A list given replaces the shipped lists of its form for every material (what the designer's
    supplier holds)."""

    wire_mm: tuple[float, ...] = ()
    strip_mm: tuple[float, ...] = ()


@dataclass(frozen=True)
class Duty:
    """The service a part must survive: ``cycles`` strokes between two positions of the mechanism.

    Attributes
    ----------
    cycles : float
        Load cycles the part must survive (1 ... 1e12).
    stroke_min_mm, stroke_max_mm : float
        The mechanism's stroke x cycles between these positions, mm (0 <= min < max).
        ``stroke_max_mm = None``: not yet known (a design file read without its stroke);
        :meth:`resolved` sets it to the end of the stroke in service.
    shot_peened : bool
        Coil springs are shot-peened (selects Zimmerli's peened data).
    """

    cycles: float = 1e7
    stroke_min_mm: float = 0.0
    stroke_max_mm: float | None = None
    shot_peened: bool = False

    def __post_init__(self):
        def bad(v):
            return isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v)

        if bad(self.cycles) or not 1 <= self.cycles <= MAX_CYCLES:
            raise InputError(f"cycles must be a number from 1 to 1e12, got {self.cycles!r}",
                             where="[duty]")
        if bad(self.stroke_min_mm) or self.stroke_min_mm < 0:
            raise InputError(f"stroke_min_mm must be a number of mm >= 0, got {self.stroke_min_mm!r}",
                             where="[duty]")
        hi = self.stroke_max_mm
        if hi is not None and (bad(hi) or hi <= self.stroke_min_mm):
            raise InputError(f"stroke_max_mm must be a number of mm above stroke_min_mm = {self.stroke_min_mm:g}, "
                             f"got {hi!r}", where="[duty]")
        if not isinstance(self.shot_peened, bool):
            raise InputError(f"shot_peened must be true or false, got {self.shot_peened!r}", where="[duty]")

    def resolved(self, stroke_end_mm: float, *, where: str = "[duty]", end: str = "the stroke in service") -> "Duty":
        """This duty with ``stroke_max_mm`` set (default: ``stroke_end_mm``) and checked against it.

        Raises
        ------
        InputError
            When the duty reaches beyond ``stroke_end_mm`` (the models are checked only up to it)
            or starts at or after it.
        """
        hi = stroke_end_mm if self.stroke_max_mm is None else self.stroke_max_mm
        if hi > stroke_end_mm * (1 + 1e-12):
            raise InputError(f"stroke_max_mm = {hi:g} lies beyond {end} ({stroke_end_mm:g} mm); "
                             f"the models are checked only up to it: lower stroke_max_mm", where=where)
        if self.stroke_min_mm >= hi:
            raise InputError(f"stroke_min_mm = {self.stroke_min_mm:g} must lie below stroke_max_mm = {hi:g}",
                             where=where)
        return replace(self, stroke_max_mm=float(hi))


@dataclass(frozen=True)
class Study:
    """A validated study. ``raw`` is the parsed file (with overrides applied), kept for reruns."""

    name: str
    target: Target
    envelope: Envelope
    limits: Limits
    search: SearchOptions
    raw: Mapping[str, Any]
    path: Path | None = None
    target_path: Path | None = None
    #: the duty the designs must survive (its stroke resolved against the target), or None: static only
    duty: Duty | None = None
    #: the study's own stock sizes (``[stock]``)
    stock: StockSizes = StockSizes()

    @property
    def wants_yield(self) -> bool:
        """Whether the search itself needs the in-spec share (a constraint or an objective)."""
        return self.limits.in_spec_share > 0 or "in_spec_share" in self.search.objectives

    def hash(self) -> str:
        """SHA-256 of the study's content and its target file's bytes (first 16 hex digits)."""
        h = hashlib.sha256(json.dumps(self.raw, sort_keys=True, default=str).encode())
        if self.target_path is not None and self.target_path.exists():
            h.update(self.target_path.read_bytes())
        return h.hexdigest()[:16]



def _defaults(cls) -> dict[str, Any]:
    return {f.name: f.default for f in fields(cls) if f.default is not MISSING}


#: every optional key of [limits], [search] and [duty] with its default (from the dataclasses above)
DEFAULTS: dict[str, dict[str, Any]] = {"limits": _defaults(Limits), "search": _defaults(SearchOptions),
                                       "duty": _defaults(Duty), "stock": _defaults(StockSizes)}


def curve_grid(study: Study, points: int = 101) -> np.ndarray:
    """Stroke points for curves: the target's points and an even grid over [0, stroke], mm."""
    return np.unique(np.r_[np.linspace(0.0, study.target.stroke_mm, points), study.target.x_mm])
