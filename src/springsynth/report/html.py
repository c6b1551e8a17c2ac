"""Figures and a self-contained ``report.html`` for a run, rendered from the run folder's contents.

:func:`render_report` takes what ``springsynth run`` wrote (read back by
:func:`springsynth.io.runfolder.build_report`: ``run.json``, ``pareto.csv``,
``designs/*.toml``, ``study.toml``, ``target.csv``), re-evaluates the Pareto designs with
the analytic models (no search), and renders

* ``pareto.png``, ``curves.png``, ``convergence.png`` and ``designs/<id>.png``;
* ``report.html``: run summary, figures, a sortable table of the designs and a card per
  design (dimensions, materials, the maker's specification and outline previews of
  :mod:`springsynth.report.maker`, model validity and sources, verification columns
  when present). Every figure is inlined as a base64 PNG; CSS and the small sorting
  script are inline too, so the file can be mailed or archived on its own.

``springsynth run`` calls it after writing the data files and ``springsynth report``
calls it on an existing folder (e.g. after an upgrade), so both give the same result.
"""

from __future__ import annotations

import base64
import html
import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import Response, evaluate_design
from springsynth.elements import get_kind, margin_text, split_margins
from springsynth.model.numbers import cycles_text, pct_text, size_text, thousands
from springsynth.model.safety import CAUTION
from springsynth.model.study import Study
from springsynth.model.table import Table, to_floats
from springsynth.report.fatigue import FatigueView, fatigue_card, fatigue_views
from springsynth.report.maker import MakerView, maker_section, maker_views

__all__ = ["render_report", "RenderedReport", "ReportInput", "REPORT", "BASE_COLUMNS", "extra_columns"]

REPORT = "report.html"
#: pareto.csv columns every run has; any other column that is not an element parameter
#: (``e<j>_...``), e.g. ``verified_error_pct`` from ``springsynth verify``, is shown as extra
BASE_COLUMNS = ("design_id", "curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio", "in_spec_share",
                "mass_g", "feasible", "topology", "violations")
_PARAM_COLUMN = re.compile(r"^e\d+_")
_ROLE_ORDER = ("lowest error", "knee", "smallest", "lowest stress", "most in spec")


# ------------------------------------------------------------------------- loading


@dataclass(frozen=True)
class ReportInput:
    """What a report is made of: a run folder's contents, read by :mod:`springsynth.io.runfolder`."""

    folder: Path
    meta: dict
    table: Table              # or a pandas.DataFrame of the same file
    designs: tuple[Design, ...]
    study: Study
    study_raw: dict



def _feasible(table: Table) -> np.ndarray:
    if "feasible" not in table:
        return np.zeros(len(table), bool)
    return np.array([str(v).strip().lower() in ("true", "1", "yes") for v in table["feasible"]], bool)


def _objectives(table: Table) -> np.ndarray:
    cols = ["curve_error_pct", "stress_ratio", "size_mm3"]
    F = np.full((len(table), 3), np.nan)
    for j, c in enumerate(cols):
        if c in table:
            F[:, j] = to_floats(table[c])
    return F


def _in_spec(table: Table) -> np.ndarray | None:
    """The ``in_spec_share`` column (a run written before it existed has none: None)."""
    if "in_spec_share" not in table:
        return None
    return to_floats(table["in_spec_share"])


def extra_columns(table: Table) -> list[str]:
    """Columns beyond the standard ones (verification, tolerance, ...), in file order."""
    return [c for c in table.columns if c not in BASE_COLUMNS and not _PARAM_COLUMN.match(str(c))]


# ------------------------------------------------------------------------- figures


def _figures(run: ReportInput, workers: int):
    """All figures as PNG bytes (run-level, per design), the responses, each design's roles and
    the maker's and fatigue views, drawn as jobs by :func:`springsynth.report.figures.run_jobs`."""
    from springsynth.model.study import curve_grid
    from springsynth.report import figures as FG
    from springsynth.report.plots import representatives

    st = run.study
    ids = [d.name for d in run.designs]
    F = _objectives(run.table)
    feas = _feasible(run.table)
    limit = st.limits.stress_ratio
    x = curve_grid(st)
    stroke = st.target.stroke_mm
    responses = {d.name: evaluate_design(d, x, x_max_mm=stroke) for d in run.designs}
    roles: dict[str, list[str]] = {}
    items = []
    for i, d in enumerate(run.designs):
        r = responses[d.name]
        if r.snap_mm is not None and np.isfinite(r.snap_mm[0]):     # the snap drawn as a vertical step
            r = evaluate_design(d, x, x_max_mm=stroke, at_snaps=True)
        state = "feasible" if feas[i] else "INFEASIBLE"
        title = (f"{d.name} ({state}): curve error {pct_text(F[i, 0])}, stress ratio {F[i, 1]:.3g}, "
                 f"size {size_text(F[i, 2])} mm³")
        items.append((d, r, title, None))
    jobs = FG.design_jobs(items, st.target, limit, parts=workers)      # the largest jobs first
    if ids:
        reps = representatives(ids, F, feas, _in_spec(run.table))
        for role in (r for r in _ROLE_ORDER if r in reps):
            roles.setdefault(ids[reps[role]], []).append(role)
        jobs.append(("pareto.png", FG.pareto_png, (ids, F, feas, limit, _in_spec(run.table)), {}))
        if st.duty is not None and "fatigue_ratio" in run.table:
            fat = to_floats(run.table["fatigue_ratio"])
            jobs.append(("pareto_fatigue.png", FG.pareto_fatigue_png, (ids, F, fat, feas, st.limits.fatigue_ratio), {}))
    jobs.append(("maker", maker_views, (run.designs, run.table, st), {}))
    jobs.append(("fatigue", fatigue_views, (run.designs, st), {}))
    history = run.meta.get("history") or []
    if history:
        jobs.append(("convergence.png", FG.convergence_png, (history, run.meta.get("polish"), st.limits.max_error_pct),
                     {}))
    if ids:
        curves, errors = {}, {}
        for name, rs in roles.items():
            label = f"{name} ({', '.join(rs)})"
            curves[label] = responses[name].force_N[0]
            errors[label] = float(F[ids.index(name), 0])
        jobs.append(("curves.png", FG.curves_png, (st.target, x, curves, errors), {}))
    done = FG.run_jobs(jobs, workers=workers)
    figs = {k: done[k] for k in ("pareto.png", "pareto_fatigue.png", "curves.png", "convergence.png") if k in done}
    return figs, FG.design_results(done), responses, roles, done["maker"], done["fatigue"]


# ------------------------------------------------------------------------- HTML pieces

_CSS = """
:root{--ink:#222;--muted:#666;--line:#ddd;--accent:#1f4e79;--warn:#a8432f;--bg:#fafafa}
*{box-sizing:border-box}
body{font:14px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,Helvetica,Arial,sans-serif;color:var(--ink);
margin:0;background:#fff}
main{max-width:1180px;margin:0 auto;padding:24px 28px 60px}
h1{font-size:24px;margin:0 0 4px}h2{font-size:19px;margin:34px 0 10px;border-bottom:2px solid var(--accent);
padding-bottom:3px}h3{font-size:16px;margin:0 0 6px}h4{font-size:14px;margin:14px 0 4px}
.sub{color:var(--muted);margin:0 0 16px}
.caution{border-left:5px solid var(--warn);background:#fbf1ee;padding:10px 14px;margin:14px 0}
.caution b{color:var(--warn)}
dl.summary{display:grid;grid-template-columns:max-content 1fr;gap:3px 18px;margin:0}
dl.summary dt{color:var(--muted)}dl.summary dd{margin:0}
figure.w880 img{width:880px}figure.w700 img{width:700px}
td.id{white-space:nowrap}td.mname{min-width:11em}
figure{margin:12px 0 22px}figure img{max-width:100%;height:auto;border:1px solid var(--line)}
figcaption{color:var(--muted);font-size:13px;margin-top:4px}
table{border-collapse:collapse;font-size:13px;margin:6px 0}
th,td{border-bottom:1px solid var(--line);padding:4px 9px;text-align:left;vertical-align:top}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
table.sortable th{background:#eef2f6;position:sticky;top:0}
table.sortable th button{all:unset;cursor:pointer;font-weight:600}
table.sortable th button:focus-visible{outline:2px solid var(--accent)}
table.sortable th[aria-sort=ascending] button::after{content:" \\25B2"}
table.sortable th[aria-sort=descending] button::after{content:" \\25BC"}
table.sortable tbody tr:hover{background:#f4f7fa}
.wrap{overflow-x:auto}
.badge{display:inline-block;border-radius:9px;padding:0 8px;font-size:12px;font-weight:600}
.ok{background:#e3eef7;color:#1f4e79}.no{background:#f6e3de;color:#a8432f}
.role{background:#fbeed9;color:#7a4c0b;margin-left:4px}
.card{border:1px solid var(--line);border-radius:6px;padding:14px 16px;margin:18px 0;background:var(--bg)}
.card .topo{font-family:ui-monospace,Menlo,Consolas,monospace;font-size:12px;color:var(--muted);
word-break:break-word}
.viol{color:var(--warn)}
details summary{cursor:pointer;color:var(--accent)}
.notes li{margin:2px 0}
footer{margin-top:40px;color:var(--muted);font-size:12px;border-top:1px solid var(--line);padding-top:10px}
@media print{table.sortable th{position:static}.card{break-inside:avoid}}
"""

_SCRIPT = """
document.querySelectorAll("table.sortable").forEach(function(t){
 var heads=t.tHead.rows[0].cells;
 Array.prototype.forEach.call(heads,function(th,i){
  var b=th.querySelector("button");if(!b)return;
  b.addEventListener("click",function(){
   var asc=th.getAttribute("aria-sort")!=="ascending";
   Array.prototype.forEach.call(heads,function(h){h.removeAttribute("aria-sort")});
   th.setAttribute("aria-sort",asc?"ascending":"descending");
   var body=t.tBodies[0],rows=Array.prototype.slice.call(body.rows);
   function key(r){var c=r.cells[i],v=c.getAttribute("data-v");if(v===null)v=c.textContent.trim();
    var n=parseFloat(v);return isNaN(n)?v.toLowerCase():n}
   rows.sort(function(a,b){var x=key(a),y=key(b),c;
    if(typeof x==="number"&&typeof y==="number")c=x-y;else c=String(x).localeCompare(String(y));
    return asc?c:-c});
   rows.forEach(function(r){body.appendChild(r)});
  });
 });
});
"""


def _e(v) -> str:
    return html.escape(str(v), quote=True)


def _img(png: bytes, alt: str) -> str:
    return f'<img alt="{_e(alt)}" src="data:image/png;base64,{base64.b64encode(png).decode("ascii")}">'


def _number(v, show) -> str:
    """``show(float(v))`` for a finite number, "n/a" for NaN/inf, the escaped text otherwise."""
    try:
        f = float(v)
    except (TypeError, ValueError):
        return _e(v)
    return show(f) if math.isfinite(f) else "n/a"


def _num(v, fmt: str = ".4g") -> str:
    return _number(v, lambda f: format(f, fmt))


def _big(v: float) -> str:
    """``203 000`` rather than ``2.03e+05`` (thin-space thousands)."""
    return thousands(v) if math.isfinite(v) and abs(v) >= 1000 else _num(v)


def _pct(v) -> str:
    return _number(v, lambda f: _e(pct_text(f, suffix="")))


def _share(v) -> str:
    """A share of parts (0 ... 1) as a percentage with one decimal (the column header carries the unit)."""
    return _number(v, lambda f: _e(pct_text(100.0 * f, decimals=1, suffix="")))


def _extra_num(column: str, v) -> str:
    """An extra column's number: percentages (``*_pct``) as percentages, others to four digits."""
    return _pct(v) if str(column).endswith("_pct") else _num(v)


def _sort_value(v) -> str:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return _e(v)
    return repr(f) if math.isfinite(f) else "1e300"


def _cell(v, *, numeric: bool, text: str | None = None) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return '<td class="num" data-v="1e301">–</td>' if numeric else "<td>–</td>"
    if numeric:
        return f'<td class="num" data-v="{_sort_value(v)}">{text if text is not None else _num(v)}</td>'
    return f"<td>{text if text is not None else _e(v)}</td>"


def _is_numeric(column) -> bool:
    """A column of numbers (integers or floats; not booleans, not text)."""
    return np.asarray(column).dtype.kind in "iuf"


def _summary(run: ReportInput) -> str:
    m, st = run.meta, run.study
    raw = run.study_raw
    env = st.envelope
    lim = st.limits
    budget = m.get("budget") or {}
    timings = m.get("timings_s") or {}
    total_s = sum(float(v) for v in timings.values() if isinstance(v, (int, float)) and math.isfinite(v))
    rows: list[tuple[str, str]] = [("study", _e(m.get("study", st.name)))]
    if raw.get("description"):
        rows.append(("description", _e(raw["description"])))
    tfile = (raw.get("target") or {}).get("file", "")
    t = st.target
    rows.append(("target", f"{_e(tfile)} (copy in <code>target.csv</code>): {t.x_mm.size} points over 0 … "
                           f"{t.stroke_mm:g} mm, force {t.force_N.min():.4g} … {t.force_N.max():.4g} N"
                           + (", with a tolerance band" if t.has_band else "")))
    rows.append(("envelope", f"{env.length_mm:g} mm along the stroke × {env.width_mm:g} × {env.height_mm:g} mm"))
    lims = [f"stress ratio ≤ {lim.stress_ratio:g}", f"thickness ≥ {lim.min_thickness_mm:g} mm"]
    if math.isfinite(lim.max_mass_g):
        lims.append(f"mass ≤ {lim.max_mass_g:g} g")
    if math.isfinite(lim.max_error_pct):
        lims.append(f"curve error ≤ {lim.max_error_pct:g} %")
    if st.duty is not None:
        du = st.duty
        lims.append(f"fatigue ratio ≤ {lim.fatigue_ratio:g}")
        rows.append(("duty", f"{cycles_text(du.cycles)} cycles between strokes {du.stroke_min_mm:g} and "
                             f"{du.stroke_max_mm:g} mm" + (", shot-peened coil springs" if du.shot_peened else "")))
    if lim.in_spec_share > 0:
        lims.append(f"parts in spec ≥ {pct_text(100 * lim.in_spec_share, decimals=1)}")
    rows.append(("limits", "; ".join(lims)))
    if "in_spec_share" in run.table:
        rows.append(("in spec", _in_spec_note(st, m.get("yield_samples"))))
    s = st.search
    rows.append(("search space", f"kinds {_e(', '.join(k.name for k in s.kinds))}; materials "
                                 f"{_e(', '.join(mm.id for mm in s.materials))}; up to {s.max_elements} elements, "
                                 f"{s.max_count} copies each"))
    rows.append(("budget", f"population {_e(budget.get('population', '?'))} × {_e(budget.get('generations', '?'))} "
                           f"generations; {_e(budget.get('evaluations', '?'))} evaluations"
                           + (f" (+{_e(m['polish'].get('evaluations'))} in local polish)"
                              if isinstance(m.get("polish"), dict) and m["polish"].get("evaluations") else "")))
    rows.append(("time", f"{total_s:.1f} s (" + ", ".join(f"{_e(k.removesuffix('_s'))} {float(v):.1f} s"
                                                          for k, v in timings.items()
                                                          if isinstance(v, (int, float))) + ")"))
    rows.append(("seed", _e(m.get("seed", "?"))))
    feas = _feasible(run.table)
    rows.append(("result", f"{len(run.designs)} Pareto designs, {int(feas.sum())} feasible"
                           + ("" if m.get("feasible", True) else " — <b>no feasible design found</b>; the closest "
                                                                  "designs are shown, marked infeasible")))
    if m.get("partial"):
        rows.append(("status", "<b>partial</b>: the search was interrupted; these are the results so far"))
    if m.get("parent"):
        rows.append(("rerun of", f"<code>{_e(m['parent'])}</code>"))
    if m.get("resumed_from"):
        rows.append(("resumed from", f"<code>{_e(m['resumed_from'])}</code>"))
    if m.get("overrides"):
        rows.append(("overrides", " ".join(f"<code>{_e(o)}</code>" for o in m["overrides"])))
    if m.get("study_hash"):
        rows.append(("study hash", f"<code>{_e(m['study_hash'])}</code>"))
    v = m.get("versions") or {}
    if v:
        rows.append(("versions", _e(", ".join(f"{k} {val}" for k, val in v.items()))))
    return "<dl class=summary>" + "".join(f"<dt>{k}</dt><dd>{val}</dd>" for k, val in rows) + "</dl>"


def _in_spec_note(st: Study, n_samples) -> str:
    """What the in-spec share of the table means, with its Monte Carlo standard error."""
    from springsynth.checks.in_spec import worst_standard_error
    from springsynth.model.target import BAND_FLOOR_SHARE

    band = ("the target's band" if st.target.has_band else
            f"±{st.limits.band_pct:g} % of the target force (never narrower than ±{st.limits.band_pct:g} % of "
            f"{pct_text(100 * BAND_FLOOR_SHARE, decimals=0)} of the peak target force)")
    text = (f"share of parts whose force lies inside {band} at every target point, the parts drawn from the "
            f"process tolerances of each dimension, offset and modulus (the same draws for every design, "
            f"seeded by the run seed)")
    if isinstance(n_samples, int) and n_samples > 0:
        se = 100 * worst_standard_error(n_samples)
        text += (f"; {n_samples} parts per design: Monte Carlo standard error √(p(1−p)/{n_samples}), at most "
                 f"{se:.1f} points (at 50 %), less towards 0 and 100 %")
    return _e(text)


def _pareto_table(run: ReportInput, roles: Mapping[str, list[str]]) -> str:
    tab = run.table
    feas = _feasible(tab)
    extras = extra_columns(tab)
    by_id = {d.name: d for d in run.designs}
    fat = "fatigue_ratio" in tab
    spec = "in_spec_share" in tab
    head = [("id", False), ("curve error [%]", True), ("stress ratio [-]", True), ("size [mm³]", True)]
    head += [("fatigue ratio [-]", True)] if fat else []
    head += [("in spec [%]", True)] if spec else []
    head += [("mass [g]", True), ("feasible", False)]
    head += [(c, _is_numeric(tab[c])) for c in extras]
    head += [("topology", False)]
    ths = "".join(f'<th scope=col class="{"num" if num else ""}"><button type=button>{_e(h)}</button></th>'
                  for h, num in head)
    body = []
    for i, (_, r) in enumerate(tab.iterrows()):
        did = str(r.get("design_id", f"row{i + 1}"))
        tags = "".join(f'<span class="badge role">{_e(x)}</span>' for x in roles.get(did, []))
        cells = [f'<td class=id data-v="{_e(did)}"><a href="#card-{_e(did)}">{_e(did)}</a>{tags}</td>',
                 _cell(r.get("curve_error_pct"), numeric=True, text=_pct(r.get("curve_error_pct"))),
                 _cell(r.get("stress_ratio"), numeric=True, text=_num(r.get("stress_ratio"), ".3g")),
                 _cell(r.get("size_mm3"), numeric=True, text=_num(r.get("size_mm3"), ".4g"))]
        if fat:
            cells.append(_cell(r.get("fatigue_ratio"), numeric=True, text=_num(r.get("fatigue_ratio"), ".3g")))
        if spec:
            cells.append(_cell(r.get("in_spec_share"), numeric=True, text=_share(r.get("in_spec_share"))))
        cells += [_cell(r.get("mass_g"), numeric=True, text=_num(r.get("mass_g"), ".3g")),
                 f'<td data-v="{int(feas[i])}"><span class="badge {"ok" if feas[i] else "no"}">'
                 f'{"yes" if feas[i] else "no"}</span></td>']
        for c in extras:
            v = r.get(c)
            cells.append(_cell(v, numeric=_is_numeric(tab[c]), text=None if not _is_numeric(tab[c]) else _extra_num(c, v)))
        topo = by_id[did].topology() if did in by_id else r.get("topology", "")
        cells.append(f"<td class=topo>{_e(topo)}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    return ('<div class=wrap><table class="sortable pareto" id="pareto-table"><thead><tr>' + ths
            + "</tr></thead><tbody>" + "\n".join(body) + "</tbody></table></div>")


def _param_unit(name: str) -> tuple[str, str]:
    for suf, unit in (("_mm", "mm"), ("_N", "N"), ("_MPa", "MPa")):
        if name.endswith(suf):
            return name[: -len(suf)], unit
    return name, ""


def _elements_table(d: Design) -> str:
    """One row per element; a chain's links share a branch, whose count and offset are the chain's."""
    rows = []
    chains = d.has_chain
    j = 0
    for b, br in enumerate(d.branches, start=1):
        links = getattr(br, "links", None)
        for k, e in enumerate(links or (br,)):
            j += 1
            off = _offset_text(br.offset_mm) if k == 0 else "(the chain's)"
            dims = []
            for name, v in e.params.items():
                base, unit = _param_unit(name)
                val = _e(v) if isinstance(v, str) else (f"{int(v)}" if isinstance(v, int) else f"{float(v):.4g}")
                dims.append(f"{_e(base.replace('_', ' '))} {val}{(' ' + unit) if unit else ''}")
            branch = ""
            if chains:
                what = f"chain ×{br.count}, link {k + 1} of {len(links)}" if links else "single"
                branch = f"<td>{b} ({what})</td>"
            rows.append(f"<tr><td>e{j}</td>{branch}<td>{_e(e.kind)}</td><td>{_e(e.material)}</td>"
                        f"<td class=num>{e.count}</td><td>{_e(off)}</td><td>{'; '.join(dims)}</td></tr>")
    return ("<table><thead><tr><th>element</th>" + ("<th>branch</th>" if chains else "")
            + "<th>kind</th><th>material</th><th class=num>count</th><th>offset</th><th>dimensions</th></tr></thead>"
            "<tbody>" + "".join(rows) + "</tbody></table>")


def _offset_text(offset_mm: float) -> str:
    if offset_mm > 1e-6:
        return f"gap {offset_mm:.4g} mm"
    if offset_mm < -1e-6:
        return f"preload {-offset_mm:.4g} mm"
    return "none"


def _materials_table(d: Design) -> str:
    rows = []
    used = dict.fromkeys(e.material for e in d.parts)
    for mid in used:
        m = d.materials[mid]
        at = f" at {cycles_text(m.fatigue_cycles)} cycles"
        fat = (f"{m.fatigue_MPa:.4g} MPa{at}" if math.isfinite(m.fatigue_MPa)
               else "Zimmerli's data (coil springs)" if m.zimmerli
               else f"strain {m.fatigue_strain:.3g}{at}" if math.isfinite(m.fatigue_strain) else "–")
        law = "" if m.law == "linear" else f" ({_e(m.law)})"
        rows.append(f"<tr><td>{_e(mid)}</td><td class=mname>{_e(m.name)}{law}</td><td class=num>{_big(m.E_MPa)}</td>"
                    f"<td class=num>{m.yield_MPa:.4g}</td><td class=num>{fat}</td>"
                    f"<td class=num>{m.density_kg_m3:.4g}</td><td>{_e(m.source)}</td></tr>")
    return ("<table><thead><tr><th>material</th><th>name</th><th class=num>E [MPa]</th>"
            "<th class=num>yield / allowable [MPa]</th><th class=num>fatigue</th>"
            "<th class=num>density [kg/m³]</th><th>source</th></tr></thead><tbody>" + "".join(rows)
            + "</tbody></table>")


def _model_notes(d: Design) -> str:
    items = []
    for name in dict.fromkeys(e.kind for e in d.parts):
        try:
            k = get_kind(name)
        except KeyError:
            items.append(f"<li><b>{_e(name)}</b>: not a registered kind in this version</li>")
            continue
        src = "".join(f"<li>{_e(s)}</li>" for s in k.sources)
        stress = f"<br>stress: {_e(k.stress_note)}" if k.stress_note else ""
        items.append(f"<li><b>{_e(k.name)}</b> — {_e(k.title)}<br>valid: {_e(k.validity)}{stress}"
                     f"<br>stroke: {_e(k.stroke_note)}<ul>{src}</ul></li>")
    return "<ul class=notes>" + "".join(items) + "</ul>"


def _card(run: ReportInput, i: int, d: Design, r: Response, png: bytes | None, roles: Sequence[str],
          maker: MakerView | None = None, fatigue: FatigueView | None = None) -> str:
    row = run.table.iloc[i]
    feas = bool(_feasible(run.table)[i])
    tags = "".join(f'<span class="badge role">{_e(x)}</span>' for x in roles)
    badge = f'<span class="badge {"ok" if feas else "no"}">{"feasible" if feas else "infeasible"}</span>'
    box = r.box_mm[0]
    facts = [f"curve error {_pct(row.get('curve_error_pct'))} %", f"stress ratio {_num(row.get('stress_ratio'), '.3g')}",
             f"size {_num(row.get('size_mm3'))} mm³ (packed box {box[0]:.3g} × {box[1]:.3g} × {box[2]:.3g} mm)",
             f"mass {_num(row.get('mass_g'), '.3g')} g"]
    if "fatigue_ratio" in run.table:
        facts.insert(2, f"fatigue ratio {_num(row.get('fatigue_ratio'), '.3g')}")
    if "in_spec_share" in run.table:
        facts.append(f"{_share(row.get('in_spec_share'))} % of parts in spec")
    if r.snap_mm is not None and math.isfinite(r.snap_mm[0]):
        facts.append(f"a chain snaps at x = {r.snap_mm[0]:.3g} mm (the force jumps)")
    parts = [f'<section class=card id="card-{_e(d.name)}"><h3>{_e(d.name)} {badge}{tags}</h3>',
             f"<p>{' · '.join(facts)}</p>", f'<p class=topo>{_e(d.topology())}</p>']
    viol = row.get("violations")
    if not feas and isinstance(viol, str) and viol:
        parts.append(f"<p class=viol><b>Violates:</b> {_e(viol)}</p>")
    extras = [c for c in extra_columns(run.table) if c != "snap_mm"
              and not (isinstance(row.get(c), float) and math.isnan(row.get(c)))]
    if extras:
        parts.append("<h4>Verification and tolerance</h4><dl class=summary>"
                     + "".join(f"<dt>{_e(c)}</dt><dd>{_extra_num(c, row.get(c)) if _is_numeric(run.table[c]) else _e(row.get(c))}"
                               f"</dd>" for c in extras) + "</dl>")
    parts.append("<h4>Elements</h4>" + _elements_table(d))
    parts.append("<h4>Materials</h4>" + _materials_table(d))
    if png is not None:
        parts.append(f"<figure>{_img(png, f'{d.name}: force, stress ratio and arrangement')}<figcaption>"
                     f"Force along the stroke with each element's share stacked (negative shares below zero), "
                     f"the target and its band; the stress ratio against its limit; a sketch of the arrangement "
                     f"(file <code>designs/{_e(d.name)}.png</code>).</figcaption></figure>")
    if fatigue is not None:
        parts.append(fatigue_card(fatigue.report, _img(fatigue.png, f"{d.name}: fatigue operating points")))
    if maker is not None:
        parts.append(maker_section(maker))
    parts.append(f"<details><summary>Model validity and sources</summary>{_model_notes(d)}</details>")
    model, rules = split_margins({k: float(v[0]) for k, v in r.validity.items() if float(v[0]) > 0})
    if model:
        parts.append(f"<p class=viol>Outside a model's valid range (forces not trustworthy beyond it): "
                     f"{_e(margin_text(model))}</p>")
    if rules:
        parts.append(f"<p class=sub>Harder to make (a design rule of the trade is broken; the model still holds): "
                     f"{_e(margin_text(rules))}</p>")
    parts.append(f'<p class=sub>Design file: <code>designs/{_e(d.name)}.toml</code></p></section>')
    return "".join(parts)


def _html(run: ReportInput, figs: Mapping[str, bytes], per_design: Mapping[str, bytes], responses: Mapping[str, Response],
          roles: Mapping[str, list[str]], makers: Mapping[str, MakerView] | None = None,
          fatigue: Mapping[str, FatigueView] | None = None) -> str:
    from springsynth.model.version import __version__

    name = run.meta.get("study", run.study.name)
    caution = f'<div class=caution role=note><b>Caution.</b> {_e(CAUTION)}</div>'
    captions = {
        "pareto.png": ("Trade-offs", "Each dot is a Pareto design, coloured by its share of parts in spec under "
                                     "process tolerances (when the run has it); the knee (best balance after scaling "
                                     "each objective to the set's range) and the extremes are ringed and labelled."),
        "pareto_fatigue.png": ("Fatigue trade-offs", "Each Pareto design's fatigue ratio under the study's duty "
                                                     "(1 / the Goodman factor of safety) against curve error and "
                                                     "size; the shaded band meets limits.fatigue_ratio."),
        "curves.png": ("Representative curves", "The target and its tolerance band against the lowest-error, "
                                                "knee, smallest and lowest-stress designs, and the one with the "
                                                "most parts in spec."),
        "convergence.png": ("Convergence", "Best feasible curve error, share of feasible designs and hypervolume "
                                           "(normalised) per generation."),
    }
    width = {"curves.png": "w880", "convergence.png": "w700", "pareto_fatigue.png": "w880"}
    sections = [f'<figure class="{width.get(f, "")}">{_img(figs[f], captions[f][0])}<figcaption>{_e(captions[f][1])} '
                f"(<code>{f}</code>)</figcaption></figure>" for f in captions if f in figs]
    makers, fatigue = makers or {}, fatigue or {}
    cards = "".join(_card(run, i, d, responses[d.name], per_design.get(d.name), roles.get(d.name, []),
                          makers.get(d.name), fatigue.get(d.name)) for i, d in enumerate(run.designs))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>springsynth report: {_e(name)}</title>
<style>{_CSS}</style></head>
<body><main>
<h1>springsynth report: {_e(name)}</h1>
<p class=sub>Pareto designs from an inverse-design search; rebuilt from the run folder by springsynth {_e(__version__)}.</p>
{caution}
<h2>Run</h2>
{_summary(run)}
<h2>Figures</h2>
{''.join(sections)}
<h2>Pareto designs</h2>
<p class=sub>Click a column header to sort; click an id to jump to its card. Lower is better for error,
stress ratio, size and mass.</p>
{_pareto_table(run, roles)}
<h2>Designs</h2>
{cards}
{caution}
<footer>Generated by springsynth {_e(__version__)} from <code>{_e(run.folder.name)}</code>. Element models,
their validity ranges and sources are listed per design; the materials catalogue gives typical values that grade
and process move. This report holds no external resources.</footer>
</main>
<script>{_SCRIPT}</script>
</body></html>
"""


# ------------------------------------------------------------------------- entry point


@dataclass(frozen=True)
class RenderedReport:
    """A report as bytes and text, ready to write: run-level figures, per-design figures, the page."""

    figures: dict[str, bytes]
    design_figures: dict[str, bytes]
    html: str


def render_report(run: ReportInput, *, workers: int | None = None) -> RenderedReport:
    """Every figure and the self-contained HTML page of a run (nothing is written here).

    Nothing is searched again: the designs are re-evaluated with the same analytic
    models the search used. ``workers``: processes drawing the figures (default
    :func:`springsynth.report.figures.default_workers`, 1 for a handful of designs); the
    result is the same for any number.
    """
    from springsynth.report.figures import MIN_DESIGNS_FOR_WORKERS, default_workers

    if workers is None:
        workers = default_workers() if len(run.designs) >= MIN_DESIGNS_FOR_WORKERS else 1
    figs, per_design, responses, roles, makers, fatigue = _figures(run, workers)
    per_design = {**per_design, **{f"{name}.fatigue": v.png for name, v in fatigue.items()}}
    return RenderedReport(figs, per_design, _html(run, figs, per_design, responses, roles, makers, fatigue))
