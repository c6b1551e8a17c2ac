"""Figures (matplotlib, Agg). Each plot function takes ``ax=None`` and returns its axes or figure;
nothing here shows a window."""

from __future__ import annotations

from pathlib import Path
from typing import Sequence

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from ._assembly import Design, Response  # noqa: E402
from ._fileio import write_bytes_atomic  # noqa: E402
from ._target import Target  # noqa: E402

__all__ = ["PALETTE", "plot_design", "plot_pareto", "plot_curves", "knee_index", "save"]

#: colour-blind-safe palette of our own (distinct in hue and lightness)
PALETTE = ["#23527c", "#e0892f", "#3aa38f", "#b8443f", "#7a5aa6", "#8f8f8f", "#c9b22e", "#5fa8d3"]
INK = "#222222"
GRID = "#d9d9d9"
BAND = "#c9d6e3"

plt.rcParams.update({
    "axes.prop_cycle": matplotlib.cycler(color=PALETTE), "axes.edgecolor": "#555555",
    "axes.grid": True, "grid.color": GRID, "grid.linewidth": 0.6, "axes.spines.top": False,
    "axes.spines.right": False, "font.size": 9, "axes.titlesize": 10, "axes.titleweight": "bold",
    "legend.frameon": False, "figure.dpi": 110, "savefig.bbox": "tight",
})


def save(fig, path: Path) -> None:
    """Save a figure as PNG atomically and close it."""
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=130)
    plt.close(fig)
    write_bytes_atomic(Path(path), buf.getvalue())


def plot_target(target: Target, ax):
    if target.has_band:
        ax.fill_between(target.x_mm, target.force_lo_N, target.force_hi_N, color=BAND, lw=0, label="target band")
    ax.plot(target.x_mm, target.force_N, "o", ms=3.5, mfc="white", mec=INK, mew=0.9, label="target", zorder=5)


def plot_design(design: Design, resp: Response, *, target: Target | None = None, stress_limit: float | None = None,
                title: str | None = None):
    """Force with each element's contribution stacked, and the stress ratio along the stroke."""
    fig, (ax, ax2) = plt.subplots(2, 1, figsize=(7.2, 6.2), sharex=True, height_ratios=[2.3, 1])
    x = resp.x_mm
    parts = resp.element_force_N[0]
    pos = np.zeros_like(x)
    neg = np.zeros_like(x)
    for j, e in enumerate(design.elements):
        f = parts[j]
        base = np.where(f >= 0, pos, neg)
        ax.fill_between(x, base, base + f, color=PALETTE[j % len(PALETTE)], alpha=0.45, lw=0,
                        label=f"e{j + 1}: {e.count}x {e.kind} ({e.material})"
                              + (f", gap {e.offset_mm:.3g} mm" if e.offset_mm > 0 else "")
                              + (f", preload {-e.offset_mm:.3g} mm" if e.offset_mm < 0 else ""))
        pos = np.where(f >= 0, pos + f, pos)
        neg = np.where(f < 0, neg + f, neg)
    if target is not None:
        plot_target(target, ax)
    ax.plot(x, resp.force_N[0], color=INK, lw=2.0, label="total force")
    ax.axhline(0, color="#777777", lw=0.8)
    ax.set_ylabel("force F [N]")
    ax.set_title(title or f"{design.name}: force along the stroke")
    ax.legend(loc="upper left", fontsize=8)
    ax2.plot(x, resp.stress_ratio_curve[0], color=PALETTE[3], lw=1.8, label="peak stress / allowable")
    if stress_limit is not None:
        ax2.axhline(stress_limit, color=PALETTE[3], ls="--", lw=1, label=f"limit {stress_limit:g}")
    ax2.set_ylim(bottom=0)
    ax2.set_xlabel("displacement x [mm]")
    ax2.set_ylabel("stress ratio [-]")
    ax2.legend(loc="upper left", fontsize=8)
    fig.align_ylabels()
    return fig


def knee_index(F: np.ndarray) -> int:
    """Design closest to the ideal point after scaling each objective to [0, 1] over the set."""
    lo, hi = F.min(axis=0), F.max(axis=0)
    Z = (F - lo) / np.where(hi > lo, hi - lo, 1.0)
    return int(np.argmin(np.linalg.norm(Z, axis=1)))


def representatives(ids: Sequence[str], F: np.ndarray) -> dict[str, int]:
    """Row indices of the lowest-error, knee, smallest and lowest-stress designs (distinct labels)."""
    reps = {"lowest error": int(np.argmin(F[:, 0])), "knee": knee_index(F),
            "smallest": int(np.argmin(F[:, 2])), "lowest stress": int(np.argmin(F[:, 1]))}
    return reps


def plot_pareto(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray, *, stress_limit: float):
    """Pairwise trade-off panels of curve error, stress ratio and size."""
    names = [("curve_error_pct", "curve error [%]"), ("stress_ratio", "stress ratio [-]"), ("size_mm3", "size [mm³]")]
    pairs = [(0, 1), (0, 2), (2, 1)]
    fig, axes = plt.subplots(1, 3, figsize=(12.5, 4.0))
    reps = representatives(ids, F) if feasible.any() else {}
    labels: dict[int, list[str]] = {}
    for k, i in reps.items():
        labels.setdefault(i, []).append(k)
    for ax, (a, b) in zip(axes, pairs):
        ok = feasible
        ax.scatter(F[ok, a], F[ok, b], s=26, color=PALETTE[0], edgecolor="white", lw=0.5, label="feasible", zorder=3)
        if (~ok).any():
            ax.scatter(F[~ok, a], F[~ok, b], s=26, marker="x", color=PALETTE[3], label="infeasible", zorder=3)
        for i, what in labels.items():
            ax.scatter(F[i, a], F[i, b], s=70, facecolor="none", edgecolor=PALETTE[1], lw=1.6, zorder=4)
            ax.annotate(f"{ids[i]} ({', '.join(what)})", (F[i, a], F[i, b]), xytext=(5, 5),
                        textcoords="offset points", fontsize=7.5, color=INK)
        if b == 1:
            ax.axhline(stress_limit, color=PALETTE[3], ls="--", lw=0.9)
        ax.set_xlabel(names[a][1])
        ax.set_ylabel(names[b][1])
    axes[0].legend(loc="upper right", fontsize=8)
    fig.suptitle("Pareto set: trade-offs between curve error, stress and size", fontweight="bold")
    fig.tight_layout()
    return fig


def plot_curves(target: Target, x: np.ndarray, curves: dict[str, np.ndarray], errors: dict[str, float]):
    """Target (with its band) against a few representative designs."""
    fig, ax = plt.subplots(figsize=(7.2, 4.6))
    plot_target(target, ax)
    for j, (label, f) in enumerate(curves.items()):
        ax.plot(x, f, lw=1.8, color=PALETTE[j % len(PALETTE)], label=f"{label}  (error {errors[label]:.2f} %)")
    ax.axhline(0, color="#777777", lw=0.8)
    ax.set_xlabel("displacement x [mm]")
    ax.set_ylabel("force F [N]")
    ax.set_title("Target curve and representative designs")
    ax.legend(fontsize=8, loc="best")
    return fig


def write_run_plots(folder: Path, res) -> None:
    """pareto.png and curves.png for a run folder."""
    from ._assembly import Slots, evaluate_population
    from ._synthesis import curve_grid

    F = res.objectives
    feas = np.all(res.constraints <= 0, axis=1)
    ids = [d.name for d in res.designs]
    save(plot_pareto(ids, F, feas, stress_limit=res.study.limits.stress_ratio), folder / "pareto.png")
    x = curve_grid(res.study)
    pick = representatives(ids, F) if feas.any() else {"closest": int(np.argmin(F[:, 0]))}
    rows = list(dict.fromkeys(pick.values()))
    r = evaluate_population(Slots.from_designs([res.designs[i] for i in rows]), x, x_max_mm=res.study.target.stroke_mm)
    curves, errors = {}, {}
    for k, i in enumerate(rows):
        label = f"{ids[i]} " + "/".join(n for n, j in pick.items() if j == i)
        curves[label] = r.force_N[k]
        errors[label] = float(F[i, 0])
    save(plot_curves(res.study.target, x, curves, errors), folder / "curves.png")
