"""What the steps of an evaluation share: the population as slot-major arrays, and the running totals.

A step (:mod:`springsynth.assembly.branches` for the branches of one element, the chains in
:mod:`springsynth.assembly.evaluate`) reads a :class:`Context` and adds into :class:`Totals`,
which becomes the :class:`Response`.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from springsynth.assembly.slots import Slots
from springsynth.model.materials import MaterialArrays

__all__ = ["Context", "Response", "Totals", "peak_ratio"]

#: parameters more than this factor beyond their bounds are outside the numerical domain
_DOMAIN = 1e6
#: largest element stroke (and stroke minus offset) evaluated, mm; beyond it a design is not finite
_MAX_STROKE_MM = 1e9
#: stroke points used for the peak stress of kinds whose stress is not monotonic
_STRESS_GRID = 33
_UNIT_STRESS_GRID = np.linspace(0.0, 1.0, _STRESS_GRID)[None, :]


@dataclass(frozen=True)
class Response:
    """What a population does over the stroke points ``x`` (shapes: n designs, S slots, m points).

    Attributes
    ----------
    x_mm : ndarray, shape (m,)
    force_N : ndarray, shape (n, m)
        Total force.
    element_force_N : ndarray, shape (n, S, m) or None
        Each branch's contribution (all copies), in the slot of its element or of its
        chain's first link (a chain's other links hold zeros), when asked for.
    stress_ratio : ndarray, shape (n,)
        Peak over elements and stroke [0, x_max] of stress / allowable.
    stress_ratio_curve : ndarray, shape (n, m) or None
        Largest element stress ratio at each x, when asked for.
    box_mm : ndarray, shape (n, 3)
        Packed mechanism: length along the stroke, stack width, stack height.
    size_mm3, mass_g : ndarray, shape (n,)
    validity : dict of str -> ndarray, shape (n,)
        Worst normalised margin over elements for each named validity rule (<= 0 inside).
    min_thickness_mm : ndarray, shape (n,)
        Smallest section thickness or wire diameter used (inf when none).
    finite : ndarray of bool, shape (n,)
        False where any model returned NaN or inf (such a design is never feasible).
    snap_mm : ndarray, shape (n,)
        Stroke x in (0, x_max] of the first snap of a chain (its loading path folds back
        and the force jumps), NaN when none.
    element_stroke_mm : ndarray, shape (n, S, m) or None
        Each element's own stroke (a chain link's deflection along its chain's loading
        path), when asked for.
    element_stress_ratio : ndarray, shape (n, S, m) or None
        Each element's stress / allowable at its own stroke, when asked for.
    """

    x_mm: np.ndarray
    force_N: np.ndarray
    element_force_N: np.ndarray | None
    stress_ratio: np.ndarray
    stress_ratio_curve: np.ndarray | None
    box_mm: np.ndarray
    size_mm3: np.ndarray
    mass_g: np.ndarray
    validity: dict[str, np.ndarray]
    min_thickness_mm: np.ndarray
    finite: np.ndarray
    snap_mm: np.ndarray | None = None
    element_stroke_mm: np.ndarray | None = None
    element_stress_ratio: np.ndarray | None = None

    @property
    def validity_worst(self) -> np.ndarray:
        """Worst margin over all rules, shape (n,) (-inf when no rule applies)."""
        if not self.validity:
            return np.full(self.force_N.shape[0], -np.inf)
        return np.max(np.stack(list(self.validity.values())), axis=0)


@dataclass(frozen=True)
class _KindDomain:
    """A kind's numerical domain and fallback values, each shape (parameters, 1), and its thickness names."""

    kind: object
    lo: np.ndarray
    hi: np.ndarray
    fallback: np.ndarray
    thick: tuple[str, ...]
    bounds: tuple[tuple[float, float], ...]    # (lo, hi) of each parameter, as Python floats


#: per kind object (by identity; the entry keeps its kind alive, so an id is never reused)
_DOMAINS: dict[int, _KindDomain] = {}


def _domain(kind) -> _KindDomain:
    d = _DOMAINS.get(id(kind))
    if d is None or d.kind is not kind:
        qs = kind.params
        d = _DOMAINS[id(kind)] = _KindDomain(
            kind, np.array([q.lo / _DOMAIN if q.lo > 0 and not q.choices else q.lo for q in qs], float)[:, None],
            np.array([q.hi if q.choices else q.hi * _DOMAIN for q in qs], float)[:, None],
            np.array([q.lo for q in qs], float)[:, None], tuple(q.name for q in qs if q.thickness), ())
        d = _DOMAINS[id(kind)] = dataclasses.replace(d, bounds=tuple(zip(d.lo[:, 0].tolist(), d.hi[:, 0].tolist())))
    return d


@dataclass(frozen=True)
class Context:
    """What every step reads: the population in slot-major arrays and each kind's numerical domain.

    The ``*_f`` arrays are flat over (slot, design): entry ``j * n + i`` is slot j of design i.
    """

    slots: Slots
    x: np.ndarray
    x_max: float
    detail: bool
    x_sorted: bool           # x ascending (its points beyond an element's offset form a tail)
    x_ones: np.ndarray       # (2, m): x over a row of ones
    ones_m: np.ndarray       # (m,) ones
    mats_all: MaterialArrays
    domains: list
    params_f: np.ndarray     # (P, S * n)
    material_f: np.ndarray   # (S * n,)
    count_f: np.ndarray
    offset_f: np.ndarray
    slot_sane: np.ndarray    # (S, n): finite count and a stroke minus offset inside _MAX_STROKE_MM
    sane_f: np.ndarray       # slot_sane flat

    @classmethod
    def of(cls, slots: Slots, x: np.ndarray, x_max: float, detail: bool) -> "Context":
        n, S = slots.kind.shape
        count_t = np.ascontiguousarray(slots.count.T)
        offset_t = np.ascontiguousarray(slots.offset_mm.T)
        with np.errstate(invalid="ignore"):
            slot_sane = np.isfinite(count_t) & (np.abs(x_max - offset_t) <= _MAX_STROKE_MM)
        params_f = np.ascontiguousarray(slots.params.transpose(2, 1, 0)).reshape(slots.params.shape[2], S * n)
        x_sorted = bool(np.all(x[1:] >= x[:-1]))      # False when x holds NaN
        return cls(slots, x, x_max, detail, x_sorted, np.vstack([x, np.ones_like(x)]), np.ones_like(x), MaterialArrays.table(slots.materials),
                   [_domain(k) for k in slots.kinds], params_f, np.ascontiguousarray(slots.material.T).reshape(-1),
                   count_t.reshape(-1), offset_t.reshape(-1), slot_sane, slot_sane.reshape(-1))

    def thick(self, ki: int) -> tuple[str, ...]:
        """Names of kind ``ki``'s section thicknesses and wire diameters."""
        return self.domains[ki].thick

    def in_domain(self, ki: int, pk: np.ndarray, sane: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Parameters ``pk`` (parameters, rows) of kind ``ki`` inside the numerical domain, and which rows were.

        Parameters outside it (non-finite, a factor _DOMAIN beyond a bound, a choice index
        out of range) never reach a kernel: such rows are evaluated at the lower bounds and
        marked not finite (``sane`` is updated in place).
        """
        d = self.domains[ki]
        for row, (lo, hi) in zip(pk, d.bounds):         # scalar bounds: no broadcasting
            sane &= row >= lo
            sane &= row <= hi
        if not sane.all():
            pk = np.where(sane, pk, d.fallback)
        return pk, sane


@dataclass
class Totals:
    """Running totals of the designs (design order), each over their branches so far."""

    force: np.ndarray
    elem_force: np.ndarray | None
    sr: np.ndarray
    sr_curve: np.ndarray | None
    along: np.ndarray
    stack_w: np.ndarray
    stack_h: np.ndarray
    mass: np.ndarray
    tmin: np.ndarray
    finite: np.ndarray
    validity: dict
    snap: np.ndarray
    elem_stroke: np.ndarray | None
    elem_sr: np.ndarray | None

    @classmethod
    def empty(cls, n: int, S: int, m: int, detail: bool) -> "Totals":
        z = lambda: np.zeros(n)  # noqa: E731
        return cls(
            force=np.empty((n, m)) if S else np.zeros((n, m)),    # the first slot writes it whole
            elem_force=np.zeros((n, S, m)) if detail else None, sr=z(), sr_curve=np.zeros((n, m)) if detail else None,
            along=z(), stack_w=z(), stack_h=z(), mass=z(), tmin=np.full(n, np.inf), finite=np.ones(n, dtype=bool),
            validity={}, snap=np.full(n, np.nan), elem_stroke=np.zeros((n, S, m)) if detail else None,
            elem_sr=np.zeros((n, S, m)) if detail else None)

    def add_margins(self, margins: dict, rows: np.ndarray, ok: np.ndarray) -> None:
        """Worst margin per rule into ``validity[name][rows]``; a non-finite margin clears ``ok``."""
        n = self.force.shape[0]
        for name, g in margins.items():
            g_ok = np.isfinite(g)
            ok &= g_ok
            g = np.where(g_ok, g, np.inf)
            cur = self.validity.get(name)
            if cur is None:
                cur = self.validity[name] = np.full(n, -np.inf)
            cur[rows] = np.maximum(cur[rows], g)

    def response(self, x: np.ndarray) -> Response:
        box = np.stack([self.along, self.stack_w, self.stack_h], axis=1)
        finite = self.finite
        with np.errstate(all="ignore"):
            size = self.along * self.stack_w * self.stack_h
            # sums over slots can overflow even when every element's values are finite
            finite &= np.isfinite(self.force.sum(axis=1) + size + self.mass)
        return Response(
            x_mm=x, force_N=self.force, element_force_N=self.elem_force,
            stress_ratio=np.where(finite, self.sr, np.inf), stress_ratio_curve=self.sr_curve, box_mm=box,
            size_mm3=size, mass_g=self.mass, validity=self.validity, min_thickness_mm=self.tmin, finite=finite,
            snap_mm=self.snap, element_stroke_mm=self.elem_stroke, element_stress_ratio=self.elem_sr,
        )


def peak_ratio(kind, p, mat, u_max: np.ndarray) -> np.ndarray:
    """Peak stress / allowable over the stroke [0, u_max], shape (n,)."""
    if kind.monotonic_stress:
        return kind.peak_stress_ratio(p, mat, u_max[:, None])
    return kind.peak_stress_ratio(p, mat, u_max[:, None] * _UNIT_STRESS_GRID)
