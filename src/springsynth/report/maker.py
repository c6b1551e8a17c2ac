"""The maker's part of a design card: its specification table and outline previews.

The records and previews come from :mod:`springsynth.export` (the same ones
``springsynth export`` writes), so the report and the export folder never disagree.
"""

from __future__ import annotations

import html
import math
from collections.abc import Mapping
from dataclasses import dataclass

from springsynth.export import DesignSpec, run_specs
from springsynth.export.outline import outline_svg

__all__ = ["MakerView", "maker_views", "maker_section"]

#: what the card shows of each record, in this order: key, label, unit
_SHOWN = (
    ("wire_diameter_mm", "wire", "mm"), ("mean_diameter_mm", "mean diameter", "mm"),
    ("outer_diameter_mm", "outer diameter", "mm"), ("inner_diameter_mm", "inner diameter", "mm"),
    ("active_coils", "active coils", ""), ("total_coils", "total coils", ""), ("body_coils", "body coils", ""),
    ("ends", "ends", ""), ("free_length_mm", "free length", "mm"), ("solid_length_mm", "solid length", "mm"),
    ("body_length_mm", "body length", "mm"), ("pitch_mm", "pitch", "mm"), ("rate_N_per_mm", "rate", "N/mm"),
    ("initial_tension_N", "initial tension", "N"), ("radius_mm", "radius", "mm"),
    ("length_mm", "length", "mm"), ("width_mm", "width", "mm"), ("thickness_mm", "thickness", "mm"),
    ("rise_mm", "rise", "mm"), ("notch_radius_mm", "notch radius", "mm"), ("natural_radius_mm", "natural radius", "mm"),
    ("drum_diameter_mm", "drum", "mm"), ("strip_length_mm", "strip length", "mm"), ("shape_factor", "shape factor", ""),
    ("shape", "shape", ""), ("clamp_length_start_mm", "clamp at start", "mm"),
    ("clamp_length_end_mm", "clamp at end", "mm"), ("overall_length_mm", "overall length", "mm"),
    ("grain", "grain", ""),
)


@dataclass(frozen=True)
class MakerView:
    """A design's specification and the SVG outline of each flat part (keyed by part label)."""

    spec: DesignSpec
    outlines: Mapping[str, str]


def maker_views(designs, table, study) -> dict[str, MakerView]:
    """Specification and outline of every design of a run, keyed by design name.

    The outlines are drawn as SVG from the contours the DXF files are written from (the card's
    table says what the DXF's notes and dimension say).
    """
    specs = run_specs(designs, table, study)
    return {s.design.name: MakerView(s, {label: outline_svg(prof) for label, prof in s.profiles.items()})
            for s in specs}


def _e(v) -> str:
    return html.escape(str(v), quote=True)


def _value(v, unit: str) -> str:
    if isinstance(v, float):
        if not math.isfinite(v):
            return "n/a"
        v = f"{v:.4g}"
    return f"{v} {unit}".strip()


def _loads(rec: Mapping) -> str:
    out = []
    for where in ("installed", "working"):
        if f"load_{where}_N" not in rec:
            continue
        length = rec.get(f"{where}_length_mm")
        at = f"length {length:.4g} mm" if length is not None else f"deflection {rec[f'deflection_{where}_mm']:.4g} mm"
        out.append(f"{where}: {at}, {rec[f'load_{where}_N']:.4g} N")
    return "<br>".join(_e(o) for o in out)


def _row(rec: Mapping) -> str:
    make = "; ".join(f"{label} {_value(rec[k], unit)}" for k, label, unit in _SHOWN if k in rec and rec[k] != "")
    return (f"<tr><td>{_e(rec['part'])}</td><td class=num>{rec['quantity']}</td>"
            f"<td>{_e(rec['kind'])}<br><small>{_e(rec['material_name'])}</small></td><td>{_e(make)}</td>"
            f"<td>{_loads(rec)}</td><td><small>{_e(rec.get('tolerances', ''))}</small></td></tr>")


def maker_section(view: MakerView) -> str:
    """HTML of a card's maker part: the specification table, then the outline previews."""
    spec = view.spec
    rows = "".join(_row(r) for r in spec.records)
    parts = ["<h4>Maker's specification</h4>"]
    if spec.warning:
        parts.append(f"<p class=viol>{_e(spec.warning)}</p>")
    parts.append("<div class=wrap><table><thead><tr><th>part</th><th class=num>qty</th><th>element</th>"
                 "<th>make</th><th>loads per copy</th><th>tolerances (±)</th></tr></thead><tbody>" + rows
                 + "</tbody></table></div>")
    by_label = {r["part"]: r for r in spec.records}
    for label, svg in view.outlines.items():
        rec = by_label[label]
        parts.append(f'<figure class=w700 role=img aria-label="{_e(spec.design.name)} {_e(label)} outline">{svg}'
                     f"<figcaption>Outline of {_e(label)} ({_e(rec['kind'])}) x{rec['quantity']} in the plane of "
                     f"bending, to scale: the contours of its DXF <code>{_e(rec['dxf'])}</code>; dashed, where the "
                     "flexing length meets its mounting.</figcaption></figure>")
    parts.append("<p class=sub>Loads at the start (installed) and the end (working) of the target's stroke. "
                 "<code>springsynth export RUN</code> writes the full specification (spec.csv, spec.json) and the "
                 f"DXF outlines into <code>export/{_e(spec.design.name)}/</code>.</p>")
    return "".join(parts)
