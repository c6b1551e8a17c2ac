"""Branches of one element, evaluated kind by kind over all slots at once.

The (slot, design) rows of the whole population are sorted by kind (:func:`_kind_order`),
so each kind's kernels run once per call over all its rows, whatever slots they sit in
(in blocks of at most ``_KIND_ROWS`` rows, whose temporaries stay small), and write their
results into one contiguous block of :class:`_Rows`. :func:`_gather` then brings them back
to design order and combines the slots in slot order, as if slot after slot had been
added (the sums are the same, bit for bit).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from springsynth.assembly._state import Context, Totals, peak_ratio

__all__ = ["add_branches"]

#: rows per kernel call (a kind's rows beyond it go in further calls; the temporaries stay small)
_KIND_ROWS = 4096
#: rows per chunk when adding a slot's forces to the total (keeps the temporary small)
_CHUNK_ROWS = 2048


@dataclass
class _Rows:
    """One result per (slot, design) row in kind order; the validity margins of each block as computed."""

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
    def empty(cls, N: int, m: int, K: int, detail: bool) -> "_Rows":
        e = lambda: np.empty(N)  # noqa: E731
        return cls(np.empty((N, m)), np.empty((N, m)) if detail else None, np.empty((N, m)) if detail else None,
                   e(), e(), e(), e(), e(), e(), np.empty(N, dtype=bool), [], [[] for _ in range(K)])

    def clear(self, blk: slice) -> None:
        """Rows holding no element: nothing, inside every model."""
        for arr in (self.f, self.sr_curve, self.u, self.peak, self.along, self.w, self.h, self.mass):
            if arr is not None:
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
        flat = np.full((len(order), S * n), -np.inf)
        for names, g, rows in self.margins:
            flat[np.array([index[q] for q in names])[:, None], rows[None, :]] = g
        worst = flat.reshape(len(order), S, n).max(axis=1)
        return dict(zip(order, worst))


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
    rb = _Rows.empty(order.size, ctx.x.size, K, ctx.detail)
    rb.clear(slice(0, edges[1]))
    for ki in range(K):
        for c in range(edges[ki + 1], edges[ki + 2], _KIND_ROWS):
            blk = slice(c, min(c + _KIND_ROWS, edges[ki + 2]))
            _kind_block(ctx, rb, ki, blk, order[blk])
    # margins in the order the rules first appear slot by slot, then kind by kind
    names: dict = {}
    for j in range(sl.n_slots):
        for ki in np.flatnonzero(per_slot[j, 1:]):
            names.update(dict.fromkeys(rb.names[ki]))
    tot.validity.update(rb.validity(list(names), sl.n_slots, sl.n))
    _gather(ctx, tot, rb, order)


def _kind_block(ctx: Context, rb: _Rows, ki: int, blk: slice, rows: np.ndarray) -> None:
    """Kind ``ki``'s flat rows ``rows`` (block ``blk`` of ``rb``): force of all copies, peak stress ratio,
    box, mass, margins."""
    kind = ctx.slots.kinds[ki]
    x, x_max = ctx.x, ctx.x_max
    pk, sane = ctx.in_domain(ki, ctx.params_f[:len(kind.params), rows], ctx.sane_f[rows])
    off = ctx.offset_f[rows]
    cnt = ctx.count_f[rows]
    u_max = np.maximum(x_max - off, 0.0)
    if not sane.all():   # strokes beyond _MAX_STROKE_MM too: evaluated unloaded, marked not finite
        off = np.where(sane, off, x_max)
        u_max = np.where(sane, u_max, 0.0)
    p = {q.name: pk[c] for c, q in enumerate(kind.params)}
    mat = ctx.mats_all.rows(ctx.material_f[rows])
    with np.errstate(all="ignore"):
        u = np.subtract(x, off[:, None])
        # the element's own stroke, clipped at engagement: only the first E columns can be (x sorted)
        E = int(np.searchsorted(x, off.max(), side="right")) if ctx.x_sorted and off.size else x.size
        if E:
            np.maximum(u[:, :E], 0.0, out=u[:, :E])
        f = kind.force(p, mat, u)
        if E:
            f[:, :E] *= u[:, :E] > 0.0
        f = np.multiply(f, cnt[:, None], out=rb.f[blk])
        peak = peak_ratio(kind, p, mat, u_max)
        margins = kind.validity_margins(p, mat, u_max)
        a, c1, c2 = kind.box(p, u_max)
        ms = kind.mass(p, mat, u_max) * cnt
        # one reduction finds any NaN or inf in a row (a sum with one is not finite)
        ok = np.isfinite(f.sum(axis=1) + peak + a + c1 + c2 + ms) & sane
        if ctx.detail:
            s = kind.stress(p, mat, u) / kind.allowable(p, mat)[:, None]
            rb.sr_curve[blk] = np.where(u > 0.0, s, 0.0)
            rb.u[blk] = u
    rb.add_margins(ki, margins, rows, ok)
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
    """The rows' results (kind order) back to design order, slot after slot into the totals."""
    n = ctx.slots.n
    if not rb.ok.all():
        rb.f[~rb.ok] = 0.0
    back = np.empty(order.size, dtype=np.intp)
    back[order] = np.arange(order.size)      # where each (slot, design) row sits in `order`
    for j in range(ctx.slots.n_slots):
        bj = back[j * n:(j + 1) * n]
        if j == 0:
            np.take(rb.f, bj, axis=0, out=tot.force, mode="clip")
        else:   # in chunks of rows: no second full-size temporary
            for c in range(0, n, _CHUNK_ROWS):
                tot.force[c:c + _CHUNK_ROWS] += np.take(rb.f, bj[c:c + _CHUNK_ROWS], axis=0, mode="clip")
        if ctx.detail:
            tot.elem_force[:, j] = rb.f[bj]
            tot.elem_stroke[:, j] = rb.u[bj]
            tot.elem_sr[:, j] = rb.sr_curve[bj]
            np.maximum(tot.sr_curve, rb.sr_curve[bj], out=tot.sr_curve)
        tot.finite &= rb.ok[bj]
        np.maximum(tot.sr, rb.peak[bj], out=tot.sr)
        np.maximum(tot.along, rb.along[bj], out=tot.along)
        tot.stack_w += rb.w[bj]
        np.maximum(tot.stack_h, rb.h[bj], out=tot.stack_h)
        tot.mass += rb.mass[bj]
        np.minimum(tot.tmin, rb.thin[bj], out=tot.tmin)
