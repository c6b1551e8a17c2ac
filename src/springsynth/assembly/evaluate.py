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

from springsynth.assembly._state import Context, Response, Totals, peak_ratio
from springsynth.assembly.branches import add_branches
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

#: chains per chunk when following their loading paths (the temporaries stay in cache)
_CHAIN_ROWS = 1024
#: a chain link's table: the stroke grid on [0, 1] (times the link's reach); finer where a chain goes
#: through a falling link (its curve bends sharply on either side of its snap path)
_LINK_GRID = unit_grid()
_LINK_GRID_FALLING = unit_grid(GRID_POINTS_FALLING)


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
    Two steps, each looping over kinds and groups (a handful), never over designs: the
    branches of one element (:func:`springsynth.assembly.branches.add_branches`: each kind's
    kernels called once over its rows in every slot, the slots then combined in slot order,
    so the sums are the same, bit for bit, as adding slot after slot), then the chains
    (:func:`_add_chains`, grouped by length and by whether they pass a falling link,
    whatever slot they start in).
    """
    x = np.asarray(x_mm, dtype=float)
    x_max = float(np.max(x)) if x_max_mm is None else float(x_max_mm)
    ctx = Context.of(slots, x, x_max, detail)
    tot = Totals.empty(slots.n, slots.n_slots, x.size, detail)
    in_chain = slots.in_chain if slots.has_chains else None
    add_branches(ctx, tot, in_chain)
    if in_chain is not None:
        _add_chains(ctx, tot)
    return tot.response(x)


# --------------------------------------------------------------------------- chains

def _chain_heads(slots: Slots) -> tuple[np.ndarray, np.ndarray]:
    """Slots where a chain starts, shape (n, S), and the number of links of the chain starting there."""
    n, S = slots.kind.shape
    length = np.ones((n, S), dtype=np.intp)
    for j in range(S - 2, -1, -1):
        length[:, j] = np.where(slots.link[:, j + 1], length[:, j + 1] + 1, 1)
    return slots.in_chain & ~slots.link, length


def _add_chains(ctx: Context, tot: Totals) -> None:
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


def _link_blocks(ctx: Context, jj: np.ndarray, rows: np.ndarray, sane: np.ndarray) -> list[_Block]:
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
        out.append(_Block(sel, kind, p, ctx.mats_all.rows(sl.material[r, j]), cnt, s, ctx.thick(ki)))
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


def _chain_group(ctx: Context, tot: Totals, j: np.ndarray, L: int, rows: np.ndarray) -> None:
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


def _link_results(ctx: Context, tot: Totals, blocks: list[_Block], rows: np.ndarray, u_max: np.ndarray,
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
            peak = peak_ratio(b.kind, b.p, b.mat, um)
            a, c1, c2 = b.kind.box(b.p, um)
            ms = b.kind.mass(b.p, b.mat, um) * b.count
            ok = np.isfinite(peak + a + c1 + c2 + ms) & b.sane
            if u_x is not None:
                ux = u_x[b.sel]
                s = b.kind.stress(b.p, b.mat, ux) / b.kind.allowable(b.p, b.mat)[:, None]
                out["curve"][b.sel] = np.where(ux > 0.0, s, 0.0)
        tot.add_margins(b.kind.validity_margins(b.p, b.mat, um), rows[b.sel], ok)
        out["peak"][b.sel], out["a"][b.sel], out["mass"][b.sel] = peak, a, ms
        out["w"][b.sel] = b.count * np.minimum(c1, c2)
        out["h"][b.sel] = np.maximum(c1, c2)
        out["ok"][b.sel] = ok
        for name in b.thick:
            out["thin"][b.sel] = np.minimum(out["thin"][b.sel], b.p[name])
    return out


def _chain_totals(ctx: Context, tot: Totals, j: int, rows, ccount, ok, f, link_x, results) -> None:
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
