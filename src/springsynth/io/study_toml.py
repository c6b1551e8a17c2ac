"""Study files (TOML): what to search for, validated key by key.

Tables and keys (``_SCHEMA`` below; defaults in :data:`springsynth.model.study.DEFAULTS`,
examples in ``studies/*.toml``): ``name``, ``description``, ``[target] file`` (a target CSV,
relative to the study), ``[envelope]`` the box, ``[limits]``, ``[search]`` (element kinds,
materials, budget, options), ``[stock]`` the study's own stock sizes and ``[materials.<id>]`` for
materials defined inline.
"""

from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path
from typing import Any, Mapping

from springsynth.assembly.design import MAX_COUNT
from springsynth.assembly.stock import check_stock
from springsynth.checks.fatigue import check_fatigue_data
from springsynth.elements import ElementKind, get_kind, registry
from springsynth.io.design_toml import DUTY_KEYS, duty_from_mapping, read_toml, resolve_materials
from springsynth.io.target_csv import load_target
from springsynth.model.errors import InputError
from springsynth.model.materials import Material
from springsynth.model.numbers import is_finite_number
from springsynth.model.study import (
    BASE_OBJECTIVES,
    DEFAULTS,
    OBJECTIVES,
    STOCK_MODES,
    Duty,
    Envelope,
    Limits,
    SearchOptions,
    StockSizes,
    Study,
)
from springsynth.model.suggest import unknown_key_message
from springsynth.model.target import Target

__all__ = ["load_study", "study_from_mapping", "apply_overrides"]


#: largest accepted target.scale_force / target.scale_stroke (a larger factor is a typo, not a product family)
MAX_SCALE = 1e6

_SCHEMA: dict[str, set[str] | None] = {
    "name": None, "description": None, "target": {"file", "scale_force", "scale_stroke"},
    "envelope": {"length_mm", "width_mm", "height_mm"},
    "limits": {"stress_ratio", "min_thickness_mm", "max_mass_g", "max_error_pct", "fatigue_ratio", "in_spec_share",
               "band_pct"},
    "search": {"elements", "materials", "max_elements", "max_chain", "max_count", "population", "generations", "seed",
               "polish", "verify_top", "robust", "objectives", "stock", "offset_step_mm"},
    "materials": None, "duty": DUTY_KEYS, "stock": {"wire_mm", "strip_mm"},
}

#: coarsest grid of gaps and preloads accepted (a coarser one is a typo, not a resolution)
MAX_OFFSET_STEP_MM = 10.0


#: most elements (chain links included) a searched design may have
_MAX_SLOTS = 6


def _num(v: Any, where: str, *, lo: float | None = None, integer: bool = False, strict: bool = True,
         hi: float | None = None) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not is_finite_number(v):
        raise InputError(f"must be a {'whole ' if integer else ''}number, got {v!r}", where=where)
    if integer and v != int(v):
        raise InputError(f"must be a whole number, got {v!r}", where=where)
    if lo is not None and (v <= lo if strict else v < lo):
        raise InputError(f"must be {'>' if strict else '>='} {lo:g}, got {v!r}", where=where)
    if hi is not None and v > hi:
        raise InputError(f"must be at most {hi:.15g}, got {v!r}", where=where)
    return v


def study_from_mapping(doc: Mapping[str, Any], *, where: str, base_dir: Path) -> Study:
    """Validate a parsed study; relative target paths resolve against ``base_dir``."""
    _check_keys(doc, where)
    for need in ("target", "envelope"):
        if need not in doc:
            raise InputError(f"missing [{need}] table", where=where)
    tpath = _target_path(doc["target"], where, base_dir)
    name = doc.get("name", Path(where).stem)
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"name must be a non-empty string, got {name!r}", where=where)
    target = _target(doc["target"], tpath, where)
    search = _search(doc.get("search", {}), resolve_materials(doc.get("materials"), where), where)
    duty = _duty(doc, search, target.stroke_mm, where)
    study = Study(name=name, target=target, envelope=_envelope(doc["envelope"], where),
                  limits=_limits(doc.get("limits", {}), where), search=search,
                  raw=copy.deepcopy(dict(doc)), path=None, target_path=tpath, duty=duty,
                  stock=_stock(doc.get("stock", {}), search, where))
    try:
        check_stock(study)
    except InputError as e:
        raise InputError(str(e)[len(e.where) + 2:] if e.where else str(e), where=f"{where} [search]") from None
    return study


def _duty(doc: Mapping[str, Any], search: SearchOptions, stroke_mm: float, where: str) -> Duty | None:
    """The study's [duty] resolved against the target's stroke, with every searched material checked for
    the fatigue data its kinds read; None without one (then no key may ask for fatigue)."""
    if "duty" not in doc:
        if "fatigue_ratio" in doc.get("limits", {}):
            raise InputError("limits.fatigue_ratio needs a [duty] table (cycles, stroke_min_mm, stroke_max_mm)",
                             where=f"{where} [limits]")
        if "fatigue_ratio" in search.objectives:
            raise InputError("the objective fatigue_ratio needs a [duty] table (cycles, stroke_min_mm, "
                             "stroke_max_mm)", where=f"{where} [search].objectives")
        return None
    duty = duty_from_mapping(doc["duty"], where).resolved(stroke_mm, where=f"{where} [duty]",
                                                          end="the target's last point")
    for kind in search.kinds:
        for m in search.materials:
            if m.suits(kind.forms):
                check_fatigue_data(kind, m, where=f"{where} [search].materials")
    return duty


def _check_keys(doc: Mapping[str, Any], where: str) -> None:
    """Every section and key is one the schema knows (with the nearest one suggested)."""
    for k, v in doc.items():
        if k not in _SCHEMA:
            raise InputError(unknown_key_message(k, _SCHEMA), where=where)
        sub = _SCHEMA[k]
        if sub is not None:
            if not isinstance(v, Mapping):
                raise InputError(f"[{k}] must be a table", where=where)
            for kk in v:
                if kk not in sub:
                    raise InputError(unknown_key_message(kk, sub), where=f"{where} [{k}]")


def _target_path(section: Mapping[str, Any], where: str, base_dir: Path) -> Path:
    tfile = section.get("file")
    if not isinstance(tfile, str) or not tfile:
        raise InputError("target.file must be the path of a target CSV", where=f"{where} [target]")
    try:
        tpath = (base_dir / tfile).resolve() if not Path(tfile).is_absolute() else Path(tfile)
        found, folder = tpath.exists(), tpath.is_dir()
    except (OSError, ValueError, RuntimeError) as e:  # name too long, NUL byte, symlink loop
        raise InputError(f"target file {tfile!r} cannot be used as a path ({e})", where=f"{where} [target].file") from None
    if not found:
        raise InputError(f"target file {tfile!r} not found (looked for {tpath})", where=f"{where} [target].file")
    if folder:
        raise InputError(f"target file {tfile!r} is a folder ({tpath}); give the path of a target CSV",
                         where=f"{where} [target].file")
    return tpath


def _target(section: Mapping[str, Any], tpath: Path, where: str) -> Target:
    """The target curve, scaled for product families and sweeps: forces (band included) times
    ``scale_force``, displacements times ``scale_stroke``."""
    target = load_target(tpath)
    scale = {k: _num(section.get(k, 1.0), f"{where} [target].{k}", lo=0.0, hi=MAX_SCALE)
             for k in ("scale_force", "scale_stroke")}
    return target.scaled(force=scale["scale_force"], stroke=scale["scale_stroke"])


def _envelope(env: Mapping[str, Any], where: str) -> Envelope:
    for k in ("length_mm", "width_mm", "height_mm"):
        if k not in env:
            raise InputError(f"missing {k}", where=f"{where} [envelope]")
        _num(env[k], f"{where} [envelope].{k}", lo=0.0)
    return Envelope(float(env["length_mm"]), float(env["width_mm"]), float(env["height_mm"]))


def _limits(given: Mapping[str, Any], where: str) -> Limits:
    lim = {**DEFAULTS["limits"], **given}
    at = f"{where} [limits]."
    return Limits(
        stress_ratio=_num(lim["stress_ratio"], at + "stress_ratio", lo=0.0),
        min_thickness_mm=_num(lim["min_thickness_mm"], at + "min_thickness_mm", lo=0.0, strict=False),
        max_mass_g=_num(given["max_mass_g"], at + "max_mass_g", lo=0.0) if "max_mass_g" in given else math.inf,
        max_error_pct=_num(lim["max_error_pct"], at + "max_error_pct", lo=0.0),
        fatigue_ratio=_num(lim["fatigue_ratio"], at + "fatigue_ratio", lo=0.0),
        in_spec_share=_share(lim["in_spec_share"], at + "in_spec_share"),
        band_pct=float(_num(lim["band_pct"], at + "band_pct", lo=0.0, hi=100.0)),
    )


def _share(v: Any, where: str) -> float:
    """A share of parts from 0 to 1 (0: no constraint); a percentage is refused with the fix."""
    v = _num(v, where, lo=0.0, strict=False)
    if v > 1:
        raise InputError(f"must be a share from 0 to 1 (0.9 = 90 % of parts), got {v!r}", where=where)
    return float(v)


def _kinds(s: Mapping[str, Any], where: str) -> tuple[ElementKind, ...]:
    kinds_in = s.get("elements", list(registry()))
    if not isinstance(kinds_in, list) or not kinds_in or not all(isinstance(k, str) for k in kinds_in):
        raise InputError(f"elements must be a non-empty list of kind names, got {kinds_in!r}", where=f"{where} [search]")
    for k in kinds_in:
        if k not in registry():
            raise InputError(unknown_key_message(k, registry(), what="kind") + " (see `springsynth elements`)",
                             where=f"{where} [search].elements")
    return tuple(get_kind(k) for k in kinds_in)


def _materials(s: Mapping[str, Any], mats: Mapping[str, Material], kinds, where: str) -> tuple[Material, ...]:
    mats_in = s.get("materials", sorted(mats))
    if not isinstance(mats_in, list) or not mats_in or not all(isinstance(m, str) for m in mats_in):
        raise InputError(f"materials must be a non-empty list of material ids, got {mats_in!r}", where=f"{where} [search]")
    for m in mats_in:
        if m not in mats:
            raise InputError(unknown_key_message(m, mats, what="material") + " (see `springsynth materials`)",
                             where=f"{where} [search].materials")
    chosen = tuple(mats[m] for m in dict.fromkeys(mats_in))
    for kd in kinds:
        if not any(m.suits(kd.forms) for m in chosen):
            raise InputError(f"no listed material suits {kd.name} (needs {' or '.join(kd.forms)} material); add one "
                             f"to [search].materials or drop the kind", where=f"{where} [search]")
    return chosen


def _search(given: Mapping[str, Any], mats: Mapping[str, Material], where: str) -> SearchOptions:
    s = {**DEFAULTS["search"], **given}
    kinds = _kinds(s, where)
    at = f"{where} [search]."

    def whole(key: str, lo: int, hi: float) -> int:
        return int(_num(s[key], at + key, lo=lo, integer=True, strict=False, hi=hi))

    opts = SearchOptions(
        kinds=kinds, materials=_materials(s, mats, kinds, where),
        max_elements=whole("max_elements", 1, math.inf), max_chain=whole("max_chain", 1, _MAX_SLOTS),
        max_count=whole("max_count", 1, MAX_COUNT),
        population=whole("population", 4, 100_000), generations=whole("generations", 1, 100_000),
        seed=whole("seed", 0, 2**32 - 1), polish=_bool(s["polish"], at + "polish"),
        verify_top=whole("verify_top", 0, 100_000), robust=_bool(s["robust"], at + "robust"),
        objectives=_objectives(s["objectives"], at + "objectives"), stock=_stock_mode(s["stock"], at + "stock"),
        offset_step_mm=_num(s["offset_step_mm"], at + "offset_step_mm", lo=0.0, hi=MAX_OFFSET_STEP_MM),
    )
    if opts.max_elements > _MAX_SLOTS:
        raise InputError(f"max_elements must be at most {_MAX_SLOTS}, got {opts.max_elements}", where=f"{where} [search]")
    if "max_chain" in given and opts.max_chain > opts.max_elements:
        raise InputError(f"max_chain ({opts.max_chain}) exceeds max_elements ({opts.max_elements}): every link counts "
                         f"as an element; raise max_elements or lower max_chain", where=f"{where} [search]")
    return opts


def _objectives(v: Any, where: str) -> tuple[str, ...]:
    """The objectives list: the base three, then optional ones, each once (any order in the file)."""
    if isinstance(v, tuple):
        v = list(v)
    if not isinstance(v, list) or not all(isinstance(o, str) for o in v):
        raise InputError(f"must be a list of objective names, got {v!r}", where=where)
    for o in v:
        if o not in OBJECTIVES:
            raise InputError(unknown_key_message(o, OBJECTIVES, what="objective"), where=where)
    if len(set(v)) != len(v):
        raise InputError(f"names an objective twice: {v!r}", where=where)
    missing = [o for o in BASE_OBJECTIVES if o not in v]
    if missing:
        raise InputError(f"must include {', '.join(BASE_OBJECTIVES)} (missing {', '.join(missing)}); "
                         f"it may add {', '.join(o for o in OBJECTIVES if o not in BASE_OBJECTIVES)}", where=where)
    return BASE_OBJECTIVES + tuple(o for o in OBJECTIVES if o in v and o not in BASE_OBJECTIVES)


def _stock_mode(v: Any, where: str) -> str:
    if v not in STOCK_MODES:
        raise InputError(f'must be "standard" (stock sizes, practical resolution) or "continuous" (every value '
                         f'free), got {v!r}', where=where)
    return v


def _stock(given: Mapping[str, Any], search: SearchOptions, where: str) -> StockSizes:
    """The study's own stock sizes: each list positive, without repeats, and inside the range of some
    searched parameter that takes sizes of its form (sorted here)."""
    out = {}
    for key in ("wire_mm", "strip_mm"):
        if key not in given:
            continue
        at, form = f"{where} [stock].{key}", key[:-3]
        v = given[key]
        if isinstance(v, tuple):
            v = list(v)
        if not isinstance(v, list) or not v:
            raise InputError(f"must be a non-empty list of sizes in mm, got {v!r}", where=at)
        sizes = sorted(float(_num(x, at, lo=0.0)) for x in v)
        twice = sorted({x for x in sizes if sizes.count(x) > 1})
        if twice:
            raise InputError(f"lists {', '.join(f'{x:g}' for x in twice)} mm twice; give each size once", where=at)
        params = [(k.name, q) for k in search.kinds for q in k.params if q.stock == form]
        for x in sizes:
            if params and not any(q.lo <= x <= q.hi for _, q in params):
                ranges = ", ".join(f"{n}.{q.name} {q.lo:g} to {q.hi:g} mm" for n, q in params)
                raise InputError(f"{x:g} mm lies outside every searched {form} size ({ranges})", where=at)
        out[key] = tuple(sizes)
    return StockSizes(**out)


def _bool(v: Any, where: str) -> bool:
    if not isinstance(v, bool):
        raise InputError(f"must be true or false, got {v!r}", where=where)
    return v


def load_study(path: str | Path, overrides: list[str] | None = None) -> Study:
    """Read and validate a study file, applying ``section.key=value`` overrides first."""
    path = Path(path)
    doc = read_toml(path)
    if overrides:
        doc = apply_overrides(doc, overrides)
    st = study_from_mapping(doc, where=str(path), base_dir=path.resolve().parent)
    return Study(**{**st.__dict__, "path": path})


def apply_overrides(doc: Mapping[str, Any], overrides: list[str]) -> dict[str, Any]:
    """Return a copy of ``doc`` with ``section.key=value`` settings applied (values parsed as TOML)."""
    out = copy.deepcopy(dict(doc))
    for ov in overrides:
        key, sep, text = ov.partition("=")
        key = key.strip()
        if not sep or not key:
            raise InputError(f"--set needs section.key=value, got {ov!r}", where="--set")
        try:
            value = tomllib.loads(f"v = {text.strip()}")["v"]
        except tomllib.TOMLDecodeError:
            value = text.strip()
        parts = key.split(".")
        if parts[0] not in _SCHEMA:
            raise InputError(unknown_key_message(parts[0], _SCHEMA, what="section"), where=f"--set {ov}")
        sub = _SCHEMA[parts[0]]
        if sub is not None and (len(parts) != 2 or parts[1] not in sub):
            raise InputError(unknown_key_message(parts[-1], sub, what=f"key of [{parts[0]}]"), where=f"--set {ov}")
        node = out
        for p in parts[:-1]:
            node = node.setdefault(p, {})
        node[parts[-1]] = value
    return out
