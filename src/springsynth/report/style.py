"""One look for every figure: the palette, the named colour roles, the matplotlib style and PNG output.

:data:`PALETTE` serves series (element slots, representative designs); a few named roles
(``FEASIBLE``, ``INFEASIBLE``, ``HIGHLIGHT``, ``LIMIT``) are used the same way in all figures.
"""

from __future__ import annotations

import functools
import io

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

__all__ = ["PALETTE", "DASHES", "STYLE", "INK", "MUTED", "GRID", "BAND", "BAND_EDGE", "FEASIBLE", "INFEASIBLE",
           "HIGHLIGHT", "LIMIT", "styled", "png_bytes"]


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


def styled(fn):
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
