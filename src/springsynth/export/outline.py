"""DXF outlines of flat parts, built in memory with ezdxf, and their preview images.

Each outline is drawn in the plane of bending, in mm, as one closed LWPOLYLINE (two for a
notch stage: the outer contour and the window between its links) on layer ``OUTLINE``:
the flexing part of thickness t following its as-made centreline, joined to its clamp or
mounting blocks. The flexing part's width (the plate thickness to cut it from) lies out
of the drawing plane and is stated in the notes. Reference geometry that is not to be
cut sits on other layers: dashed ``MOUNT_EDGE`` lines where the flexing length meets its
mounting regions, and the ``NOTES`` text.

Notes
-----
Curved centrelines are sampled as polylines fine enough that the chord sagitta
``ds^2 kappa_max / 8`` stays below :data:`CHORD_TOLERANCE_MM`; the offsets ``+- t/2``
along the normal give the two faces. Circular notches are exact arcs (LWPOLYLINE bulge
1, a half circle). Shapes: arches and clamped columns ``y = rise/2 (1 - cos 2 pi x/L)``,
pinned columns ``y = rise sin(pi x/L)`` (the as-made shapes of the element models).
"""

from __future__ import annotations

import io
import math
import textwrap
from typing import Sequence

import numpy as np

from springsynth.export.spec import Profile

__all__ = ["contours", "outline_document", "dxf_bytes", "audit_errors", "preview_png", "outline_svg", "CHORD_TOLERANCE_MM",
           "LAYER_OUTLINE", "LAYER_MOUNT", "LAYER_NOTES", "LAYER_DIMENSIONS", "link_spacing", "mm_text"]

#: largest distance between a sampled face and the true curve, mm
CHORD_TOLERANCE_MM = 1e-3
#: most points per sampled face
MAX_POINTS = 4001
LAYER_OUTLINE = "OUTLINE"
LAYER_MOUNT = "MOUNT_EDGE"
LAYER_NOTES = "NOTES"
LAYER_DIMENSIONS = "DIMENSIONS"
#: characters per line of the notes
WRAP = 72

Vertex = tuple[float, float, float]          # x, y, bulge to the next vertex


# --------------------------------------------------------------------------- geometry (pure)

def _centreline(prof: Profile):
    """``(y(x), y'(x), largest curvature)`` of the as-made centreline."""
    L, h = prof.length_mm, prof.rise_mm
    if prof.shape == "cosine":
        k = 2.0 * math.pi / L
        return (lambda x: 0.5 * h * (1.0 - np.cos(k * x)), lambda x: 0.5 * h * k * np.sin(k * x), 0.5 * h * k * k)
    if prof.shape == "half_sine":
        k = math.pi / L
        return (lambda x: h * np.sin(k * x), lambda x: h * k * np.cos(k * x), h * k * k)
    return (lambda x: np.zeros_like(x), lambda x: np.zeros_like(x), 0.0)


def _faces(prof: Profile) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper faces of the flexing part, each (m, 2), x increasing from 0 to L."""
    L, t = prof.length_mm, prof.thickness_mm
    y, dy, kappa = _centreline(prof)
    n = 2 if kappa == 0 else int(min(MAX_POINTS, max(65, math.ceil(L / math.sqrt(8 * CHORD_TOLERANCE_MM / kappa)) + 1)))
    x = np.linspace(0.0, L, n)
    s = np.hypot(1.0, dy(x))
    nx, ny = -dy(x) / s, 1.0 / s
    faces = []
    for sign in (-1.0, 1.0):
        px, py = x + sign * 0.5 * t * nx, y(x) + sign * 0.5 * t * ny
        faces.append(_clip(px, py, L))
    return faces[0], faces[1]


def _clip(px: np.ndarray, py: np.ndarray, L: float) -> np.ndarray:
    """A face cut off at x = 0 and x = L (the mounting edges), ends interpolated; shape (m, 2)."""
    inside = (px > 0.0) & (px < L)
    ends = np.interp([0.0, L], px, py)
    return np.vstack([[0.0, ends[0]], np.column_stack([px[inside], py[inside]]), [L, ends[1]]])


def _beam_contour(prof: Profile) -> list[Vertex]:
    """Closed outline, counter-clockwise: start block, lower face, end block, upper face back."""
    L = prof.length_mm
    c0, c1 = prof.mount_mm
    H = 0.5 * prof.block_mm
    lower, upper = _faces(prof)
    pts: list[tuple[float, float]] = []
    if c0 > 0:
        pts += [(-c0, -H), (0.0, -H)]
    pts += [tuple(p) for p in lower]
    if c1 > 0:
        pts += [(L, -H), (L + c1, -H), (L + c1, H), (L, H)]
    pts += [tuple(p) for p in upper[::-1]]
    if c0 > 0:
        pts += [(0.0, H), (-c0, H)]
    return [(float(x), float(y), 0.0) for x, y in pts]


def _rectangle(x0: float, x1: float, half: float) -> list[Vertex]:
    return [(x0, -half, 0.0), (x1, -half, 0.0), (x1, half, 0.0), (x0, half, 0.0)]


def link_spacing(prof: Profile) -> float:
    """Centre distance of a notch stage's two links, mm: the hinge distance, at least three link widths."""
    return max(prof.length_mm, 3.0 * (prof.thickness_mm + 2.0 * prof.notch_radius_mm))


def _notch_contours(prof: Profile) -> list[list[Vertex]]:
    """Outer contour and window of a parallelogram stage with four right-circular notch hinges.

    Links of width ``w = t + 2 r`` stand between the base (below y = 0) and the stage
    (above y = L + 2 r); each link edge carries a half-circle notch of radius r centred
    at the hinge heights y = r and y = L + r, leaving the neck t between opposite notches.
    A bulge of +1 (-1) is a half circle to the right (left) of the direction of travel.
    """
    L, t, r, H = prof.length_mm, prof.thickness_mm, prof.notch_radius_mm, prof.block_mm
    w = t + 2.0 * r
    s = link_spacing(prof)
    xo, xi = 0.5 * s + 0.5 * w, 0.5 * s - 0.5 * w         # outer and inner edges of the right link
    X = xo + prof.mount_mm[0]
    top = L + 2.0 * r
    outer = [(-X, -H, 0.0), (X, -H, 0.0), (X, 0.0, 0.0), (xo, 0.0, -1.0), (xo, 2 * r, 0.0), (xo, L, -1.0),
             (xo, top, 0.0), (X, top, 0.0), (X, top + H, 0.0), (-X, top + H, 0.0), (-X, top, 0.0),
             (-xo, top, -1.0), (-xo, L, 0.0), (-xo, 2 * r, -1.0), (-xo, 0.0, 0.0), (-X, 0.0, 0.0)]
    window = [(-xi, 0.0, 0.0), (xi, 0.0, 1.0), (xi, 2 * r, 0.0), (xi, L, 1.0), (xi, top, 0.0),
              (-xi, top, 1.0), (-xi, L, 0.0), (-xi, 2 * r, 1.0)]
    return [outer, window]


def contours(prof: Profile) -> list[list[Vertex]]:
    """Closed contours of the part, mm, each a list of ``(x, y, bulge)``.

    x runs along the part from the start of its flexing length (x = 0) to its end
    (x = L); mounting blocks lie beyond, centred on the ends of the centreline.
    """
    if prof.shape in ("straight", "cosine", "half_sine"):
        return [_beam_contour(prof)]
    if prof.shape == "wire":
        return [_rectangle(-prof.mount_mm[0], prof.length_mm + prof.mount_mm[1], 0.5 * prof.thickness_mm)]
    if prof.shape == "strip_blank":
        return [_rectangle(0.0, prof.length_mm + prof.mount_mm[1], 0.5 * prof.width_mm)]
    if prof.shape == "notch_stage":
        return _notch_contours(prof)
    raise ValueError(f"no outline for shape {prof.shape!r}")


def _mount_edges(prof: Profile) -> list[tuple[tuple[float, float], tuple[float, float]]]:
    """Dashed reference lines where the flexing length meets a mounting region."""
    if prof.shape == "notch_stage":
        return []
    half = 0.5 * (prof.width_mm if prof.shape == "strip_blank" else max(prof.block_mm, prof.thickness_mm))
    xs = [x for x, c in ((0.0, prof.mount_mm[0]), (prof.length_mm, prof.mount_mm[1])) if c > 0]
    return [((x, -half), (x, half)) for x in xs]


# --------------------------------------------------------------------------- SVG preview (pure)

def _svg_path(contour: Sequence[Vertex]) -> str:
    """One closed contour as SVG path data, y flipped (SVG's y runs down); a bulge ``b`` becomes an arc
    of included angle ``4 atan|b|`` and radius ``chord / (2 sin(angle/2))``, counter-clockwise for
    ``b > 0`` with y up: the angle falls in SVG's frame (y down), sweep flag 0."""
    out = [f"M{contour[0][0]:.4f} {-contour[0][1]:.4f}"]
    n = len(contour)
    for k, (x0, y0, b) in enumerate(contour):
        x1, y1 = contour[(k + 1) % n][:2]
        if b == 0.0:
            out.append(f"L{x1:.4f} {-y1:.4f}")
            continue
        theta = 4.0 * math.atan(abs(b))
        r = math.hypot(x1 - x0, y1 - y0) / (2.0 * math.sin(0.5 * theta))
        out.append(f"A{r:.4f} {r:.4f} 0 {int(theta > math.pi)} {int(b < 0)} {x1:.4f} {-y1:.4f}")
    return " ".join(out) + " Z"


def outline_svg(prof: Profile, *, max_width_px: int = 700, max_height_px: int = 360) -> str:
    """The part's outline (the DXF's ``OUTLINE`` contours and dashed ``MOUNT_EDGE`` lines) as an SVG
    element, mm in its view box, drawn to scale within ``max_width_px`` x ``max_height_px``.

    The same contours as :func:`outline_document` draws (:func:`contours`), written as SVG paths
    (bulges as exact arcs), so a page can show the outline without a drawing library.
    """
    cs, edges = contours(prof), _mount_edges(prof)
    paths = [_svg_path(c) for c in cs]
    pts = np.array([v[:2] for c in cs for v in c] + [p for e in edges for p in e], float)
    x0, y0 = pts.min(axis=0)
    x1, y1 = pts.max(axis=0)
    pad = 0.03 * max(x1 - x0, y1 - y0)          # arcs bulge inwards (notches): the points bound the part
    w, h = x1 - x0 + 2 * pad, y1 - y0 + 2 * pad
    scale = min(max_width_px / w, max_height_px / h)          # px per mm
    width, height = max(int(round(w * scale)), 24), max(int(round(h * scale)), 12)
    px = 1.0 / scale                                           # one pixel in mm
    lines = "".join(f'<line x1="{a[0]:.4f}" y1="{-a[1]:.4f}" x2="{b[0]:.4f}" y2="{-b[1]:.4f}"/>' for a, b in edges)
    return (f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="{x0 - pad:.4f} {-y1 - pad:.4f} {w:.4f} {h:.4f}" '
            f'width="{width}" height="{height}" style="max-width:100%;height:auto;background:#fff">'
            f'<path d="{" ".join(paths)}" fill="#dde3ea" fill-rule="evenodd" stroke="#1f2d3d" '
            f'stroke-width="{1.2 * px:.5g}"/>'
            f'<g stroke="#2b6cb0" stroke-width="{px:.5g}" stroke-dasharray="{5 * px:.5g} {3 * px:.5g}">{lines}</g>'
            "</svg>")


# --------------------------------------------------------------------------- DXF document

def mm_text(v: float) -> str:
    """A length for people: to 0.001 mm, trailing zeros dropped (``49.498``, ``0.12``, ``40``)."""
    return f"{v:.3f}".rstrip("0").rstrip(".")


def _text_height(prof: Profile) -> float:
    """Height of the notes, mm: a line of :data:`WRAP` characters about 2/3 as long as the part."""
    span = prof.length_mm + sum(prof.mount_mm)
    return float(np.clip(span / (0.9 * WRAP), 0.2, 10.0))


def outline_document(prof: Profile, *, notes: Sequence[str] = (), warning: str = "", dimension: bool = True):
    """An ezdxf document (DXF R2010, mm) of the part's outline with its notes.

    Parameters
    ----------
    prof : Profile
    notes : sequence of str
        Lines of text placed below the outline (layer ``NOTES``).
    warning : str
        Placed first, in red, when not empty (an infeasible design).
    dimension : bool
        Dimension the flexing length below the part (layer ``DIMENSIONS``).

    Returns
    -------
    ezdxf.document.Drawing
    """
    import ezdxf
    from ezdxf import units

    doc = ezdxf.new("R2010", setup=True)
    doc.units = units.MM
    doc.header["$MEASUREMENT"] = 1                      # metric
    doc.layers.add(LAYER_OUTLINE, color=7)
    doc.layers.add(LAYER_MOUNT, color=5, linetype="DASHED")
    doc.layers.add(LAYER_NOTES, color=7)
    doc.layers.add(LAYER_DIMENSIONS, color=7)
    msp = doc.modelspace()
    ys = []
    for c in contours(prof):
        msp.add_lwpolyline(c, format="xyb", close=True, dxfattribs={"layer": LAYER_OUTLINE})
        ys += [v[1] for v in c]
    for a, b in _mount_edges(prof):
        msp.add_line(a, b, dxfattribs={"layer": LAYER_MOUNT})
    th = _text_height(prof)
    x0 = min(v[0] for c in contours(prof) for v in c)
    y = min(ys) - 2.0 * th
    if dimension and prof.shape != "notch_stage":
        y = _length_dimension(msp, prof, y, th) - 1.5 * th
    lines = [(w, 1) for w in textwrap.wrap(warning, WRAP)] + [(w, 256) for n in notes for w in textwrap.wrap(n, WRAP)]
    for text, color in lines:
        msp.add_text(text, height=th, dxfattribs={"layer": LAYER_NOTES, "color": color, "insert": (x0, y)})
        y -= 1.6 * th
    return doc


def _length_dimension(msp, prof: Profile, y: float, th: float) -> float:
    """A linear dimension of the flexing length below the part (layer ``DIMENSIONS``); returns its lowest y."""
    x1 = prof.length_mm
    base = y - th
    dim = msp.add_linear_dim(base=(0.5 * x1, base), p1=(0.0, y + th), p2=(x1, y + th), text=mm_text(x1),
                             override={"dimtxt": th, "dimasz": th, "dimexe": 0.5 * th, "dimexo": 0.5 * th,
                                       "dimgap": 0.3 * th},
                             dxfattribs={"layer": LAYER_DIMENSIONS})
    dim.render()
    return base - 1.5 * th


def dxf_bytes(doc) -> bytes:
    """The document as DXF file content (UTF-8, as R2010 files are)."""
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue().encode("utf-8")


def audit_errors(doc) -> list[str]:
    """What ezdxf's audit finds wrong with the document (empty when clean)."""
    auditor = doc.audit()
    return [str(e.message) for e in auditor.errors]


def preview_png(doc, *, title: str = "", dpi: int = 110) -> bytes:
    """The document drawn back with ezdxf's drawing add-on and matplotlib, as PNG bytes."""
    from ezdxf import bbox
    from ezdxf.addons.drawing import Frontend, RenderContext
    from ezdxf.addons.drawing.config import BackgroundPolicy, Configuration
    from ezdxf.addons.drawing.matplotlib import MatplotlibBackend
    from matplotlib.figure import Figure

    ext = bbox.extents(doc.modelspace())
    w, h = max(ext.size.x, 1e-6), max(ext.size.y, 1e-6)
    width_in = 9.0
    height_in = float(np.clip(width_in * h / w, 1.6, 9.0)) + (0.35 if title else 0.0)
    fig = Figure(figsize=(width_in, height_in))
    ax = fig.add_axes((0.02, 0.02, 0.96, 0.96 - (0.35 / height_in if title else 0.0)))
    cfg = Configuration(background_policy=BackgroundPolicy.WHITE, min_lineweight=0.4)
    Frontend(RenderContext(doc), MatplotlibBackend(ax), config=cfg).draw_layout(doc.modelspace(), finalize=True)
    if title:
        fig.suptitle(title, fontsize=12, x=0.02, y=0.99, ha="left", va="top")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, facecolor="white")
    return buf.getvalue()
