"""Fatigue figures and the fatigue part of a design's card (rendered from data, nothing written here).

* :func:`plot_haigh`: one place of one element on its mean-alternating (Haigh) diagram: the
  failure line of its criterion, the safe region below it shaded, the design limit, the
  operating point and the load line from the origin through it (proportional loading: the
  factor of safety is how far the line runs on to the failure line).
* :func:`plot_fatigue`: a panel per element place of a design.
* :func:`plot_pareto_fatigue`: the Pareto set's fatigue ratio against curve error and size.
* :func:`fatigue_card`: the HTML table and figure of a design's card.
"""

from __future__ import annotations

import html
import math
from dataclasses import dataclass
from typing import Sequence

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from springsynth.assembly.design import Design  # noqa: E402
from springsynth.checks.fatigue import (  # noqa: E402
    ZIMMERLI_PEENED_MPA,
    ZIMMERLI_UNPEENED_MPA,
    ElementFatigue,
    FatigueReport,
    fatigue_design,
)
from springsynth.model.numbers import cycles_text  # noqa: E402
from springsynth.model.study import Study  # noqa: E402
from springsynth.report.style import (  # noqa: E402
    BAND,
    FEASIBLE,
    INFEASIBLE,
    INK,
    LIMIT,
    MUTED,
    png_bytes,
    styled,
)

__all__ = ["plot_haigh", "plot_fatigue", "plot_pareto_fatigue", "fatigue_card", "fatigue_views", "FatigueView"]

#: most panels in a design's fatigue figure (an extension spring has three places)
MAX_PANELS = 6
_SAFE = "#dcebdc"
_SAFE_EDGE = "#5c8f5c"
_MARGIN = "#f3ecd6"
_WORDS = {"torsion": ("mean shear τm", "alternating shear τa"), "shear": ("mean shear τm", "alternating shear τa"),
          "normal": ("mean stress σm", "alternating stress σa"),
          "wire_bending": ("mean stress σm", "alternating stress σa"),
          "elastomer": ("mean strain εm", "alternating strain εa")}


def _title(p: ElementFatigue) -> str:
    where = f" {p.place.replace('_', ' ')}" if p.place else ""
    return f"e{p.element} {p.kind}{where}"


def plot_haigh(p: ElementFatigue, *, limit: float = 1.0, ax=None):
    """One place on its Haigh diagram (mean along x, alternating along y).

    Parameters
    ----------
    p : ElementFatigue
        From :func:`springsynth.checks.fatigue.fatigue_design`.
    limit : float
        ``limits.fatigue_ratio``: the design line is the failure line scaled by it.
    ax : Axes, optional
        Draw here (returned); otherwise a new figure is returned.
    """
    own = ax is None
    if own:
        fig, ax = plt.subplots(figsize=(4.2, 3.6))
    scale = 100.0 if p.unit == "-" else 1.0          # strains in %
    A, M = p.allowable * scale, p.mean_limit * scale
    m, a = p.mean * scale, p.alternating * scale
    ok = math.isfinite(p.ratio) and p.ratio <= limit
    if math.isfinite(A) and math.isfinite(M):
        lim = min(limit, 1.0)
        ax.fill([0, M * lim, 0], [0, 0, A * lim], color=_SAFE, zorder=1, label=f"meets the limit (ratio ≤ {lim:g})")
        if lim < 1.0:
            ax.fill([M * lim, M, 0, 0], [0, 0, A, A * lim], color=_MARGIN, zorder=1,
                    label="survives, beyond the design limit")
            ax.plot([0, M * lim], [A * lim, 0], color=LIMIT, ls="--", lw=1.0, zorder=3, label=f"design limit {lim:g}")
        ax.plot([0, M], [A, 0], color=_SAFE_EDGE, lw=1.6, zorder=3, label="failure line (ratio = 1)")
        if p.basis.startswith("Zimmerli") and p.mode == "torsion":
            ssa, ssm = ZIMMERLI_UNPEENED_MPA if "unpeened" in p.basis else ZIMMERLI_PEENED_MPA
            ax.scatter([ssm], [ssa], marker="D", s=28, color=_SAFE_EDGE, zorder=4, label="Zimmerli's test point")
        if math.isfinite(p.ratio) and p.ratio > 0:
            n = 1.0 / p.ratio
            ax.plot([0, m * n], [0, a * n], color=MUTED, ls=":", lw=1.0, zorder=2, label="load line")
    ax.scatter([m], [a], s=70, marker="o", color=FEASIBLE if ok else LIMIT, edgecolor="white", lw=0.8, zorder=5,
               label="operating point")
    unit = "%" if p.unit == "-" else "MPa"
    xl, yl = _WORDS.get(p.mode, _WORDS["normal"])
    ax.set_xlabel(f"{xl} [{unit}]")
    ax.set_ylabel(f"{yl} [{unit}]")
    hi_x = max(M if math.isfinite(M) else 0.0, m) * 1.08 or 1.0
    hi_y = max(A if math.isfinite(A) else 0.0, a) * 1.15 or 1.0
    ax.set_xlim(0, hi_x)
    ax.set_ylim(0, hi_y)
    ratio = (f"ratio {p.ratio:.2f} (n = {1 / p.ratio:.2f})" if math.isfinite(p.ratio) and p.ratio > 0
             else f"ratio {p.ratio:.2f}" if math.isfinite(p.ratio) else "no data")
    ax.set_title(f"{_title(p)}\n{ratio}", fontsize=9.5, color=INK if ok else LIMIT)
    life = cycles_text(p.life_cycles)
    note = p.basis + ("" if life == "–" else f"; life {life} cycles")
    ax.text(0.98, 0.97, note, transform=ax.transAxes, ha="right", va="top", fontsize=7.5, color=MUTED)
    return fig if own else ax


@styled
def plot_fatigue(report: FatigueReport, *, limit: float = 1.0, title: str = ""):
    """A Haigh panel per element place of a design (at most :data:`MAX_PANELS`), with one legend."""
    places = list(report.places)[:MAX_PANELS]
    k = max(len(places), 1)
    cols = min(k, 3)
    rows = math.ceil(k / cols)
    fig, axes = plt.subplots(rows, cols, figsize=(4.1 * cols, 3.5 * rows + 0.9), squeeze=False)
    for ax, p in zip(axes.flat, places):
        plot_haigh(p, limit=limit, ax=ax)
    for ax in list(axes.flat)[len(places):]:
        ax.set_visible(False)
    du = report.duty
    head = title or "Fatigue under the duty"
    fig.suptitle(head, fontweight="bold", y=0.995)
    fig.text(0.5, 0.935 if rows == 1 else 0.96, f"{cycles_text(du.cycles)} cycles between strokes {du.stroke_min_mm:g} and "
             f"{du.stroke_max_mm:g} mm{', shot-peened' if du.shot_peened else ''}; an operating point in the green "
             "region meets the limit (red: it does not); ratio = 1 / the factor of safety along the load line",
             ha="center", va="top", color=MUTED, fontsize=8)
    seen: dict[str, object] = {}
    for ax in list(axes.flat)[:len(places)]:
        for h, lab in zip(*ax.get_legend_handles_labels()):
            seen.setdefault(lab, h)
    fig.tight_layout(rect=(0, 0.1 if rows == 1 else 0.05, 1, 0.9 if rows == 1 else 0.94))
    fig.legend(list(seen.values()), list(seen), loc="lower center", ncol=min(len(seen), 4), fontsize=8,
               bbox_to_anchor=(0.5, 0.0))
    return fig


@styled
def plot_pareto_fatigue(ids: Sequence[str], F: np.ndarray, fatigue: np.ndarray, feasible: np.ndarray, *,
                        limit: float = 1.0):
    """The Pareto set's fatigue ratio against curve error and size, with the limit.

    Parameters
    ----------
    ids : sequence of str
    F : ndarray, shape (n, 3)
        curve_error_pct, stress_ratio, size_mm3.
    fatigue : ndarray, shape (n,)
        Fatigue ratio of each design.
    feasible : ndarray of bool, shape (n,)
    limit : float
        ``limits.fatigue_ratio``.
    """
    F, fat, feas = np.asarray(F, float), np.asarray(fatigue, float), np.asarray(feasible, bool)
    fig, axes = plt.subplots(1, 2, figsize=(9.6, 4.0))
    for ax, j, label in ((axes[0], 0, "curve error [%]"), (axes[1], 2, "size [mm³]")):
        for sel, style in ((feas, dict(s=28, color=FEASIBLE, edgecolor="white", lw=0.5, label="feasible design")),
                           (~feas, dict(s=26, marker="x", color=INFEASIBLE, lw=1.2, label="infeasible design"))):
            ok = sel & np.isfinite(F[:, j]) & np.isfinite(fat)
            if ok.any():
                ax.scatter(F[ok, j], fat[ok], zorder=4, **style)
        ax.axhline(limit, color=LIMIT, ls="--", lw=1.0, zorder=2, label=f"fatigue-ratio limit {limit:g}")
        ax.axhspan(0, limit, color=BAND, alpha=0.45, zorder=1, lw=0, label="meets the limit")
        ax.set_xlabel(label)
        ax.set_ylabel("fatigue ratio [-]\n(1 / factor of safety)")
        ax.set_ylim(0, max(limit * 1.15, float(np.nanmax(np.where(np.isfinite(fat), fat, 0))) * 1.08 if len(fat) else 1))
        ax.margins(x=0.08)
        ax.set_title(f"fatigue ratio vs {label.split(' [')[0]}", fontsize=9.5)
    for i, name in enumerate(ids):
        if np.isfinite(fat[i]) and fat[i] == np.nanmin(fat):
            right = F[i, 0] > np.nanmean(axes[0].get_xlim())
            axes[0].annotate(f"{name}: lowest fatigue ratio", (F[i, 0], fat[i]), xytext=(-6 if right else 6, -12),
                             textcoords="offset points", fontsize=8, color=INK, ha="right" if right else "left")
    fig.suptitle("Pareto set under the duty: fatigue ratio traded against error and size", fontweight="bold")
    handles, labels = axes[0].get_legend_handles_labels()
    fig.tight_layout(rect=(0, 0.08, 1, 0.96))
    fig.legend(handles, labels, loc="lower center", ncol=len(labels), fontsize=8.5, bbox_to_anchor=(0.5, 0.0))
    return fig


def _e(v) -> str:
    return html.escape(str(v), quote=True)


def fatigue_card(report: FatigueReport, img_html: str) -> str:
    """The fatigue part of a design's card: the duty, a row per element place and the figure."""
    du = report.duty
    rows = []
    for p in report.places:
        f = (lambda v: f"{v:.4g}") if p.unit == "MPa" else (lambda v: f"{100 * v:.3g} %")
        where = f" {p.place.replace('_', ' ')}" if p.place else ""
        rows.append(f"<tr><td>e{p.element}{_e(where)}</td><td>{_e(p.kind)}</td><td>{_e(p.basis)} ({_e(p.mode)})</td>"
                    f"<td class=num>{f(p.mean)}</td><td class=num>{f(p.alternating)}</td>"
                    f"<td class=num>{f(p.allowable)}</td><td class=num>{p.ratio:.3g}</td>"
                    f"<td class=num>{_e(cycles_text(p.life_cycles))}</td></tr>")
    head = (f"<h4>Fatigue</h4><p>{cycles_text(du.cycles)} cycles between strokes {du.stroke_min_mm:g} and "
            f"{du.stroke_max_mm:g} mm{', shot-peened' if du.shot_peened else ''}: worst fatigue ratio "
            f"<b>{report.ratio:.3g}</b> (1 / the Goodman factor of safety). Stresses in MPa (elastomers: strain); "
            "allowable = alternating strength at zero mean for the required cycles; life – where the criterion "
            "gives none (Zimmerli's data are for unlimited life).</p>")
    table = ("<table><thead><tr><th>element</th><th>kind</th><th>criterion</th><th class=num>mean</th>"
             "<th class=num>alternating</th><th class=num>allowable</th><th class=num>ratio</th>"
             "<th class=num>life [cycles]</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>")
    fig = (f"<figure>{img_html}<figcaption>Each element's operating point on its Haigh diagram: in the green "
           "region it meets limits.fatigue_ratio, beyond the solid line it fails.</figcaption></figure>") if img_html else ""
    return head + table + fig


@dataclass(frozen=True)
class FatigueView:
    """What a design's card shows of its fatigue: the report and its figure (PNG bytes)."""

    report: FatigueReport
    png: bytes


def fatigue_views(designs: Sequence[Design], study: Study) -> dict[str, FatigueView]:
    """Every design judged over the study's duty, with its figure (empty without a duty)."""
    if study.duty is None:
        return {}
    out = {}
    for d in designs:
        rep = fatigue_design(d, study.duty)
        fig = plot_fatigue(rep, limit=study.limits.fatigue_ratio, title=f"{d.name}: fatigue under the duty")
        out[d.name] = FatigueView(rep, png_bytes(fig, dpi=100))
    return out
