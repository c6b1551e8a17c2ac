"""Reading and writing design files (TOML: a ``name`` and one ``[[element]]`` table per element
with ``kind``, ``material``, ``count``, ``offset_mm`` and the kind's parameters; examples in
``studies/*.design.toml``)."""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from typing import Any, Mapping

from springsynth.assembly.design import MAX_COUNT, Chain, Design, Element
from springsynth.checks.fatigue import check_fatigue_data
from springsynth.elements import get_kind, registry
from springsynth.model.errors import InputError
from springsynth.model.materials import Material, catalogue, material_from_mapping
from springsynth.model.numbers import is_finite_number
from springsynth.model.study import DEFAULTS, MAX_CYCLES, Duty
from springsynth.model.suggest import unknown_key_message

__all__ = ["load_design", "design_from_mapping", "design_to_toml", "resolve_materials", "read_toml", "duty_from_mapping",
           "DUTY_KEYS", "element_from_mapping", "chain_from_mapping"]

_TOP_KEYS = {"name", "note", "element", "chain", "materials", "duty"}
#: keys of a [duty] table (defaults in ``springsynth.model.study.DEFAULTS["duty"]``)
DUTY_KEYS = {"cycles", "stroke_min_mm", "stroke_max_mm", "shot_peened"}
_ELEMENT_KEYS = {"kind", "material", "count", "offset_mm"}
_CHAIN_KEYS = {"count", "offset_mm", "element"}


def read_toml(path: str | Path) -> dict[str, Any]:
    """Parse a TOML file; any read or syntax fault becomes an :class:`InputError` naming the file."""
    path = Path(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError("file not found; check the path", where=str(path)) from None
    except IsADirectoryError:
        raise InputError("is a folder, not a TOML file", where=str(path)) from None
    except OSError as e:
        raise InputError(f"cannot be read ({e.strerror})", where=str(path)) from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        raise InputError(f"is not UTF-8 text (byte {e.start}); save it as UTF-8", where=str(path)) from None
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise InputError(f"TOML syntax error: {e}", where=str(path)) from None


def resolve_materials(inline: Any, where: str) -> dict[str, Material]:
    """Catalogue plus the inline ``[materials.<id>]`` tables (inline ids may not shadow the catalogue)."""
    mats = dict(catalogue())
    if inline is None:
        return mats
    if not isinstance(inline, Mapping):
        raise InputError("[materials] must be a table of [materials.<id>] tables", where=where)
    for mid, d in inline.items():
        if mid in mats:
            raise InputError(f"[materials.{mid}] redefines a catalogue material; choose another id", where=where)
        mats[mid] = material_from_mapping(mid, d, where=where)
    return mats


def duty_from_mapping(d: Any, where: str) -> Duty:
    """Validate a ``[duty]`` table of a study or design (``where`` names the file); missing keys take
    their defaults, ``stroke_max_mm`` stays None when absent (the caller resolves it)."""
    at = f"{where} [duty]"
    if not isinstance(d, Mapping):
        raise InputError("[duty] must be a table", where=where)
    for k in d:
        if k not in DUTY_KEYS:
            raise InputError(unknown_key_message(k, DUTY_KEYS), where=at)
    v = {**DEFAULTS["duty"], **d}

    def number(key: str, lo: float, hi: float = math.inf) -> float:
        x = v[key]
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not is_finite_number(x) or not lo <= x <= hi:
            rng = f"from {lo:g} to {hi:.0e}".replace("e+", "e") if math.isfinite(hi) else f">= {lo:g}"
            raise InputError(f"must be a number {rng}, got {x!r}", where=f"{at}.{key}")
        return float(x)

    cycles, lo = number("cycles", 1.0, MAX_CYCLES), number("stroke_min_mm", 0.0)
    hi = None if v["stroke_max_mm"] is None else number("stroke_max_mm", 0.0)
    if hi is not None and hi <= lo:
        raise InputError(f"must lie above stroke_min_mm = {lo:g}, got {hi:g}", where=f"{at}.stroke_max_mm")
    if not isinstance(v["shot_peened"], bool):
        raise InputError(f"must be true or false, got {v['shot_peened']!r}", where=f"{at}.shot_peened")
    return Duty(cycles=cycles, stroke_min_mm=lo, stroke_max_mm=hi, shot_peened=v["shot_peened"])


def _material_message(mid: Any, mats: Mapping[str, Material]) -> str:
    return unknown_key_message(str(mid), mats, what="material") + " (see `springsynth materials`, or define it under [materials.<id>])"


def element_from_mapping(d: Any, mats: Mapping[str, Material], where: str) -> Element:
    """Validate one ``[[element]]`` table; ``where`` names file and element for messages."""
    if not isinstance(d, Mapping):
        raise InputError("must be a table", where=where)
    kname = d.get("kind")
    if kname is None:
        raise InputError(f"missing 'kind'; one of {', '.join(registry())}", where=where)
    if not isinstance(kname, str) or kname not in registry():
        raise InputError(unknown_key_message(str(kname), registry(), what="kind") + " (see `springsynth elements`)", where=where)
    kind = get_kind(kname)
    allowed = _ELEMENT_KEYS | set(kind.param_names)
    for k in d:
        if k not in allowed:
            raise InputError(unknown_key_message(k, allowed, what=f"field for {kname}"), where=where)
    mid = d.get("material")
    if mid is None:
        raise InputError("missing 'material'", where=where)
    if not isinstance(mid, str) or mid not in mats:
        raise InputError(_material_message(mid, mats), where=f"{where}.material")
    mat = mats[mid]
    if not mat.suits(kind.forms):
        raise InputError(
            f"material {mid!r} ({' '.join(mat.forms)}) does not suit {kname}, which is made from "
            f"{' or '.join(kind.forms)} material", where=f"{where}.material")
    count, offset = _count_offset(d, where)
    params: dict[str, float | str] = {}
    for q in kind.params:
        w = f"{where}.{q.name}"
        if q.name not in d:
            raise InputError(f"missing {q.name} ({q.doc or q.unit}); {kname} needs {', '.join(kind.param_names)}", where=where)
        v = d[q.name]
        if q.choices:
            if v not in q.choices:
                raise InputError(f"must be one of {', '.join(map(repr, q.choices))}, got {v!r}", where=w)
            params[q.name] = v
            continue
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not is_finite_number(v):
            raise InputError(f"must be a finite number ({q.unit}), got {v!r}", where=w)
        if q.lo > 0 and v <= 0:
            raise InputError(f"must be > 0 {q.unit}, got {v!r}", where=w)
        if v < 0:
            raise InputError(f"must be >= 0 {q.unit}, got {v!r}", where=w)
        if q.integer and v != int(v):
            raise InputError(f"must be a whole number, got {v!r}", where=w)
        params[q.name] = float(v)
    return Element(kname, mid, int(count), float(offset), params)



def _count_offset(d: Mapping[str, Any], where: str) -> tuple[int, float]:
    """The ``count`` (copies in parallel) and ``offset_mm`` (gap > 0, preload < 0) of an element or chain."""
    count = d.get("count", 1)
    if isinstance(count, bool) or not isinstance(count, int) or not 1 <= count <= MAX_COUNT:
        raise InputError(f"count must be a whole number >= 1 (at most {MAX_COUNT}), got {count!r}", where=f"{where}.count")
    offset = d.get("offset_mm", 0.0)
    if isinstance(offset, bool) or not isinstance(offset, (int, float)) or not is_finite_number(offset):
        raise InputError(f"offset_mm must be a finite number of mm, got {offset!r}", where=f"{where}.offset_mm")
    return count, offset


def chain_from_mapping(d: Any, mats: Mapping[str, Material], where: str) -> Chain:
    """Validate one ``[[chain]]`` table and its ``[[chain.element]]`` links; ``where`` names file and chain."""
    if not isinstance(d, Mapping):
        raise InputError("must be a table, written [[chain]] with [[chain.element]] links", where=where)
    for k in d:
        if k not in _CHAIN_KEYS:
            raise InputError(unknown_key_message(k, _CHAIN_KEYS, what="field of a chain"), where=where)
    count, offset = _count_offset(d, where)
    links = d.get("element")
    if not links:
        raise InputError("has no [[chain.element]] links; a chain needs at least 2, each under [[chain.element]]",
                         where=where)
    if not isinstance(links, list):
        raise InputError("'element' must be an array of tables, written [[chain.element]]", where=where)
    if len(links) < 2:
        raise InputError("has 1 link; a chain needs at least 2 (write a single element as [[element]])", where=where)
    out = []
    for k, e in enumerate(links, start=1):
        w = f"{where} link {k}"
        if isinstance(e, Mapping) and "offset_mm" in e:
            raise InputError(f"chain links have no offset of their own, got {e['offset_mm']!r}; give the gap or "
                             "preload as the chain's offset_mm", where=f"{w}.offset_mm")
        out.append(element_from_mapping(e, mats, w))
    falling = [k for k, e in enumerate(out, start=1) if not get_kind(e.kind).monotonic_force]
    if len(falling) > 1:
        raise InputError(f"links {' and '.join(map(str, falling))} ({', '.join(out[k - 1].kind for k in falling)}) "
                         "both fall with stroke; a chain holds at most one such link, put the others in "
                         "branches of their own", where=where)
    return Chain(tuple(out), int(count), float(offset))


def design_from_mapping(doc: Mapping[str, Any], *, where: str, name: str | None = None) -> Design:
    """Build a validated :class:`Design` from a parsed design table."""
    for k in doc:
        if k not in _TOP_KEYS:
            raise InputError(unknown_key_message(k, _TOP_KEYS), where=where)
    mats = resolve_materials(doc.get("materials"), where)
    elements, chains = doc.get("element", []), doc.get("chain", [])
    if not elements and not chains:
        raise InputError("no [[element]] or [[chain]] tables; a design needs at least one", where=where)
    if not isinstance(elements, list):
        raise InputError("'element' must be an array of tables, written [[element]]", where=where)
    if not isinstance(chains, list):
        raise InputError("'chain' must be an array of tables, written [[chain]] with [[chain.element]] links",
                         where=where)
    branches = [element_from_mapping(e, mats, f"{where} element {i + 1}") for i, e in enumerate(elements)]
    branches += [chain_from_mapping(c, mats, f"{where} chain {i + 1}") for i, c in enumerate(chains)]
    parts = [e for b in branches for e in (b.links if isinstance(b, Chain) else (b,))]
    used = {e.material: mats[e.material] for e in parts}
    duty = duty_from_mapping(doc["duty"], where) if "duty" in doc else None
    if duty is not None:
        for i, e in enumerate(parts):
            check_fatigue_data(get_kind(e.kind), used[e.material], where=f"{where} element {i + 1}")
    return Design(tuple(branches), used, name=str(doc.get("name", name or Path(where).stem)), duty=duty)


def load_design(path: str | Path) -> Design:
    """Read and validate a design file."""
    path = Path(path)
    return design_from_mapping(read_toml(path), where=str(path), name=path.stem)


# --------------------------------------------------------------------------- writing

def toml_value(v: Any) -> str:
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(float(v))
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    raise TypeError(type(v))


def material_to_table(m: Material) -> dict[str, Any]:
    """Inline-material table that :func:`material_from_mapping` reads back to an equal law."""
    d: dict[str, Any] = {"name": m.name, "density_kg_m3": m.density_kg_m3}
    if m.hyperelastic:
        d.update(law="ogden", mu_MPa=list(m.ogden_mu_MPa), alpha=list(m.ogden_alpha),
                 strain_limit=m.strain_limit, nu=m.nu, yield_MPa=m.yield_MPa, uts_MPa=m.uts_MPa)
    else:
        d.update(E_MPa=m.E_MPa, G_MPa=m.G_MPa, nu=m.nu, yield_MPa=m.yield_MPa, uts_MPa=m.uts_MPa)
    for k in ("fatigue_MPa", "fatigue_strain", "sut_A_MPa", "sut_m", "torsion_share"):
        v = getattr(m, k)
        if not math.isnan(v):
            d[k] = v
    if m.fatigue_cycles != 1e7:
        d["fatigue_cycles"] = m.fatigue_cycles
    if m.zimmerli:
        d["zimmerli"] = True
    d["forms"] = list(m.forms)
    d["source"] = m.source
    return d


def design_to_toml(design: Design, *, header: str = "") -> str:
    """Design file text; non-catalogue materials are written inline so the file stands alone."""
    lines = [f"# {h}" for h in header.splitlines()] if header else []
    lines.append(f"name = {toml_value(design.name)}")
    cat = catalogue()
    for mid, m in design.materials.items():
        if cat.get(mid) == m:
            continue
        lines += ["", f"[materials.{mid}]"] + [f"{k} = {toml_value(v)}" for k, v in material_to_table(m).items()]
    if design.duty is not None:
        du = design.duty
        lines += ["", "[duty]", f"cycles = {float(du.cycles):.6g}",
                  f"stroke_min_mm = {toml_value(float(du.stroke_min_mm))}"]
        if du.stroke_max_mm is not None:
            lines.append(f"stroke_max_mm = {toml_value(float(du.stroke_max_mm))}")
        lines.append(f"shot_peened = {toml_value(du.shot_peened)}")
    for b in design.branches:
        if isinstance(b, Chain):
            lines += ["", "[[chain]]", f"count = {b.count}", f"offset_mm = {toml_value(float(b.offset_mm))}"]
            for e in b.links:
                lines += ["", "[[chain.element]]", f"kind = {toml_value(e.kind)}",
                          f"material = {toml_value(e.material)}", f"count = {e.count}"]
                lines += [f"{k} = {toml_value(v)}" for k, v in e.params.items()]
            continue
        lines += ["", "[[element]]", f"kind = {toml_value(b.kind)}", f"material = {toml_value(b.material)}",
                  f"count = {b.count}", f"offset_mm = {toml_value(float(b.offset_mm))}"]
        lines += [f"{k} = {toml_value(v)}" for k, v in b.params.items()]
    return "\n".join(lines) + "\n"
