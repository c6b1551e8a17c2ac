"""Chains of links in series under a rising stroke: the loading path, its snaps, for n chains at once.

Equilibrium of a chain
----------------------
A chain of L links carries one force F through every link; link k (``c_k`` copies in
parallel inside the link, each with the force law ``f_k``) deflects ``u_k`` with
``c_k f_k(u_k) = F``, and the chain's stroke is ``u = sum_k u_k``. The links bear on
one another: a chain carries compression only (``F >= 0``).

*Monotone links.* Where ``c_k f_k`` never falls, its left inverse
``g_k(F) = min{u : c_k f_k(u) >= F}`` is single valued (a flat stretch of the curve is
passed at constant F). With every link monotone the equilibria form one curve
parametrised by the force, ``u(F) = sum_k g_k(F)``, rising, and the chain's force at
stroke u is its inverse. The compliances add, ``du/dF = sum_k 1/k_k``, i.e.
``1/k = sum_k 1/k_k`` (springs in series; Shigley's Mechanical Engineering Design,
ch. 10; Roark's Formulas for Stress and Strain).

*One falling link.* A link a whose force rises to a limit point, falls and rises again
(a snap-through arch) is loaded through the others, which act on it as a compliant
loading device of stiffness ``k_d = 1 / sum_(k != a) 1/k_k``. The equilibria are one
curve parametrised by the falling link's own stroke s,
``F(s) = max(c_a f_a(s), 0)``, ``u(s) = s + sum_(k != a) g_k(F(s))`` (``g_k = 0`` for
``F <= 0``); on each monotone stretch of F(s) (rising, falling or flat) the force is a
parameter as well. Along it ``du/ds = 1 + F'(s) / k_d``: the stroke rises while the
falling link's stiffness ``F'(s) > -k_d``, and has a limit point (a fold) where
``F'(s) = -k_d``, past the force maximum; a rigid device (``k_d -> inf``) imposes
u = s and never folds. Under a stroke imposed at the end of the chain (displacement
control of the whole: a compliant loading device for the falling link) the chain
cannot follow the path back past a fold: it snaps, at constant stroke, to the next
equilibrium on the path with the same stroke, and the force jumps down (J.M.T.
Thompson & G.W. Hunt, A General Theory of Elastic Stability, Wiley 1973: limit points,
and the jump from a limit point under a rigid versus a compliant loading device). The
chain's state at stroke u is therefore the first equilibrium along the rising path
that reaches u, ``s*(u) = min{s : u(s) = u}``, with force ``F(s*(u))``; where the path
folds back the force jumps at the fold stroke, recorded as the snap. Where the falling
link's own force turns negative it would pull: a chain transmits no tension, so there
the chain's force is zero and the others are unloaded (the falling link's stroke is
taken as the chain's) until its force turns positive again on its rising branch.

Discretisation
--------------
Each link is tabulated on its own stroke grid (:func:`unit_grid` times its reach: the
chain's stroke, or the link's valid stroke if shorter, with points at the kind's
marks (:meth:`ElementKind.stroke_marks`: corners and sharp bends), and continued beyond
at its last slope so that a link driven past its range is
flagged by its validity margins, never silently clipped). Monotone links are made
non-decreasing by their running maximum and strictly increasing by adding ``1e-10``
of their force scale over the table, so that their inverse is single valued.

Without a falling link the path is the union of all links' table points, sorted by
force. With one, it is parametrised by the falling link's stroke: its table points
and, inside each of its segments, the points where its force passes a table force of
another link, in the order the segment passes them (the change across the segment of
the count of the other link's forces at or below the falling link's force says which,
exactly). Either way every link's stroke is linear in F between two consecutive path
points, so the piecewise linear path is the exact series composition of the piecewise
linear link curves: the only discretisation is each link's own table. Every other
link has a table point at F = 0, so the falling link's zero crossings are path points
and clipping the force there is exact. The first passage keeps the records of the
path's running maximum of u; at each fold the point before the path rises past the
fold stroke again is replaced by the exact crossing, so the force jumps at the fold
stroke itself.

Every step works on whole arrays (n chains x points), with no loop over chains; the
sorts are merges of sorted runs (a stable sort of concatenated sorted runs).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["ChainPath", "unit_grid", "table_strokes", "continued", "series_path", "follow", "GRID_POINTS",
           "GRID_POINTS_FALLING"]

#: uniform steps of a link's table over its reach (plus a geometric start, the kind's marks and the continuation),
#: and in chains through a falling link (whose curve bends sharply on either side of its snap path)
GRID_POINTS = 40
GRID_POINTS_FALLING = 40
#: geometric points below the first uniform step (resolve stiff starts, e.g. a column before it buckles)
_GEOMETRIC_POINTS = 8
#: smallest geometric point, as a fraction of the reach
_GEOMETRIC_START = 1e-5
#: strictly increasing monotone tables: this fraction of the force scale over the whole table
_EPS = 1e-10
#: a fold shorter than this fraction of the chain's stroke is not a snap
_FOLD_TOL = 1e-9


@dataclass(frozen=True)
class ChainPath:
    """The first-passage loading path of n chains of L links (W points each).

    Attributes
    ----------
    stroke_mm : ndarray, shape (n, W)
        Chain stroke, non-decreasing along each row (a snap is a pair of points at the
        same stroke).
    force_N : ndarray, shape (n, W)
        Chain force (all copies of each link, one chain).
    link_mm : ndarray, shape (L, n, W)
        Each link's own stroke.
    snap_mm : ndarray, shape (n,)
        Chain stroke of the first snap; NaN when the path never folds.
    """

    stroke_mm: np.ndarray
    force_N: np.ndarray
    link_mm: np.ndarray
    snap_mm: np.ndarray


def unit_grid(points: int = GRID_POINTS, geometric: int = _GEOMETRIC_POINTS) -> np.ndarray:
    """Stroke grid of a link's table on [0, 1] (times its reach), shape (1 + geometric + points,).

    Zero, ``geometric`` points from 1e-5 up to half the first uniform step (a stiff start,
    such as a column's axial shortening before it buckles, is resolved to a few per cent
    of its own extent), then ``points`` equal steps up to 1.
    """
    geo = np.geomspace(_GEOMETRIC_START, 0.5 / points, geometric)
    return np.r_[0.0, geo, np.linspace(1.0 / points, 1.0, points)]


def table_strokes(reach: np.ndarray, marks: np.ndarray, k_max: int, g: np.ndarray | None = None) -> np.ndarray:
    """A link's table strokes: ``reach * g`` (n, G) with its marks inside (0, reach) added, sorted.

    Parameters
    ----------
    reach : ndarray, shape (n,)
        Largest stroke of the table, mm.
    marks : ndarray, shape (n, k)
        The kind's marks (:meth:`ElementKind.stroke_marks`), NaN where none; ``k <= k_max``.
    k_max : int
        Columns for marks (the same for every link of a group of chains).
    g : ndarray, shape (G,), optional
        Unit grid (default :func:`unit_grid`).

    Returns
    -------
    ndarray, shape (n, G + k_max)
        A missing mark becomes the midpoint of a uniform step near the end (no stroke repeats).
    """
    g = unit_grid() if g is None else g
    n = reach.size
    if k_max == 0:
        return reach[:, None] * g[None, :]
    k = np.full((n, k_max), np.nan)
    k[:, :marks.shape[1]] = marks
    step = g[-1] - g[-2]
    spare = reach[:, None] * (g[-1] - (np.arange(k_max) + 0.5) * step)[None, :]
    k = np.where(np.isfinite(k) & (k > 0.0) & (k < reach[:, None]), k, spare)
    return np.sort(np.concatenate([reach[:, None] * g[None, :], k], axis=1), axis=1)


def continued(u: np.ndarray, F: np.ndarray, end: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A link's table (n, N) with one more point at the strokes ``end`` (n,), at its last slope.

    Past its reach a link's curve goes on at the slope of its last segment (its validity
    margins flag a design that uses it there); ``F[:, 0]`` is set to 0 (engagement).
    """
    with np.errstate(all="ignore"):
        slope = (F[:, -1] - F[:, -2]) / (u[:, -1] - u[:, -2])
        last = F[:, -1] + slope * (end - u[:, -1])
    u2 = np.concatenate([u, end[:, None]], axis=1)
    F2 = np.concatenate([F, last[:, None]], axis=1)
    F2[:, 0] = 0.0
    return u2, F2


def series_path(u_tab: np.ndarray, F_tab: np.ndarray, falling: np.ndarray | None = None) -> ChainPath:
    """Loading path of n chains from their links' tables (module notes).

    Parameters
    ----------
    u_tab : ndarray, shape (L, n, N)
        Each link's own stroke at its table points, mm, increasing along N from 0.
    F_tab : ndarray, shape (L, n, N)
        The link's force (all its copies) at those strokes, N; ``F_tab[..., 0] = 0``.
    falling : ndarray of int, shape (n,), optional
        Index of the link whose force falls (at most one per chain), -1 where none.

    Returns
    -------
    ChainPath
    """
    L, n, N = F_tab.shape
    drv = np.full(n, -1, dtype=np.intp) if falling is None else np.asarray(falling, dtype=np.intp)
    has = drv >= 0
    mono = _monotone(F_tab)
    if not has.any():
        u, F, links = _monotone_path(u_tab, mono)
        return ChainPath(u, F, links, np.full(n, np.nan))
    rows = np.flatnonzero(has)
    mono[drv[rows], rows] = F_tab[drv[rows], rows]
    # rows without a falling link: their first link drives (a single rising stretch)
    return _first_passage(*_falling_path(u_tab, mono, np.maximum(drv, 0)))


def follow(path: ChainPath, u_mm: np.ndarray, *, links: slice | None = slice(None)) -> tuple[np.ndarray, np.ndarray | None]:
    """Force and link strokes of n chains at chain strokes ``u_mm`` along their loading paths.

    Parameters
    ----------
    path : ChainPath
    u_mm : ndarray, shape (n, q)
        Chain strokes, non-decreasing along each row.
    links : slice or None
        The columns of ``u_mm`` at which to return the link strokes too (None: none).

    Returns
    -------
    force_N : ndarray, shape (n, q)
        Zero where ``u_mm <= 0``.
    link_mm : ndarray, shape (L, n, q') or None
        At the columns ``links``.
    """
    M = path.stroke_mm
    n, W = M.shape
    it = _index_type(path.link_mm.size)
    lo = np.clip(_rank(M, u_mm).astype(it, copy=False) - 1, 0, W - 2)
    lo += (np.arange(n, dtype=it) * W)[:, None]
    Mf = M.reshape(-1)
    x0 = Mf[lo]
    t = u_mm - x0
    t /= np.maximum(Mf[lo + 1] - x0, 1e-300)     # a tie (a snap) is never bracketed but at the clipped end
    np.clip(t, 0.0, 1.0, out=t)
    F = _lerp(path.force_N.reshape(-1), lo, t)
    F[u_mm <= 0.0] = 0.0
    if links is None:
        return F, None
    L = path.link_mm.shape[0]
    lf = path.link_mm.reshape(-1)
    lo, t = np.ascontiguousarray(lo[:, links]), np.ascontiguousarray(t[:, links])
    return F, np.stack([_lerp(lf, lo + k * n * W, t) for k in range(L)])


# --------------------------------------------------------------------------- pieces

def _index_type(size: int):
    """32-bit indices where they reach (faster gathers and counts), else the platform's."""
    return np.int32 if size < 2**31 - 1 else np.intp


def _lerp(a: np.ndarray, lo: np.ndarray, t: np.ndarray) -> np.ndarray:
    """``a[lo] + t (a[lo + 1] - a[lo])`` for flat indices ``lo`` into the flat array ``a``."""
    a0 = a[lo]
    return a0 + t * (a[lo + 1] - a0)


def _rank(xp: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Number of ``xp`` values < each query, per row; ``xp`` (n, W) and ``q`` (n, Q) sorted along rows.

    A stable sort of the two sorted runs side by side is a merge; the queries come first, so
    a query ties before equal ``xp`` (at a snap's stroke itself the chain is still on the
    branch before the fold); they keep their order, so the k-th query of a row sits at
    sorted position ``k + rank``.
    """
    n, W = xp.shape
    Q = q.shape[1]
    order = np.argsort(np.concatenate([q, xp], axis=1), axis=1, kind="stable")
    return np.nonzero(order < Q)[1].reshape(n, Q) - np.arange(Q)[None, :]


def _count_le(xp: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Number of ``xp`` values (n, N, ascending) <= each of ``q`` (n, W, any order), per row."""
    n, N = xp.shape
    W = q.shape[1]
    it = _index_type(n * (N + W))
    order = np.argsort(np.concatenate([xp, q], axis=1), axis=1, kind="stable").astype(it, copy=False)
    cum = np.cumsum(order < N, axis=1, dtype=it)
    order += (np.arange(n, dtype=it) * (N + W))[:, None]
    pos = np.empty(n * (N + W), dtype=it)
    pos[order] = np.arange(N + W, dtype=it)[None, :]
    pos = pos.reshape(n, N + W)[:, N:] + (np.arange(n, dtype=it) * (N + W))[:, None]
    return cum.reshape(-1)[pos]


def _monotone(F_tab: np.ndarray) -> np.ndarray:
    """Tables made non-decreasing (running maximum) and strictly increasing (a 1e-10 ramp)."""
    F = F_tab.copy()
    if not np.all(F[..., 1:] >= F[..., :-1]):       # rare: a running maximum costs more than the check
        np.maximum.accumulate(F, axis=-1, out=F)
    scale = np.abs(F[..., -1:])
    scale[scale == 0.0] = 1.0
    F += (_EPS * scale) * np.linspace(0.0, 1.0, F.shape[-1])
    return F


def _slopes(u_tab: np.ndarray, F_tab: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Flat ``du/dF`` of every table segment (the last point repeats its segment's) and the
    intercepts ``u - F du/dF``, so that a link's stroke at force F is ``icpt + F slope``."""
    N = u_tab.shape[-1]
    uf, Ff = u_tab.reshape(-1), F_tab.reshape(-1)
    slope = np.empty_like(uf)
    with np.errstate(divide="ignore", invalid="ignore"):   # across table ends: overwritten below
        np.divide(uf[1:] - uf[:-1], Ff[1:] - Ff[:-1], out=slope[:-1])
    s2 = slope.reshape(-1, N)
    s2[:, -1] = s2[:, -2]
    return slope, uf - Ff * slope


def _monotone_path(u_tab: np.ndarray, F_tab: np.ndarray):
    """Every link monotone: the union of all table points sorted by force; strokes add.

    Each link's stroke at a path force is ``icpt_j + F slope_j`` on the segment of its
    table that starts at its last point at or below F (the count of its points so far in
    the merged order); past its last point the last segment continues.
    """
    L, n, N = F_tab.shape
    W = L * N
    it = _index_type(L * n * N)
    flat = np.ascontiguousarray(F_tab.transpose(1, 0, 2)).reshape(n, W)
    order = np.argsort(flat, axis=1, kind="stable").astype(it, copy=False)
    F = flat.reshape(-1)[order + (np.arange(n, dtype=it) * W)[:, None]]
    slope, icpt = _slopes(u_tab, F_tab)
    links = np.empty((L, n, W))
    seen = np.zeros((n, W), dtype=it)
    rowN = (np.arange(n, dtype=it) * N)[:, None]
    for k in range(L):
        if k < L - 1:
            cnt = np.cumsum(order // N == k if L > 2 else order < N, axis=1, dtype=it)
            seen += cnt
        else:       # the last link's count: every point so far not of the others
            cnt = np.arange(1, W + 1, dtype=it)[None, :] - seen
        cnt -= 1
        np.maximum(cnt, 0, out=cnt)
        cnt += rowN + k * n * N
        np.multiply(slope[cnt], F, out=links[k])
        links[k] += icpt[cnt]
    return links.sum(axis=0), F, links


def _falling_path(u_tab: np.ndarray, F_tab: np.ndarray, drv: np.ndarray):
    """Path points of chains through a falling link, parametrised by its own stroke.

    The points are the falling link's table points and, inside each of its segments, the
    strokes where its force passes a table force of another link, in the order the
    segment passes them (:func:`_crossings`). With one other link they are placed
    straight into path order; with more, sorted by the falling link's stroke. Every
    other link's stroke follows from the force (its inverse; exact at its own table
    points). Returns strokes (n, W), forces (n, W) and link strokes (L, n, W); rows
    shorter than W end in padding (NaN strokes).
    """
    L, n, N = F_tab.shape
    rows = np.arange(n)
    s, Fd = u_tab[drv, rows], F_tab[drv, rows]
    others = np.array([[k for k in range(L) if k != d] for d in range(L)], dtype=np.intp)[drv].T   # (L - 1, n)
    Fo, uo = F_tab[others, rows[None, :]], u_tab[others, rows[None, :]]                       # (L - 1, n, N)
    below = [_count_le(Fo[m], Fd) for m in range(L - 1)]
    parts = [_crossings(s, Fd, Fo[m], uo[m], below[m]) for m in range(L - 1)]
    if L == 2:
        S, F, u_other = _interleave(s, Fd, uo[0], Fo[0], below[0], parts[0])
        links = np.empty((2, n, S.shape[1]))
        links[drv, rows], links[others[0], rows] = S, u_other
    else:
        S, F = _sorted_points(s, Fd, n, parts)
        links = np.empty((L, n, S.shape[1]))
        links[drv, rows] = S
        for m in range(L - 1):
            links[others[m], rows] = _stroke_at_force(Fo[m], uo[m], F)
    np.maximum(F, 0.0, out=F)
    return links.sum(axis=0), F, links


def _crossings(s, Fd, levels, u_lev, below):
    """Where the falling link's curve (``s``, ``Fd``: (n, Nd)) passes the other link's table forces.

    ``below`` (n, Nd) counts the levels (n, N, ascending) at or below each ``Fd``; across
    segment i the levels passed are those between ``below[i]`` and ``below[i + 1]``
    (rising: upward, falling: downward). Returns, flat over all rows in traversal order,
    each crossing's row, segment, stroke, force and the other link's stroke there, and
    the number of crossings of every segment (n, Nd - 1).
    """
    n, Nd = Fd.shape
    dc = below[:, 1:] - below[:, :-1]
    k = np.abs(dc).ravel()
    flat_seg = np.repeat(np.arange(n * (Nd - 1)), k)
    o = np.arange(flat_seg.size) - np.repeat(np.cumsum(k) - k, k)       # place inside its segment
    row, seg = np.divmod(flat_seg, Nd - 1)
    c0 = below[:, :-1].ravel()[flat_seg]
    j = np.where(dc.ravel()[flat_seg] > 0, c0 + o, c0 - 1 - o)           # level index, in traversal order
    lev = levels[row, j]
    f0, f1 = Fd[row, seg], Fd[row, seg + 1]
    s0, s1 = s[row, seg], s[row, seg + 1]
    stroke = s0 + (lev - f0) / (f1 - f0) * (s1 - s0)
    return row, seg, o, stroke, lev, u_lev[row, j], np.abs(dc)


def _interleave(s, Fd, u_k, F_k, below, cross):
    """Path of a two-link chain: each falling-link point followed by its segment's crossings.

    Returns the falling link's strokes (n, W), forces (n, W) and the other link's
    strokes (n, W), padded with NaN strokes.
    """
    n, Nd = s.shape
    row, seg, o, stroke, lev, u_lev, k = cross
    pos_d = np.arange(Nd)[None, :] + np.concatenate([np.zeros((n, 1), dtype=k.dtype), np.cumsum(k, axis=1)], axis=1)
    W = int(pos_d[:, -1].max()) + 1
    S = np.full((n, W), np.nan)
    F = np.zeros((n, W))
    U = np.zeros((n, W))
    rows = np.arange(n)[:, None]
    S[rows, pos_d], F[rows, pos_d] = s, Fd
    slope, icpt = _slopes(u_k, F_k)      # the other link at the falling link's points, from the counts
    lo = np.maximum(below - 1, 0) + (np.arange(n) * u_k.shape[1])[:, None]
    U[rows, pos_d] = np.maximum(icpt[lo] + Fd * slope[lo], 0.0)
    pos_c = pos_d[row, seg] + 1 + o
    S[row, pos_c], F[row, pos_c], U[row, pos_c] = stroke, lev, u_lev
    return S, F, U


def _sorted_points(s, Fd, n, parts):
    """The falling link's points and every other link's crossings, sorted by its stroke (NaN last)."""
    S, F = [s], [Fd]
    for row, seg, o, stroke, lev, u_lev, k in parts:
        per_row = k.sum(axis=1)
        at = np.arange(row.size) - np.concatenate([[0], np.cumsum(per_row)[:-1]])[row]    # row-local position
        width = int(per_row.max(initial=0))
        Sc, Fc = np.full((n, width), np.nan), np.zeros((n, width))
        Sc[row, at], Fc[row, at] = stroke, lev
        S.append(Sc)
        F.append(Fc)
    S, F = np.concatenate(S, axis=1), np.concatenate(F, axis=1)
    order = np.argsort(S, axis=1, kind="stable")
    order += (np.arange(n) * S.shape[1])[:, None]
    return S.reshape(-1)[order], F.reshape(-1)[order]


def _stroke_at_force(F_k: np.ndarray, u_k: np.ndarray, F: np.ndarray) -> np.ndarray:
    """Stroke of a monotone link (table ``u_k``, ``F_k``: (n, N), strictly increasing) at forces
    ``F`` (n, W) in any order; zero at forces <= 0."""
    n, N = F_k.shape
    lo = np.maximum(_count_le(F_k, F) - 1, 0) + (np.arange(n) * N)[:, None]
    slope, icpt = _slopes(u_k, F_k)
    return np.maximum(icpt[lo] + F * slope[lo], 0.0)


def _first_passage(u: np.ndarray, F: np.ndarray, links: np.ndarray) -> ChainPath:
    """The states first reached under a rising stroke: records of the running maximum, snaps at folds."""
    n, W = u.shape
    L = links.shape[0]
    M = np.fmax.accumulate(u, axis=1)                      # padding (NaN) carries the maximum
    prev = np.empty_like(M)
    prev[:, 0] = -np.inf
    prev[:, 1:] = M[:, :-1]
    rec = u > prev                                         # NaN compares False
    fold = u < prev - _FOLD_TOL * (M[:, -1:] + 1.0)
    it = _index_type(links.size)
    last = np.maximum.accumulate(np.where(rec, np.arange(W, dtype=it)[None, :], 0), axis=1)
    last += (np.arange(n, dtype=it) * W)[:, None]
    Fc = F.reshape(-1)[last]
    lf = links.reshape(-1)
    Lc = np.stack([lf[last + k * n * W] for k in range(L)])
    # a record reached after a fold: the chain landed there by a snap at the fold stroke
    fc = np.cumsum(fold, axis=1, dtype=it)
    landed = np.zeros((n, W), dtype=bool)
    landed[:, 1:] = rec[:, 1:] & (fc[:, :-1] - fc.reshape(-1)[last[:, :-1]] > 0)
    r, p = np.nonzero(landed)
    q = p - 1
    du = u[r, p] - u[r, q]
    t = np.clip(np.divide(prev[r, p] - u[r, q], du, out=np.zeros_like(du), where=du > 0), 0.0, 1.0)
    Fc[r, q] = F[r, q] + t * (F[r, p] - F[r, q])           # the exact crossing replaces the point before
    Lc[:, r, q] = links[:, r, q] + t * (links[:, r, p] - links[:, r, q])
    snap = np.full(n, np.nan)
    any_ = landed.any(axis=1)
    snap[any_] = prev[any_, np.argmax(landed[any_], axis=1)]
    return ChainPath(M, Fc, Lc, snap)
