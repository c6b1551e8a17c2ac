"""An Agg canvas that renders each text once: the glyph images of a text drawn at a sub-pixel position
are kept and stamped again wherever the same text is drawn at the same sub-pixel position.

A figure drawn again and again (:class:`~springsynth.report.design_figure.DesignCanvas` draws every
design of a report on one figure) draws the same words at the same places many times: legend rows,
axis labels, the sketch's labels. Matplotlib lays out and renders every glyph of every text anew
each time, and that is a good part of the drawing time. Here a text's glyph images are recorded the
first time (as matplotlib's Agg renderer makes them) and drawn again from the record, with the
colour, alpha and clipping of the new drawing; moved by whole pixels, a text renders to the same
glyph images, so the pixels equal those of a fresh drawing. Where matplotlib draws a text some other
way (maths, or a version that does not stamp glyph images), nothing is kept and it draws as usual.
"""

from __future__ import annotations

import math

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg

__all__ = ["TextCachingCanvas", "TextCachingRenderer"]

#: texts kept per renderer; the record starts afresh when it is full
MAX_TEXTS = 4000


class _Recorder:
    """Stands in for the Agg renderer while a text is drawn: passes every call on and keeps the
    glyph images stamped."""

    def __init__(self, real):
        self.real = real
        self.stamps: list | None = []

    def draw_text_image(self, image, x, y, angle, gc):
        if self.stamps is not None:
            if angle == 0 and isinstance(x, int) and isinstance(y, int):
                self.stamps.append((np.array(image, copy=True), x, y))
            else:           # a way of stamping this record cannot replay: keep nothing
                self.stamps = None
        return self.real.draw_text_image(image, x, y, angle, gc)

    def __getattr__(self, name):     # anything else the text drawing asks of the renderer: not kept
        self.stamps = None
        return getattr(self.real, name)


class TextCachingRenderer(RendererAgg):
    """:class:`RendererAgg` that draws a text again from its recorded glyph images (module notes)."""

    def __init__(self, width, height, dpi):
        super().__init__(width, height, dpi)
        self._texts: dict = {}

    def draw_text(self, gc, x, y, s, prop, angle, ismath=False, mtext=None):
        if ismath:
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        fx, fy = math.floor(x), math.floor(y)
        key = (s, hash(prop), prop.get_size_in_points(), str(prop.get_weight()), tuple(prop.get_family()),
               prop.get_style(), float(angle), float(x - fx), float(y - fy), bool(gc.get_antialiased()),
               None if mtext is None else (repr(mtext.get_fontfeatures()), mtext.get_language()))
        if key in self._texts:
            stamps = self._texts[key]
            if stamps is not None:
                for image, dx, dy in stamps:
                    self._renderer.draw_text_image(image, fx + dx, fy + dy, 0, gc)
                return None
            return super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        real = self._renderer
        rec = _Recorder(real)
        self._renderer = rec
        try:
            super().draw_text(gc, x, y, s, prop, angle, ismath, mtext)
        finally:
            self._renderer = real
        if len(self._texts) >= MAX_TEXTS:
            self._texts.clear()
        self._texts[key] = None if rec.stamps is None else [(im, sx - fx, sy - fy) for im, sx, sy in rec.stamps]
        return None


class TextCachingCanvas(FigureCanvasAgg):
    """:class:`FigureCanvasAgg` drawing with a :class:`TextCachingRenderer` (kept while the figure's
    size and resolution stay the same, as matplotlib keeps its renderer)."""

    def get_renderer(self):
        w, h = self.get_width_height(physical=True)
        key = w, h, self.figure.dpi
        if self._lastKey != key:
            self.renderer = TextCachingRenderer(w, h, self.figure.dpi)
            self._lastKey = key
        return self.renderer
