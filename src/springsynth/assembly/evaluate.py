"""Mechanisms: branches acting in parallel on one stroke, evaluated a population at a time.

Total force ``F(x) = sum_b count_b * f_b(x - offset_b)`` with ``f_b(u) = 0`` for
``u <= 0``: a positive offset is a gap (the branch engages once x > offset), a
negative one a preload (the branch is already compressed by ``-offset`` at x = 0). A
branch is one element (``f_b`` its force law) or a chain of links in series, whose
``f_b`` follows its loading path, snaps included (:mod:`springsynth.assembly.chains`).

Packing model (documented for ``size_mm3``)
-------------------------------------------
Every element's box is ``(along, c1, c2)``: along the stroke and two extents across
it. All branches share the stroke axis, so the mechanism's length is the largest
``along``; the links of a chain stack along the stroke, so a chain's ``along`` is the
sum of its links' (each at its own largest deflection). Copies and branches stand side
by side across the stroke, each turned so that its thinner cross extent lies in the
stacking direction: the stack is ``sum(count * min(c1, c2))`` wide and
``max(max(c1, c2))`` high, a chain taking the width of its widest link (``link count x
min(c1, c2)``) times its own count. The mechanism may be turned a quarter turn about
the stroke axis to fit the envelope. ``size_mm3`` is length x stack width x stack
height.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from springsynth.assembly.chains import (
    GRID_POINTS_FALLING,
    ChainPath,
    continued,
    follow,
    series_path,
    table_strokes,
    unit_grid,
)
from springsynth.assembly.design import Chain, Design
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
#: chains per chunk when following their loading paths (the temporaries stay in cache)
_CHAIN_ROWS = 1024
#: a chain link's table: the stroke grid on [0, 1] (times the link's reach); finer where a chain goes
#: through a falling link (its curve bends sharply on either side of its snap path)
_LINK_GRID = unit_grid()
_LINK_GRID_FALLING = unit_grid(GRID_POINTS_FALLING)


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
class _Context:
    """What every step reads: the population in slot-major arrays and each kind's numerical domain."""

    slots: Slots
    x: np.ndarray
    x_max: float
    detail: bool
    mats_all: MaterialArrays
    dom_lo: list
    dom_hi: list
    kind_lo: list
    thick: list
    params_t: np.ndarray     # (S, P, n)
    material_t: np.ndarray   # (S, n)
    count_t: np.ndarray
    offset_t: np.ndarray
    slot_sane: np.ndarray    # (S, n): finite count and a stroke minus offset inside _MAX_STROKE_MM

    @classmethod
    def of(cls, slots: Slots, x: np.ndarray, x_max: float, detail: bool) -> "_Context":
        kinds = slots.kinds
        # numerical domain and fallback values of each kind, shape (parameters, 1)
        dom_lo = [np.array([q.lo / _DOMAIN if q.lo > 0 and not q.choices else q.lo for q in k.params], float)[:, None]
                  for k in kinds]
        dom_hi = [np.array([q.hi if q.choices else q.hi * _DOMAIN for q in k.params], float)[:, None] for k in kinds]
        kind_lo = [np.array([q.lo for q in k.params], float)[:, None] for k in kinds]
        thick = [[q.name for q in k.params if q.thickness] for k in kinds]
        # slot-major copies: the gathers read contiguous rows
        count_t = np.ascontiguousarray(slots.count.T)
        offset_t = np.ascontiguousarray(slots.offset_mm.T)
        with np.errstate(invalid="ignore"):
            slot_sane = np.isfinite(count_t) & (np.abs(x_max - offset_t) <= _MAX_STROKE_MM)
        return cls(slots, x, x_max, detail, MaterialArrays.take(slots.materials, np.arange(len(slots.materials))),
                   dom_lo, dom_hi, kind_lo, thick, np.ascontiguousarray(slots.params.transpose(1, 2, 0)),
                   np.ascontiguousarray(slots.material.T), count_t, offset_t, slot_sane)

    def in_domain(self, ki: int, pk: np.ndarray, sane: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Parameters ``pk`` (parameters, rows) of kind ``ki`` inside the numerical domain, and which rows were.

        Parameters outside it (non-finite, a factor _DOMAIN beyond a bound, a choice index
        out of range) never reach a kernel: such rows are evaluated at the lower bounds and
        marked not finite (``sane`` is updated in place).
        """
        for inside in (pk >= self.dom_lo[ki]) & (pk <= self.dom_hi[ki]):      # faster than np.all(axis=0)
            sane &= inside
        if not sane.all():
            pk = np.where(sane, pk, self.kind_lo[ki])
        return pk, sane


@dataclass
class _Totals:
    """Running totals over the slots (design order) and one slot's results in kind order (``*_s``)."""

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
    f_s: np.ndarray
    sr_curve_s: np.ndarray | None
    u_s: np.ndarray | None
    peak_s: np.ndarray
    along_s: np.ndarray
    w_s: np.ndarray
    h_s: np.ndarray
    mass_s: np.ndarray
    thin_s: np.ndarray
    ok_s: np.ndarray

    @classmethod
    def empty(cls, n: int, S: int, m: int, detail: bool) -> "_Totals":
        z = lambda: np.zeros(n)  # noqa: E731
        e = lambda: np.empty(n)  # noqa: E731
        return cls(
            force=np.empty((n, m)) if S else np.zeros((n, m)),    # the first slot writes it whole
            elem_force=np.zeros((n, S, m)) if detail else None, sr=z(), sr_curve=np.zeros((n, m)) if detail else None,
            along=z(), stack_w=z(), stack_h=z(), mass=z(), tmin=np.full(n, np.inf), finite=np.ones(n, dtype=bool),
            validity={}, snap=np.full(n, np.nan), elem_stroke=np.zeros((n, S, m)) if detail else None,
            elem_sr=np.zeros((n, S, m)) if detail else None,
            f_s=np.empty((n, m)), sr_curve_s=np.empty((n, m)) if detail else None,
            u_s=np.empty((n, m)) if detail else None, peak_s=e(), along_s=e(), w_s=e(), h_s=e(), mass_s=e(),
            thin_s=e(), ok_s=np.empty(n, dtype=bool))

    def add_margins(self, margins: dict, rows: np.ndarray, ok: np.ndarray, first: bool) -> None:
        """Worst margin per rule into ``validity[name][rows]``; a non-finite margin clears ``ok``.

        ``first``: nothing was written yet for these rows (they are still at -inf).
        """
        n = self.force.shape[0]
        for name, g in margins.items():
            g_ok = np.isfinite(g)
            ok &= g_ok
            g = np.where(g_ok, g, np.inf)
            cur = self.validity.get(name)
            if cur is None:
                cur = self.validity[name] = np.full(n, -np.inf)
            cur[rows] = g if first else np.maximum(cur[rows], g)

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
        Also return each branch's force, each element's stroke and the stress-ratio curve.

    Notes
    -----
    Two steps, each looping over slots and kinds (a handful), never over designs: the
    branches of one element (:func:`_add_slot`, one vectorised kernel call per kind and
    slot), then the chains (:func:`_add_chains`, grouped by length and by whether they
    pass a falling link, whatever slot they start in). Within a slot the rows are taken in kind order (:meth:`Slots.slot_order`), so each kind
    writes its forces, peak stress ratios, boxes and masses into one contiguous block of
    the slot's arrays; one gather per slot brings them back to design order and combines
    them with the slots before, in slot order (the sums are the same, bit for bit, as
    adding slot after slot). Validity margins go straight to their rows.
    """
    x = np.asarray(x_mm, dtype=float)
    x_max = float(np.max(x)) if x_max_mm is None else float(x_max_mm)
    ctx = _Context.of(slots, x, x_max, detail)
    tot = _Totals.empty(slots.n, slots.n_slots, x.size, detail)
    in_chain = slots.in_chain if slots.has_chains else None
    for j in range(slots.n_slots):
        _add_slot(ctx, tot, j, None if in_chain is None else in_chain[:, j])
    if in_chain is not None:
        _add_chains(ctx, tot)
    return tot.response(x)


# --------------------------------------------------------------------------- branches of one element

def _add_slot(ctx: _Context, tot: _Totals, j: int, skip: np.ndarray | None) -> None:
    """Every single-element branch in slot ``j`` (rows in ``skip`` hold a chain there: left out)."""
    order, edges = ctx.slots.slot_order(j, skip)
    empty = slice(0, edges[1])
    for arr in (tot.f_s, tot.peak_s, tot.along_s, tot.w_s, tot.h_s, tot.mass_s) + \
            ((tot.sr_curve_s, tot.u_s) if ctx.detail else ()):
        arr[empty] = 0.0
    tot.thin_s[empty] = np.inf
    tot.ok_s[empty] = True
    for ki in range(len(ctx.slots.kinds)):
        blk = slice(edges[ki + 1], edges[ki + 2])
        if blk.start != blk.stop:
            _kind_block(ctx, tot, j, ki, blk, order[blk])
    _gather_slot(ctx, tot, j, order)


def _kind_block(ctx: _Context, tot: _Totals, j: int, ki: int, blk: slice, rows: np.ndarray) -> None:
    """One kind's rows of slot ``j``: force of all copies, peak stress ratio, box, mass, margins."""
    kind = ctx.slots.kinds[ki]
    x, x_max = ctx.x, ctx.x_max
    pk, sane = ctx.in_domain(ki, ctx.params_t[j][:len(kind.params), rows], ctx.slot_sane[j][rows])
    off = ctx.offset_t[j][rows]
    cnt = ctx.count_t[j][rows]
    u_max = np.maximum(x_max - off, 0.0)
    if not sane.all():   # strokes beyond _MAX_STROKE_MM too: evaluated unloaded, marked not finite
        off = np.where(sane, off, x_max)
        u_max = np.where(sane, u_max, 0.0)
    p = {q.name: pk[c] for c, q in enumerate(kind.params)}
    mat = ctx.mats_all.rows(ctx.material_t[j][rows])
    with np.errstate(all="ignore"):
        u = np.subtract(x[None, :], off[:, None])
        np.copyto(u, 0.0, where=u < 0.0)    # the element's own stroke, clipped at engagement
        engaged = u > 0.0
        f = kind.force(p, mat, u)
        f *= engaged
        f = np.multiply(f, cnt[:, None], out=tot.f_s[blk])
        peak = _peak_ratio(kind, p, mat, u_max)
        margins = kind.validity_margins(p, mat, u_max)
        a, c1, c2 = kind.box(p, u_max)
        ms = kind.mass(p, mat, u_max) * cnt
        # one reduction finds any NaN or inf in a row (a sum with one is not finite)
        ok = np.isfinite(f.sum(axis=1) + peak + a + c1 + c2 + ms) & sane
        if ctx.detail:
            s = kind.stress(p, mat, u) / kind.allowable(p, mat)[:, None]
            tot.sr_curve_s[blk] = np.where(engaged, s, 0.0)
            tot.u_s[blk] = u
    tot.add_margins(margins, rows, ok, first=j == 0)    # slot 0: rows still at -inf
    tot.ok_s[blk] = ok
    tot.peak_s[blk] = peak
    tot.along_s[blk] = a
    tot.w_s[blk] = cnt * np.minimum(c1, c2)
    tot.h_s[blk] = np.maximum(c1, c2)
    tot.mass_s[blk] = ms
    tot.thin_s[blk] = np.inf
    for name in ctx.thick[ki]:
        np.minimum(tot.thin_s[blk], p[name], out=tot.thin_s[blk])


def _peak_ratio(kind, p, mat, u_max: np.ndarray) -> np.ndarray:
    """Peak stress / allowable over the stroke [0, u_max], shape (n,)."""
    if kind.monotonic_stress:
        return kind.peak_stress_ratio(p, mat, u_max[:, None])
    grid = u_max[:, None] * np.linspace(0.0, 1.0, _STRESS_GRID)[None, :]
    return kind.peak_stress_ratio(p, mat, grid)


def _gather_slot(ctx: _Context, tot: _Totals, j: int, order: np.ndarray) -> None:
    """Slot ``j``'s results (kind order) back to design order, combined with the slots before."""
    n = ctx.slots.n
    f_s, ok_s = tot.f_s, tot.ok_s
    if not ok_s.all():
        f_s[~ok_s] = 0.0
    back = np.empty(n, dtype=np.intp)
    back[order] = np.arange(n)              # where each design's row sits in `order`
    if j == 0:
        np.take(f_s, back, axis=0, out=tot.force, mode="clip")
    else:   # in chunks of rows: no second full-size temporary
        for c in range(0, n, _CHUNK_ROWS):
            tot.force[c:c + _CHUNK_ROWS] += np.take(f_s, back[c:c + _CHUNK_ROWS], axis=0, mode="clip")
    if ctx.detail:
        tot.elem_force[:, j] = f_s[back]
        tot.elem_stroke[:, j] = tot.u_s[back]
        tot.elem_sr[:, j] = tot.sr_curve_s[back]
        np.maximum(tot.sr_curve, tot.sr_curve_s[back], out=tot.sr_curve)
    tot.finite &= ok_s[back]
    np.maximum(tot.sr, tot.peak_s[back], out=tot.sr)
    np.maximum(tot.along, tot.along_s[back], out=tot.along)
    tot.stack_w += tot.w_s[back]
    np.maximum(tot.stack_h, tot.h_s[back], out=tot.stack_h)
    tot.mass += tot.mass_s[back]
    np.minimum(tot.tmin, tot.thin_s[back], out=tot.tmin)


# --------------------------------------------------------------------------- chains

def _chain_heads(slots: Slots) -> tuple[np.ndarray, np.ndarray]:
    """Slots where a chain starts, shape (n, S), and the number of links of the chain starting there."""
    n, S = slots.kind.shape
    length = np.ones((n, S), dtype=np.intp)
    for j in range(S - 2, -1, -1):
        length[:, j] = np.where(slots.link[:, j + 1], length[:, j + 1] + 1, 1)
    return slots.in_chain & ~slots.link, length


def _add_chains(ctx: _Context, tot: _Totals) -> None:
    """Every chain, in groups of the same number of links, with or without a falling link, whatever
    slot each starts in (a row's second chain, if any, in a group of its own)."""
    heads, length = _chain_heads(ctx.slots)
    falls = np.array([not k.monotonic_force for k in ctx.slots.kinds] + [False])[ctx.slots.kind]
    nth = np.cumsum(heads, axis=1) - 1                  # 0 for a row's first chain, 1 for its second, ...
    S = ctx.slots.n_slots
    for o in range(int(nth[heads].max(initial=-1)) + 1):
        for L in np.unique(length[heads & (nth == o)]):
            rows, js = np.nonzero(heads & (nth == o) & (length == L))
            span = np.minimum(js[:, None] + np.arange(L)[None, :], S - 1)
            through = falls[rows[:, None], span].any(axis=1)
            for sel in (~through, through):
                if sel.any():
                    _chain_group(ctx, tot, js[sel], int(L), rows[sel])


@dataclass(frozen=True)
class _Block:
    """One kind's rows of one link position: ``sel`` indexes the group's rows."""

    sel: np.ndarray
    kind: object
    p: dict
    mat: MaterialArrays
    count: np.ndarray
    sane: np.ndarray
    thick: list


def _link_blocks(ctx: _Context, jj: np.ndarray, rows: np.ndarray, sane: np.ndarray) -> list[_Block]:
    """The links in slots ``jj`` (one per row) of the chains in ``rows``, one block per kind present."""
    out = []
    sl = ctx.slots
    kinds_here = sl.kind[rows, jj]
    for ki in np.unique(kinds_here):
        sel = np.flatnonzero(kinds_here == ki)
        r, j = rows[sel], jj[sel]
        kind = sl.kinds[ki]
        cnt = sl.count[r, j]
        s = sane[sel] & np.isfinite(cnt)
        pk, s = ctx.in_domain(ki, np.ascontiguousarray(sl.params[r, j, :len(kind.params)].T), s)
        p = {q.name: pk[c] for c, q in enumerate(kind.params)}
        out.append(_Block(sel, kind, p, ctx.mats_all.rows(sl.material[r, j]), cnt, s, ctx.thick[ki]))
    return out


def _link_table(blocks: list[_Block], n: int, top_mm: np.ndarray, k_max: int, grid: np.ndarray):
    """Each chain's link curve on its grid: strokes and forces (all copies) (n, N), falling flags, finite flags.

    The grid spans the link's reach (the chain's stroke ``top_mm``, or the kind's valid
    stroke if shorter) with points at the kind's marks (:func:`table_strokes`); one more
    point continues the curve at its last slope past the reach (:func:`continued`).
    """
    N = grid.size + k_max + 1
    u = np.empty((n, N))
    F = np.empty((n, N))
    falling = np.zeros(n, dtype=bool)
    ok = np.zeros(n, dtype=bool)
    for b in blocks:
        top_b = top_mm[b.sel]
        with np.errstate(all="ignore"):
            reach = np.maximum(np.minimum(top_b, b.kind.stroke_reach(b.p)), 1e-9)
            ub = table_strokes(reach, b.kind.stroke_marks(b.p), k_max, grid)
            f = b.kind.force(b.p, b.mat, ub) * b.count[:, None]
            u[b.sel], F[b.sel] = continued(ub, f, np.maximum(top_b, reach) * (1.0 + 1e-6) + 1e-9)
        ok[b.sel] = b.sane & np.isfinite(F[b.sel]).all(axis=1)
        falling[b.sel] = not b.kind.monotonic_force
    bad = ~ok       # a benign stand-in keeps the composition finite; such chains count as not finite
    u[bad] = np.linspace(0.0, 2.0, N)[None, :]
    F[bad] = u[bad]
    return u, F, falling, ok


def _chain_group(ctx: _Context, tot: _Totals, j: np.ndarray, L: int, rows: np.ndarray) -> None:
    """Chains of ``L`` links in ``rows``, each starting in its slot ``j`` (per row): tables, loading path,
    then the links' results."""
    x, x_max = ctx.x, ctx.x_max
    n = rows.size
    ccount = ctx.slots.chain_count[rows, j]
    sane = ctx.slot_sane[j, rows] & np.isfinite(ccount)
    off = np.where(sane, ctx.slots.offset_mm[rows, j], x_max)
    top = np.maximum(max(x_max, float(np.max(x, initial=0.0))) - off, 0.0)
    serv = np.maximum(x_max - off, 0.0)
    blocks = [_link_blocks(ctx, j + k, rows, sane) for k in range(L)]
    k_max = max(b.kind.stroke_marks(b.p).shape[1] for bs in blocks for b in bs)
    falling = any(not b.kind.monotonic_force for bs in blocks for b in bs)
    tables = [_link_table(b, n, top, k_max, _LINK_GRID_FALLING if falling else _LINK_GRID) for b in blocks]
    falls = np.stack([t[2] for t in tables])
    ok = np.all([t[3] for t in tables], axis=0) & (falls.sum(axis=0) <= 1)
    drv = np.where(falls.any(axis=0), np.argmax(falls, axis=0), -1)
    xs = np.argsort(x, kind="stable")
    q = np.concatenate([x[xs][None, :] - off[:, None], serv[:, None]], axis=1)
    F_q, link_q, link_max, snap = _follow_groups(np.stack([t[0] for t in tables]), np.stack([t[1] for t in tables]),
                                                 drv, q, serv, ctx.detail)
    f = np.empty((n, x.size))
    f[:, xs] = F_q[:, :-1] * ccount[:, None]
    link_x = None
    if ctx.detail:
        link_x = np.empty((L, n, x.size))
        link_x[:, :, xs] = link_q[:, :, :-1]
    results = [_link_results(ctx, tot, blocks[k], rows, link_max[k], None if link_x is None else link_x[k])
               for k in range(L)]
    ok &= np.all([r["ok"] for r in results], axis=0)
    f[~ok] = 0.0
    tot.force[rows] += f
    with np.errstate(invalid="ignore"):
        at = off + snap
        snap_x = np.where(ok & (at > 0.0) & (at <= x_max), at, np.nan)
    tot.snap[rows] = np.fmin(tot.snap[rows], snap_x)
    _chain_totals(ctx, tot, j, rows, ccount, ok, f, link_x, results)


def _follow_groups(u_tab, F_tab, drv, q, serv, detail: bool):
    """Loading paths of chains (tables (L, n, N)) followed to the strokes ``q`` (n, Q).

    Returns forces (n, Q), link strokes (L, n, Q) (only the last column unless ``detail``),
    each link's largest stroke over the states visited up to ``serv`` (L, n) and the
    chain stroke of the first snap (n,). Along a path without a falling link no link ever
    unloads, so its largest stroke is the one at ``serv`` (the last query). Rows go in
    chunks of ``_CHAIN_ROWS`` (the path's temporaries stay in cache).
    """
    L, n, _ = u_tab.shape
    F_q = np.empty((n, q.shape[1]))
    link_q = np.zeros((L, n, q.shape[1]))
    link_max = np.empty((L, n))
    snap = np.full(n, np.nan)
    for c in range(0, n, _CHAIN_ROWS):
        sel = slice(c, c + _CHAIN_ROWS)
        falling = drv[sel] >= 0
        path = series_path(u_tab[:, sel], F_tab[:, sel], drv[sel] if falling.any() else None)
        if detail:
            F_q[sel], link_q[:, sel] = follow(path, q[sel])
        else:
            F_q[sel], link_q[:, sel, -1:] = follow(path, q[sel], links=slice(-1, None))
        link_max[:, sel] = link_q[:, sel, -1]
        if falling.any():
            link_max[:, sel] = np.maximum(_visited_max(path, serv[sel]), link_max[:, sel])
            snap[sel] = path.snap_mm
    return F_q, link_q, link_max, snap


def _visited_max(path: ChainPath, serv: np.ndarray) -> np.ndarray:
    """Each link's largest stroke over the path's states up to the chain stroke ``serv``, shape (L, n)."""
    reached = path.stroke_mm <= serv[:, None]
    return np.max(np.where(reached[None], path.link_mm, 0.0), axis=2)


def _link_results(ctx: _Context, tot: _Totals, blocks: list[_Block], rows: np.ndarray, u_max: np.ndarray,
                  u_x: np.ndarray) -> dict:
    """Peak stress ratio, box, mass and thinnest section of one link position at its own strokes (n,).

    Its validity margins, at its largest stroke, go straight into the design's totals.
    """
    n = rows.size
    out = {k: np.zeros(n) for k in ("peak", "a", "w", "h", "mass")}
    out["thin"] = np.full(n, np.inf)
    out["ok"] = np.zeros(n, dtype=bool)
    out["curve"] = np.zeros((n, u_x.shape[1])) if u_x is not None else None
    for b in blocks:
        um = np.where(b.sane, u_max[b.sel], 0.0)
        with np.errstate(all="ignore"):
            peak = _peak_ratio(b.kind, b.p, b.mat, um)
            a, c1, c2 = b.kind.box(b.p, um)
            ms = b.kind.mass(b.p, b.mat, um) * b.count
            ok = np.isfinite(peak + a + c1 + c2 + ms) & b.sane
            if u_x is not None:
                ux = u_x[b.sel]
                s = b.kind.stress(b.p, b.mat, ux) / b.kind.allowable(b.p, b.mat)[:, None]
                out["curve"][b.sel] = np.where(ux > 0.0, s, 0.0)
        tot.add_margins(b.kind.validity_margins(b.p, b.mat, um), rows[b.sel], ok, first=False)
        out["peak"][b.sel], out["a"][b.sel], out["mass"][b.sel] = peak, a, ms
        out["w"][b.sel] = b.count * np.minimum(c1, c2)
        out["h"][b.sel] = np.maximum(c1, c2)
        out["ok"][b.sel] = ok
        for name in b.thick:
            out["thin"][b.sel] = np.minimum(out["thin"][b.sel], b.p[name])
    return out


def _chain_totals(ctx: _Context, tot: _Totals, j: int, rows, ccount, ok, f, link_x, results) -> None:
    """A chain's links into the design's totals: peak stress, packing (links stack along the stroke), mass."""
    tot.finite[rows] &= ok
    tot.sr[rows] = np.maximum(tot.sr[rows], np.max([r["peak"] for r in results], axis=0))
    tot.along[rows] = np.maximum(tot.along[rows], np.sum([r["a"] for r in results], axis=0))
    tot.stack_w[rows] += ccount * np.max([r["w"] for r in results], axis=0)
    tot.stack_h[rows] = np.maximum(tot.stack_h[rows], np.max([r["h"] for r in results], axis=0))
    tot.mass[rows] += ccount * np.sum([r["mass"] for r in results], axis=0)
    tot.tmin[rows] = np.minimum(tot.tmin[rows], np.min([r["thin"] for r in results], axis=0))
    if ctx.detail:
        tot.elem_force[rows, j] = f
        for k, r in enumerate(results):
            tot.elem_stroke[rows, j + k] = link_x[k]
            tot.elem_sr[rows, j + k] = r["curve"]
            tot.sr_curve[rows] = np.maximum(tot.sr_curve[rows], r["curve"])


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


def evaluate_design(design: Design, x_mm: np.ndarray, *, x_max_mm: float | None = None,
                    at_snaps: bool = False) -> Response:
    """Evaluate one design (n = 1) with per-element detail; same code path as the search.

    ``at_snaps``: where a chain snaps, add the snap's stroke and one just past it to the
    (sorted) stroke points, so that a plot draws the force's jump as a vertical step.
    """
    slots = Slots.from_designs([design])
    r = evaluate_population(slots, x_mm, x_max_mm=x_max_mm, detail=True)
    snap = float(r.snap_mm[0]) if r.snap_mm is not None else np.nan
    if not (at_snaps and np.isfinite(snap)):
        return r
    x = np.asarray(x_mm, dtype=float)
    x = np.unique(np.r_[x, snap, snap + 1e-9 * max(float(np.max(x)), 1.0)])
    return evaluate_population(slots, x, x_max_mm=float(np.max(x_mm)) if x_max_mm is None else x_max_mm, detail=True)


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
        ``e<j>_<name>`` (j counts the elements from 1, chain links included, as the columns
        of ``springsynth evaluate``): per copy, on the element's own stroke: ``x - offset``
        (clipped at 0), or a chain link's stroke along its chain's loading path. Empty when
        no kind of the design provides any.
    """
    x = np.asarray(x_mm, dtype=float).ravel()
    strokes = evaluate_design(design, x).element_stroke_mm[0] if design.has_chain else None
    out: dict[str, np.ndarray] = {}
    for j, ((b, _), e) in enumerate(zip(design.layout, design.parts)):
        p = {k: np.array([v]) for k, v in e.values().items()}
        mat = MaterialArrays.of(design.materials[e.material])
        in_chain = isinstance(design.branches[b], Chain)
        u = (strokes[j] if in_chain else np.maximum(x - e.offset_mm, 0.0))[None, :]
        for name, v in get_kind(e.kind).extra_outputs(p, mat, u).items():
            out[f"e{j + 1}_{name}"] = np.asarray(v, dtype=float)[0]
    return out
