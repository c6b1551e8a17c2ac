"""Branches of one element, evaluated kind by kind over all slots at once.

The (slot, design) rows of the whole population are sorted by kind (:func:`_kind_order`),
so each kind's kernels run once per call over all its rows, whatever slots they sit in
(in blocks of at most ``_KIND_ROWS`` rows, whose temporaries stay small). Each block writes
its results straight to their (slot, design) places in :class:`_Rows` (slot 0's forces into
the designs' total itself); :func:`_gather` then adds the other slots in slot order, as if
slot after slot had been added (the sums are the same, bit for bit).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from springsynth.assembly._state import Context, Totals, peak_ratio

__all__ = ["add_branches"]

#: rows per kernel call (a kind's rows beyond it go in further calls; the temporaries stay small)
_KIND_ROWS = 4096
#: up to this many points a block takes the ways with the fewest numpy calls (their fixed cost dominates)
_SMALL_POINTS = 8192
#: up to this many (rule, slot, design) entries the validity margins go through one array (fewer calls)
_SMALL_VALIDITY = 2**17
#: rows per matrix product: small enough that the BLAS library runs it on one thread (a product spread
#: over threads costs more than it saves at these sizes, and much more when the process has one core)
_BLAS_ROWS = 1024


@dataclass
class _Rows:
    """One result per (slot, design) row; the validity margins of each block as computed.

    The forces of slot 0 go straight into the designs' total ``f0`` (n, m), those of the other
    slots into ``f`` ((S - 1) n, m) at their flat row ``j * n + i`` (as do the detail arrays),
    added to the total slot after slot at the end. The per-row values (``peak`` to ``ok``) stay
    in kind order, block after block, and are gathered back by the flat row at the end.
    """

    n: int
    f0: np.ndarray
    f: np.ndarray
    sr_curve: np.ndarray | None
    u: np.ndarray | None
    peak: np.ndarray
    along: np.ndarray
    w: np.ndarray
    h: np.ndarray
    mass: np.ndarray
    thin: np.ndarray
    ok: np.ndarray
    margins: list           # (names, margins (names, rows), flat rows) per block
    names: list             # each kind's margin names, in the order it returns them

    @classmethod
    def empty(cls, total: np.ndarray, S: int, K: int, detail: bool) -> "_Rows":
        n, m = total.shape
        N = S * n
        e = lambda: np.empty(N)  # noqa: E731
        per_point = (lambda: np.empty((N, m))) if detail else (lambda: None)  # noqa: E731
        return cls(n, total, np.empty((N - n, m)), per_point(), per_point(),
                   e(), e(), e(), e(), e(), e(), np.empty(N, dtype=bool), [], [[] for _ in range(K)])

    def put_forces(self, rows: np.ndarray, f: np.ndarray) -> None:
        """Forces ``f`` (r, m) of the flat ``rows`` (ascending): slot 0 into the total, the others kept.

        Each row moves as one record (a view of m floats as one item), which numpy copies
        faster than m floats one by one.
        """
        m = f.shape[1]
        k = int(rows.searchsorted(self.n))
        if m == 0 or f.size <= _SMALL_POINTS:
            self.f0[rows[:k]] = f[:k]
            self.f[rows[k:] - self.n] = f[k:]
            return
        rec = _record(m * f.itemsize)
        f = np.ascontiguousarray(f).view(rec).reshape(-1)
        if k:
            self.f0.view(rec).reshape(-1)[rows[:k]] = f[:k]
        if k < rows.size:
            self.f.view(rec).reshape(-1)[rows[k:] - self.n] = f[k:]

    def clear(self, rows: np.ndarray) -> None:
        """Rows holding no element (flat ``rows``, the first of the kind order): nothing, inside every model."""
        if rows.size == 0:
            return
        self.put_forces(rows, np.zeros((rows.size, self.f0.shape[1])))
        for arr in (self.sr_curve, self.u):
            if arr is not None:
                arr[rows] = 0.0
        blk = slice(0, rows.size)
        for arr in (self.peak, self.along, self.w, self.h, self.mass):
            arr[blk] = 0.0
        self.thin[blk] = np.inf
        self.ok[blk] = True

    def add_margins(self, ki: int, margins: dict, rows: np.ndarray, ok: np.ndarray) -> None:
        """Margins of kind ``ki`` at the flat ``rows``, kept for :meth:`validity`; a non-finite one clears ``ok``
        (and counts as inf)."""
        if not margins:
            return
        names = list(margins)
        g = np.empty((len(names), rows.size))
        for c, v in enumerate(margins.values()):
            g[c] = v
        g_ok = np.isfinite(g)
        if not g_ok.all():
            ok &= g_ok.all(axis=0)
            np.copyto(g, np.inf, where=~g_ok)
        self.margins.append((names, g, rows))
        known = self.names[ki]
        known += [q for q in names if q not in known]

    def validity(self, order: list, S: int, n: int) -> dict:
        """Worst margin over the slots of each design for each rule named in ``order``, each shape (n,)."""
        index = {q: c for c, q in enumerate(order)}
        if len(order) * S * n <= _SMALL_VALIDITY:      # small: one array of all rows, one maximum over slots
            flat = np.full((len(order), S * n), -np.inf)
            for names, g, rows in self.margins:
                flat[np.array([index[q] for q in names])[:, None], rows[None, :]] = g
            return dict(zip(order, flat.reshape(len(order), S, n).max(axis=1)))
        worst = np.full((len(order), n), -np.inf)
        for names, g, rows in self.margins:
            # rows ascending, slot-major: within one slot's share each design comes once
            cut = np.searchsorted(rows, np.arange(n, S * n, n))
            for part, gp in zip(np.split(rows, cut), np.split(g, cut, axis=1)):
                if part.size:
                    d = part % n
                    for c, q in enumerate(names):
                        w = worst[index[q]]
                        w[d] = np.maximum(w[d], gp[c])
        return dict(zip(order, worst))


@lru_cache(maxsize=8)
def _record(nbytes: int) -> np.dtype:
    """A dtype of one opaque item of ``nbytes`` bytes (a row moved as one record)."""
    return np.dtype((np.void, nbytes))


def _kind_order(ctx: Context, skip: np.ndarray | None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Flat (slot, design) rows sorted by kind: ``order``, kind ki's block ``edges[ki + 1]:edges[ki + 2]``
    (the rows without an element first), and which kinds each slot holds, shape (S, K + 1)."""
    sl = ctx.slots
    K = len(sl.kinds)
    key = np.maximum(sl.kind.T, -1) + 1              # 0 = empty, 1 + ki = kind ki; (S, n)
    if skip is not None:
        key = np.where(skip.T, 0, key)
    key = key.reshape(-1)
    # a stable sort of small integers is a radix sort: linear in n
    order = np.argsort(key.astype(np.int16) if K < 2**15 - 1 else key, kind="stable")
    per_slot = np.bincount(key + (K + 1) * np.repeat(np.arange(sl.n_slots), sl.n),
                           minlength=(K + 1) * sl.n_slots).reshape(sl.n_slots, K + 1)
    edges = np.zeros(K + 2, dtype=np.intp)
    np.cumsum(per_slot.sum(axis=0), out=edges[1:])
    return order, edges, per_slot


def add_branches(ctx: Context, tot: Totals, skip: np.ndarray | None) -> None:
    """Every single-element branch into ``tot`` (``skip``, bool (n, S): slots that belong to a chain)."""
    sl = ctx.slots
    K = len(sl.kinds)
    order, edges, per_slot = _kind_order(ctx, skip)
    rb = _Rows.empty(tot.force, sl.n_slots, K, ctx.detail)
    rb.clear(order[:edges[1]])
    for ki in range(K):
        for c in range(edges[ki + 1], edges[ki + 2], _KIND_ROWS):
            blk = slice(c, min(c + _KIND_ROWS, edges[ki + 2]))
            _kind_block(ctx, rb, ki, order[blk], blk)
    # margins in the order the rules first appear slot by slot, then kind by kind
    names: dict = {}
    for j in range(sl.n_slots):
        for ki in np.flatnonzero(per_slot[j, 1:]):
            names.update(dict.fromkeys(rb.names[ki]))
    tot.validity.update(rb.validity(list(names), sl.n_slots, sl.n))
    _gather(ctx, tot, rb, order)


def _element_stroke(ctx: Context, off: np.ndarray) -> tuple[np.ndarray, int]:
    """Each row's own stroke ``max(x - off, 0)``, shape (r, m), and how many leading columns can be at rest
    (with x sorted, only the first E: those up to the largest offset)."""
    x = ctx.x
    E = int(x.searchsorted(off.max(), side="right")) if ctx.x_sorted and off.size else x.size
    if off.size * x.size <= _SMALL_POINTS:      # few points: fewest calls
        u = np.subtract(x, off[:, None])
        if E:
            np.maximum(u[:, :E], 0.0, out=u[:, :E])
        return u, E
    # x - off as the product of (r, 2) and (2, m) matrices: exact (each element is 1 x + (-off) 1, one
    # rounding), and several times faster than a broadcast subtraction over short rows
    a = np.empty((off.size, 2))
    a[:, 0] = 1.0
    np.negative(off, out=a[:, 1])
    u = np.empty((off.size, x.size))
    for c in range(0, off.size, _BLAS_ROWS):
        np.matmul(a[c:c + _BLAS_ROWS], ctx.x_ones, out=u[c:c + _BLAS_ROWS])
    if E:   # over whole rows (a no-op past column E): contiguous, and against an array of zeros, it is fastest
        np.maximum(u, _zeros(off.size, x.size), out=u)
    return u, E


#: arrays of zeros by row length, read only (:func:`_zeros`)
_ZEROS: dict[int, np.ndarray] = {}


def _zeros(r: int, m: int) -> np.ndarray:
    """Zeros, shape (r, m), a view of a cached array (never write to it)."""
    z = _ZEROS.get(m)
    if z is None or z.shape[0] < r:
        z = _ZEROS[m] = np.zeros((max(r, _KIND_ROWS), m))
        z.flags.writeable = False
    return z[:r]


def _row_sums(f: np.ndarray, ones: np.ndarray) -> np.ndarray:
    """``f @ ones``, shape (r,), in products of at most _BLAS_ROWS rows (one thread each)."""
    if f.shape[0] <= _BLAS_ROWS:
        return f @ ones
    out = np.empty(f.shape[0])
    for c in range(0, f.shape[0], _BLAS_ROWS):
        np.matmul(f[c:c + _BLAS_ROWS], ones, out=out[c:c + _BLAS_ROWS])
    return out


def _zero_at_rest(f: np.ndarray, u: np.ndarray, E: int, x_sorted: bool) -> None:
    """Force zero where the element is not engaged (``u <= 0``), in the first ``E`` columns of ``f``.

    With x sorted, a row is at rest at all only if its first stroke is 0, and there the
    kernel gave its force at rest, ``f(0)``: rows whose ``f(0)`` is zero already need
    nothing (most kinds have no force at rest), so only the others are masked.
    """
    if not E:
        return
    if x_sorted and f.size > _SMALL_POINTS:
        rows = np.flatnonzero((u[:, 0] <= 0.0) & (f[:, 0] != 0.0))
        if rows.size == 0:
            return
        f[rows, :E] *= u[rows, :E] > 0.0
    else:
        f[:, :E] *= u[:, :E] > 0.0


def _kind_block(ctx: Context, rb: _Rows, ki: int, rows: np.ndarray, blk: slice) -> None:
    """Kind ``ki``'s flat rows ``rows`` (ascending; block ``blk`` of the kind order): force of all copies, peak
    stress ratio, box, mass, margins."""
    kind = ctx.slots.kinds[ki]
    x_max = ctx.x_max
    pk, sane = ctx.in_domain(ki, ctx.params_f[:len(kind.params)].take(rows, axis=1), ctx.sane_f[rows])
    off = ctx.offset_f[rows]
    cnt = ctx.count_f[rows]
    u_max = np.maximum(x_max - off, 0.0)
    if not sane.all():   # strokes beyond _MAX_STROKE_MM too: evaluated unloaded, marked not finite
        off = np.where(sane, off, x_max)
        u_max = np.where(sane, u_max, 0.0)
    p = {q.name: pk[c] for c, q in enumerate(kind.params)}
    mat = ctx.mats_all.rows(ctx.material_f[rows])
    with np.errstate(all="ignore"):
        u, E = _element_stroke(ctx, off)
        f = kind.force(p, mat, u)
        if f.dtype != np.float64:
            f = f.astype(np.float64)
        _zero_at_rest(f, u, E, ctx.x_sorted)
        f *= cnt[:, None]
        peak = peak_ratio(kind, p, mat, u_max)
        margins = kind.validity_margins(p, mat, u_max)
        a, c1, c2 = kind.box(p, u_max)
        ms = kind.mass(p, mat, u_max) * cnt
        # one product with ones finds any NaN or inf in a row (a sum with one is not finite)
        ok = np.isfinite(_row_sums(f, ctx.ones_m) + peak + a + c1 + c2 + ms) & sane
        if ctx.detail:
            s = kind.stress(p, mat, u) / kind.allowable(p, mat)[:, None]
            rb.sr_curve[rows] = np.where(u > 0.0, s, 0.0)
            rb.u[rows] = u
    rb.add_margins(ki, margins, rows, ok)
    if not ok.all():
        f[~ok] = 0.0
    rb.put_forces(rows, f)
    rb.ok[blk] = ok
    rb.peak[blk] = peak
    rb.along[blk] = a
    np.minimum(c1, c2, out=rb.w[blk])
    rb.w[blk] *= cnt
    np.maximum(c1, c2, out=rb.h[blk])
    rb.mass[blk] = ms
    thin = rb.thin[blk]
    thin[:] = np.inf
    for name in ctx.thick(ki):
        np.minimum(thin, p[name], out=thin)


def _gather(ctx: Context, tot: Totals, rb: _Rows, order: np.ndarray) -> None:
    """The rows' results into the totals, slot after slot: the forces (and the detail) are in (slot, design)
    order, the per-row values in kind order (``order``), gathered back to design order here."""
    n, S = ctx.slots.n, ctx.slots.n_slots
    back = np.empty(order.size, dtype=np.intp)
    back[order] = np.arange(order.size)      # where each (slot, design) row sits in `order`
    for j in range(S):
        bj = slice(j * n, (j + 1) * n)
        kj = back[bj]
        if j:
            tot.force += rb.f[bj.start - n:bj.stop - n]
        if ctx.detail:
            tot.elem_force[:, j] = rb.f[bj.start - n:bj.stop - n] if j else tot.force
            tot.elem_stroke[:, j] = rb.u[bj]
            tot.elem_sr[:, j] = rb.sr_curve[bj]
            np.maximum(tot.sr_curve, rb.sr_curve[bj], out=tot.sr_curve)
        tot.finite &= rb.ok[kj]
        np.maximum(tot.sr, rb.peak[kj], out=tot.sr)
        np.maximum(tot.along, rb.along[kj], out=tot.along)
        tot.stack_w += rb.w[kj]
        np.maximum(tot.stack_h, rb.h[kj], out=tot.stack_h)
        tot.mass += rb.mass[kj]
        np.minimum(tot.tmin, rb.thin[kj], out=tot.tmin)
