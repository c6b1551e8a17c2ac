"""Batch plans: which runs a batch makes (studies x variants x seeds), built without I/O.

A plan is the product of three lists: the studies, the variants (every combination of
the ``--vary`` values, in the order given, the last key varying fastest) and the seeds.
Each run has its own folder ``<study>/<variant>/seed-<n>`` under the batch folder, with a
readable variant name such as ``scale_force=1.5`` (``base`` when nothing is varied).
Everything here is pure: the studies come in as parsed documents, nothing is read or
written.
"""

from __future__ import annotations

import itertools
import math
import re
from dataclasses import dataclass
from typing import Any, Mapping, Sequence

from springsynth.io.study_toml import apply_overrides
from springsynth.model.errors import InputError
from springsynth.model.study import DEFAULTS

__all__ = ["Vary", "RunSpec", "StudyEntry", "Plan", "parse_seeds", "parse_vary", "check_vary_keys",
           "build_plan", "safe_name", "MAX_RUNS"]

#: values one --vary may produce, and runs one batch may hold (a typo guard, not a resource limit)
MAX_VALUES = 1000
MAX_RUNS = 100_000
MAX_SEED = 2**32 - 1
#: keys --vary may not sweep, and why
_NOT_SWEPT = {"search.seed": "seeds are set with --seeds"}
_SAFE = re.compile(r"[^A-Za-z0-9._=+,-]+")


@dataclass(frozen=True)
class Vary:
    """One ``--vary`` setting: a study key and its values, as the texts used in overrides
    and folder names (12 significant digits, so ``0.1 + 0.2`` reads ``0.3``)."""

    key: str
    values: tuple[str, ...]


@dataclass(frozen=True)
class StudyEntry:
    """A study of the batch: its file (absolute path), its folder name and its own seed."""

    path: str
    name: str
    seed: int


@dataclass(frozen=True)
class RunSpec:
    """One run: a study, one value per varied key, a seed, and the settings for every run.

    Attributes
    ----------
    study_path : str
        Absolute path of the study file (workers read it; with ``--scheduler`` it must be
        on a file system every worker sees).
    study : str
        The study's folder name.
    variant : tuple of (key, value text)
        One pair per ``--vary`` key; empty when nothing is varied.
    seed : int
    settings : tuple of str
        ``--set`` overrides applied to every run, before the variant's.
    """

    study_path: str
    study: str
    variant: tuple[tuple[str, str], ...]
    seed: int
    settings: tuple[str, ...] = ()

    @property
    def overrides(self) -> list[str]:
        """``section.key=value`` overrides for :func:`springsynth.load_study` (settings, then the variant)."""
        return list(self.settings) + [f"{k}={v}" for k, v in self.variant]

    @property
    def variant_name(self) -> str:
        return variant_name(self.variant)

    @property
    def folder(self) -> str:
        """The run folder relative to the batch folder, ``<study>/<variant>/seed-<n>``."""
        return f"{self.study}/{self.variant_name}/seed-{self.seed}"

    def to_dict(self) -> dict[str, Any]:
        return {"study_path": self.study_path, "study": self.study, "variant": [list(p) for p in self.variant],
                "seed": self.seed, "settings": list(self.settings)}

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "RunSpec":
        return cls(str(d["study_path"]), str(d["study"]), tuple((str(k), str(v)) for k, v in d["variant"]),
                   int(d["seed"]), tuple(str(s) for s in d.get("settings", ())))


@dataclass(frozen=True)
class Plan:
    """All runs of a batch, in a fixed order (study, variant, seed)."""

    studies: tuple[StudyEntry, ...]
    seeds: tuple[int, ...] | None
    varies: tuple[Vary, ...]
    settings: tuple[str, ...]
    runs: tuple[RunSpec, ...]

    @property
    def vary_keys(self) -> tuple[str, ...]:
        return tuple(v.key for v in self.varies)

    def to_dict(self) -> dict[str, Any]:
        return {"studies": [{"path": s.path, "name": s.name, "seed": s.seed} for s in self.studies],
                "seeds": None if self.seeds is None else list(self.seeds),
                "vary": [{"key": v.key, "values": list(v.values)} for v in self.varies],
                "set": list(self.settings)}

    @classmethod
    def from_dict(cls, d: Mapping[str, Any]) -> "Plan":
        """The plan stored by :meth:`to_dict` (runs are rebuilt, in the same order)."""
        studies = [StudyEntry(str(s["path"]), str(s["name"]), int(s["seed"])) for s in d["studies"]]
        varies = [Vary(str(v["key"]), tuple(str(x) for x in v["values"])) for v in d["vary"]]
        seeds = None if d.get("seeds") is None else tuple(int(s) for s in d["seeds"])
        return build_plan(studies, seeds=seeds, varies=varies, settings=[str(s) for s in d.get("set", ())])


def variant_name(variant: Sequence[tuple[str, str]]) -> str:
    """``scale_force=1.5,length_mm=40`` (last key part; the whole key where two would clash)."""
    if not variant:
        return "base"
    short = [k.rsplit(".", 1)[-1] for k, _ in variant]
    labels = short if len(set(short)) == len(short) else [k for k, _ in variant]
    return safe_name(",".join(f"{lab}={v}" for lab, (_, v) in zip(labels, variant)))


def safe_name(text: str) -> str:
    """A folder name from ``text``: letters, digits and ``. _ = + , -``; anything else becomes ``_``."""
    return _SAFE.sub("_", text).strip("._ ") or "_"


def _value_text(v: float) -> str:
    t = format(float(v), ".12g")
    return "0" if t == "-0" else t


# ---------------------------------------------------------------------- parsing options

def parse_seeds(text: str | None) -> tuple[int, ...] | None:
    """``--seeds``: ``N`` gives seeds 1..N, a comma list (``1,4,7``; ``7,`` for one seed) those seeds.

    Returns None when ``text`` is None (each study's own seed).
    """
    if text is None:
        return None
    where = f"--seeds {text}"
    t = text.strip()
    if "," not in t:
        n = _whole(t, where, "N")
        if n < 1 or n > MAX_VALUES:
            raise InputError(f"N must be 1 .. {MAX_VALUES} (seeds 1..N), got {n}; or give a list such as 1,4,7",
                             where=where)
        return tuple(range(1, n + 1))
    items = [s.strip() for s in t.split(",")]
    if items[-1] == "":
        items = items[:-1]
    if not items or any(s == "" for s in items):
        raise InputError("a seed list is whole numbers separated by commas, e.g. 1,4,7 (7, for one seed)", where=where)
    seeds = [_whole(s, where, "each seed") for s in items]
    for s in seeds:
        if not 0 <= s <= MAX_SEED:
            raise InputError(f"each seed must be 0 .. {MAX_SEED}, got {s}", where=where)
    dup = sorted({s for s in seeds if seeds.count(s) > 1})
    if dup:
        raise InputError(f"seed {dup[0]} is listed twice", where=where)
    return tuple(seeds)


def _whole(s: str, where: str, what: str) -> int:
    if not re.fullmatch(r"[+-]?\d+", s.strip()):
        raise InputError(f"{what} must be a whole number, got {s!r}", where=where)
    return int(s)


def parse_vary(text: str) -> Vary:
    """``--vary KEY=START:STOP:COUNT`` (COUNT evenly spaced values, ends included) or
    ``KEY=V1,V2,...``. The key is checked against the studies by :func:`check_vary_keys`."""
    where = f"--vary {text}"
    key, sep, spec = text.partition("=")
    key, spec = key.strip(), spec.strip()
    example = "e.g. target.scale_force=0.5:2:4 or target.scale_force=0.8,1,1.25"
    if not sep or not key or not spec:
        raise InputError(f"expected KEY=START:STOP:COUNT or KEY=V1,V2,...; {example}", where=where)
    if ":" in spec:
        parts = [p.strip() for p in spec.split(":")]
        if len(parts) != 3:
            raise InputError(f"expected START:STOP:COUNT (three parts), got {spec!r}; {example}", where=where)
        start, stop = (_finite(p, where, nm) for p, nm in zip(parts[:2], ("START", "STOP")))
        count = _whole(parts[2], where, "COUNT")
        if not 1 <= count <= MAX_VALUES:
            raise InputError(f"COUNT must be 1 .. {MAX_VALUES}, got {count}", where=where)
        if count == 1 and start != stop:
            raise InputError(f"COUNT 1 gives only START ({parts[0]}); raise COUNT or write {key}={parts[0]}",
                             where=where)
        if count > 1 and start == stop:
            raise InputError(f"START and STOP are both {parts[0]}: all {count} values would be the same", where=where)
        values = [start + (stop - start) * i / (count - 1) for i in range(count)] if count > 1 else [start]
    else:
        items = [p.strip() for p in spec.split(",")]
        if any(p == "" for p in items):
            raise InputError(f"an empty value in {spec!r}; {example}", where=where)
        values = [_finite(p, where, "each value") for p in items]
        if len(values) > MAX_VALUES:
            raise InputError(f"at most {MAX_VALUES} values, got {len(values)}", where=where)
    texts = tuple(_value_text(v) for v in values)
    dup = sorted({t for t in texts if texts.count(t) > 1})
    if dup:
        raise InputError(f"the value {dup[0]} comes twice", where=where)
    return Vary(key, texts)


def _finite(s: str, where: str, what: str) -> float:
    try:
        v = float(s)
    except ValueError:
        raise InputError(f"{what} must be a number, got {s!r}", where=where) from None
    if not math.isfinite(v):
        raise InputError(f"{what} must be a finite number, got {s!r}", where=where)
    return v


def check_vary_keys(varies: Sequence[Vary], docs: Mapping[str, Mapping[str, Any]],
                    settings: Sequence[str] = ()) -> None:
    """Each ``--vary`` key is one ``--set`` accepts and names a numeric setting.

    Parameters
    ----------
    varies : sequence of Vary
    docs : mapping of study file name -> parsed study document
        A key whose value in a study (or among the defaults) is not a number cannot be swept.
    settings : sequence of str
        The ``--set`` overrides; a key may not be both set and varied.
    """
    seen: set[str] = set()
    set_keys = {s.partition("=")[0].strip() for s in settings}
    for v in varies:
        try:
            apply_overrides({}, [f"{v.key}={v.values[0]}"])
        except InputError as e:
            msg = str(e)[len(e.where) + 2:] if e.where else str(e)
            raise InputError(msg + " (keys as for `rerun --set`)", where=f"--vary {v.key}") from None
        if v.key in _NOT_SWEPT:
            raise InputError(f"{v.key} cannot be varied: {_NOT_SWEPT[v.key]}", where=f"--vary {v.key}")
        if v.key in seen:
            raise InputError("the key is varied twice; give all its values in one --vary", where=f"--vary {v.key}")
        if v.key in set_keys:
            raise InputError("the key is also given with --set; drop one of them", where=f"--vary {v.key}")
        seen.add(v.key)
        for name, doc in docs.items():
            found, value = _lookup(doc, v.key)
            if not found:
                found, value = _lookup(DEFAULTS, v.key)
            if found and (isinstance(value, bool) or not isinstance(value, (int, float))):
                shown = str(value).lower() if isinstance(value, bool) else repr(value)
                raise InputError(f"{v.key} is not a number in {name} (it is {shown}); --vary sweeps numeric "
                                 f"settings, e.g. target.scale_force or envelope.length_mm", where=f"--vary {v.key}")


def _lookup(doc: Mapping[str, Any], key: str) -> tuple[bool, Any]:
    node: Any = doc
    for part in key.split("."):
        if not isinstance(node, Mapping) or part not in node:
            return False, None
        node = node[part]
    return True, node


# ---------------------------------------------------------------------- the plan

def build_plan(studies: Sequence[StudyEntry], *, seeds: Sequence[int] | None, varies: Sequence[Vary],
               settings: Sequence[str] = ()) -> Plan:
    """Every run: studies x variants (product of the ``varies``) x seeds, in that order.

    Parameters
    ----------
    studies : sequence of StudyEntry
        Their folder names must differ.
    seeds : sequence of int or None
        None: each study's own seed (one run per study and variant).
    varies : sequence of Vary
    settings : sequence of str
        ``--set`` overrides for every run.
    """
    if not studies:
        raise InputError("give at least one study file", where="batch")
    names: dict[str, str] = {}
    for s in studies:
        if s.name in names:
            raise InputError(f"{names[s.name]} and {s.path} both have the name {s.name!r}, so their runs would share "
                             f"one folder; give each study its own name", where="batch")
        names[s.name] = s.path
    combos = list(itertools.product(*[[(v.key, x) for x in v.values] for v in varies]))
    n = len(studies) * len(combos) * (len(seeds) if seeds is not None else 1)
    if n > MAX_RUNS:
        raise InputError(f"{n} runs is more than {MAX_RUNS}; fewer seeds or --vary values", where="batch")
    runs = tuple(RunSpec(s.path, s.name, tuple(c), seed, tuple(settings))
                 for s in studies for c in combos for seed in (seeds if seeds is not None else (s.seed,)))
    return Plan(tuple(studies), None if seeds is None else tuple(seeds), tuple(varies), tuple(settings), runs)
