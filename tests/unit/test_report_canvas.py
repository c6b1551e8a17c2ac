"""The text-caching canvas of the design figures: a text stamped again from its record gives the
pixels matplotlib's own drawing gives (the reference: the same figure on a plain Agg canvas)."""

from __future__ import annotations

import numpy as np


def _figure(canvas_class, title: str, shift: float):
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.0, 3.0), dpi=100)
    canvas_class(fig)
    ax = fig.add_subplot()
    ax.plot([0, 1, 2], [0, 1, 0.5], color="#1f4e79")
    ax.set_title(title)
    ax.set_xlabel("displacement x [mm]")
    ax.set_ylabel("force F [N]")                                     # rotated text
    ax.text(0.3 + shift, 0.5, "e1 ×3", fontsize=7.5, color="#e69a2e", fontweight="bold")
    ax.text(0.5, 0.2, "a clipped word near the edge", fontsize=9, clip_on=True)
    return fig


def _pixels(fig) -> np.ndarray:
    fig.canvas.draw()
    return np.asarray(fig.canvas.buffer_rgba()).copy()


def test_texts_drawn_again_from_their_record_equal_a_fresh_drawing():
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from springsynth.report.canvas import TextCachingCanvas

    cached = _figure(TextCachingCanvas, "first", 0.0)
    first = _pixels(cached)
    np.testing.assert_array_equal(first, _pixels(_figure(FigureCanvasAgg, "first", 0.0)))
    kept = dict(cached.canvas.get_renderer()._texts)
    assert kept and all(v is not None for v in kept.values())     # every plain text was recorded
    # drawn again: the same words come from the record, new ones are drawn and recorded
    cached.axes[0].set_title("second, a new title")
    cached.axes[0].texts[0].set_x(0.41)                             # moved: another sub-pixel position
    again = _pixels(cached)
    np.testing.assert_array_equal(again, _pixels(_figure(FigureCanvasAgg, "second, a new title", 0.11)))
    assert set(kept) < set(cached.canvas.get_renderer()._texts)


def test_a_design_canvas_draws_texts_once():
    from springsynth.report.canvas import TextCachingCanvas
    from springsynth.report.design_figure import DesignCanvas

    canvas = DesignCanvas(1)
    assert isinstance(canvas.figure.canvas, TextCachingCanvas)
