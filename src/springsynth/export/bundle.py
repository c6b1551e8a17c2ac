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
    LAYER_MOUNT, LAYER_NOTES, LAYER_OUTLINE, audit_errors, dxf_bytes, outline_document, preview_png,
)
from springsynth.export.spec import DesignSpec, Profile, Stroke, columns, design_spec
from springsynth.model.safety import CAUTION
from springsynth.model.version import __version__

__all__ = ["export_files", "run_specs", "spec_csv", "spec_json"]



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
        lines.append(f"flat blank in plan view, strip {prof.thickness_mm:g} mm thick; the fixing region lies beyond "
                     f"the dashed line")
    elif prof.shape == "wire":
        lines.append(f"round wire {prof.thickness_mm:g} mm, clamped beyond the dashed lines")
    else:
        dims = f"thickness {prof.thickness_mm:g} mm"
        if prof.rise_mm:
            dims += f", rise {prof.rise_mm:g} mm, {rec['shape']}"
        if prof.notch_radius_mm:
            dims += f", hinge distance {prof.length_mm:g} mm, notch radius {prof.notch_radius_mm:g} mm"
        lines.append(f"plane of bending; plate {prof.width_mm:g} mm thick (out of the drawing); {dims}")
        lines.append(f"supports: {rec['supports']}")
        lines.append(f"mounting blocks {max(prof.mount_mm):g} x {prof.block_mm:g} mm: adapt them to the fixture")
    lines.append(f"grain: {rec['grain']}")
    lines.append(f"cut layer {LAYER_OUTLINE} only; the other layers are reference")
    return lines


def export_files(spec: DesignSpec, *, source: str = "", previews: bool = True) -> dict[str, bytes]:
    """Every file of one design's export folder, in memory: relative name -> content.

    ``spec.csv``, ``spec.json``, ``README.txt`` and, per flat part, ``<part>-<kind>.dxf``
    and its preview ``<part>-<kind>.png``. Each DXF must pass ezdxf's audit.
    """
    files = {"spec.csv": spec_csv(spec).encode("utf-8"), "spec.json": spec_json(spec, source=source).encode("utf-8")}
    by_label = {r["part"]: r for r in spec.records}
    for label, prof in spec.profiles.items():
        rec = by_label[label]
        doc = outline_document(prof, notes=_dxf_notes(rec, prof), warning=spec.warning)
        problems = audit_errors(doc)
        if problems:  # a fault of this program, not of the user's input
            raise RuntimeError(f"DXF of {spec.design.name} {label} fails ezdxf's audit: {problems}")
        stem = rec["dxf"].removesuffix(".dxf")
        files[rec["dxf"]] = dxf_bytes(doc)
        if previews:
            title = f"{spec.design.name} {label}: {rec['kind']} x{rec['quantity']}"
            title += "  (INFEASIBLE)" if spec.warning else ""
            files[f"{stem}.png"] = preview_png(doc, title=title)
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


def run_specs(run, *, top: int | None = None) -> list[DesignSpec]:
    """Specifications of a run's Pareto designs over its target's stroke.

    Parameters
    ----------
    run : RunFolder
        A run folder read by :func:`~springsynth.io.runfolder.read_run` (its study,
        Pareto table and designs are used).
    top : int, optional
        Only the ``top`` designs of lowest curve error.

    The installed position is the start of the stroke, the working position the
    target's last point; a design the run marked infeasible carries the run's reasons.
    """
    study = run.study()
    stroke = Stroke(0.0, float(study.target.stroke_mm))
    table = run.table
    order = np.arange(len(run.designs))
    if top is not None:
        err = _numeric(table, "curve_error_pct")
        order = np.argsort(err, kind="stable")[:top]
    specs = []
    for i in order:
        row = table.iloc[int(i)]
        feasible = str(row.get("feasible", "True")).strip().lower() in ("true", "1", "yes")
        why = () if feasible else (f"infeasible in its run ({row.get('violations') or 'see pareto.csv'})",)
        specs.append(design_spec(run.designs[int(i)], stroke, stress_limit=study.limits.stress_ratio,
                                 extra_warnings=why))
    return specs


def _numeric(table, column: str) -> np.ndarray:
    """A table column as floats (NaN where missing or not a number)."""
    import pandas as pd

    if column not in table:
        return np.full(len(table), np.nan)
    return pd.to_numeric(table[column], errors="coerce").to_numpy(float)
