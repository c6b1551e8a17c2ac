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

from dataclasses import dataclass

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.slots import Slots
from springsynth.elements import get_kind
from springsynth.model.materials import MaterialArrays
from springsynth.model.study import Envelope

__all__ = ["Response", "element_extra_outputs", "envelope_margins", "evaluate_design", "evaluate_population"]

#: parameters more than this factor beyond their bounds are outside the numerical domain
_DOMAIN = 1e6
#: largest element stroke (and stroke minus offset) evaluated, mm; beyond it a design is not finite
_MAX_STROKE_MM = 1e9
#: stroke points used for the peak stress of kinds whose stress is not monotonic
_STRESS_GRID = 33
#: rows per chunk when adding a slot's forces to the total (keeps the temporary small)
_CHUNK_ROWS = 2048


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


def element_extra_outputs(design: Design, x_mm: np.ndarray) -> dict[str, np.ndarray]:
    """Kind-specific results of each element along the stroke (``ElementKind.extra_outputs``).

    Parameters
    ----------
    design : Design
    x_mm : ndarray, shape (m,)
        Stroke points of the mechanism, mm.

    Returns
    -------
    dict of str -> ndarray, shape (m,)
        ``e<j>_<name>`` (j counts the elements from 1, as the force columns of
        ``springsynth evaluate``): per copy, on the element's own stroke ``x - offset``
        (clipped at 0). Empty when no kind of the design provides any.
    """
    x = np.asarray(x_mm, dtype=float).ravel()
    out: dict[str, np.ndarray] = {}
    for j, e in enumerate(design.elements):
        p = {k: np.array([v]) for k, v in e.values().items()}
        mat = MaterialArrays.of(design.materials[e.material])
        u = np.maximum(x - e.offset_mm, 0.0)[None, :]
        for name, v in get_kind(e.kind).extra_outputs(p, mat, u).items():
            out[f"e{j + 1}_{name}"] = np.asarray(v, dtype=float)[0]
    return out
