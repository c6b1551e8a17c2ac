"""Figures (matplotlib, Agg). Plot functions take data and return a figure (or, with
``ax=``, draw into the given axes and return them); nothing here shows a window or
touches the global pyplot state beyond creating figures inside a local style.

One palette serves every figure: :data:`PALETTE` for series (element slots,
representative designs), and a few named roles (``FEASIBLE``, ``INFEASIBLE``,
``HIGHLIGHT``, ``LIMIT``) used the same way in all of them.
"""

from __future__ import annotations

import functools
import io
import math
from pathlib import Path
from typing import Mapping, Sequence

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.patches import FancyBboxPatch, Rectangle  # noqa: E402

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import Response
from springsynth.io.files import write_bytes_atomic  # noqa: E402
from springsynth.model.target import Target

__all__ = ["PALETTE", "STYLE", "plot_design", "plot_pareto", "plot_curves", "plot_convergence", "plot_schematic",
           "knee_index", "representatives", "save", "png_bytes"]

#: Colour-blind-safe series palette of our own: hues kept apart for the common colour-vision
#: deficiencies *and* stepped in lightness, so neighbours also differ in greyscale.
PALETTE = ["#1f4e79",  # deep blue
           "#e69a2e",  # amber
           "#4aa3c9",  # sky
           "#a8432f",  # brick
           "#2f8f6f",  # sea green
           "#8c6bb1",  # violet
           "#c7b43a",  # mustard
           "#7f7f7f"]  # grey
#: line styles paired with the palette, so curves stay apart in greyscale too
DASHES = ["-", "--", "-.", ":", (0, (5, 1.5, 1, 1.5)), (0, (1, 1)), (0, (8, 2)), (0, (3, 1, 1, 1, 1, 1))]
INK = "#222222"
MUTED = "#6b6b6b"
GRID = "#dcdcdc"
BAND = "#cfdbe8"
BAND_EDGE = "#7f9bb8"
FEASIBLE = PALETTE[0]
INFEASIBLE = "#9a9a9a"
HIGHLIGHT = PALETTE[1]
LIMIT = PALETTE[3]

STYLE = {
    "axes.edgecolor": "#555555", "axes.grid": True, "grid.color": GRID, "grid.linewidth": 0.6,
    "axes.spines.top": False, "axes.spines.right": False, "axes.axisbelow": True, "font.size": 9,
    "axes.titlesize": 10, "axes.titleweight": "bold", "axes.labelcolor": INK, "xtick.color": "#444444",
    "ytick.color": "#444444", "legend.frameon": False, "figure.dpi": 110,
    "axes.prop_cycle": matplotlib.cycler(color=PALETTE),
}

_TINY_OFFSET_MM = 1e-6


def _styled(fn):
    """Run a plot function inside the package style, leaving global rcParams alone."""

    @functools.wraps(fn)
    def wrapper(*a, **k):
        with plt.rc_context(STYLE):
            return fn(*a, **k)

    return wrapper


def png_bytes(fig, *, dpi: int = 130, tight: bool = True) -> bytes:
    """The figure as PNG bytes; closes it. ``tight=False`` keeps the figure's own layout
    (half the drawing time: for figures laid out with fixed margins)."""
    buf = io.BytesIO()
    with plt.rc_context(STYLE):
        fig.savefig(buf, format="png", dpi=dpi, bbox_inches="tight" if tight else None, facecolor="white")
    plt.close(fig)
    return buf.getvalue()


def save(fig, path: Path, *, dpi: int = 130, tight: bool = True) -> None:
    """Save a figure as PNG atomically and close it."""
    write_bytes_atomic(Path(path), png_bytes(fig, dpi=dpi, tight=tight))


def _fmt_size(v: float) -> str:
    """``20 860`` (thin-space thousands) for big numbers, three significant digits below 1000."""
    if not math.isfinite(v):
        return "n/a"
    return f"{v:,.0f}".replace(",", "\u2009") if abs(v) >= 1000 else f"{v:.3g}"


def _fmt_pct(v: float) -> str:
    if not math.isfinite(v):
        return "n/a"
    return "< 0.01 %" if abs(v) < 0.005 else f"{v:.2f} %"


def _offset_words(offset_mm: float) -> str:
    if offset_mm > _TINY_OFFSET_MM:
        return f"gap {offset_mm:.2g} mm"
    if offset_mm < -_TINY_OFFSET_MM:
        return f"preload {-offset_mm:.2g} mm"
    return ""


def _thousands_fmt(v, _pos=None) -> str:
    return f"{v:,.0f}".replace(",", "\u2009") if abs(v) >= 1 else f"{v:g}"


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


# ------------------------------------------------------------------------- target


def plot_target(target: Target, ax, *, over: bool = False):
    """Target points and, when given, its acceptance band into ``ax``; returns ``ax``.

    ``over=True`` draws the band as a hatched outline above filled areas (stacked
    element forces) instead of a flat fill beneath the curves.
    """
    if target.has_band:
        if over:
            ax.fill_between(target.x_mm, target.force_lo_N, target.force_hi_N, facecolor="none", edgecolor=BAND_EDGE,
                            hatch="////", lw=0.9, label="target band", zorder=4)
        else:
            ax.fill_between(target.x_mm, target.force_lo_N, target.force_hi_N, color=BAND, lw=0, label="target band",
                            zorder=1)
    ax.plot(target.x_mm, target.force_N, "o", ms=3.5, mfc="white", mec=INK, mew=0.9, label="target", zorder=6)
    return ax


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


def representatives(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray | None = None) -> dict[str, int]:
    """Row indices of the lowest-error, knee, smallest and lowest-stress designs.

    Chosen among the feasible designs when there are any (all designs otherwise);
    a design may hold more than one role.

    Parameters
    ----------
    ids : sequence of str, length n
    F : ndarray, shape (n, 3)
        curve_error_pct, stress_ratio, size_mm3.
    feasible : ndarray of bool, shape (n,), optional
    """
    F = np.asarray(F, float)
    pool = np.arange(len(ids))
    if feasible is not None and np.any(feasible):
        pool = np.flatnonzero(feasible)
    G = np.where(np.isfinite(F[pool]), F[pool], np.nanmax(np.where(np.isfinite(F), F, np.nan), axis=0) * 10 + 1)
    return {"lowest error": int(pool[np.argmin(G[:, 0])]), "knee": int(pool[knee_index(G)]),
            "smallest": int(pool[np.argmin(G[:, 2])]), "lowest stress": int(pool[np.argmin(G[:, 1])])}


def roles_by_row(reps: Mapping[str, int]) -> dict[int, list[str]]:
    out: dict[int, list[str]] = {}
    for role, i in reps.items():
        out.setdefault(i, []).append(role)
    return out


# ------------------------------------------------------------------------- label placement


def _place_labels(ax, items, obstacles_xy: np.ndarray, *, hlines: Sequence[float] = (), fontsize: float = 7.5):
    """Annotate points without labels colliding with each other, the markers or the frame.

    ``items``: list of (x, y, text). ``obstacles_xy``: data points, shape (k, 2). Tries
    offsets around each point at growing distances and keeps the first free spot (with a
    leader line when it had to move away); the least-crowded spot when none is free.
    """
    fig = ax.figure
    renderer = fig.canvas.get_renderer()
    pts = ax.transData.transform(obstacles_xy) if len(obstacles_xy) else np.zeros((0, 2))
    pts = pts[np.all(np.isfinite(pts), axis=1)]
    frame = ax.get_window_extent(renderer)
    line_px = [ax.transData.transform((ax.get_xlim()[0], h))[1] for h in hlines if h is not None and np.isfinite(h)]
    placed = []
    r_px = 5.0 * fig.dpi / 72.0
    dirs = [(1, 1), (1, -1), (-1, 1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1)]
    for x, y, text in items:
        best = None
        for radius in (6, 16, 28, 42):
            for dx, dy in dirs:
                off = (dx * radius, dy * radius * 0.8)
                ha = "left" if dx > 0 else "right" if dx < 0 else "center"
                va = "bottom" if dy > 0 else "top" if dy < 0 else "center"
                a = ax.annotate(text, (x, y), xytext=off, textcoords="offset points", ha=ha, va=va,
                                fontsize=fontsize, color=INK, zorder=8,
                                bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.85))
                bb = a.get_window_extent(renderer).expanded(1.04, 1.1)
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
                    if best is not None:
                        best[1].remove()
                    best = (score, a, bb, radius)
                else:
                    a.remove()
            if best[0] < 1.0:
                break
        _, a, bb, radius = best
        if radius > 6:
            a.arrow_patch = None
            a.remove()
            a = ax.annotate(a.get_text(), (x, y), xytext=a.xyann, textcoords="offset points", ha=a.get_ha(),
                            va=a.get_va(), fontsize=fontsize, color=INK, zorder=8,
                            bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.85),
                            arrowprops=dict(arrowstyle="-", color=MUTED, lw=0.6, shrinkA=0, shrinkB=4))
        placed.append(bb)


# ------------------------------------------------------------------------- Pareto


_OBJ = [("curve_error_pct", "curve error [%]"), ("stress_ratio", "peak stress ratio [-]"), ("size_mm3", "size [mm³]")]


@_styled
def plot_pareto(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray, *, stress_limit: float | None = None):
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

    Returns
    -------
    matplotlib.figure.Figure
        Feasible designs as filled dots, infeasible ones as grey crosses; the knee
        and the extreme designs ringed and labelled by id. An axis whose values span
        more than about a decade is logarithmic.
    """
    F = np.asarray(F, float)
    feasible = np.asarray(feasible, bool)
    pairs = [(0, 1), (0, 2), (2, 1)]
    fig, axes = plt.subplots(1, 3, figsize=(13.0, 4.3))
    reps = representatives(ids, F, feasible) if len(ids) else {}
    roles = roles_by_row(reps)
    log = [False, _wants_log(F[:, 1], 2.0), _wants_log(F[:, 2])]
    handles = {}
    for ax, (a, b) in zip(axes, pairs):
        ok = feasible & np.isfinite(F[:, a]) & np.isfinite(F[:, b])
        bad = ~feasible & np.isfinite(F[:, a]) & np.isfinite(F[:, b])
        if ok.any():
            handles["feasible design"] = ax.scatter(F[ok, a], F[ok, b], s=28, color=FEASIBLE, edgecolor="white",
                                                    lw=0.5, zorder=4)
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
    n_bad = int((~np.all(np.isfinite(F), axis=1)).sum())
    sub = "all three objectives: lower is better"
    if n_bad:
        sub += f"; {n_bad} design(s) with a non-finite objective not shown"
    fig.suptitle("Pareto set: curve error, stress and size traded off", fontweight="bold", y=0.995)
    fig.text(0.5, 0.93, sub, ha="center", va="top", color=MUTED, fontsize=8.5)
    fig.tight_layout(rect=(0, 0.07, 1, 0.93))
    if handles:
        fig.legend(list(handles.values()), list(handles), loc="lower center", ncol=len(handles), fontsize=8.5,
                   bbox_to_anchor=(0.5, 0.0))
    fig.canvas.draw()
    for ax, (a, b) in zip(axes, pairs):
        items = [(F[i, a], F[i, b], f"{ids[i]} {', '.join(r)}") for i, r in roles.items()
                 if np.isfinite(F[i, a]) and np.isfinite(F[i, b])]
        fin = np.all(np.isfinite(F[:, [a, b]]), axis=1)
        _place_labels(ax, items, F[fin][:, [a, b]], hlines=[stress_limit] if b == 1 else [])
    return fig


# ------------------------------------------------------------------------- curves


def _force_limits(target: Target, curves: Sequence[np.ndarray]) -> tuple[float, float, bool]:
    """y-limits that keep the target readable: curves may not stretch it by more than 2.5x."""
    lo_t = float(np.min(target.force_lo_N if target.has_band else target.force_N))
    hi_t = float(np.max(target.force_hi_N if target.has_band else target.force_N))
    lo_t, hi_t = min(lo_t, 0.0), max(hi_t, 0.0)
    span = max(hi_t - lo_t, 1e-9)
    vals = np.concatenate([np.asarray(c, float).ravel() for c in curves]) if len(curves) else np.zeros(1)
    vals = vals[np.isfinite(vals)] if vals.size else vals
    lo = float(min(lo_t, vals.min())) if vals.size else lo_t
    hi = float(max(hi_t, vals.max())) if vals.size else hi_t
    cap_lo, cap_hi = lo_t - 1.5 * span, hi_t + 1.5 * span
    clipped = lo < cap_lo or hi > cap_hi
    lo, hi = max(lo, cap_lo), min(hi, cap_hi)
    pad = 0.06 * (hi - lo)
    return lo - pad, hi + pad, clipped


@_styled
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
                label=f"{label}: error {_fmt_pct(errors[label])}")
    ax.axhline(0, color="#888888", lw=0.8, zorder=2)
    lo, hi, clipped = _force_limits(target, list(curves.values()))
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


@_styled
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
                zorder=5, clip_on=False, label=f"after local polish: {_fmt_pct(after)}")
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
    fig.tight_layout()
    return fig


# ------------------------------------------------------------------------- schematic

def _zigzag(ax, x0, x1, y, h, color, n=7, lw=1.6):
    """A coil as a zig-zag of ``n`` turns between x0 and x1 with short straight leads."""
    lead = 0.06 * (x1 - x0)
    xs = np.r_[x0, np.linspace(x0 + lead, x1 - lead, 2 * n + 1), x1]
    ys = np.full_like(xs, y)
    ys[2:-2:2] += h / 2
    ys[3:-2:2] -= h / 2
    ax.plot(xs, ys, color=color, lw=lw, solid_joinstyle="round")


def _glyph(ax, kind: str, params: Mapping, x0: float, x1: float, y: float, h: float, color: str, *,
           aspect: float = 1.0):
    """Our own symbol for an element kind between x0 and x1, centred on y, height h.

    ``aspect``: x data units per y data unit of equal length on paper (keeps circles round).
    """
    from matplotlib.patches import Ellipse

    w = x1 - x0
    if kind == "helical_compression":
        _zigzag(ax, x0, x1, y, h, color)
    elif kind == "helical_extension":
        r = 0.22 * h  # hook loops at both ends
        rx = r * aspect
        _zigzag(ax, x0 + 2 * rx, x1 - 2 * rx, y, h * 0.8, color, n=8, lw=1.4)
        for cx in (x0 + rx, x1 - rx):
            ax.add_patch(Ellipse((cx, y), 2 * rx, 2 * r, fill=False, ec=color, lw=1.4))
    elif kind in ("blade_guided", "wire_guided"):
        s = np.linspace(0, 1, 60)
        yy = y + 0.35 * h * (0.5 - 0.5 * np.cos(np.pi * s)) - 0.175 * h
        ax.plot(x0 + w * s, yy, color=color, lw=3.2 if kind == "blade_guided" else 1.6, solid_capstyle="butt")
        if kind == "wire_guided":
            ax.plot([x0, x1], [yy[0], yy[-1]], "o", color=color, ms=3)
    elif kind == "blade_cantilever":
        s = np.linspace(0, 1, 60)
        yy = y + 0.35 * h * s**2 - 0.15 * h
        ax.plot(x0 + w * s, yy, color=color, lw=3.2, solid_capstyle="butt")
        ax.annotate("", (x1, yy[-1] - 0.05 * h), (x1, yy[-1] + 0.4 * h),
                    arrowprops=dict(arrowstyle="-|>", color=color, lw=1.0))
    elif kind in ("column", "blade_clamped"):
        s = np.linspace(0, 1, 60)
        rise = 0.3 * h if kind == "column" else 0.0
        ax.plot(x0 + w * s, y + rise * np.sin(np.pi * s), color=color, lw=3.0, solid_capstyle="butt")
        if params.get("ends") == "pinned":
            for cx in (x0, x1):
                ax.add_patch(Ellipse((cx, y), 0.12 * h * aspect, 0.12 * h, fc="white", ec=color, lw=1.2, zorder=5))
        if kind == "blade_clamped":
            ax.annotate("", (x0 + w / 2, y), (x0 + w / 2, y + 0.45 * h),
                        arrowprops=dict(arrowstyle="-|>", color=color, lw=1.0))
    elif kind == "arch":
        s = np.linspace(0, 1, 60)
        ax.plot(x0 + w * s, y - 0.2 * h + 0.45 * h * 0.5 * (1 - np.cos(2 * np.pi * s)), color=color, lw=3.0)
    elif kind == "ribbon":
        r = 0.45 * h
        cx = x0 + r * aspect + 0.02 * w
        t = np.linspace(0, 5 * np.pi, 200)
        rr = r * (0.35 + 0.65 * t / t[-1])
        ax.plot(cx + aspect * rr * np.cos(t), y + rr * np.sin(t), color=color, lw=1.3)
        ax.plot([cx, x1], [y + r, y + r], color=color, lw=2.6, solid_capstyle="butt")
        ax.plot([cx, cx], [y, y], "o", color=color, ms=2.5)
    elif kind == "contact_sphere":
        r = 0.5 * h
        rx = r * aspect
        ax.plot([x0, x1 - 2 * rx], [y, y], color=color, lw=1.6)
        ax.add_patch(Ellipse((x1 - rx, y), 2 * rx, 2 * r, fc=color, ec=color, alpha=0.55, lw=1.2))
    elif kind == "elastomer_pad":
        ax.plot([x0, x0 + 0.45 * w], [y, y], color=color, lw=1.6)
        ax.add_patch(FancyBboxPatch((x0 + 0.45 * w, y - 0.4 * h), 0.55 * w, 0.8 * h,
                                    boxstyle="round,pad=0,rounding_size=0.06", fc=color, ec=color, alpha=0.45,
                                    hatch="..", lw=1.2))
    else:  # a kind this figure does not know yet: a labelled box
        ax.plot([x0, x0 + 0.2 * w], [y, y], color=color, lw=1.6)
        ax.add_patch(Rectangle((x0 + 0.2 * w, y - 0.3 * h), 0.8 * w, 0.6 * h, fc="white", ec=color, lw=1.4))
        ax.text(x0 + 0.6 * w, y, "?", ha="center", va="center", color=color, fontsize=9)


def _short_params(kind: str, params: Mapping) -> str:
    from springsynth.elements import get_kind

    try:
        k = get_kind(kind)
    except KeyError:
        return ""
    parts = []
    for q in k.params:
        v = params.get(q.name)
        if v is None:
            continue
        name = q.name.removesuffix("_mm").removesuffix("_N").replace("_", " ")
        name = {"wire diameter": "d", "mean diameter": "D", "active coils": "n", "free length": "L0", "length": "L",
                "width": "b", "thickness": "t", "natural radius": "Rn", "radius": "R", "rise": "h",
                "initial tension": "Fi"}.get(name, name)
        parts.append(f"{name} {v}" if isinstance(v, str) else f"{name} {float(v):.3g}")
    return ", ".join(parts)


@_styled
def plot_schematic(design: Design, *, ax=None):
    """A small sketch of the arrangement: ground on the left, the shuttle on the right,
    every element between them in parallel, drawn as our own glyph for its kind; gaps,
    preloads and counts marked.

    Returns the axes when ``ax`` is given, else a new figure.
    """
    own = ax is None
    if own:
        fig, ax = plt.subplots(figsize=(4.0, 1.0 + 0.9 * len(design.elements)))
    n = len(design.elements)
    row = 1.0
    top = n * row
    gx, sx = 0.0, 1.0  # ground and shuttle faces
    ax.set_xlim(-0.12, 1.32)
    ax.set_ylim(-0.3, top + 0.75)
    ax.axis("off")
    # data units per inch in x over those in y: circles drawn with it stay round
    pos = ax.get_position()
    fw, fh = ax.figure.get_size_inches()
    aspect = (1.44 / (pos.width * fw)) / ((top + 1.05) / (pos.height * fh))
    ax.add_patch(Rectangle((gx - 0.06, -0.15), 0.06, top + 0.3, fc="#e6e6e6", ec="#777777", hatch="////", lw=0.8))
    ax.add_patch(Rectangle((sx, -0.15), 0.05, top + 0.3, fc="#b9b9b9", ec="#555555", lw=0.8))
    ax.annotate("", (sx - 0.02, top + 0.42), (sx + 0.22, top + 0.42),
                arrowprops=dict(arrowstyle="-|>", color=INK, lw=1.2))
    ax.text(sx + 0.1, top + 0.5, "stroke x", ha="center", va="bottom", fontsize=7.5, color=INK)
    ax.text(gx - 0.03, top + 0.2, "fixed", ha="center", va="bottom", fontsize=7, color=MUTED)
    ax.text(sx + 0.025, -0.2, "shuttle", ha="center", va="top", fontsize=7, color=MUTED)
    for j, e in enumerate(design.elements):
        color = PALETTE[j % len(PALETTE)]
        y = top - (j + 0.5) * row
        off = e.offset_mm
        x1 = sx
        if off > _TINY_OFFSET_MM:  # gap: the element stops short of the shuttle
            x1 = sx - 0.16
            ax.annotate("", (x1, y), (sx, y), arrowprops=dict(arrowstyle="<->", color=INK, lw=0.8, shrinkA=0,
                                                              shrinkB=0))
            ax.text((x1 + sx) / 2, y + 0.07, f"gap\n{off:.2g} mm", ha="center", va="bottom", fontsize=6.2,
                    color=INK, linespacing=1.0)
        _glyph(ax, e.kind, e.params, gx + 0.04, x1 - 0.02, y, 0.42 * row, color, aspect=aspect)
        if off < -_TINY_OFFSET_MM:  # preload: a pair of arrows squeezing the element
            for xa, xb in ((0.3, 0.18), (0.7, 0.82)):
                ax.annotate("", (xa, y + 0.3), (xb, y + 0.3), arrowprops=dict(arrowstyle="-|>", color=INK, lw=0.8))
            ax.text(0.5, y + 0.3, f"preload {-off:.2g} mm", ha="center", va="center", fontsize=6.2, color=INK)
        ax.text(gx + 0.04, y + 0.33, f"e{j + 1}", ha="left", va="center", fontsize=7.5, color=color,
                fontweight="bold")
        ax.text(sx + 0.09, y, f"×{e.count}", ha="left", va="center", fontsize=9, color=INK, fontweight="bold")
        ax.text(0.5, y - 0.3, f"{e.kind} · {e.material}", ha="center", va="top", fontsize=6.2, color=INK)
        if j < n - 1:
            ax.plot([gx + 0.02, sx - 0.02], [y - 0.5 * row, y - 0.5 * row], color="#eeeeee", lw=0.6, zorder=0)
    ax.set_title("arrangement (elements in parallel)", fontsize=9)
    if own:
        return ax.figure
    return ax


# ------------------------------------------------------------------------- one design


@_styled
def plot_design(design: Design, resp: Response, *, target: Target | None = None, stress_limit: float | None = None,
                title: str | None = None, element_stress: np.ndarray | None = None, schematic: bool = True):
    """Force with each element's contribution stacked, the stress ratio along the stroke
    and (``schematic=True``) a sketch of the arrangement.

    Parameters
    ----------
    design : Design
    resp : Response
        From :func:`~springsynth.assembly.evaluate.evaluate_design` (needs ``element_force_N``
        and ``stress_ratio_curve``).
    target : Target, optional
        Overlaid with its band.
    stress_limit : float, optional
        ``limits.stress_ratio``.
    element_stress : ndarray, shape (S, m), optional
        Each element's own stress ratio along the stroke (thin lines).

    Notes
    -----
    Positive contributions stack upward from zero and negative ones (a snap-through
    element past its peak) downward, so every band keeps its true size; the total is
    the black line.
    """
    n_el = len(design.elements)
    if schematic:  # right column: the sketch above, both legends below (never over the data)
        extra = max(n_el - 2, 0)
        fig = plt.figure(figsize=(11.5, 6.6 + 0.5 * extra))
        gs = fig.add_gridspec(2, 2, width_ratios=[2.1, 1.0], height_ratios=[2.1 + 0.1 * extra, 1.0 + 0.25 * extra],
                              wspace=0.05, hspace=0.08, left=0.07, right=0.995, top=0.93, bottom=0.08)
        ax = fig.add_subplot(gs[0, 0])
        ax2 = fig.add_subplot(gs[1, 0], sharex=ax)
        plot_schematic(design, ax=fig.add_subplot(gs[0, 1]))
        lax = fig.add_subplot(gs[1, 1])
        lax.axis("off")
    else:
        fig, (ax, ax2) = plt.subplots(2, 1, figsize=(7.6, 6.4), sharex=True, height_ratios=[2.2, 1],
                                      gridspec_kw=dict(hspace=0.08, left=0.11, right=0.98, top=0.93, bottom=0.085))
        lax = None
    x = resp.x_mm
    parts = resp.element_force_N[0]
    pos = np.zeros_like(x)
    neg = np.zeros_like(x)
    for j, e in enumerate(design.elements):
        f = np.nan_to_num(parts[j])
        base = np.where(f >= 0, pos, neg)
        words = _offset_words(e.offset_mm)
        ax.fill_between(x, base, base + f, color=PALETTE[j % len(PALETTE)], alpha=0.5, lw=0, zorder=2,
                        label=f"e{j + 1}: {e.count}× {e.kind} ({e.material})" + (f"\n      {words}" if words else ""))
        pos = np.where(f >= 0, pos + f, pos)
        neg = np.where(f < 0, neg + f, neg)
    if target is not None:
        plot_target(target, ax, over=True)
    ax.plot(x, resp.force_N[0], color=INK, lw=2.0, label="total force", zorder=5)
    ax.axhline(0, color="#888888", lw=0.8, zorder=3)
    if target is not None:
        lo, hi, _ = _force_limits(target, [resp.force_N[0], pos, neg])
        ax.set_ylim(lo, hi)
    ax.set_ylabel("force F [N]")
    ax.tick_params(labelbottom=False)
    ax.set_title(title or f"{design.name}: force along the stroke", loc="left")
    src = resp.stress_ratio_curve[0]
    if element_stress is not None and len(design.elements) > 1:
        for j in range(min(len(design.elements), len(element_stress))):
            ax2.plot(x, element_stress[j], color=PALETTE[j % len(PALETTE)], lw=1.0, ls=DASHES[(j + 1) % len(DASHES)],
                     label=f"e{j + 1}")
    ax2.plot(x, src, color=INK, lw=1.8, label="stress / allowable, worst element")
    top = float(np.nanmax(src)) if np.any(np.isfinite(src)) else 1.0
    if stress_limit is not None:
        ax2.axhline(stress_limit, color=LIMIT, ls="--", lw=1.1, label=f"limit {stress_limit:g}")
        ax2.axhspan(stress_limit, max(top, stress_limit) * 1.2 + 0.05, color=LIMIT, alpha=0.07, lw=0)
        top = max(top, stress_limit)
    ax2.set_ylim(0, top * 1.15 + 1e-9)
    ax2.set_xlabel("displacement x [mm]")
    ax2.set_ylabel("stress ratio [-]")
    h1, l1 = ax.get_legend_handles_labels()
    h2, l2 = ax2.get_legend_handles_labels()
    if lax is not None:  # one legend, two headed sections (no second legend to collide with)
        from matplotlib.patches import Patch

        head = Patch(visible=False)
        leg = lax.legend([head, *h1, head, *h2], ["force", *l1, "stress ratio", *l2], loc="upper left",
                         fontsize=7.2, borderaxespad=0.0, bbox_to_anchor=(0.0, 1.0), handlelength=2.2,
                         labelspacing=0.35)
        for t in (leg.get_texts()[0], leg.get_texts()[len(h1) + 1]):
            t.set_fontweight("bold")
            t.set_position((-30, 0))
    else:
        ax.legend(h1, l1, loc="upper left", fontsize=7.5, framealpha=0.9, frameon=True, edgecolor="none")
        ax2.legend(h2, l2, loc="upper left", fontsize=7.5, ncol=4, framealpha=0.9, frameon=True, edgecolor="none")
    ax.set_xlim(0, float(np.max(x)) * 1.01 if x.size else 1)
    fig.align_ylabels([ax, ax2])
    return fig
