"""The figure of one design: force with each element's share stacked, the stress ratio along the
stroke, a sketch of the arrangement and one legend; drawn again and again on one canvas.

A report draws this figure for every Pareto design, and nearly all its cost is text (tick
labels, axis labels, the legend, the sketch's labels), most of which is the same for every
design of a run. :class:`DesignCanvas` therefore keeps two layers. The *frame* holds what
depends only on the run and the number of elements (axes, grid, ticks and their labels
for the current limits, axis labels, the legend's fixed rows, the sketch's frame); it is
drawn once and kept as pixels. The *design* layer holds everything else (the curves,
bands and markers, the title, the element rows of the legend and of the sketch, and the
spines over the data); for each design the frame's pixels are restored and only this
layer is drawn over them, in the order a full drawing would draw it (matplotlib's
blitting). When a design needs other limits than the frame was drawn with, the frame is
drawn again for them. A drawing depends only on its design (nothing of the design before
leaks into it), and equals the full drawing of :func:`plot_design`.
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np
from matplotlib import rc_context
from matplotlib.figure import Figure
from matplotlib.lines import Line2D
from matplotlib.patches import Rectangle

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import Response
from springsynth.model.target import Target
from springsynth.report.canvas import TextCachingCanvas
from springsynth.report.schematic import TINY_OFFSET_MM, schematic_elements, schematic_frame
from springsynth.report.style import BAND, BAND_EDGE, DASHES, INK, LIMIT, MUTED, PALETTE, STYLE, palette_png

__all__ = ["DesignCanvas", "plot_design", "plot_target", "force_limits", "design_force_limits", "DESIGN_DPI"]

#: resolution of the per-design figures, dots per inch (1150 x 660 pixels)
DESIGN_DPI = 100
#: frames kept as pixels, for as many layouts and sets of limits (3 MB each)
_FRAMES_KEPT = 6
#: the title's distance above the axes, points (matplotlib's default axes.titlepad)
STYLE_TITLE_PAD_PT = 6.0

#: the look of each thing drawn, shared by the plots and the legend's copies of them
_TARGET = dict(marker="o", ls="none", ms=3.5, mfc="white", mec=INK, mew=0.9, zorder=6)
_BAND_OVER = dict(facecolor="none", edgecolor=BAND_EDGE, hatch="////", lw=0.9, zorder=4)
_TOTAL = dict(color=INK, lw=2.0, zorder=5)
_WORST = dict(color=INK, lw=1.8)
_LIMIT = dict(color=LIMIT, ls="--", lw=1.1)
_SNAP = dict(color=MUTED, ls=":", lw=1.1, zorder=4)


def _share(j: int) -> dict:
    return dict(color=PALETTE[j % len(PALETTE)], alpha=0.5, lw=0, zorder=2)


def _own_stress(j: int) -> dict:
    return dict(color=PALETTE[j % len(PALETTE)], lw=1.0, ls=DASHES[(j + 1) % len(DASHES)])


def plot_target(target: Target, ax, *, over: bool = False):
    """Target points and, when given, its acceptance band into ``ax``; returns ``ax``.

    ``over=True`` draws the band as a hatched outline above filled areas (stacked
    element forces) instead of a flat fill beneath the curves.
    """
    if target.has_band:
        if over:
            ax.fill_between(target.x_mm, target.force_lo_N, target.force_hi_N, label="target band", **_BAND_OVER)
        else:
            ax.fill_between(target.x_mm, target.force_lo_N, target.force_hi_N, color=BAND, lw=0, label="target band",
                            zorder=1)
    ax.plot(target.x_mm, target.force_N, label="target", **_TARGET)
    return ax


def force_limits(target: Target | None, curves: Sequence[np.ndarray]) -> tuple[float, float, bool]:
    """y-limits of a force axis, N: ``(low, high, clipped)``.

    With a target: its range with zero, 6 % of the span added at both ends, as long as
    the curves fit in that; otherwise widened in steps of a quarter span to take them in
    (6 % added again), but by no more than 1.5 spans beyond either end, so the target stays
    readable (``clipped`` says the curves were cut). Curves that fit leave the limits alone
    and the steps make nearby curves share them, so the designs of a run share a few sets
    of limits. Without a target: the curves' range with zero, 6 % added.
    """
    vals = np.concatenate([np.asarray(c, float).ravel() for c in curves]) if len(curves) else np.zeros(0)
    vals = vals[np.isfinite(vals)]
    clipped = False
    if target is None:
        lo, hi = min(float(vals.min()), 0.0) if vals.size else 0.0, max(float(vals.max()), 0.0) if vals.size else 1.0
    else:
        lo_t = float(np.min(target.force_lo_N if target.has_band else target.force_N))
        hi_t = float(np.max(target.force_hi_N if target.has_band else target.force_N))
        lo_t, hi_t = min(lo_t, 0.0), max(hi_t, 0.0)
        span = max(hi_t - lo_t, 1e-9)
        if not vals.size or (vals.min() >= lo_t - 0.06 * span and vals.max() <= hi_t + 0.06 * span):
            return lo_t - 0.06 * span, hi_t + 0.06 * span, False
        step = 0.25 * span
        lo = lo_t - step * max(math.ceil((lo_t - float(vals.min())) / step), 0)
        hi = hi_t + step * max(math.ceil((float(vals.max()) - hi_t) / step), 0)
        cap_lo, cap_hi = lo_t - 1.5 * span, hi_t + 1.5 * span
        clipped = lo < cap_lo or hi > cap_hi
        lo, hi = max(lo, cap_lo), min(hi, cap_hi)
    if hi <= lo:
        hi = lo + 1.0
    pad = 0.06 * (hi - lo)
    return lo - pad, hi + pad, clipped


def design_force_limits(design: Design, resp: Response, target: Target | None) -> tuple[float, float]:
    """The force axis's limits of a design's figure, N (:func:`force_limits` of its total and its
    stacked branch forces): designs with the same limits share a frame of a :class:`DesignCanvas`."""
    pos, neg = _stacks(design, resp)
    lo, hi, _ = force_limits(target, [resp.force_N[0], pos, neg])
    return lo, hi


class DesignCanvas:
    """One figure, laid out for designs of ``n_branches`` branches, drawn again for each design.

    Parameters
    ----------
    n_branches : int
        Branches (single elements or chains in parallel) of the designs it draws: the sketch
        and the legend grow with more than two.
    schematic : bool
        With the arrangement sketch and the legend in a right-hand column (else the
        legends sit in the plots).
    """

    def __init__(self, n_branches: int, *, schematic: bool = True):
        self.n_branches = int(n_branches)
        self.schematic = bool(schematic)
        self.figure, self._axes = _layout(self.n_branches, self.schematic)
        self._frame_key = None        # what the frame's artists are made for
        self._limits = None           # the limits the axes are set to
        self._frames: dict = {}       # (what the frame is made for, limits) -> its pixels (a few)
        self._frame_artists: list = []
        self._design_artists: list = []   # added for the design shown (removed for the next)
        self._redrawn: list = []          # the frame's artists drawn again over each design (the spines)

    def draw(self, design: Design, resp: Response, *, target: Target | None = None, stress_limit: float | None = None,
             title: str | None = None, element_stress: np.ndarray | None = None) -> Figure:
        """Put ``design`` on the canvas in place of the one before; returns the figure (complete:
        ``savefig`` or :func:`~springsynth.report.style.render_png` draw all of it, :meth:`png`
        only what changed). Arguments as :func:`plot_design`."""
        if len(design.branches) != self.n_branches:
            raise ValueError(f"canvas laid out for {self.n_branches} branches, design has {len(design.branches)}")
        if element_stress is None and resp.element_stress_ratio is not None:     # each element at its own stroke
            element_stress = resp.element_stress_ratio[0]
        with rc_context(STYLE):
            for a in self._design_artists:
                a.remove()
            lo, hi = design_force_limits(design, resp, target)
            src = resp.stress_ratio_curve[0]
            top = float(np.nanmax(src)) if np.any(np.isfinite(src)) else 1.0
            top = max(top, stress_limit) if stress_limit is not None else top
            x = resp.x_mm
            per_element = element_stress is not None and len(design.parts) > 1
            snap = float(resp.snap_mm[0]) if resp.snap_mm is not None else math.nan
            key = (design.layout, target is not None and target.has_band, target is not None, stress_limit,
                   per_element, math.isfinite(snap))
            if key != self._frame_key:
                self._frame(key)
            self._set_limits((lo, hi, top, float(np.max(x)) if x.size else 1.0))
            self._design_artists = self._design(design, resp, target, stress_limit, title,
                                                element_stress if per_element else None, snap)
            ax, ax2 = self._axes[:2]
            self._redrawn = [sp for a in (ax, ax2) for sp in a.spines.values()]   # spines go over the data
        return self.figure

    def png(self) -> bytes:
        """The current design as a palette PNG: the frame's pixels, the design's layer drawn over them."""
        canvas = self.figure.canvas
        layer = self._design_artists + self._redrawn
        with rc_context(STYLE):
            pixels = self._frames.get((self._frame_key, self._limits))
            if pixels is None:
                for a in layer:
                    a.set_animated(True)
                canvas.draw()                                 # the frame alone: animated artists are left out
                if len(self._frames) >= _FRAMES_KEPT:
                    self._frames.pop(next(iter(self._frames)))
                self._frames[(self._frame_key, self._limits)] = canvas.copy_from_bbox(self.figure.bbox)
                for a in layer:
                    a.set_animated(False)
            else:
                canvas.restore_region(pixels)
            renderer = canvas.get_renderer()
            ids = {id(a) for a in layer}
            for ax in self.figure.axes:    # each axes' share of the layer in its drawing order (stable by zorder)
                for a in sorted((a for a in ax.get_children() if id(a) in ids), key=lambda a: a.get_zorder()):
                    a.draw(renderer)
            return palette_png(np.asarray(canvas.buffer_rgba()))

    # ---------------------------------------------------------------- the two layers

    def _set_limits(self, limits) -> None:
        if limits != self._limits:
            lo, hi, top, x_max = limits
            ax, ax2 = self._axes[:2]
            ax.set_ylim(lo, hi)
            ax.set_xlim(0, x_max * 1.01)
            ax2.set_ylim(0, top * 1.15 + 1e-9)
            self._limits = limits

    def _frame(self, key) -> None:
        """The legend's fixed rows and the sketch's frame, for designs of one layout."""
        layout, band, has_target, limit, per_element, snaps = key
        ax, ax2, sax, lax = self._axes
        for a in self._frame_artists:
            a.remove()
        before = _children(self._axes)
        if sax is not None:
            chains = any(k > 0 for _, k in layout) or len({b for b, _ in layout}) < len(layout)
            self._aspect = schematic_frame(sax, self.n_branches, chains=chains)
        if lax is not None:
            # the branches by their elements' numbers: the sketch above names each one, in the same colour
            rows_f = [(("share", j), _branch_words(layout, j)) for j, (b, k) in enumerate(layout) if k == 0]
            rows_f += ([(("band",), "target band")] if band else []) + ([(("target",), "target")] if has_target else [])
            rows_f += [(("line", _TOTAL), "total force")] + ([(("line", _SNAP), "a chain snaps")] if snaps else [])
            rows_s = [(("line", _own_stress(j)), f"e{j + 1}") for j in range(len(layout))] if per_element else []
            rows_s += [(("line", _WORST), "worst element")]
            rows_s += [(("line", _LIMIT), f"limit {limit:g}")] if limit is not None else []
            _legend_column(lax, [("force (elements as sketched above)", rows_f), ("stress ratio", rows_s)])
        self._frame_artists = [a for a in _children(self._axes).values() if id(a) not in before]
        self._frame_key = key

    def _design(self, design, resp, target, stress_limit, title, element_stress, snap) -> list:
        """Everything of this design, in the order a full drawing draws it; returns the artists added."""
        ax, ax2, sax, lax = self._axes
        before = _children(self._axes)
        x = resp.x_mm
        _branch_bands(ax, design, resp)
        if target is not None:
            plot_target(target, ax, over=True)
        ax.plot(x, resp.force_N[0], label="total force", **_TOTAL)
        ax.axhline(0, color="#888888", lw=0.8, zorder=3)
        if math.isfinite(snap):   # where a chain snaps (the force jumps at constant stroke)
            ax.axvline(snap, label="a chain snaps", **_SNAP)
            ax.annotate(f"snap at {snap:.3g} mm", (snap, 1.0), xycoords=("data", "axes fraction"), xytext=(3, -3),
                        textcoords="offset points", ha="left", va="top", fontsize=7, color=MUTED)
        # the title as an artist of this design (a left title of the axes would stay in the frame)
        ax.annotate(title or f"{design.name}: force along the stroke", (0.0, 1.0), xycoords="axes fraction",
                    xytext=(0.0, STYLE_TITLE_PAD_PT), textcoords="offset points", ha="left", va="baseline",
                    fontsize=STYLE["axes.titlesize"], fontweight=STYLE["axes.titleweight"])
        if element_stress is not None:
            for j in range(min(len(design.parts), len(element_stress))):
                ax2.plot(x, element_stress[j], label=f"e{j + 1}", **_own_stress(j))
        ax2.plot(x, resp.stress_ratio_curve[0], label="worst element", **_WORST)
        if stress_limit is not None:
            ax2.axhline(stress_limit, label=f"limit {stress_limit:g}", **_LIMIT)
            ax2.axhspan(stress_limit, ax2.get_ylim()[1] * 1.05 + 0.05, color=LIMIT, alpha=0.07, lw=0)
        if sax is not None:
            schematic_elements(sax, design, self._aspect)
        if lax is None:
            _inline_legends(ax, ax2, design)
        return [a for a in _children(self._axes).values() if id(a) not in before]


def _branch_words(layout, j: int) -> str:
    """A branch's legend label from the layout: ``e1``, or ``chain e2 › e3`` for a chain."""
    b = layout[j][0]
    parts = [i for i, (bb, _) in enumerate(layout) if bb == b]
    return f"e{j + 1}" if len(parts) == 1 else "chain " + " › ".join(f"e{i + 1}" for i in parts)


def _branch_bands(ax, design: Design, resp: Response) -> None:
    """Each branch's force as a band stacked from zero (positive up, negative down); a chain is one
    band (its force is the same through every link), in its first link's colour."""
    x = resp.x_mm
    parts = resp.element_force_N[0]
    pos, neg = np.zeros_like(x), np.zeros_like(x)
    j = 0
    for b in design.branches:
        f = np.nan_to_num(parts[j])
        base = np.where(f >= 0, pos, neg)
        ax.fill_between(x, base, base + f, **_share(j))
        pos = np.where(f >= 0, pos + f, pos)
        neg = np.where(f < 0, neg + f, neg)
        j += len(b.links) if getattr(b, "links", None) is not None else 1


def _children(axes) -> dict:
    return {id(a): a for ax in axes if ax is not None for a in ax.get_children()}


def _stacks(design: Design, resp: Response) -> tuple[np.ndarray, np.ndarray]:
    """The stacked positive and negative branch forces at their ends, shape (m,) each (a chain's
    force is in its first link's slot, the other links' hold zeros)."""
    parts = np.nan_to_num(resp.element_force_N[0][:len(design.parts)])
    return np.sum(np.where(parts >= 0, parts, 0.0), axis=0), np.sum(np.where(parts < 0, parts, 0.0), axis=0)


def _layout(n_branches: int, schematic: bool):
    """The figure and its axes: force, stress ratio, sketch (or None), legend (or None)."""
    with rc_context(STYLE):
        if schematic:  # right column: the sketch above, the legend below (never over the data)
            extra = max(n_branches - 2, 0)
            fig = Figure(figsize=(11.5, 6.6 + 0.5 * extra), dpi=DESIGN_DPI)
            gs = fig.add_gridspec(2, 2, width_ratios=[2.1, 1.0], height_ratios=[2.1 + 0.1 * extra, 1.0 + 0.25 * extra],
                                  wspace=0.05, hspace=0.08, left=0.07, right=0.995, top=0.93, bottom=0.08)
            ax = fig.add_subplot(gs[0, 0])
            ax2 = fig.add_subplot(gs[1, 0], sharex=ax)
            sax = fig.add_subplot(gs[0, 1])
            lax = fig.add_subplot(gs[1, 1])
            lax.axis("off")
        else:
            fig = Figure(figsize=(7.6, 6.4), dpi=DESIGN_DPI)
            ax, ax2 = fig.subplots(2, 1, sharex=True, height_ratios=[2.2, 1],
                                   gridspec_kw=dict(hspace=0.08, left=0.11, right=0.98, top=0.93, bottom=0.085))
            sax = lax = None
        TextCachingCanvas(fig)      # drawn again for every design: each text rendered once
        ax.tick_params(labelbottom=False)
        for a in (ax, ax2):
            a.yaxis.get_major_formatter().set_useOffset(False)   # no offset text for a title to collide with
        ax.set_ylabel("force F [N]")
        ax2.set_xlabel("displacement x [mm]")
        ax2.set_ylabel("stress ratio [-]")
        fig.align_ylabels([ax, ax2])
    return fig, (ax, ax2, sax, lax)


#: legend text size, points; a row is this times _ROW high; handles are _HANDLE_EM long
_LEGEND_PT, _ROW, _HANDLE_EM, _PAD_EM = 7.2, 1.6, 2.2, 0.8


def _legend_column(lax, sections) -> None:
    """A legend drawn as plain artists from the top left of ``lax``: a bold heading per section,
    then a row per entry (a copy of the look of what it names, then its label). Plain artists
    need no legend layout and keep their place at any resolution."""
    fig = lax.figure
    box = lax.get_position()
    w_in, h_in = box.width * fig.get_figwidth(), box.height * fig.get_figheight()
    em_x, em_y = _LEGEND_PT / 72.0 / w_in, _LEGEND_PT / 72.0 / h_in        # one em in axes fractions
    x1, tx = _HANDLE_EM * em_x, (_HANDLE_EM + _PAD_EM) * em_x
    y = 1.0 - 0.5 * _ROW * em_y
    for head, entries in sections:
        lax.text(0.0, y, head, transform=lax.transAxes, fontsize=_LEGEND_PT, fontweight="bold", va="center")
        y -= _ROW * em_y
        for look, label in entries:
            _swatch(lax, look, x1, y, 0.7 * em_y)
            lax.text(tx, y, label, transform=lax.transAxes, fontsize=_LEGEND_PT, va="center")
            y -= _ROW * em_y


def _swatch(lax, look: tuple, x1: float, y: float, h: float) -> None:
    """A legend row's copy of a look, ``x1`` long and ``h`` high (axes fractions) at ``y``."""
    what = look[0]
    if what in ("share", "band"):
        style = _share(look[1]) if what == "share" else dict(_BAND_OVER)
        style.pop("zorder")
        lax.add_patch(Rectangle((0.0, y - h / 2), x1, h, transform=lax.transAxes, clip_on=False, **style))
    elif what == "target":
        style = {k: v for k, v in _TARGET.items() if k != "zorder"}
        lax.add_line(Line2D([0.5 * x1], [y], transform=lax.transAxes, clip_on=False, **style))
    else:
        style = {k: v for k, v in look[1].items() if k != "zorder"}
        lax.add_line(Line2D([0.0, x1], [y, y], transform=lax.transAxes, clip_on=False, **style))


def _inline_legends(ax, ax2, design: Design) -> None:
    """Without the right-hand column: a legend in each plot."""
    h1, l1, j = [], [], 0
    for b in design.branches:
        links = getattr(b, "links", None)
        h1.append(Rectangle((0, 0), 1, 1, **{k: v for k, v in _share(j).items() if k != "zorder"}))
        off = b.offset_mm
        words = f"gap {off:.2g} mm" if off > TINY_OFFSET_MM else f"preload {-off:.2g} mm" if off < -TINY_OFFSET_MM else ""
        if links is None:
            label = f"e{j + 1}: {b.count}× {b.kind} ({b.material})"
        else:
            label = f"{b.count}× chain: " + " › ".join(f"e{j + 1 + k} {e.kind}" for k, e in enumerate(links))
        l1.append(label + (f", {words}" if words else ""))
        j += len(links) if links is not None else 1
    h, lab = ax.get_legend_handles_labels()
    ax.legend(h1 + h, l1 + lab, loc="upper left", fontsize=7.5, framealpha=0.9, frameon=True, edgecolor="none")
    h2, l2 = ax2.get_legend_handles_labels()
    ax2.legend(h2, l2, loc="upper left", fontsize=7.5, ncol=4, framealpha=0.9, frameon=True, edgecolor="none")


def plot_design(design: Design, resp: Response, *, target: Target | None = None, stress_limit: float | None = None,
                title: str | None = None, element_stress: np.ndarray | None = None, schematic: bool = True) -> Figure:
    """Force with each element's contribution stacked, the stress ratio along the stroke
    and (``schematic=True``) a sketch of the arrangement, on a new figure.

    Parameters
    ----------
    design : Design
    resp : Response
        From :func:`~springsynth.assembly.evaluate.evaluate_design` (needs ``element_force_N``
        and ``stress_ratio_curve``), shapes (1, S, m) and (1, m).
    target : Target, optional
        Overlaid with its band.
    stress_limit : float, optional
        ``limits.stress_ratio``.
    title : str, optional
    element_stress : ndarray, shape (S, m), optional
        Each element's own stress ratio along the stroke (thin lines).
    schematic : bool

    Returns
    -------
    matplotlib.figure.Figure

    Notes
    -----
    Positive contributions stack upward from zero and negative ones (a snap-through
    element past its peak) downward, so every band keeps its true size; the total is
    the black line. Many designs draw faster on one :class:`DesignCanvas`.
    """
    return DesignCanvas(len(design.branches), schematic=schematic).draw(
        design, resp, target=target, stress_limit=stress_limit, title=title, element_stress=element_stress)
