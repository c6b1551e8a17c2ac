"""Figures (matplotlib, Agg). Plot functions take data and return a figure (or, with
``ax=``, draw into the given axes and return them); nothing here shows a window or
touches the global pyplot state beyond creating figures inside a local style
(:mod:`springsynth.report.style`).
"""

from __future__ import annotations

import math
from typing import Mapping, Sequence

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.lines import Line2D  # noqa: E402
from matplotlib.transforms import Bbox  # noqa: E402

from springsynth.checks.tolerance import ToleranceResult
from springsynth.model.numbers import pct_text, thousands  # noqa: E402
from springsynth.model.target import Target
from springsynth.report.design_figure import DesignCanvas, force_limits, plot_design, plot_target
from springsynth.report.schematic import plot_schematic
from springsynth.report.style import (
    DASHES,
    FEASIBLE,
    HIGHLIGHT,
    INFEASIBLE,
    INK,
    LIMIT,
    MUTED,
    PALETTE,
    STYLE,
    png_bytes,
    render_png,
    styled,
)

__all__ = ["PALETTE", "STYLE", "plot_design", "plot_pareto", "plot_curves", "plot_convergence", "plot_schematic",
           "plot_target", "knee_index", "representatives", "png_bytes", "render_png", "plot_tolerance", "DesignCanvas"]


def _thousands_fmt(v, _pos=None) -> str:
    return thousands(v) if abs(v) >= 1 else f"{v:g}"


_thousands = matplotlib.ticker.FuncFormatter(_thousands_fmt)


def _plain_log_axis(axis, subs=(1.0, 2.0, 5.0)) -> None:
    """Ticks at ``subs`` x 10^k labelled as plain numbers (``500``, ``2000``, ``0.01``), not powers of ten."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    axis.set_major_locator(LogLocator(base=10, subs=subs))
    axis.set_major_formatter(FuncFormatter(_thousands_fmt))
    axis.set_minor_formatter(NullFormatter())


def _wants_log(v: np.ndarray, decades: float = 1.3) -> bool:
    """A log axis when the (finite, positive) values span more than ``decades`` decades."""
    v = np.asarray(v, float)
    v = v[np.isfinite(v)]
    return v.size > 1 and bool(np.all(v > 0)) and math.log10(v.max() / v.min()) > decades


# ------------------------------------------------------------------------- choosing designs


def knee_index(F: np.ndarray) -> int:
    """Design closest to the ideal point after scaling each objective to [0, 1] over the set.

    Parameters
    ----------
    F : ndarray, shape (n, k)
        Objectives (all minimised).
    """
    F = np.asarray(F, float)
    lo, hi = F.min(axis=0), F.max(axis=0)
    Z = (F - lo) / np.where(hi > lo, hi - lo, 1.0)
    return int(np.argmin(np.linalg.norm(Z, axis=1)))


def representatives(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray | None = None,
                    in_spec: np.ndarray | None = None) -> dict[str, int]:
    """Row indices of the lowest-error, knee, smallest and lowest-stress designs.

    Chosen among the feasible designs when there are any (all designs otherwise);
    a design may hold more than one role.

    Parameters
    ----------
    ids : sequence of str, length n
    F : ndarray, shape (n, 3)
        curve_error_pct, stress_ratio, size_mm3.
    feasible : ndarray of bool, shape (n,), optional
    in_spec : ndarray, shape (n,), optional
        Share of parts in spec: adds the role ``most in spec`` (the highest share, ties to the
        lowest error) when any design in the pool has one.
    """
    F = np.asarray(F, float)
    pool = np.arange(len(ids))
    if feasible is not None and np.any(feasible):
        pool = np.flatnonzero(feasible)
    G = np.where(np.isfinite(F[pool]), F[pool], np.nanmax(np.where(np.isfinite(F), F, np.nan), axis=0) * 10 + 1)
    reps = {"lowest error": int(pool[np.argmin(G[:, 0])]), "knee": int(pool[knee_index(G)]),
            "smallest": int(pool[np.argmin(G[:, 2])]), "lowest stress": int(pool[np.argmin(G[:, 1])])}
    share = None if in_spec is None else np.asarray(in_spec, float)[pool]
    if share is not None and np.isfinite(share).any():
        reps["most in spec"] = int(pool[np.lexsort((G[:, 0], -np.nan_to_num(share, nan=-1.0)))[0]])
    return reps


def roles_by_row(reps: Mapping[str, int]) -> dict[int, list[str]]:
    out: dict[int, list[str]] = {}
    for role, i in reps.items():
        out.setdefault(i, []).append(role)
    return out


# ------------------------------------------------------------------------- label placement


def _label_box(x0: float, y0: float, w: float, h: float, off_px: tuple[float, float], dx: int, dy: int) -> Bbox:
    """Window box of a ``w`` x ``h`` label offset by ``off_px`` from the point (x0, y0), aligned
    away from it (left/right/centre by ``dx``, bottom/top/centre by ``dy``), slightly enlarged."""
    left = x0 + off_px[0] - (0.0 if dx > 0 else w if dx < 0 else w / 2)
    bottom = y0 + off_px[1] - (0.0 if dy > 0 else h if dy < 0 else h / 2)
    return Bbox.from_bounds(left, bottom, w, h).expanded(1.04, 1.1)


def _place_labels(ax, items, obstacles_xy: np.ndarray, *, hlines: Sequence[float] = (), fontsize: float = 7.5):
    """Annotate points without labels colliding with each other, the markers or the frame.

    ``items``: list of (x, y, text). ``obstacles_xy``: data points, shape (k, 2). Tries
    offsets around each point at growing distances and keeps the first free spot (with a
    leader line when it had to move away); the least-crowded spot when none is free. Each
    label is measured once; the candidate spots are boxes of that size (no trial drawing).
    """
    fig = ax.figure
    renderer = fig.canvas.get_renderer()
    ax.get_xlim(), ax.get_ylim()    # settle pending autoscaling before reading the transform
    pts = ax.transData.transform(obstacles_xy) if len(obstacles_xy) else np.zeros((0, 2))
    pts = pts[np.all(np.isfinite(pts), axis=1)]
    frame = ax.get_window_extent(renderer)
    line_px = [ax.transData.transform((ax.get_xlim()[0], h))[1] for h in hlines if h is not None and np.isfinite(h)]
    placed = []
    px_per_pt = fig.dpi / 72.0
    r_px = 5.0 * px_per_pt
    dirs = [(1, 1), (1, -1), (-1, 1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1)]
    style = dict(fontsize=fontsize, color=INK, zorder=8, bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none",
                                                                     alpha=0.85))
    for x, y, text in items:
        probe = ax.text(x, y, text, **style)
        ext = probe.get_window_extent(renderer)
        probe.remove()
        x0, y0 = ax.transData.transform((x, y))
        best = None
        for radius in (6, 16, 28, 42):
            for dx, dy in dirs:
                off = (dx * radius, dy * radius * 0.8)
                bb = _label_box(x0, y0, ext.width, ext.height, (off[0] * px_per_pt, off[1] * px_per_pt), dx, dy)
                score = 0.0
                if not (frame.x0 <= bb.x0 and bb.x1 <= frame.x1 and frame.y0 <= bb.y0 and bb.y1 <= frame.y1):
                    score += 100.0
                score += sum(10.0 for p in placed if bb.overlaps(p))
                score += sum(2.0 for yl in line_px if bb.y0 < yl < bb.y1)
                if pts.size:
                    inside = ((pts[:, 0] > bb.x0 - r_px) & (pts[:, 0] < bb.x1 + r_px)
                              & (pts[:, 1] > bb.y0 - r_px) & (pts[:, 1] < bb.y1 + r_px))
                    score += float(inside.sum())
                score += radius / 100.0
                if best is None or score < best[0]:
                    best = (score, off, dx, dy, bb, radius)
            if best[0] < 1.0:
                break
        _, off, dx, dy, bb, radius = best
        arrow = (dict(arrowprops=dict(arrowstyle="-", color=MUTED, lw=0.6, shrinkA=0, shrinkB=4)) if radius > 6
                 else {})
        ax.annotate(text, (x, y), xytext=off, textcoords="offset points",
                    ha="left" if dx > 0 else "right" if dx < 0 else "center",
                    va="bottom" if dy > 0 else "top" if dy < 0 else "center", **style, **arrow)
        placed.append(bb)


# ------------------------------------------------------------------------- Pareto


_OBJ = [("curve_error_pct", "curve error [%]"), ("stress_ratio", "peak stress ratio [-]"), ("size_mm3", "size [mm³]")]


@styled
def plot_pareto(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray, *, stress_limit: float | None = None,
                in_spec: np.ndarray | None = None):
    """Pairwise trade-off panels of curve error, stress ratio and size.

    Parameters
    ----------
    ids : sequence of str, length n
        Design ids.
    F : ndarray, shape (n, 3)
        curve_error_pct, stress_ratio, size_mm3 (all minimised).
    feasible : ndarray of bool, shape (n,)
    stress_limit : float, optional
        ``limits.stress_ratio``, drawn as a line.
    in_spec : ndarray, shape (n,), optional
        Each design's share of parts in spec (0 ... 1): the colour of its dot, with a colour bar.

    Returns
    -------
    matplotlib.figure.Figure
        Feasible designs as filled dots (coloured by ``in_spec`` when given), infeasible ones as grey crosses; the knee
        and the extreme designs ringed and labelled by id. An axis whose values span
        more than about a decade is logarithmic.
    """
    F = np.asarray(F, float)
    feasible = np.asarray(feasible, bool)
    pairs = [(0, 1), (0, 2), (2, 1)]
    fig, axes = plt.subplots(1, 3, figsize=(13.0, 4.3))
    reps = representatives(ids, F, feasible, in_spec) if len(ids) else {}
    roles = roles_by_row(reps)
    log = [False, _wants_log(F[:, 1], 2.0), _wants_log(F[:, 2])]
    handles, dots = {}, None
    share = None if in_spec is None or not np.isfinite(in_spec).any() else 100.0 * np.asarray(in_spec, float)
    for ax, (a, b) in zip(axes, pairs):
        ok = feasible & np.isfinite(F[:, a]) & np.isfinite(F[:, b])
        bad = ~feasible & np.isfinite(F[:, a]) & np.isfinite(F[:, b])
        if ok.any():
            dots = _feasible_dots(ax, F[ok, a], F[ok, b], None if share is None else share[ok])
            if share is None:
                handles["feasible design"] = dots
            else:       # the dots' colours say the share: a neutral dot in the legend, not the first dot's colour
                handles["feasible design (colour: share in spec)"] = Line2D(
                    [], [], ls="", marker="o", markersize=6, markerfacecolor="#9a9a9a", markeredgecolor="white")
        if bad.any():
            handles["infeasible design"] = ax.scatter(F[bad, a], F[bad, b], s=26, marker="x", color=INFEASIBLE,
                                                      lw=1.2, zorder=3)
        for i in roles:
            if np.isfinite(F[i, a]) and np.isfinite(F[i, b]):
                handles["knee / extreme (labelled)"] = ax.scatter(F[i, a], F[i, b], s=95, facecolor="none",
                                                                  edgecolor=HIGHLIGHT, lw=1.8, zorder=5)
        if stress_limit is not None and b == 1:
            handles[f"stress-ratio limit {stress_limit:g}"] = ax.axhline(stress_limit, color=LIMIT, ls="--", lw=1.0,
                                                                         zorder=2)
        _pareto_axes(ax, a, b, log, stress_limit)
    n_bad = int((~np.all(np.isfinite(F), axis=1)).sum())
    sub = "all three objectives: lower is better" + ("; colour: share of parts in spec" if share is not None else "")
    if n_bad:
        sub += f"; {n_bad} design(s) with a non-finite objective not shown"
    fig.suptitle("Pareto set: curve error, stress and size traded off", fontweight="bold", y=0.995)
    fig.text(0.5, 0.93, sub, ha="center", va="top", color=MUTED, fontsize=8.5)
    fig.tight_layout(rect=(0, 0.07, 1 if share is None else 0.92, 0.93))
    _share_bar(fig, dots if share is not None else None)
    if handles:
        fig.legend(list(handles.values()), list(handles), loc="lower center", ncol=len(handles), fontsize=8.5,
                   bbox_to_anchor=(0.5, 0.0))
    for ax, (a, b) in zip(axes, pairs):
        items = [(F[i, a], F[i, b], f"{ids[i]} {', '.join(r)}") for i, r in roles.items()
                 if np.isfinite(F[i, a]) and np.isfinite(F[i, b])]
        fin = np.all(np.isfinite(F[:, [a, b]]), axis=1)
        _place_labels(ax, items, F[fin][:, [a, b]], hlines=[stress_limit] if b == 1 else [])
    return fig


def _pareto_axes(ax, a: int, b: int, log: Sequence[bool], stress_limit: float | None) -> None:
    """Scales, labels, limits and title of the panel of objective ``b`` against objective ``a``."""
    for k, axis, setter in ((a, ax.xaxis, ax.set_xscale), (b, ax.yaxis, ax.set_yscale)):
        if log[k]:
            setter("log")
            _plain_log_axis(axis)
        elif k == 2:
            axis.set_major_formatter(_thousands)
    ax.set_xlabel(_OBJ[a][1] + (" (log scale)" if log[a] else ""))
    ax.set_ylabel(_OBJ[b][1] + (" (log scale)" if log[b] else ""))
    ax.margins(0.08)
    if b == 1 and stress_limit is not None and not log[b]:
        lo, hi = ax.get_ylim()
        ax.set_ylim(min(lo, 0.0), max(hi, stress_limit * 1.08))
    ax.set_title(f"{_OBJ[b][1].split(' [')[0]} vs {_OBJ[a][1].split(' [')[0]}", fontsize=9.5)


def _share_bar(fig, dots) -> None:
    """The colour bar of the in-spec share at the right of the figure (nothing without ``dots``)."""
    if dots is None:
        return
    bar = fig.colorbar(dots, cax=fig.add_axes((0.935, 0.2, 0.012, 0.62)))
    bar.set_label("parts in spec [%]\n(higher is better)", fontsize=8.5)
    bar.ax.tick_params(labelsize=8)


def _feasible_dots(ax, x: np.ndarray, y: np.ndarray, share: np.ndarray | None):
    """Feasible designs as dots, in the design colour or, given ``share`` (%, shape of ``x``), coloured
    by it on a fixed 0 ... 100 % scale (viridis: colour-blind safe, lighter is higher)."""
    if share is None:
        return ax.scatter(x, y, s=28, color=FEASIBLE, edgecolor="white", lw=0.5, zorder=4)
    return ax.scatter(x, y, s=34, c=np.nan_to_num(share, nan=0.0), cmap="viridis", vmin=0.0, vmax=100.0,
                      edgecolor=INK, lw=0.4, zorder=4)


# ------------------------------------------------------------------------- curves


@styled
def plot_curves(target: Target, x: np.ndarray, curves: Mapping[str, np.ndarray], errors: Mapping[str, float], *,
                ax=None):
    """Target (with its band) against a few representative designs.

    Parameters
    ----------
    target : Target
    x : ndarray, shape (m,)
        Displacements of the curves, mm.
    curves : mapping label -> ndarray, shape (m,)
        Force of each design, N.
    errors : mapping label -> float
        Curve error of each design, %, shown in the legend.
    ax : Axes, optional
        Draw into these axes (returns them) instead of a new figure (returns the figure).
    """
    own = ax is None
    if own:
        fig, ax = plt.subplots(figsize=(8.6, 4.8))
    plot_target(target, ax)
    for j, (label, f) in enumerate(curves.items()):
        ax.plot(x, f, lw=1.9, color=PALETTE[j % len(PALETTE)], ls=DASHES[j % len(DASHES)], zorder=4,
                label=f"{label}: error {pct_text(errors[label])}")
    ax.axhline(0, color="#888888", lw=0.8, zorder=2)
    lo, hi, clipped = force_limits(target, list(curves.values()))
    ax.set_ylim(lo, hi)
    ax.set_xlim(0, float(max(np.max(x), target.x_mm.max())) * 1.02)
    ax.set_xlabel("displacement x [mm]")
    ax.set_ylabel("force F [N]")
    ax.set_title("Target curve and representative designs" + (" (force axis clipped)" if clipped else ""))
    ax.legend(fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0), borderaxespad=0.0,
              title="curve error = RMS deviation / max |target|", title_fontsize=7.5, alignment="left")
    if own:
        fig.tight_layout()
        return fig
    return ax


# ------------------------------------------------------------------------- convergence


@styled
def plot_convergence(history: Sequence[Mapping], *, polish: Mapping | None = None, max_error_pct: float | None = None):
    """Best feasible curve error, feasible share and hypervolume per generation.

    Parameters
    ----------
    history : sequence of mapping
        One per generation with ``generation``, ``best_error_pct`` (None/NaN while
        nothing is feasible), ``feasible_share`` (0..1) and ``hypervolume``.
    polish : mapping, optional
        The run's polish summary; its ``best_error_after_pct`` is marked after the
        last generation.
    """

    def col(k):
        return np.array([np.nan if h.get(k) is None else float(h[k]) for h in history], float)

    gen = col("generation")
    if np.all(np.isnan(gen)):
        gen = np.arange(1, len(history) + 1, dtype=float)
    best, share, hv = col("best_error_pct"), col("feasible_share"), col("hypervolume")
    fig, axes = plt.subplots(3, 1, figsize=(7.6, 7.0), sharex=True, height_ratios=[1.3, 1, 1])
    ax = axes[0]
    fin = np.isfinite(best)
    after = None if not polish else polish.get("best_error_after_pct")
    after = float(after) if after is not None and math.isfinite(float(after)) else None
    floor = 1e-3  # %: below this a curve is as good as exact; keeps a log axis from spanning 12 decades
    if fin.any():
        ax.plot(gen, np.where(fin, np.maximum(best, floor), np.nan), color=FEASIBLE, lw=1.8, drawstyle="steps-post",
                label="best feasible, by generation")
        pos = np.maximum(best[fin], floor)
        if _wants_log(np.r_[pos, max(after, floor)] if after is not None else pos, 1.5):
            ax.set_yscale("log")
        first = int(np.flatnonzero(fin)[0])
        if first > 0:
            ax.axvspan(gen[0], gen[first], color="#eeeeee", lw=0, zorder=0)
            ax.text(0.5 * (gen[0] + gen[first]), 0.5, "no feasible\ndesign yet", transform=ax.get_xaxis_transform(),
                    ha="center", va="center", color=MUTED, fontsize=8)
    else:
        ax.text(0.5, 0.5, "no feasible design in any generation", transform=ax.transAxes, ha="center", va="center",
                color=MUTED)
    if after is not None and len(gen):
        below = after < floor
        ax.plot([gen[-1]], [max(after, floor)], marker="v" if below else "D", ms=7, color=HIGHLIGHT, ls="none",
                zorder=5, clip_on=False, label=f"after local polish: {pct_text(after)}")
    if ax.get_yscale() == "log":
        lo, hi = ax.get_ylim()
        ax.set_ylim(max(lo, floor / 2), hi)
        _plain_log_axis(ax.yaxis, subs=(1.0,))
    if max_error_pct is not None and math.isfinite(max_error_pct) and fin.any() and ax.get_yscale() != "log":
        ax.axhline(max_error_pct, color=LIMIT, ls="--", lw=0.9, label=f"error limit {max_error_pct:g} %")
    ax.set_ylabel("curve error [%]")
    ax.set_title("Search convergence")
    if ax.get_legend_handles_labels()[0]:
        ax.legend(fontsize=8, loc="upper right")
    axes[1].plot(gen, 100 * share, color=PALETTE[4], lw=1.8)
    axes[1].set_ylim(-3, 103)
    axes[1].set_ylabel("feasible share of\npopulation [%]")
    axes[2].plot(gen, hv, color=PALETTE[5], lw=1.8)
    axes[2].set_ylabel("hypervolume\n[normalised, -]")
    axes[2].set_ylim(bottom=0)
    axes[2].set_xlabel("generation")
    from matplotlib.ticker import MaxNLocator

    axes[2].xaxis.set_major_locator(MaxNLocator(integer=True))
    fig.align_ylabels()
    # fixed margins, with room for two-line labels and five-character ticks (what tight_layout finds
    # for them): a quarter of the drawing time is spared
    fig.subplots_adjust(left=0.135, right=0.982, bottom=0.077, top=0.953, hspace=0.113)
    return fig


def plot_tolerance(res: ToleranceResult, *, target=None, ax=None):
    """Force band of the samples against the target band; returns the axes."""
    if ax is None:
        _, ax = plt.subplots(figsize=(7.5, 4.8), dpi=120)
    x = res.x_mm
    ax.fill_between(x, res.p05_N, res.p95_N, color="tab:blue", alpha=0.30, lw=0,
                    label="parts: 5th-95th percentile")
    ax.plot(x, res.p50_N, color="tab:blue", lw=1.2, ls="--", label="parts: median")
    ax.plot(x, res.nominal_N, color="tab:blue", lw=2.0, label="nominal design")
    if target is not None:
        lo, hi = target.spec_band(res.band_pct)
        label = "target band" if target.has_band else f"±{res.band_pct:g} % band (limits.band_pct)"
        ax.plot(target.x_mm, lo, color="black", lw=1.0, ls=":", label=label)
        ax.plot(target.x_mm, hi, color="black", lw=1.0, ls=":")
        ax.plot(target.x_mm, target.force_N, "o", color="black", ms=3.5, label="target")
    title = f"{res.design}: {res.force_N.shape[0]} Monte Carlo parts"
    if math.isfinite(res.share_in_band):
        title += f", {pct_text(100 * res.share_in_band, decimals=1)} inside the band"
    ax.set_title(title, fontsize=10)
    ax.set_xlabel("displacement [mm]")
    ax.set_ylabel("force [N]")
    ax.grid(True, alpha=0.3)
    ax.legend(loc="best", fontsize=8, frameon=False)
    return ax
