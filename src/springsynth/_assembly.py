"""Mechanisms: elements acting in parallel on one stroke, evaluated a population at a time.

Total force ``F(x) = sum_i count_i * f_i(x - offset_i)`` with ``f_i(u) = 0`` for
``u <= 0``: a positive offset is a gap (the element engages once x > offset), a
negative one a preload (the element is already compressed by ``-offset`` at x = 0).

Packing model (documented for ``size_mm3``)
-------------------------------------------
Every element's box is ``(along, c1, c2)``: along the stroke and two extents across
it. All elements share the stroke axis, so the mechanism's length is the largest
``along``. Copies and elements stand side by side across the stroke, each turned so
that its thinner cross extent lies in the stacking direction: the stack is
``sum(count * min(c1, c2))`` wide and ``max(max(c1, c2))`` high. The mechanism may be
turned a quarter turn about the stroke axis to fit the envelope. ``size_mm3`` is
length x stack width x stack height.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np

from ._errors import InputError
from ._materials import Material, MaterialArrays
from .elements import ElementKind, get_kind, registry

__all__ = ["Element", "Design", "Slots", "Response", "Envelope", "evaluate_population", "evaluate_design", "envelope_margins"]

#: offsets smaller than this are left out of the readable topology summary, mm
_SHOWN_OFFSET_MM = 0.001
#: parameters more than this factor beyond their bounds are outside the numerical domain
_DOMAIN = 1e6
#: largest element stroke (and stroke minus offset) evaluated, mm; beyond it a design is not finite
_MAX_STROKE_MM = 1e9
#: stroke points used for the peak stress of kinds whose stress is not monotonic
_STRESS_GRID = 33
#: rows per chunk when adding a slot's forces to the total (keeps the temporary small)
_CHUNK_ROWS = 2048


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
    """A mechanism: elements in parallel, with the materials they name resolved."""

    elements: tuple[Element, ...]
    materials: Mapping[str, Material]
    name: str = "design"

    def __post_init__(self):
        object.__setattr__(self, "elements", tuple(self.elements))
        if not self.elements:
            raise InputError("a design needs at least one [[element]]", where=self.name)
        for i, e in enumerate(self.elements):
            if e.material not in self.materials:
                raise InputError(f"material {e.material!r} is not resolved", where=f"{self.name} element {i + 1}")

    def topology(self) -> str:
        return " + ".join(e.summary() for e in self.elements)


@dataclass(frozen=True)
class Slots:
    """A population of mechanisms as arrays: n designs x S parallel slots.

    Attributes
    ----------
    kind : ndarray of int, shape (n, S)
        Index into ``kinds``; -1 marks an empty slot.
    material : ndarray of int, shape (n, S)
        Index into ``materials``.
    count : ndarray, shape (n, S)
    offset_mm : ndarray, shape (n, S)
    params : ndarray, shape (n, S, P)
        Parameters in each kind's own order (``kind.params``), physical units,
        categorical ones as indices; unused trailing columns are ignored.
    kinds : tuple of ElementKind
    materials : tuple of Material
    """

    kind: np.ndarray
    material: np.ndarray
    count: np.ndarray
    offset_mm: np.ndarray
    params: np.ndarray
    kinds: tuple[ElementKind, ...]
    materials: tuple[Material, ...]

    @property
    def n(self) -> int:
        return self.kind.shape[0]

    @property
    def n_slots(self) -> int:
        return self.kind.shape[1]

    @classmethod
    def from_designs(cls, designs: Sequence[Design], n_slots: int | None = None,
                     kinds: Sequence[ElementKind] | None = None,
                     materials: Sequence[Material] | None = None) -> "Slots":
        """Pack designs into arrays (one row per design, empty slots padded)."""
        kinds = tuple(kinds) if kinds is not None else tuple(registry().values())
        mats: list[Material] = list(materials) if materials is not None else []
        for d in designs:
            for e in d.elements:
                m = d.materials[e.material]
                if m not in mats:
                    mats.append(m)
        S = n_slots or max(len(d.elements) for d in designs)
        P = max(len(k.params) for k in kinds)
        n = len(designs)
        kind = np.full((n, S), -1, dtype=np.intp)
        mat = np.zeros((n, S), dtype=np.intp)
        count = np.zeros((n, S))
        off = np.zeros((n, S))
        par = np.zeros((n, S, P))
        names = [k.name for k in kinds]
        for i, d in enumerate(designs):
            if len(d.elements) > S:
                raise InputError(f"has {len(d.elements)} elements, more than the {S} slots allowed", where=d.name)
            for j, e in enumerate(d.elements):
                kind[i, j] = names.index(e.kind)
                mat[i, j] = mats.index(d.materials[e.material])
                count[i, j] = e.count
                off[i, j] = e.offset_mm
                vals = e.values()
                par[i, j, : len(vals)] = [vals[q.name] for q in kinds[kind[i, j]].params]
        return cls(kind, mat, count, off, par, kinds, tuple(mats))

    def slot_order(self, j: int) -> tuple[np.ndarray, np.ndarray]:
        """Rows of slot ``j`` sorted by kind, and where each kind's block of them lies.

        Returns
        -------
        order : ndarray of int, shape (n,)
            Row indices: the rows whose slot ``j`` is empty first, then each kind's rows,
            in increasing order within a kind (a stable sort).
        edges : ndarray of int, shape (len(kinds) + 2,)
            Kind ``ki`` occupies ``order[edges[ki + 1]:edges[ki + 2]]`` and the empty
            slots ``order[:edges[1]]``.
        """
        K = len(self.kinds)
        key = np.maximum(self.kind[:, j], -1) + 1              # 0 = empty, 1 + ki = kind ki
        # a stable sort of small integers is a radix sort: linear in n
        order = np.argsort(key.astype(np.int16) if K < 2**15 - 1 else key, kind="stable")
        edges = np.zeros(K + 2, dtype=np.intp)
        np.cumsum(np.bincount(key, minlength=K + 1), out=edges[1:])
        return order, edges

    def groups(self):
        """``(slot j, kind index, rows)`` for every kind present in every slot.

        Whole-population loops run over these (a handful), never over designs; ``rows``
        are increasing.
        """
        for j in range(self.n_slots):
            order, edges = self.slot_order(j)
            for ki in range(len(self.kinds)):
                if edges[ki + 2] > edges[ki + 1]:
                    yield j, ki, order[edges[ki + 1]:edges[ki + 2]]

    def design(self, i: int, name: str = "design") -> Design:
        """Row ``i`` as a :class:`Design` (the inverse of :meth:`from_designs`)."""
        elems = []
        used: dict[str, Material] = {}
        for j in range(self.n_slots):
            k = int(self.kind[i, j])
            if k < 0:
                continue
            kind = self.kinds[k]
            m = self.materials[int(self.material[i, j])]
            used[m.id] = m
            params: dict[str, float | str] = {}
            for c, q in enumerate(kind.params):
                v = float(self.params[i, j, c])
                params[q.name] = q.choices[int(round(v))] if q.choices else (int(round(v)) if q.integer else v)
            elems.append(Element(kind.name, m.id, int(round(self.count[i, j])), float(self.offset_mm[i, j]), params))
        return Design(tuple(elems), used, name=name)


@dataclass(frozen=True)
class Response:
    """What a population does over the stroke points ``x`` (shapes: n designs, S slots, m points).

    Attributes
    ----------
    x_mm : ndarray, shape (m,)
    force_N : ndarray, shape (n, m)
        Total force.
    element_force_N : ndarray, shape (n, S, m) or None
        Each slot's contribution (all copies), when asked for.
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

    @property
    def validity_worst(self) -> np.ndarray:
        """Worst margin over all rules, shape (n,) (-inf when no rule applies)."""
        if not self.validity:
            return np.full(self.force_N.shape[0], -np.inf)
        return np.max(np.stack(list(self.validity.values())), axis=0)


def evaluate_population(slots: Slots, x_mm: np.ndarray, *, x_max_mm: float | None = None,
                        detail: bool = False) -> Response:
    """Evaluate every mechanism of ``slots`` at the stroke points ``x_mm``.

    Parameters
    ----------
    slots : Slots
        n mechanisms of S slots.
    x_mm : ndarray, shape (m,)
        Stroke points, mm (x >= 0).
    x_max_mm : float, optional
        Largest stroke in service (default ``max(x_mm)``): sets each element's
        largest stroke for stress, validity and swept size.
    detail : bool
        Also return each slot's force and the stress-ratio curve.

    Notes
    -----
    The loop runs over slots and kinds (a handful), never over designs: each kind
    evaluates all rows that use it in one vectorised call. Within a slot the rows are
    taken in kind order (:meth:`Slots.slot_order`), so each kind writes its forces,
    peak stress ratios, boxes and masses into one contiguous block of the slot's
    arrays (``*_s`` below, shapes (n, m) and (n,)); one gather per slot brings them
    back to design order and combines them with the slots before, in slot order (the
    sums are the same, bit for bit, as adding slot after slot). This replaces a
    scattered read-modify-write of the total force per kind by one contiguous write
    and one gather per slot. Validity margins go straight to their rows.
    """
    x = np.asarray(x_mm, dtype=float)
    x_max = float(np.max(x)) if x_max_mm is None else float(x_max_mm)
    n, S, m = slots.n, slots.n_slots, x.size
    force = np.empty((n, m)) if S else np.zeros((n, m))    # the first slot writes it whole
    elem_force = np.zeros((n, S, m)) if detail else None
    sr = np.zeros(n)
    sr_curve = np.zeros((n, m)) if detail else None
    along = np.zeros(n)
    stack_w = np.zeros(n)
    stack_h = np.zeros(n)
    mass = np.zeros(n)
    tmin = np.full(n, np.inf)
    finite = np.ones(n, dtype=bool)
    validity: dict[str, np.ndarray] = {}

    mats_all = MaterialArrays.take(slots.materials, np.arange(len(slots.materials)))
    # numerical domain and fallback values of each kind, shape (parameters, 1)
    dom_lo = [np.array([q.lo / _DOMAIN if q.lo > 0 and not q.choices else q.lo for q in k.params], float)[:, None]
              for k in slots.kinds]
    dom_hi = [np.array([q.hi if q.choices else q.hi * _DOMAIN for q in k.params], float)[:, None] for k in slots.kinds]
    kind_lo = [np.array([q.lo for q in k.params], float)[:, None] for k in slots.kinds]
    thick = [[q.name for q in k.params if q.thickness] for k in slots.kinds]
    # slot-major copies: the gathers below read contiguous rows
    params_t = np.ascontiguousarray(slots.params.transpose(1, 2, 0))     # (S, P, n)
    material_t = np.ascontiguousarray(slots.material.T)                  # (S, n)
    count_t = np.ascontiguousarray(slots.count.T)
    offset_t = np.ascontiguousarray(slots.offset_mm.T)
    with np.errstate(invalid="ignore"):
        slot_sane = np.isfinite(count_t) & (np.abs(x_max - offset_t) <= _MAX_STROKE_MM)

    # one slot's results in kind order: force of all copies, peak stress ratio, box, mass,
    # thinnest section, finite; a row whose slot is empty contributes nothing
    f_s = np.empty((n, m))
    sr_curve_s = np.empty((n, m)) if detail else None
    peak_s, along_s, w_s, h_s, mass_s, thin_s = (np.empty(n) for _ in range(6))
    ok_s = np.empty(n, dtype=bool)
    for j in range(S):
        order, edges = slots.slot_order(j)
        empty = slice(0, edges[1])
        for arr in (f_s, peak_s, along_s, w_s, h_s, mass_s) + ((sr_curve_s,) if detail else ()):
            arr[empty] = 0.0
        thin_s[empty] = np.inf
        ok_s[empty] = True
        for ki, kind in enumerate(slots.kinds):
            blk = slice(edges[ki + 1], edges[ki + 2])
            if blk.start == blk.stop:
                continue
            rows = order[blk]
            pk = params_t[j][:len(kind.params), rows]                  # (parameters, rows)
            # parameters outside the numerical domain (non-finite, a factor _DOMAIN beyond a
            # bound, a choice index out of range) and strokes beyond _MAX_STROKE_MM never reach
            # a kernel: such rows are evaluated at the lower bounds, unloaded, and marked not finite
            sane = slot_sane[j][rows]
            for inside in (pk >= dom_lo[ki]) & (pk <= dom_hi[ki]):      # faster than np.all(axis=0)
                sane &= inside
            off = offset_t[j][rows]
            cnt = count_t[j][rows]
            u_max = np.maximum(x_max - off, 0.0)
            if not sane.all():
                pk = np.where(sane, pk, kind_lo[ki])
                off = np.where(sane, off, x_max)
                u_max = np.where(sane, u_max, 0.0)
            p = {q.name: pk[c] for c, q in enumerate(kind.params)}
            mat = mats_all.rows(material_t[j][rows])

            with np.errstate(all="ignore"):
                u = np.subtract(x[None, :], off[:, None])
                np.copyto(u, 0.0, where=u < 0.0)    # the element's own stroke, clipped at engagement
                engaged = u > 0.0
                f = kind.force(p, mat, u)
                f *= engaged
                f = np.multiply(f, cnt[:, None], out=f_s[blk])
                if kind.monotonic_stress:
                    peak = kind.peak_stress_ratio(p, mat, u_max[:, None])
                else:
                    grid = u_max[:, None] * np.linspace(0.0, 1.0, _STRESS_GRID)[None, :]
                    peak = kind.peak_stress_ratio(p, mat, grid)
                margins = kind.validity_margins(p, mat, u_max)
                a, c1, c2 = kind.box(p, u_max)
                ms = kind.mass(p, mat, u_max) * cnt
                # one reduction finds any NaN or inf in a row (a sum with one is not finite)
                ok = np.isfinite(f.sum(axis=1) + peak + a + c1 + c2 + ms) & sane
                if detail:
                    s = kind.stress(p, mat, u) / kind.allowable(p, mat)[:, None]
                    sr_curve_s[blk] = np.where(engaged, s, 0.0)

            for name, g in margins.items():
                g_ok = np.isfinite(g)
                ok &= g_ok
                g = np.where(g_ok, g, np.inf)
                cur = validity.get(name)
                if cur is None:
                    cur = validity[name] = np.full(n, -np.inf)
                cur[rows] = g if j == 0 else np.maximum(cur[rows], g)    # slot 0: rows still at -inf
            ok_s[blk] = ok
            peak_s[blk] = peak
            along_s[blk] = a
            w_s[blk] = cnt * np.minimum(c1, c2)
            h_s[blk] = np.maximum(c1, c2)
            mass_s[blk] = ms
            thin_s[blk] = np.inf
            for name in thick[ki]:
                np.minimum(thin_s[blk], p[name], out=thin_s[blk])

        if not ok_s.all():
            f_s[~ok_s] = 0.0
        back = np.empty(n, dtype=np.intp)
        back[order] = np.arange(n)              # where each design's row sits in `order`
        if j == 0:
            np.take(f_s, back, axis=0, out=force, mode="clip")
        else:   # in chunks of rows: no second full-size temporary
            for c in range(0, n, _CHUNK_ROWS):
                force[c:c + _CHUNK_ROWS] += np.take(f_s, back[c:c + _CHUNK_ROWS], axis=0, mode="clip")
        if detail:
            elem_force[:, j] = f_s[back]
            np.maximum(sr_curve, sr_curve_s[back], out=sr_curve)
        finite &= ok_s[back]
        np.maximum(sr, peak_s[back], out=sr)
        np.maximum(along, along_s[back], out=along)
        stack_w += w_s[back]
        np.maximum(stack_h, h_s[back], out=stack_h)
        mass += mass_s[back]
        np.minimum(tmin, thin_s[back], out=tmin)

    box = np.stack([along, stack_w, stack_h], axis=1)
    with np.errstate(all="ignore"):
        size = along * stack_w * stack_h
        # sums over slots can overflow even when every element's values are finite
        finite &= np.isfinite(force.sum(axis=1) + size + mass)
    return Response(
        x_mm=x, force_N=force, element_force_N=elem_force, stress_ratio=np.where(finite, sr, np.inf),
        stress_ratio_curve=sr_curve, box_mm=box, size_mm3=size, mass_g=mass,
        validity=validity, min_thickness_mm=tmin, finite=finite,
    )


def envelope_margins(box_mm: np.ndarray, env: Envelope) -> tuple[np.ndarray, np.ndarray]:
    """Normalised envelope margins (<= 0 fits), each shape (n,).

    Returns ``(length, cross)``: length along the stroke against ``length_mm``; the
    cross-section against width x height in the better of the two quarter-turn
    orientations.
    """
    g_len = box_mm[:, 0] / env.length_mm - 1.0
    w, h = box_mm[:, 1], box_mm[:, 2]
    a = np.maximum(w / env.width_mm, h / env.height_mm)
    b = np.maximum(w / env.height_mm, h / env.width_mm)
    return g_len, np.minimum(a, b) - 1.0


def evaluate_design(design: Design, x_mm: np.ndarray, *, x_max_mm: float | None = None) -> Response:
    """Evaluate one design (n = 1) with per-element detail; same code path as the search."""
    return evaluate_population(Slots.from_designs([design]), x_mm, x_max_mm=x_max_mm, detail=True)
