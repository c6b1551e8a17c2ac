"""The batch summary: ``summary.csv`` (one row per run) and ``summary.png``.

Columns of ``summary.csv``: ``study``, one column per ``--vary`` key (its value),
``seed``, ``best_error_pct`` (lowest curve error among the run's feasible Pareto designs),
``pareto_size`` (feasible Pareto designs), ``feasible_share`` (share of the last
generation that is feasible), ``hypervolume`` (of the feasible Pareto set in the run's
normalised objective space; higher is better), ``wall_time_s`` (the task: loading,
search, writing), ``folder`` (relative to the batch folder), ``status`` and ``message``
(see :data:`~springsynth.batch._task.STATUSES`).
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Mapping

import numpy as np
import pandas as pd

from springsynth.batch._plan import Plan
from springsynth.batch._task import row_for
from springsynth.io.files import save_figure, write_text_atomic
from springsynth.model.numbers import thousands
from springsynth.report import style as P

__all__ = ["summary_frame", "variant_table", "read_fronts", "plot_summary", "write_summary"]

_METRICS = ["best_error_pct", "pareto_size", "feasible_share", "hypervolume", "wall_time_s"]
_FINISHED = ("ok", "infeasible")


def summary_frame(plan: Plan, rows: Mapping[str, Mapping]) -> pd.DataFrame:
    """One row per run of the plan, in plan order; runs without a row are ``interrupted``.

    Parameters
    ----------
    plan : Plan
    rows : mapping of run folder -> summary row (from the tasks or the runs' markers)
    """
    recs = []
    for r in plan.runs:
        row = rows.get(r.folder) or row_for(r, status="interrupted", message="not run yet; --resume runs it")
        rec = {"study": r.study, **{k: float(v) for k, v in r.variant}, "seed": r.seed}
        for m in _METRICS:
            v = row.get(m)
            rec[m] = math.nan if v is None else v
        rec.update(folder=r.folder, status=row.get("status", "error"), message=row.get("message") or "")
        recs.append(rec)
    cols = ["study", *plan.vary_keys, "seed", *_METRICS, "folder", "status", "message"]
    df = pd.DataFrame(recs, columns=cols)
    df["pareto_size"] = df["pareto_size"].fillna(0).astype(int)
    return df


def variant_table(frame: pd.DataFrame) -> pd.DataFrame:
    """One row per study and variant: runs, median and lowest best error, median hypervolume
    (NaN where no run finished) and the status counts as text (``3 ok, 1 bad_input``)."""
    rows = []
    var = frame["folder"].str.split("/").str[1]
    for (study, variant), g in frame.groupby([frame["study"], var], sort=False):
        rows.append({"study": study, "variant": variant, "runs": len(g),
                     "best_error_median": g["best_error_pct"].median(), "best_error_min": g["best_error_pct"].min(),
                     "hypervolume_median": g["hypervolume"].median(),
                     "statuses": ", ".join(f"{n} {s}" for s, n in g["status"].value_counts().items())})
    return pd.DataFrame(rows)


def read_fronts(out_dir: Path, frame: pd.DataFrame) -> dict[tuple[str, str], np.ndarray]:
    """Feasible Pareto designs of every finished run, pooled over seeds.

    Returns
    -------
    dict
        (study, variant folder name) -> objectives, shape (k, 3): curve_error_pct,
        stress_ratio, size_mm3.
    """
    out: dict[tuple[str, str], list[np.ndarray]] = {}
    for folder, status in zip(frame["folder"], frame["status"]):
        if status not in _FINISHED:
            continue
        study, variant, _ = folder.split("/")
        try:
            t = pd.read_csv(Path(out_dir) / folder / "pareto.csv")
            F = t.loc[t["feasible"].astype(bool), ["curve_error_pct", "stress_ratio", "size_mm3"]].to_numpy(float)
        except (OSError, KeyError, ValueError, pd.errors.ParserError, pd.errors.EmptyDataError):
            continue
        out.setdefault((study, variant), []).append(F)
    return {k: np.concatenate(v) for k, v in out.items()}


def _front_2d(F: np.ndarray) -> np.ndarray:
    """The points of ``F`` (k, 2) that no other point beats in both columns, sorted by the first."""
    F = F[np.lexsort((F[:, 1], F[:, 0]))]
    best, keep = math.inf, []
    for i, (_, b) in enumerate(F):
        if b < best:
            keep.append(i)
            best = b
    return F[keep]


def _variant_axis(frame: pd.DataFrame, keys: tuple[str, ...]):
    """Variant folder names in plan order, their x positions, the axis label, and whether x is numeric."""
    var = frame["folder"].str.split("/").str[1]
    names = list(dict.fromkeys(var))
    if len(keys) == 1:
        value = dict(zip(var, frame[keys[0]]))
        return names, np.array([value[n] for n in names], float), keys[0], True
    return names, np.arange(len(names), dtype=float), ", ".join(keys) if keys else "variant", False


def _tick_text(name: str) -> str:
    """``scale_force=1,length_mm=20`` -> ``1, 20`` (the keys are in the axis label)."""
    return ", ".join(p.split("=", 1)[-1] for p in name.split(",")) if "=" in name else name


def _colours(n: int, numeric: bool) -> list:
    if n <= len(P.PALETTE) and not (numeric and n > 4):
        return P.PALETTE[:n]
    import matplotlib

    cmap = matplotlib.colormaps["viridis"]
    return [cmap(0.05 + 0.8 * i / max(n - 1, 1)) for i in range(n)]


def _spread(ax, frame, names, x, metric, colour):
    """Each seed as a dot, the range over seeds as a bar, the median joined across variants."""
    med = []
    var = frame["folder"].str.split("/").str[1]
    step = np.min(np.diff(np.sort(x))) if len(x) > 1 else 1.0
    for xi, n in zip(x, names):
        v = frame.loc[(var == n) & frame["status"].isin(_FINISHED), metric].to_numpy(float)
        v = v[np.isfinite(v)]
        med.append(np.median(v) if v.size else np.nan)
        if v.size:
            jit = (np.arange(v.size) - (v.size - 1) / 2) * 0.03 * step
            ax.scatter(xi + jit, v, s=14, color=colour, alpha=0.55, lw=0, zorder=3, label="each seed")
            ax.vlines(xi, v.min(), v.max(), color=colour, lw=1.0, alpha=0.7, zorder=2, label="range over seeds")
    ax.plot(x, med, "-o", color=P.INK, ms=4, lw=1.2, zorder=4, label="median over seeds")
    from matplotlib.ticker import FuncFormatter

    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos=None: f"{v:.3g}"))  # no "1e-8" offset text
    ax.margins(x=0.12 if len(x) > 1 else 0.6, y=0.15)
    if not np.isfinite(med).any():
        ax.text(0.5, 0.5, "no finished run with a feasible design", ha="center", va="center", transform=ax.transAxes,
                color=P.MUTED)
        ax.set_yticks([])


def _axis_ticks(ax, names, x, label, numeric):
    if not numeric:
        ticks = [_tick_text(n) for n in names]
        tilt = sum(len(t) for t in ticks) > 60
        ax.set_xticks(x)
        ax.set_xticklabels(ticks, rotation=30 if tilt else 0, ha="right" if tilt else "center", fontsize=8)
    ax.set_xlabel(label)


def _size_axis(ax, size_mm3: np.ndarray) -> None:
    """Sizes as plain numbers (``2 000``), on a log axis when they span more than about a decade."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    plain = FuncFormatter(lambda v, _pos=None: thousands(v) if abs(v) >= 1 else f"{v:g}")
    v = size_mm3[np.isfinite(size_mm3) & (size_mm3 > 0)]
    if v.size > 1 and math.log10(v.max() / v.min()) > 1.3:
        ax.set_yscale("log")
        ax.yaxis.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
        ax.yaxis.set_minor_formatter(NullFormatter())
    ax.yaxis.set_major_formatter(plain)


def _fronts_panel(ax, fronts, study, names, colours, numeric):
    drawn = False
    allF = [fronts[(study, n)] for n in names if (study, n) in fronts and len(fronts[(study, n)])]
    for n, c in zip(names, colours):
        F = fronts.get((study, n))
        if F is None or not len(F):
            continue
        ax.scatter(F[:, 0], F[:, 2], s=14, color=c, alpha=0.3, lw=0, zorder=2)
        f2 = _front_2d(F[:, [0, 2]])
        ax.step(f2[:, 0], f2[:, 1], where="post", color=c, lw=1.5, zorder=3)
        ax.plot(f2[:, 0], f2[:, 1], "o", color=c, ms=4.5, mec="white", mew=0.6, zorder=4, ls="none", label=n)
        drawn = True
    if not drawn:
        ax.text(0.5, 0.5, "no feasible design in any run", ha="center", va="center", transform=ax.transAxes,
                color=P.MUTED)
        ax.set_xticks([])
        ax.set_yticks([])
        return
    _size_axis(ax, np.concatenate(allF)[:, 2])
    ax.set_xlabel("curve error [%]\nline: the best error-size trade-offs of all seeds; faint: other Pareto designs "
                  "(kept for their stress ratio)", fontsize=8.5)
    ax.set_ylabel("size [mm³]")
    ax.legend(fontsize=7, loc="upper right", title="variant (all seeds)", title_fontsize=7,
              ncol=2 if len(names) > 8 else 1)


@P.styled
def plot_summary(frame: pd.DataFrame, fronts: Mapping[tuple[str, str], np.ndarray], vary_keys: tuple[str, ...]):
    """Best error and hypervolume across variants (seeds as a spread) and the variants' fronts overlaid.

    Parameters
    ----------
    frame : DataFrame
        :func:`summary_frame`.
    fronts : mapping
        :func:`read_fronts`.
    vary_keys : tuple of str
        The ``--vary`` keys (one key: a numeric x axis; none or several: one tick per variant).

    Returns
    -------
    matplotlib.figure.Figure
        One row per study: best curve error, hypervolume, and the feasible Pareto designs
        of every variant (curve error against size; the line joins those no other design
        of that variant beats in both).
    """
    import matplotlib.pyplot as plt

    studies = list(dict.fromkeys(frame["study"]))
    fig, axes = plt.subplots(len(studies), 3, figsize=(14.0, 4.1 * len(studies) + 0.6), squeeze=False)
    for row, study in zip(axes, studies):
        sub = frame[frame["study"] == study]
        names, x, label, numeric = _variant_axis(sub, vary_keys)
        colours = _colours(len(names), numeric)
        for ax, metric, ylab, hint in ((row[0], "best_error_pct", "best curve error [%]", "lower is better"),
                                       (row[1], "hypervolume", "hypervolume [-]", "higher is better")):
            _spread(ax, sub, names, x, metric, P.FEASIBLE)
            _axis_ticks(ax, names, x, label, numeric)
            ax.set_ylabel(ylab)
            ax.set_title(f"{study}: {ylab.split(' [')[0]} ({hint})", fontsize=9.5)
        handles, labels = row[0].get_legend_handles_labels()
        uniq = dict(zip(labels, handles))
        if "each seed" in uniq:
            row[0].legend(uniq.values(), uniq.keys(), fontsize=7.5, loc="best")
        _fronts_panel(row[2], fronts, study, names, colours, numeric)
        counts = sub["status"].value_counts()
        bits = [f"{counts[s]} {s.replace('_', ' ')}" for s in counts.index]
        row[2].set_title(f"{study}: Pareto fronts of the variants ({len(sub)} runs: {', '.join(bits)})", fontsize=9.5)
    fig.suptitle("Batch summary: seeds as a spread, variants side by side", fontweight="bold", y=0.995)
    fig.tight_layout(rect=(0, 0, 1, 0.97))
    return fig


def write_summary(out_dir: Path, plan: Plan, rows: Mapping[str, Mapping]) -> pd.DataFrame:
    """Write ``summary.csv`` and ``summary.png`` into the batch folder (atomically); return the table."""
    out_dir = Path(out_dir)
    frame = summary_frame(plan, rows)
    write_text_atomic(out_dir / "summary.csv", frame.to_csv(index=False, float_format="%.6g", lineterminator="\n"))
    save_figure(plot_summary(frame, read_fronts(out_dir, frame), plan.vary_keys), out_dir / "summary.png")
    return frame
