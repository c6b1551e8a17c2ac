"""Tables for a terminal (rich renderables): the catalogues, the Pareto set, the verification.

Every table stays readable at 80 columns with ids whole (no ids cut to ``music…``): ids and
numbers never wrap, long text wraps at words, notes are indented paragraphs. The command line
prints what these functions return; nothing here writes.
"""

from __future__ import annotations

from typing import Iterable

from rich import box
from rich.console import Group
from rich.markup import escape
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from springsynth.assembly.design import Design
from springsynth.checks.fatigue import CRITERIA, fatigue_design
from springsynth.elements import ElementKind
from springsynth.model.materials import Material
from springsynth.model.numbers import cycles_text, pct_text, size_text, table_number

__all__ = ["kind_sections", "materials_table", "pareto_table", "verification_table", "note", "fatigue_renderables", "arrangement_words", "evaluation_frame"]

#: short names of the material forms and laws in the materials table
FORM_CODES = {"wire": "W", "strip": "S", "bulk": "B", "elastomer": "E"}
LAW_CODES = {"linear": "", "neo_hookean": "neo-H", "mooney_rivlin": "M-R", "ogden": "Ogden"}


def note(text: str, *, indent: int = 2) -> Padding:
    """A paragraph indented by ``indent`` columns that wraps at words (never cut mid-word by the terminal)."""
    return Padding(escape(text), (0, 0, 0, indent))


def _plain_table(**kw) -> Table:
    return Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False, **kw)


def kind_sections(kinds: Iterable[ElementKind]) -> list:
    """For each kind: its name and title, a table of its parameters, then its notes (forms, stroke,
    validity, design rules, stress, sources) as wrapped paragraphs."""
    out: list = []
    for k in kinds:
        out.append(Text.assemble((k.name, "bold"), f": {k.title}"))
        t = _plain_table()
        for c in ("parameter", "unit", "range", "scale", "meaning"):
            t.add_column(c, no_wrap=c != "meaning")
        for q in k.params:
            t.add_row(q.name, q.unit, " | ".join(q.choices) if q.choices else f"{q.lo:g} .. {q.hi:g}",
                      "log" if q.log else "lin", q.doc)
        out.append(t)
        notes = [f"made from: {' or '.join(k.forms)} material; stroke: {k.stroke_note}", f"valid: {k.validity}",
                 "made to (stock = \"standard\"): " + "; ".join(f"{q.name} {q.made_to}" for q in k.params)]
        if k.design_rules:
            notes.append(f"design rules (a notice when broken, the model still holds): {', '.join(sorted(k.design_rules))}")
        notes += [f"stress: {k.stress_note}"] * bool(k.stress_note) + [f"fatigue under a [duty]: {CRITERIA[k.fatigue]}"]
        notes += [f"source: {s}" for s in k.sources]
        out += [note(n) for n in notes] + [Text("")]
    return out


def materials_table(materials: Iterable[Material], kinds: Iterable[ElementKind]) -> list:
    """The catalogue's properties (MPa, kg/m³), law and forms (one letter each), then a legend naming
    the kinds each form makes."""
    t = _plain_table(title="materials: moduli and strengths in MPa, density in kg/m³", title_justify="left",
                     collapse_padding=True)
    for c in ("id", "E", "G", "nu", "density", "yield", "fatigue", "law", "forms"):
        t.add_column(c, justify="left" if c in ("id", "law", "forms") else "right", no_wrap=True)
    for m in materials:
        t.add_row(m.id, table_number(m.E_MPa), table_number(m.G_MPa), f"{m.nu:.3g}", table_number(m.density_kg_m3),
                  table_number(m.yield_MPa), table_number(m.fatigue_MPa) or ("Zimmerli" if m.zimmerli else ""),
                  LAW_CODES[m.law],
                  " ".join(FORM_CODES[f] for f in m.forms))
    kinds = list(kinds)
    legend = ["forms (the kinds made from them): " + "; ".join(
        f"{code} {form} ({', '.join(k.name for k in kinds if form in k.forms)})" for form, code in FORM_CODES.items()),
        "law (elastomers; blank: linear elastic): neo-H neo-Hookean, M-R Mooney-Rivlin, Ogden",
        "fatigue: the material's own figure (at its fatigue_cycles); Zimmerli: a steel spring wire whose coil springs "
        "use Zimmerli's torsional data",
        "Typical values; grade and process move them. `--format csv` gives every field and the sources."]
    return [t] + [note(n) for n in legend]


def pareto_table(frame, title: str, rows: int = 12) -> Table:
    """The first ``rows`` designs of a Pareto table (``Synthesis.to_frame()``): id, error, stress
    ratio, size, share of parts in spec, mass and the topology, which alone wraps."""
    # headers on two lines and no vertical rules: the topology keeps room to wrap at words in 80 columns
    t = Table(title=escape(title), title_justify="left", box=box.SIMPLE_HEAD)
    fat = "fatigue_ratio" in frame        # only under a duty
    spec = "in_spec_share" in frame
    for c in (("id", "error\n%", "stress\nratio", "size\nmm³") + ("fatigue\nratio",) * fat
              + ("in spec\n%",) * spec + ("mass\ng", "topology")):
        t.add_column(c, justify="left" if c in ("id", "topology") else "right", overflow="fold",
                     no_wrap=c != "topology")
    for i in range(min(rows, len(frame))):
        r = frame.iloc[i]          # a row of a DataFrame or of a model.table.Table, read by column name
        t.add_row(escape(str(r["design_id"])), pct_text(r["curve_error_pct"], suffix=""), f"{r['stress_ratio']:.3g}",
                  size_text(r["size_mm3"]), *([f"{r['fatigue_ratio']:.3g}"] if fat else []),
                  *([pct_text(100 * r["in_spec_share"], decimals=1, suffix="")] if spec else []), f"{r['mass_g']:.3g}",
                  escape(str(r["topology"])))
    return t


def fatigue_renderables(design: Design, stroke_end_mm: float, where: str) -> Group:
    """A design's fatigue under its own [duty] (``stroke_max_mm`` defaults to ``stroke_end_mm``, the end
    of the evaluated stroke): a row per element place, then the verdict.

    Raises
    ------
    InputError
        When the duty reaches beyond ``stroke_end_mm`` (checked before anything is printed).
    """
    duty = design.duty.resolved(stroke_end_mm, where=where, end="the evaluated stroke (--to or --at)")
    rep = fatigue_design(design, duty)
    t = _plain_table(title=escape(f"fatigue: {cycles_text(duty.cycles)} cycles between strokes {duty.stroke_min_mm:g}"
                                  f" and {duty.stroke_max_mm:g} mm" + (", shot-peened" * duty.shot_peened)),
                     title_justify="left")
    for c in ("element", "mean", "alternating", "allowable", "ratio", "life"):
        t.add_column(c, justify="left" if c == "element" else "right", no_wrap=True)
    for p in rep.places:
        f = (lambda v: f"{v:.4g} MPa") if p.unit == "MPa" else (lambda v: f"{100 * v:.3g} %")
        t.add_row(f"e{p.element}" + (f" {p.place}" if p.place else ""), f(p.mean), f(p.alternating), f(p.allowable),
                  f"{p.ratio:.3g}", cycles_text(p.life_cycles))
    kinds: dict[str, list[str]] = {}
    for p in rep.places:
        kinds.setdefault(f"e{p.element} {p.kind}", []).append(f"{p.place.replace('_', ' ') + ': ' if p.place else ''}"
                                                              f"{p.basis} ({p.mode.replace('_', ' ')})")
    crit = "criteria: " + "; ".join(f"{k} {', '.join(dict.fromkeys(v))}" for k, v in kinds.items())
    verdict = "survives" if rep.ratio <= 1.0 else "does NOT survive"
    zim = any(p.basis.startswith("Zimmerli") for p in rep.places)
    return Group(t, note(crit + "; allowable: the alternating strength at zero mean for the cycles asked"
                         + ("; life –: Zimmerli's data are for unlimited life" if zim else "")),
                 note(f"fatigue ratio {rep.ratio:.3g} (1 / the Goodman factor of safety): {verdict} the duty"))


def verification_table(reports, threshold_pct: float) -> list:
    """Deviations per element and assembly ("not compared" where nothing was), then each kind's method."""
    tab = Table(title=f"independent verification (deviation, % of the largest value; flagged above "
                      f"{threshold_pct:g} %)", title_justify="left")
    for c, j in (("design", "left"), ("element", "left"), ("kind", "left"), ("force dev %", "right"),
                 ("stress dev %", "right")):
        tab.add_column(c, justify=j, no_wrap=c != "kind", overflow="fold")
    fmt = lambda v: pct_text(v, suffix="", missing="not compared")  # noqa: E731
    methods: dict[str, str] = {}
    for rep in reports:
        for _, r in rep.to_frame().iterrows():
            mark = "[bold yellow]" if r.flagged else ""
            tab.add_row(escape(str(r.design_id)), str(r.element), r.kind or "", mark + fmt(r.force_dev_pct),
                        mark + fmt(r.stress_dev_pct))
            if r.kind and r.method:
                methods.setdefault(r.kind, r.method)
    return [tab] + [note(f"{k}: {m}") for k, m in methods.items()]


def arrangement_words(d) -> str:
    """How a design's elements are arranged, in words (for figure titles)."""
    n, chains = len(d.parts), sum(1 for b in d.branches if hasattr(b, "links"))
    if not chains:
        return f"{n} element(s) in parallel"
    return f"{n} elements in {len(d.branches)} parallel branch(es), {chains} a chain of links in series" if \
        chains == 1 else f"{n} elements in {len(d.branches)} parallel branches, {chains} of them chains in series"


def evaluation_frame(d, r):
    """Columns: stroke, force, stress ratio; each single element's force (``e<j>_<kind>_N``); each
    chain's force (``chain<c>_N``) and its links' own strokes (``e<j>_<kind>_stroke_mm``)."""
    import pandas as pd

    from springsynth.assembly.evaluate import element_extra_outputs

    cols = {"displacement_mm": r.x_mm, "force_N": r.force_N[0], "stress_ratio": r.stress_ratio_curve[0]}
    j = chain_no = 0
    for b in d.branches:
        links = getattr(b, "links", None)
        if links is None:
            cols[f"e{j + 1}_{b.kind}_N"] = r.element_force_N[0, j]
            j += 1
            continue
        chain_no += 1
        cols[f"chain{chain_no}_N"] = r.element_force_N[0, j]
        for e in links:
            cols[f"e{j + 1}_{e.kind}_stroke_mm"] = r.element_stroke_mm[0, j]
            j += 1
    cols.update(element_extra_outputs(d, r.x_mm))     # e.g. a stage's parasitic travel
    return pd.DataFrame(cols)
