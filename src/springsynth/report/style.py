"""One look for every figure: the palette, the named colour roles, the matplotlib style and PNG output.

:data:`PALETTE` serves series (element slots, representative designs); a few named roles
(``FEASIBLE``, ``INFEASIBLE``, ``HIGHLIGHT``, ``LIMIT``) are used the same way in all figures.
"""

from __future__ import annotations

import functools
import io
import sys

import matplotlib
import numpy as np

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402

__all__ = ["PALETTE", "DASHES", "STYLE", "INK", "MUTED", "GRID", "BAND", "BAND_EDGE", "FEASIBLE", "INFEASIBLE",
           "HIGHLIGHT", "LIMIT", "styled", "png_bytes", "render_png", "palette_png"]


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
    "ytick.color": "#444444", "legend.frameon": False, "figure.dpi": 130,   # the dpi png_bytes draws at: layouts measured once
    "axes.prop_cycle": matplotlib.cycler(color=PALETTE),
}


def styled(fn):
    """Run a plot function inside the package style, leaving global rcParams alone."""

    @functools.wraps(fn)
    def wrapper(*a, **k):
        with plt.rc_context(STYLE):
            return fn(*a, **k)

    return wrapper


def png_bytes(fig, *, dpi: int = 130, tight: bool = True) -> bytes:
    """The figure as PNG bytes (:func:`render_png`); closes it."""
    try:
        return render_png(fig, dpi=dpi, tight=tight)
    finally:
        plt.close(fig)


def render_png(fig, *, dpi: int = 130, tight: bool = True) -> bytes:
    """Draw the figure once and return it as a palette PNG (the figure stays open, to be drawn again).

    ``tight=True`` crops the white margin around the drawing down to ``savefig.pad_inches``
    (what ``savefig(bbox_inches="tight")`` gives, found from the pixels instead of a second
    layout pass); when a text or legend reaches past the figure's edge, the figure is saved
    with ``bbox_inches="tight"`` instead, which widens it. The colours are reduced to a
    palette of at most 256 (:func:`palette_png`).
    """
    with plt.rc_context(STYLE):
        if fig.dpi != dpi:
            fig.set_dpi(dpi)
        canvas = fig.canvas if isinstance(fig.canvas, FigureCanvasAgg) else FigureCanvasAgg(fig)
        canvas.draw()
        rgba = np.asarray(canvas.buffer_rgba())
        if tight and _spills(fig, canvas.get_renderer()):
            buf = io.BytesIO()
            fig.savefig(buf, format="png", dpi=dpi, bbox_inches="tight", facecolor=fig.get_facecolor())
            from PIL import Image

            rgba = np.asarray(Image.open(buf).convert("RGBA"))
        elif tight:
            rgba = _crop(rgba, pad_px=int(round(float(matplotlib.rcParams["savefig.pad_inches"]) * dpi)))
    return palette_png(rgba)


def _spills(fig, renderer) -> bool:
    """Whether a visible text or legend of the figure reaches past its edge (their extents are
    known once drawn). Tick labels are left out: those drawn lie beside the axes (ticks beyond
    the axis limits keep labels that are never drawn)."""
    from matplotlib.axis import Axis
    from matplotlib.legend import Legend
    from matplotlib.text import Text

    def texts(artist):
        for c in artist.get_children():
            if isinstance(c, Axis):
                yield c.label
            elif isinstance(c, (Text, Legend)):
                yield c
            else:
                yield from texts(c)

    W, H = fig.bbox.width, fig.bbox.height
    for a in texts(fig):
        if not a.get_visible() or (isinstance(a, Text) and not a.get_text()):
            continue
        bb = a.get_window_extent(renderer)
        if bb.x0 < -0.5 or bb.y0 < -0.5 or bb.x1 > W + 0.5 or bb.y1 > H + 0.5:
            return True
    return False


def _crop(rgba: np.ndarray, *, pad_px: int) -> np.ndarray:
    """The drawing without the margin of the background colour (the top left pixel) around
    it, less ``pad_px`` pixels kept on every side; shape (h, w, 4)."""
    px = np.ascontiguousarray(rgba).view(np.uint32)[..., 0]        # a pixel's four bytes as one number
    rgb = np.uint32(0x00FFFFFF if sys.byteorder == "little" else 0xFFFFFF00)   # its colour bytes, not alpha
    ink = ((px ^ px[0, 0]) & rgb) != 0
    rows, cols = np.flatnonzero(ink.any(axis=1)), np.flatnonzero(ink.any(axis=0))
    if not rows.size:
        return rgba
    H, W = ink.shape
    y0, y1 = max(rows[0] - pad_px, 0), min(rows[-1] + 1 + pad_px, H)
    x0, x1 = max(cols[0] - pad_px, 0), min(cols[-1] + 1 + pad_px, W)
    return rgba[y0:y1, x0:x1]


def palette_png(rgba: np.ndarray) -> bytes:
    """An opaque RGBA image, shape (h, w, 4) uint8, as a PNG of at most 256 colours.

    Figures are flat colours, their antialiased edges and text: 256 colours chosen by
    Pillow's fast octree (no dithering) leave every pixel within a few levels of the
    original (at most about 15 of 255 on edge pixels) at a third of the file size. The
    background colour (the top left pixel, the figure's face) is kept exact so the figure
    sits seamlessly on a white page. Deterministic: the same pixels give the same bytes.
    """
    from PIL import Image

    rgba = np.ascontiguousarray(rgba)      # (a view of a canvas may be a cropped, strided one)
    h, w = rgba.shape[:2]
    rgb = Image.frombuffer("RGBA", (w, h), rgba, "raw", "RGBA", 0, 1).convert("RGB")   # no strided copy of 3 of 4 bytes
    pal = rgb.quantize(256, method=Image.Quantize.FASTOCTREE, dither=Image.Dither.NONE)
    lut = pal.getpalette()
    i = pal.getpixel((0, 0))
    lut[3 * i:3 * i + 3] = [int(v) for v in rgba[0, 0, :3]]
    pal.putpalette(lut)
    buf = io.BytesIO()
    pal.save(buf, format="png")
    return buf.getvalue()
