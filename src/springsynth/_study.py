"""Study files (DESIGN.md "Study TOML"): what to search for, validated key by key."""

from __future__ import annotations

import copy
import hashlib
import json
import math
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Mapping

from ._assembly import Envelope
from ._designio import MAX_COUNT, _finite, read_toml, resolve_materials
from ._errors import InputError
from ._materials import Material
from ._suggest import unknown_key_message
from ._target import Target, load_target
from .elements import ElementKind, get_kind, registry

__all__ = ["Study", "Limits", "SearchOptions", "load_study", "study_from_mapping", "apply_overrides", "DEFAULTS"]

DEFAULTS = {
    "limits": {"stress_ratio": 0.8, "min_thickness_mm": 0.05, "max_error_pct": 20.0},
    "search": {"max_elements": 3, "max_count": 4, "population": 120, "generations": 80, "seed": 1,
               "polish": True, "verify_top": 5, "robust": False},
}

_SCHEMA: dict[str, set[str] | None] = {
    "name": None, "description": None, "target": {"file"},
    "envelope": {"length_mm", "width_mm", "height_mm"},
    "limits": {"stress_ratio", "min_thickness_mm", "max_mass_g", "max_error_pct"},
    "search": {"elements", "materials", "max_elements", "max_count", "population", "generations", "seed",
               "polish", "verify_top", "robust"},
    "materials": None,
}


@dataclass(frozen=True)
class Limits:
    stress_ratio: float = 0.8
    min_thickness_mm: float = 0.05
    max_mass_g: float = math.inf
    #: designs whose curve error exceeds this are not worth showing (a constraint)
    max_error_pct: float = 20.0


@dataclass(frozen=True)
class SearchOptions:
    kinds: tuple[ElementKind, ...]
    materials: tuple[Material, ...]
    max_elements: int = 3
    max_count: int = 4
    population: int = 120
    generations: int = 80
    seed: int = 1
    polish: bool = True
    verify_top: int = 5
    robust: bool = False


@dataclass(frozen=True)
class Study:
    """A validated study. ``raw`` is the parsed file (with overrides applied), kept for reruns."""

    name: str
    target: Target
    envelope: Envelope
    limits: Limits
    search: SearchOptions
    raw: Mapping[str, Any]
    path: Path | None = None
    target_path: Path | None = None

    def hash(self) -> str:
        """SHA-256 of the study's content and its target file's bytes (first 16 hex digits)."""
        h = hashlib.sha256(json.dumps(self.raw, sort_keys=True, default=str).encode())
        if self.target_path is not None and self.target_path.exists():
            h.update(self.target_path.read_bytes())
        return h.hexdigest()[:16]

    def materials_for(self, kind: ElementKind) -> tuple[Material, ...]:
        return tuple(m for m in self.search.materials if m.suits(kind.forms))


def _num(v: Any, where: str, *, lo: float | None = None, integer: bool = False, strict: bool = True,
         hi: float | None = None) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not _finite(v):
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
    for need in ("target", "envelope"):
        if need not in doc:
            raise InputError(f"missing [{need}] table", where=where)
    tfile = doc["target"].get("file")
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
    target = load_target(tpath)

    env = doc["envelope"]
    for k in ("length_mm", "width_mm", "height_mm"):
        if k not in env:
            raise InputError(f"missing {k}", where=f"{where} [envelope]")
        _num(env[k], f"{where} [envelope].{k}", lo=0.0)
    envelope = Envelope(float(env["length_mm"]), float(env["width_mm"]), float(env["height_mm"]))

    lim = {**DEFAULTS["limits"], **doc.get("limits", {})}
    limits = Limits(
        stress_ratio=_num(lim["stress_ratio"], f"{where} [limits].stress_ratio", lo=0.0),
        min_thickness_mm=_num(lim["min_thickness_mm"], f"{where} [limits].min_thickness_mm", lo=0.0, strict=False),
        max_mass_g=_num(lim.get("max_mass_g", math.inf), f"{where} [limits].max_mass_g", lo=0.0)
        if "max_mass_g" in lim else math.inf,
        max_error_pct=_num(lim["max_error_pct"], f"{where} [limits].max_error_pct", lo=0.0),
    )

    s = {**DEFAULTS["search"], **doc.get("search", {})}
    mats = resolve_materials(doc.get("materials"), where)
    kinds_in = s.get("elements", list(registry()))
    if not isinstance(kinds_in, list) or not kinds_in or not all(isinstance(k, str) for k in kinds_in):
        raise InputError(f"elements must be a non-empty list of kind names, got {kinds_in!r}", where=f"{where} [search]")
    kinds = []
    for k in kinds_in:
        if k not in registry():
            raise InputError(unknown_key_message(k, registry(), what="kind") + " (see `springsynth elements`)",
                             where=f"{where} [search].elements")
        kinds.append(get_kind(k))
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
    opts = SearchOptions(
        kinds=tuple(kinds), materials=chosen,
        max_elements=int(_num(s["max_elements"], f"{where} [search].max_elements", lo=1, integer=True, strict=False)),
        max_count=int(_num(s["max_count"], f"{where} [search].max_count", lo=1, integer=True, strict=False,
                           hi=MAX_COUNT)),
        population=int(_num(s["population"], f"{where} [search].population", lo=4, integer=True, strict=False,
                            hi=100_000)),
        generations=int(_num(s["generations"], f"{where} [search].generations", lo=1, integer=True, strict=False,
                             hi=100_000)),
        seed=int(_num(s["seed"], f"{where} [search].seed", lo=0, integer=True, strict=False, hi=2**32 - 1)),
        polish=_bool(s["polish"], f"{where} [search].polish"),
        verify_top=int(_num(s["verify_top"], f"{where} [search].verify_top", lo=0, integer=True, strict=False,
                            hi=100_000)),
        robust=_bool(s["robust"], f"{where} [search].robust"),
    )
    if opts.max_elements > 6:
        raise InputError(f"max_elements must be at most 6, got {opts.max_elements}", where=f"{where} [search]")
    name = doc.get("name", Path(where).stem)
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"name must be a non-empty string, got {name!r}", where=where)
    return Study(name=name, target=target, envelope=envelope, limits=limits, search=opts,
                 raw=copy.deepcopy(dict(doc)), path=None, target_path=tpath)


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
