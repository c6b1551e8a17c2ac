"""The arrangement sketch: ground, shuttle and every branch between them, each element drawn as the glyph its
kind declares (``ElementKind.glyph``), the links of a chain in series in one row with a floating plate
between them; gaps, preloads and counts marked."""

from __future__ import annotations

from typing import Mapping

import matplotlib.pyplot as plt
import numpy as np
from matplotlib.patches import Ellipse, FancyBboxPatch, Rectangle

from springsynth.assembly.design import Design
from springsynth.elements import get_kind
from springsynth.report.style import INK, MUTED, PALETTE, styled

__all__ = ["plot_schematic", "schematic_frame", "schematic_elements", "GLYPHS"]

#: offsets smaller than this are drawn as none, mm
TINY_OFFSET_MM = 1e-6


def _zigzag(ax, x0, x1, y, h, color, n=7, lw=1.6):
    """A coil as a zig-zag of ``n`` turns between x0 and x1 with short straight leads."""
    lead = 0.06 * (x1 - x0)
    xs = np.r_[x0, np.linspace(x0 + lead, x1 - lead, 2 * n + 1), x1]
    ys = np.full_like(xs, y)
    ys[2:-2:2] += h / 2
    ys[3:-2:2] -= h / 2
    ax.plot(xs, ys, color=color, lw=lw, solid_joinstyle="round")


def _compression_coil(ax, p, x0, x1, y, h, color, aspect):
    _zigzag(ax, x0, x1, y, h, color)


def _extension_coil(ax, p, x0, x1, y, h, color, aspect):
    r = 0.22 * h  # hook loops at both ends
    rx = r * aspect
    _zigzag(ax, x0 + 2 * rx, x1 - 2 * rx, y, h * 0.8, color, n=8, lw=1.4)
    for cx in (x0 + rx, x1 - rx):
        ax.add_patch(Ellipse((cx, y), 2 * rx, 2 * r, fill=False, ec=color, lw=1.4))


def _guided(ax, x0, x1, y, h, color, lw):
    s = np.linspace(0, 1, 60)
    yy = y + 0.35 * h * (0.5 - 0.5 * np.cos(np.pi * s)) - 0.175 * h
    ax.plot(x0 + (x1 - x0) * s, yy, color=color, lw=lw, solid_capstyle="butt")
    return yy


def _guided_blade(ax, p, x0, x1, y, h, color, aspect):
    _guided(ax, x0, x1, y, h, color, 3.2)


def _guided_wire(ax, p, x0, x1, y, h, color, aspect):
    yy = _guided(ax, x0, x1, y, h, color, 1.6)
    ax.plot([x0, x1], [yy[0], yy[-1]], "o", color=color, ms=3)


def _cantilever(ax, p, x0, x1, y, h, color, aspect):
    s = np.linspace(0, 1, 60)
    yy = y + 0.35 * h * s**2 - 0.15 * h
    ax.plot(x0 + (x1 - x0) * s, yy, color=color, lw=3.2, solid_capstyle="butt")
    ax.annotate("", (x1, yy[-1] - 0.05 * h), (x1, yy[-1] + 0.4 * h),
                arrowprops=dict(arrowstyle="-|>", color=color, lw=1.0))


def _span(ax, p, x0, x1, y, h, color, aspect, rise):
    s = np.linspace(0, 1, 60)
    ax.plot(x0 + (x1 - x0) * s, y + rise * np.sin(np.pi * s), color=color, lw=3.0, solid_capstyle="butt")
    if p.get("ends") == "pinned":
        for cx in (x0, x1):
            ax.add_patch(Ellipse((cx, y), 0.12 * h * aspect, 0.12 * h, fc="white", ec=color, lw=1.2, zorder=5))


def _column(ax, p, x0, x1, y, h, color, aspect):
    _span(ax, p, x0, x1, y, h, color, aspect, 0.3 * h)


def _clamped_blade(ax, p, x0, x1, y, h, color, aspect):
    _span(ax, p, x0, x1, y, h, color, aspect, 0.0)
    xm = (x0 + x1) / 2
    ax.annotate("", (xm, y), (xm, y + 0.45 * h), arrowprops=dict(arrowstyle="-|>", color=color, lw=1.0))


def _arch(ax, p, x0, x1, y, h, color, aspect):
    s = np.linspace(0, 1, 60)
    ax.plot(x0 + (x1 - x0) * s, y - 0.2 * h + 0.45 * h * 0.5 * (1 - np.cos(2 * np.pi * s)), color=color, lw=3.0)


def _ribbon(ax, p, x0, x1, y, h, color, aspect):
    r = 0.45 * h
    cx = x0 + r * aspect + 0.02 * (x1 - x0)
    t = np.linspace(0, 5 * np.pi, 200)
    rr = r * (0.35 + 0.65 * t / t[-1])
    ax.plot(cx + aspect * rr * np.cos(t), y + rr * np.sin(t), color=color, lw=1.3)
    ax.plot([cx, x1], [y + r, y + r], color=color, lw=2.6, solid_capstyle="butt")
    ax.plot([cx, cx], [y, y], "o", color=color, ms=2.5)


def _sphere(ax, p, x0, x1, y, h, color, aspect):
    r = 0.5 * h
    rx = r * aspect
    ax.plot([x0, x1 - 2 * rx], [y, y], color=color, lw=1.6)
    ax.add_patch(Ellipse((x1 - rx, y), 2 * rx, 2 * r, fc=color, ec=color, alpha=0.55, lw=1.2))


def _pad(ax, p, x0, x1, y, h, color, aspect):
    w = x1 - x0
    ax.plot([x0, x0 + 0.45 * w], [y, y], color=color, lw=1.6)
    ax.add_patch(FancyBboxPatch((x0 + 0.45 * w, y - 0.4 * h), 0.55 * w, 0.8 * h,
                                boxstyle="round,pad=0,rounding_size=0.06", fc=color, ec=color, alpha=0.45,
                                hatch="..", lw=1.2))


def _notch_stage(ax, p, x0, x1, y, h, color, aspect):
    """A parallelogram stage: ground bar, two links (drawn deflected) with notch hinges, stage bar."""
    w = x1 - x0
    yb, yt, lean = y - 0.32 * h, y + 0.32 * h, 0.08 * w
    xa, xb = x0 + 0.25 * w, x0 + 0.72 * w
    ax.plot([x0, xb + 0.04 * w], [yb, yb], color=color, lw=1.6)                   # lead and ground bar
    ax.plot([xa - 0.04 * w, xb + 0.04 * w], [yb, yb], color=color, lw=3.2, solid_capstyle="butt")
    ax.plot([xa - 0.04 * w + lean, xb + 0.04 * w + lean], [yt, yt], color=color, lw=3.2, solid_capstyle="butt")
    ax.plot([xb + 0.04 * w + lean, x1], [yt, yt], color=color, lw=1.6)            # stage bar to the shuttle
    r = 0.07 * h
    for xl in (xa, xb):
        ax.plot([xl, xl + lean], [yb, yt], color=color, lw=2.4, solid_capstyle="butt")
        for cx, cy in ((xl, yb + r), (xl + lean, yt - r)):
            ax.add_patch(Ellipse((cx, cy), 2 * r * aspect, 2 * r, fc="white", ec=color, lw=1.2, zorder=5))


#: the symbol of each glyph name a kind may declare: ``draw(ax, params, x0, x1, y, h, color, aspect)``
#: between x0 and x1, centred on y, height h; ``aspect`` is x data units per y data unit of equal
#: length on paper (keeps circles round)
GLYPHS = {
    "compression_coil": _compression_coil, "extension_coil": _extension_coil, "guided_blade": _guided_blade,
    "guided_wire": _guided_wire, "cantilever": _cantilever, "column": _column, "clamped_blade": _clamped_blade,
    "arch": _arch, "ribbon": _ribbon, "sphere": _sphere, "pad": _pad, "notch_stage": _notch_stage,
}


def _glyph(ax, glyph: str, params: Mapping, x0: float, x1: float, y: float, h: float, color: str, *,
           aspect: float = 1.0):
    """The symbol named ``glyph`` (every registered kind declares one of :data:`GLYPHS`)."""
    GLYPHS[glyph](ax, params, x0, x1, y, h, color, aspect)


@styled
def plot_schematic(design: Design, *, ax=None):
    """A small sketch of the arrangement: ground on the left, the shuttle on the right, every
    branch between them in parallel (one row each), each element drawn as our own glyph for
    its kind; a chain's links in series along its row with a floating plate between them;
    gaps, preloads and counts marked.

    Returns the axes when ``ax`` is given, else a new figure.
    """
    own = ax is None
    n = len(design.branches)
    if own:
        fig, ax = plt.subplots(figsize=(4.0, 1.0 + 1.1 * n))   # rows tall enough for labels and marks
    aspect = schematic_frame(ax, n, chains=design.has_chain)
    schematic_elements(ax, design, aspect)
    if own:
        return ax.figure
    return ax


def schematic_frame(ax, n: int, *, chains: bool = False) -> float:
    """What a sketch of ``n`` branches shows whatever they are: limits, ground, shuttle, the stroke,
    the rows' separators, the title. Returns the aspect the glyphs need (x data units per inch
    over y data units per inch: circles drawn with it stay round)."""
    top = n * _ROW
    ax.set_xlim(-0.12, 1.32)
    ax.set_ylim(-0.3, top + 0.75)
    ax.axis("off")
    pos = ax.get_position()
    fw, fh = ax.figure.get_size_inches()
    aspect = (1.44 / (pos.width * fw)) / ((top + 1.05) / (pos.height * fh))
    _frame(ax, top)
    for b in range(n - 1):
        y = top - (b + 1) * _ROW
        ax.plot([_GX + 0.02, _SX - 0.02], [y, y], color="#eeeeee", lw=0.6, zorder=0)
    ax.set_title("arrangement (chains in series)" if chains else "arrangement (elements in parallel)", fontsize=9,
                 y=1.0)   # fixed: no tick labels above it
    return aspect


def schematic_elements(ax, design: Design, aspect: float) -> None:
    """Each branch of ``design`` in its row of a :func:`schematic_frame`: its elements' glyphs,
    numbers, kinds and materials, its count, and its gap or preload."""
    top = len(design.branches) * _ROW
    j = 0
    for b, br in enumerate(design.branches):
        y = top - (b + 0.5) * _ROW
        links = getattr(br, "links", None) or (br,)
        x1 = _offset_marks(ax, br.offset_mm, y)
        _branch_row(ax, links, j, _GX + 0.04, x1 - 0.02, y, aspect, chain=len(links) > 1 or hasattr(br, "links"))
        ax.text(_SX + 0.09, y, f"×{br.count}", ha="left", va="center", fontsize=9, color=INK, fontweight="bold")
        j += len(links)


#: row height, ground and shuttle faces (data units)
_ROW, _GX, _SX = 1.0, 0.0, 1.0
#: heights above a row's centre line (data units): its elements' labels (``e1``, ...), then its preload
#: marks, between those labels and the row above (a chain's labels stand over the middle of the row)
_LABEL_DY, _PRELOAD_DY = 0.33, 0.46


def _frame(ax, top: float) -> None:
    """Ground (hatched, left), shuttle (right) and the stroke arrow."""
    ax.add_patch(Rectangle((_GX - 0.06, -0.15), 0.06, top + 0.3, fc="#e6e6e6", ec="#777777", hatch="////", lw=0.8))
    ax.add_patch(Rectangle((_SX, -0.15), 0.05, top + 0.3, fc="#b9b9b9", ec="#555555", lw=0.8))
    ax.annotate("", (_SX - 0.02, top + 0.42), (_SX + 0.22, top + 0.42),
                arrowprops=dict(arrowstyle="-|>", color=INK, lw=1.2))
    ax.text(_SX + 0.1, top + 0.5, "stroke x", ha="center", va="bottom", fontsize=7.5, color=INK)
    ax.text(_GX - 0.03, top + 0.2, "fixed", ha="center", va="bottom", fontsize=7, color=MUTED)
    ax.text(_SX + 0.025, -0.2, "shuttle", ha="center", va="top", fontsize=7, color=MUTED)


def _offset_marks(ax, off: float, y: float) -> float:
    """Gap (the branch stops short of the shuttle) or preload arrows; returns where the branch ends."""
    x1 = _SX
    if off > TINY_OFFSET_MM:
        x1 = _SX - 0.16
        ax.annotate("", (x1, y), (_SX, y), arrowprops=dict(arrowstyle="<->", color=INK, lw=0.8, shrinkA=0, shrinkB=0))
        ax.text((x1 + _SX) / 2, y + 0.07, f"gap\n{off:.2g} mm", ha="center", va="bottom", fontsize=6.2,
                color=INK, linespacing=1.0)
    elif off < -TINY_OFFSET_MM:   # a pair of arrows squeezing the branch, above its elements' labels
        yp = y + _PRELOAD_DY
        for xa, xb in ((0.3, 0.18), (0.7, 0.82)):
            ax.annotate("", (xa, yp), (xb, yp), arrowprops=dict(arrowstyle="-|>", color=INK, lw=0.8))
        ax.text(0.5, yp, f"preload {-off:.2g} mm", ha="center", va="center", fontsize=6.2, color=INK)
    return x1


def _branch_row(ax, links, j0: int, x0: float, x1: float, y: float, aspect: float, *, chain: bool) -> None:
    """The elements of one branch along its row: one, or a chain's links with plates between them."""
    L = len(links)
    plate = 0.035 if chain else 0.0
    width = (x1 - x0 - plate * (L - 1)) / L
    for k, e in enumerate(links):
        a = x0 + k * (width + plate)
        color = PALETTE[(j0 + k) % len(PALETTE)]
        _glyph(ax, get_kind(e.kind).glyph, e.params, a, a + width, y, 0.42 * _ROW, color, aspect=aspect)
        if k < L - 1:   # the floating plate that joins two links
            ax.add_patch(Rectangle((a + width, y - 0.2), plate, 0.4, fc="#d4d4d4", ec="#555555", lw=0.7, zorder=4))
        count = f" ×{e.count}" if chain and e.count > 1 else ""
        ax.text(a, y + _LABEL_DY, f"e{j0 + k + 1}{count}", ha="left", va="center", fontsize=7.5, color=color,
                fontweight="bold")
        words = f"{e.kind} · {e.material}" if L == 1 else e.kind
        low = 0.1 if L > 2 and k % 2 else 0.0    # three or more links: every other kind a line lower, clear of its neighbours
        ax.text(a + width / 2, y - 0.3 - low, words, ha="center", va="top", fontsize=6.2 if L == 1 else 5.6, color=INK)
