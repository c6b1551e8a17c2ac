"""What a study asks for, as validated value objects: the envelope, the limits and the search options.

The defaults of every optional key live here, once: ``DEFAULTS`` is read off the
dataclasses' own defaults.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import MISSING, dataclass, fields
from pathlib import Path
from typing import TYPE_CHECKING, Any, Mapping

import numpy as np

from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.target import Target

if TYPE_CHECKING:   # the kinds are elements (the layer above); a study only holds them
    from springsynth.elements import ElementKind

__all__ = ["Envelope", "Limits", "SearchOptions", "Study", "DEFAULTS", "curve_grid"]


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


@dataclass(frozen=True)
class SearchOptions:
    kinds: tuple[ElementKind, ...]
    materials: tuple[Material, ...]
    max_elements: int = 3
    max_count: int = 4
    population: int = 120
    generations: int = 80
    seed: int = 1
    polish: bool = True
    verify_top: int = 5
    robust: bool = False


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

    def hash(self) -> str:
        """SHA-256 of the study's content and its target file's bytes (first 16 hex digits)."""
        h = hashlib.sha256(json.dumps(self.raw, sort_keys=True, default=str).encode())
        if self.target_path is not None and self.target_path.exists():
            h.update(self.target_path.read_bytes())
        return h.hexdigest()[:16]



def _defaults(cls) -> dict[str, Any]:
    return {f.name: f.default for f in fields(cls) if f.default is not MISSING}


#: every optional key of [limits] and [search] with its default (from the dataclasses above)
DEFAULTS: dict[str, dict[str, Any]] = {"limits": _defaults(Limits), "search": _defaults(SearchOptions)}


def curve_grid(study: Study, points: int = 101) -> np.ndarray:
    """Stroke points for curves: the target's points and an even grid over [0, stroke], mm."""
    return np.unique(np.r_[np.linspace(0.0, study.target.stroke_mm, points), study.target.x_mm])
