"""Tables for a terminal (rich renderables): the catalogues, the Pareto set, the verification.

Every table stays readable at 80 columns with ids whole (no ids cut to ``music…``): ids and
numbers never wrap, long text wraps at words, notes are indented paragraphs. The command line
prints what these functions return; nothing here writes.
"""

from __future__ import annotations

from typing import Iterable

from rich import box
from rich.markup import escape
from rich.padding import Padding
from rich.table import Table
from rich.text import Text

from springsynth.elements import ElementKind
from springsynth.model.materials import Material
from springsynth.model.numbers import pct_text, size_text, table_number

__all__ = ["kind_sections", "materials_table", "pareto_table", "verification_table", "note"]

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
        notes = [f"made from: {' or '.join(k.forms)} material; stroke: {k.stroke_note}", f"valid: {k.validity}"]
        if k.design_rules:
            notes.append(f"design rules (a notice when broken, the model still holds): {', '.join(sorted(k.design_rules))}")
        notes += [f"stress: {k.stress_note}"] * bool(k.stress_note) + [f"source: {s}" for s in k.sources]
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
                  table_number(m.yield_MPa), table_number(m.fatigue_MPa), LAW_CODES[m.law],
                  " ".join(FORM_CODES[f] for f in m.forms))
    kinds = list(kinds)
    legend = ["forms (the kinds made from them): " + "; ".join(
        f"{code} {form} ({', '.join(k.name for k in kinds if form in k.forms)})" for form, code in FORM_CODES.items()),
        "law (elastomers; blank: linear elastic): neo-H neo-Hookean, M-R Mooney-Rivlin, Ogden",
        "Typical values; grade and process move them. `--format csv` gives every field and the sources."]
    return [t] + [note(n) for n in legend]


def pareto_table(frame, title: str, rows: int = 12) -> Table:
    """The first ``rows`` designs of a Pareto table (``Synthesis.to_frame()``): id, error, stress
    ratio, size, mass and the topology, which alone wraps."""
    t = Table(title=escape(title), title_justify="left")
    for c, j in (("id", "left"), ("error %", "right"), ("stress ratio", "right"), ("size mm³", "right"),
                 ("mass g", "right"), ("topology", "left")):
        t.add_column(c, justify=j, overflow="fold", no_wrap=c != "topology")
    for _, r in frame.head(rows).iterrows():
        t.add_row(escape(str(r.design_id)), pct_text(r.curve_error_pct, suffix=""), f"{r.stress_ratio:.3g}",
                  size_text(r.size_mm3), f"{r.mass_g:.3g}", escape(r.topology))
    return t


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
