"""The files of an export folder, built in memory (no I/O): spec.csv, spec.json, README.txt
and a DXF with its PNG preview per flat part. :func:`springsynth.io.export_folder.write_folder`
writes them all or nothing."""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from springsynth.export.outline import (
    LAYER_MOUNT,
    LAYER_NOTES,
    LAYER_OUTLINE,
    audit_errors,
    dxf_bytes,
    mm_text,
    outline_document,
    preview_png,
)
from springsynth.export.spec import DesignSpec, Profile, Stroke, columns, design_spec
from springsynth.model.safety import CAUTION
from springsynth.model.version import __version__

__all__ = ["export_files", "outlines", "previews", "run_specs", "spec_csv", "spec_json"]



def _plain(v: Any) -> Any:
    """JSON value: floats to 6 significant figures, NaN and inf to None."""
    if isinstance(v, float):
        return float(f"{v:.6g}") if math.isfinite(v) else None
    return v


def spec_csv(spec: DesignSpec) -> str:
    """``spec.csv``: one row per element, units in the column names (floats to 6 figures)."""
    cols = columns(spec.records)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(cols)
    for r in spec.records:
        w.writerow(["" if r.get(c) is None else (f"{r[c]:.6g}" if isinstance(r[c], float) else r[c]) for c in cols])
    return buf.getvalue()


def spec_json(spec: DesignSpec, *, source: str = "") -> str:
    """``spec.json``: the design, its stroke, warnings and one object per element."""
    doc = {
        "design": spec.design.name, "source": source, "springsynth": __version__,
        "units": "lengths mm, forces N, rates N/mm, stresses MPa, masses g",
        "stroke": {"installed_mm": spec.stroke.installed_mm, "working_mm": spec.stroke.working_mm},
        "warning": spec.warning or None, "notes": list(spec.notes), "caution": CAUTION,
        "elements": [{k: _plain(v) for k, v in r.items()} for r in spec.records],
    }
    return json.dumps(doc, indent=1, ensure_ascii=False) + "\n"


def _dxf_notes(rec: Mapping[str, Any], prof: Profile) -> list[str]:
    """Lines of text placed in a part's DXF below its outline."""
    lines = [(f"{rec['design']} {rec['part']}: {rec['kind']}, quantity {rec['quantity']}; units mm "
              f"(springsynth {__version__} export)"), f"material: {rec['material_name']}"]
    if prof.shape == "strip_blank":
        lines.append(f"flat blank in plan view, strip {mm_text(prof.thickness_mm)} mm thick; the fixing region "
                     "lies beyond the dashed line")
    elif prof.shape == "wire":
        lines.append(f"round wire {mm_text(prof.thickness_mm)} mm, clamped beyond the dashed lines")
    else:
        dims = f"thickness {mm_text(prof.thickness_mm)} mm"
        if prof.rise_mm:
            dims += f", rise {mm_text(prof.rise_mm)} mm, {rec['shape']}"
        if prof.notch_radius_mm:
            dims += f", hinge distance {mm_text(prof.length_mm)} mm, notch radius {mm_text(prof.notch_radius_mm)} mm"
        lines.append(f"plane of bending; plate {mm_text(prof.width_mm)} mm thick (out of the drawing); {dims}")
        lines.append(f"supports: {rec['supports']}")
        lines.append(f"mounting blocks {mm_text(max(prof.mount_mm))} x {mm_text(prof.block_mm)} mm: adapt them to "
                     "the fixture")
    lines.append(f"grain: {rec['grain']}")
    lines.append(f"cut layer {LAYER_OUTLINE} only; the other layers are reference")
    return lines


def outlines(spec: DesignSpec, *, notes: bool = True) -> dict[str, object]:
    """The DXF document of every flat part, keyed by its part label; each passes ezdxf's audit.

    ``notes=False`` leaves out everything below the outline (dimension, warning and notes),
    for quick previews.
    """
    by_label = {r["part"]: r for r in spec.records}
    docs = {}
    for label, prof in spec.profiles.items():
        text = _dxf_notes(by_label[label], prof) if notes else ()
        doc = outline_document(prof, notes=text, warning=spec.warning if notes else "", dimension=notes)
        problems = audit_errors(doc)
        if problems:  # a fault of this program, not of the user's input
            raise RuntimeError(f"DXF of {spec.design.name} {label} fails ezdxf's audit: {problems}")
        docs[label] = doc
    return docs


def previews(spec: DesignSpec, docs: Mapping[str, object] | None = None, *, dpi: int = 110) -> dict[str, bytes]:
    """PNG preview of every flat part (its DXF drawn back by ezdxf), keyed by its part label."""
    docs = outlines(spec) if docs is None else docs
    by_label = {r["part"]: r for r in spec.records}
    out = {}
    for label, doc in docs.items():
        rec = by_label[label]
        title = f"{spec.design.name} {label}: {rec['kind']} x{rec['quantity']}"
        title += "  (INFEASIBLE)" if spec.warning else ""
        out[label] = preview_png(doc, title=title, dpi=dpi)
    return out


def export_files(spec: DesignSpec, *, source: str = "", with_previews: bool = True) -> dict[str, bytes]:
    """Every file of one design's export folder, in memory: relative name -> content.

    ``spec.csv``, ``spec.json``, ``README.txt`` and, per flat part, ``<part>-<kind>.dxf``
    and its preview ``<part>-<kind>.png``.
    """
    files = {"spec.csv": spec_csv(spec).encode("utf-8"), "spec.json": spec_json(spec, source=source).encode("utf-8")}
    by_label = {r["part"]: r for r in spec.records}
    docs = outlines(spec)
    pngs = previews(spec, docs) if with_previews else {}
    for label, doc in docs.items():
        name = by_label[label]["dxf"]
        files[name] = dxf_bytes(doc)
        if label in pngs:
            files[name.removesuffix(".dxf") + ".png"] = pngs[label]
    files["README.txt"] = _readme(spec, source).encode("utf-8")
    return files


def _readme(spec: DesignSpec, source: str) -> str:
    lines = [f"springsynth {__version__}: what a maker needs for design {spec.design.name}"
             + (f" ({source})" if source else "")]
    if spec.warning:
        lines += ["", "WARNING: " + spec.warning]
    lines += ["", ("spec.csv, spec.json  one row / object per element: dimensions, counts, material, loads at the "
                   "installed and working positions, tolerances (units in the names)")]
    for r in spec.records:
        if "dxf" in r:
            lines.append(f"{r['dxf']:<20} outline of {r['part']} ({r['kind']}) in mm; layer {LAYER_OUTLINE} is the cut "
                         f"contour, {LAYER_MOUNT} and {LAYER_NOTES} are reference; the .png beside it is a preview")
    lines += ["", f"stroke: installed at {spec.stroke.installed_mm:g} mm, working at "
                  + ("(not given)" if spec.stroke.working_mm is None else f"{spec.stroke.working_mm:g} mm")]
    lines += [f"note: {n}" for n in spec.notes]
    lines += ["", "Caution: " + CAUTION, ""]
    return "\n".join(lines)


def run_specs(designs, table, study, *, top: int | None = None) -> list[DesignSpec]:
    """Specifications of a run's Pareto designs over its target's stroke.

    Parameters
    ----------
    designs : sequence of Design
        The run's Pareto designs, in the order of ``table``.
    table : Table or pandas.DataFrame
        The run's ``pareto.csv`` (``curve_error_pct``, ``feasible``, ``violations``).
    study : Study
        The run's study: its target's last point is the working position, its
        ``limits.stress_ratio`` the stress limit.
    top : int, optional
        Only the ``top`` designs of lowest curve error.

    The installed position is the start of the stroke; a design the run marked
    infeasible carries the run's reasons on every file.
    """
    stroke = Stroke(0.0, float(study.target.stroke_mm))
    order = np.arange(len(designs))
    if top is not None:
        order = np.argsort(_numeric(table, "curve_error_pct"), kind="stable")[:top]
    specs = []
    for i in order:
        row = table.iloc[int(i)]
        feasible = str(row.get("feasible", "True")).strip().lower() in ("true", "1", "yes")
        viol = row.get("violations")
        viol = viol if isinstance(viol, str) and viol else "see pareto.csv"
        why = () if feasible else (f"infeasible in its run ({viol})",)
        specs.append(design_spec(designs[int(i)], stroke, stress_limit=study.limits.stress_ratio,
                                 extra_warnings=why))
    return specs


def _numeric(table, column: str) -> np.ndarray:
    """A table column as floats (NaN where missing or not a number)."""
    from springsynth.model.table import to_floats

    if column not in table:
        return np.full(len(table), np.nan)
    return to_floats(table[column])
