"""The one entry point of the search: :func:`synthesize` -> :class:`Synthesis`."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Callable, Sequence

import numpy as np

from springsynth.assembly.design import Chain, Design
from springsynth.checks.fatigue import fatigue_population
from springsynth.elements import get_kind, margin_text, split_margins
from springsynth.model.errors import InputError
from springsynth.model.numbers import pct_text
from springsynth.model.study import Study
from springsynth.search.encoding import Encoding
from springsynth.search.loop import Progress, run_search
from springsynth.search.scoring import CONSTRAINTS, Scores, yield_constraint
from springsynth.search.settings import SETTINGS

if TYPE_CHECKING:  # pandas only for the table as a DataFrame (a run is written without it)
    import pandas as pd

__all__ = ["design_columns", "synthesize", "Synthesis", "design_table", "fitting_designs", "front_yield"]

_CONSTRAINT_WORDS = {
    "curve_error": "curve error exceeds limits.max_error_pct",
    "envelope_length": "length along the stroke exceeds the envelope",
    "envelope_cross": "cross-section exceeds the envelope",
    "stress": "stress ratio exceeds limits.stress_ratio",
    "validity": "an element leaves its model's valid range",
    "design_rule": "an element breaks a design rule (harder to make)",
    "min_thickness": "a thickness is below limits.min_thickness_mm",
    "mass": "mass exceeds limits.max_mass_g",
    "fatigue": "fatigue ratio exceeds limits.fatigue_ratio",
    "in_spec": "share of parts in spec falls short of limits.in_spec_share",
}


@dataclass(frozen=True)
class Synthesis:
    """Result of a search. ``to_frame()`` gives the Pareto table (the columns of pareto.csv, see :func:`design_table`).

    Attributes
    ----------
    study : Study
        The study searched, its ``search.seed`` the run's seed (the in-spec share's draws follow it).
    designs : tuple of Design
        The Pareto designs (or, when nothing is feasible, the closest designs), in
        table order; ``designs[i].name`` is the design id.
    objectives : ndarray, shape (n, k)
        curve_error_pct, stress_ratio, size_mm3, then the study's optional objectives (as minimised:
        ``in_spec_share`` as ``1 - share``; the share itself is ``in_spec_share`` below).
    constraints : ndarray, shape (n, len(CONSTRAINTS))
        Normalised constraint values (<= 0 satisfied), columns ``CONSTRAINTS``.
    mass_g : ndarray, shape (n,)
    feasible : bool
        Whether any feasible design was found.
    history : list of dict
        Per generation: evaluations, feasible share, best error, hypervolume, time.
    """

    study: Study
    designs: tuple[Design, ...]
    objectives: np.ndarray
    constraints: np.ndarray
    mass_g: np.ndarray
    feasible: bool
    seed: int
    population: int
    generations: int
    evaluations: int
    history: list = field(default_factory=list)
    polish: dict = field(default_factory=dict)
    timings: dict = field(default_factory=dict)
    validity: dict = field(default_factory=dict)
    partial: bool = False
    checkpoint: bytes | None = None
    #: design id -> curve error recomputed with the independent verification solvers
    verified: dict = field(default_factory=dict)
    #: share of each design's parts inside the band under process tolerances, shape (n,)
    #: (:mod:`springsynth.checks.in_spec`, ``yield_samples`` parts, common random numbers of the seed)
    in_spec_share: np.ndarray | None = None
    yield_samples: int = 0
    #: what the caller should know (e.g. warm-start designs left out because they no longer fit)
    notices: tuple[str, ...] = ()
    #: worst fatigue ratio of each design under the study's duty, shape (n,); None without a duty
    fatigue_ratio: np.ndarray | None = None
    #: stroke of each design's first snap (a chain's loading path folds), mm, NaN when none; shape (n,)
    snap_mm: np.ndarray | None = None

    def to_frame(self) -> "pd.DataFrame":
        return design_table(self)

    def binding(self, i: int) -> str:
        """Constraints a design violates, worst first, with the excess in %."""
        g = self.constraints[i]
        parts = [(v, name) for v, name in zip(g, CONSTRAINTS) if v > 0]
        parts.sort(reverse=True)
        out = []
        for v, name in parts:
            if v >= 1e5:
                out.append(f"{name}: model failed (NaN)")
            elif name == "validity":
                out += self._validity_words(i)
            else:
                out.append(f"{_CONSTRAINT_WORDS[name]} by {pct_text(100 * v, decimals=1)}")
        return "; ".join(out)

    def _validity_words(self, i: int) -> list[str]:
        """The validity constraint of design ``i`` in words: model limits and design rules apart."""
        out = []
        worst = {k: float(a[i]) for k, a in self.validity.items() if a[i] > 0}
        for key, group in zip(("validity", "design_rule"), split_margins(worst)):
            if group:
                out.append(f"{_CONSTRAINT_WORDS[key]} by {pct_text(100 * max(group.values()), decimals=1)} "
                           f"({margin_text(group)})")
        return out or [f"{_CONSTRAINT_WORDS['validity']}"]


def design_columns(res: Synthesis) -> dict[str, list]:
    """The Pareto table as named columns of one value per design, in table order (missing values NaN).

    Columns: ``design_id``, the objectives ``curve_error_pct``, ``stress_ratio``,
    ``size_mm3`` (and ``fatigue_ratio`` under a duty), ``in_spec_share`` (every design's share of
    parts in spec), then ``mass_g``, ``feasible``, ``topology``; ``verified_error_pct``
    when the search computed it, ``violations`` for infeasible
    designs; then per element j (slot order) ``e<j>_kind``, ``e<j>_material``,
    ``e<j>_count``, ``e<j>_offset_mm`` and ``e<j>_<parameter>``.
    Where the study allows chains: also ``snap_mm``, and per element ``e<j>_branch`` (elements
    of one chain share it) and, on a chain's first link, ``e<j>_chain_count`` (its
    ``e<j>_offset_mm`` is the chain's).
    """
    chains = getattr(res.study.search, "links_per_chain", 1) > 1
    rows = []
    for i, d in enumerate(res.designs):
        row = {
            "design_id": d.name,
            "curve_error_pct": res.objectives[i, 0],
            "stress_ratio": res.objectives[i, 1],
            "size_mm3": res.objectives[i, 2],
            **({"fatigue_ratio": res.fatigue_ratio[i]} if res.fatigue_ratio is not None else {}),
            **({"in_spec_share": res.in_spec_share[i]} if res.in_spec_share is not None else {}),
            "mass_g": res.mass_g[i],
            "feasible": bool(np.all(res.constraints[i] <= 0)),
            "topology": d.topology(),
        }
        if chains:
            row["snap_mm"] = res.snap_mm[i] if res.snap_mm is not None else np.nan
        if res.verified:
            row["verified_error_pct"] = res.verified.get(d.name, np.nan)
        if not row["feasible"]:
            row["violations"] = res.binding(i)
        row.update(_part_columns(d, chains))
        rows.append(row)
    names = list(dict.fromkeys(k for r in rows for k in r))     # in order of first appearance, as pandas orders them
    # group each element's columns together, in slot order, whatever kinds came first
    head = [c for c in names if not c.startswith("e") or not c[1:2].isdigit()]
    slots = sorted({int(c[1:].split("_", 1)[0]) for c in names if c not in head})
    order = head + [c for j in slots for c in names if c.startswith(f"e{j}_")]
    return {c: [r.get(c, np.nan) for r in rows] for c in order}


def design_table(res: Synthesis) -> "pd.DataFrame":
    """The Pareto table (:func:`design_columns`) as a ``pandas.DataFrame``."""
    import pandas as pd

    return pd.DataFrame(design_columns(res))


def _part_columns(d: Design, chains: bool) -> dict:
    """``e<j>_...`` columns of every element of ``d`` (chain links included), in slot order."""
    row: dict = {}
    j = 0
    for b, br in enumerate(d.branches, start=1):
        links = br.links if isinstance(br, Chain) else (br,)
        for k, e in enumerate(links):
            j += 1
            row[f"e{j}_kind"] = e.kind
            row[f"e{j}_material"] = e.material
            row[f"e{j}_count"] = e.count
            row[f"e{j}_offset_mm"] = br.offset_mm if k == 0 else 0.0
            if chains:
                row[f"e{j}_branch"] = b
                if isinstance(br, Chain) and k == 0:
                    row[f"e{j}_chain_count"] = br.count
            for name, v in e.params.items():
                row[f"e{j}_{name}"] = v
    return row


def synthesize(study: Study, *, seed: int | None = None, population: int | None = None,
               generations: int | None = None, warm_start: Sequence[Design] = (),
               on_generation: Callable[[Progress], None] | None = None,
               should_stop: Callable[[], bool] | None = None, resume: bytes | None = None) -> Synthesis:
    """Search the study's design space; return the Pareto set.

    Parameters
    ----------
    study : Study
        From :func:`springsynth.load_study`.
    seed, population, generations : int, optional
        Override the study's ``[search]`` values. Same study and seed give the same result.
    warm_start : sequence of Design
        Designs placed in the first population (e.g. an earlier run's Pareto set). Those
        with no element of a kind and material the study allows are left out, and
        ``Synthesis.notices`` says which (see :func:`fitting_designs`).
    on_generation : callable, optional
        Called with a :class:`Progress` after every generation.
    should_stop : callable, optional
        Asked after every generation; True stops the search there and returns the
        results so far with ``partial=True`` and a ``checkpoint``.
    resume : bytes, optional
        A checkpoint from an interrupted search: continue it (the study, seed and budget
        stored in it are used, for the search and for decoding its designs; the result's
        ``study`` is the checkpoint's); the result equals an uninterrupted run's.
    """
    s = study.search
    seed = s.seed if seed is None else int(seed)
    if seed != s.seed:      # the study searched carries the run seed: the in-spec share's draws follow it
        study, s = replace(study, search=replace(s, seed=seed)), replace(s, seed=seed)
    population = s.population if population is None else int(population)
    generations = s.generations if generations is None else int(generations)
    enc = Encoding(study)
    kept, dropped = fitting_designs(study, warm_start)
    notices = (_dropped_notice(dropped),) if dropped else ()
    X0 = enc.encode(kept) if kept else None
    out = run_search(study, seed=seed, population=population, generations=generations, warm_start=X0,
                     on_generation=on_generation, polish=s.polish, should_stop=should_stop, resume=resume)
    seed, population, generations = out.budget
    if out.study is not study:   # resumed: decode with the checkpoint's own study, not the caller's
        study, s = out.study, out.study.search
        enc = Encoding(study)
    slots = enc.decode(out.X)
    designs = tuple(replace(slots.design(i, name=f"D{i + 1:02d}"), duty=study.duty) for i in range(slots.n))
    fatigue = fatigue_population(slots, study.duty) if study.duty is not None else None
    t0 = time.perf_counter()
    share, sc = front_yield(study, slots, out.scores)
    t_yield = time.perf_counter() - t0
    verified, t_verify = {}, 0.0
    if not out.partial and s.verify_top > 0:
        t0 = time.perf_counter()
        verified = _verify_top(study, designs, sc, s.verify_top)
        t_verify = time.perf_counter() - t0
    return Synthesis(
        study=study, designs=designs, objectives=sc.F, constraints=sc.G, mass_g=sc.response.mass_g,
        feasible=out.feasible_found and bool(sc.feasible.any()), seed=seed, population=population,
        generations=generations,
        evaluations=out.evaluations, history=out.history, polish=out.polish,
        validity={k: np.asarray(v) for k, v in sc.response.validity.items()},
        partial=out.partial, checkpoint=out.checkpoint, verified=verified, in_spec_share=share,
        yield_samples=SETTINGS.yield_samples, fatigue_ratio=fatigue,
        snap_mm=sc.response.snap_mm,
        timings={**out.timings, "in_spec_s": t_yield, **({"verification_s": t_verify} if verified else {})},
        notices=notices,
    )


def fitting_designs(study: Study, designs: Sequence[Design]) -> tuple[list[Design], list[Design]]:
    """``(kept, dropped)``: the designs that can seed a search of ``study`` and those that cannot.

    A design fits when at least one of its elements is of a kind, and in a material, the
    study allows (what :meth:`Encoding.encode` can place in the genome); elements that
    do not fit are left out of the seed, designs with none are dropped.
    """
    enc = Encoding(study)
    kept, dropped = [], []
    for d in designs:
        try:
            enc.encode([d])
        except ValueError:
            dropped.append(d)
        else:
            kept.append(d)
    return kept, dropped


def _dropped_notice(dropped: Sequence[Design]) -> str:
    names = ", ".join(d.name for d in dropped)
    return (f"{len(dropped)} starting design(s) left out ({names}): none of their elements is of a kind and "
            "material this study allows")


def front_yield(study: Study, slots, sc: Scores) -> tuple[np.ndarray, Scores]:
    """The in-spec share of every returned design (``slots``, as decoded) from ``SETTINGS.yield_samples``
    parts, and ``sc`` with the in-spec constraint and objective (where the study has them) taken from it.

    The kinds are taken as they are now (a checkpoint may hold them as they were). A finished
    search chose its front on these parts already (the loop's small sample are their first
    parts, slot by slot: :func:`~springsynth.checks.in_spec.yield_draws`); a stopped one chose
    on the small sample, and a design that met ``limits.in_spec_share`` there and misses it
    here is marked infeasible, with the shortfall in ``violations``.
    """
    from springsynth.checks.in_spec import in_spec_share

    slots = replace(slots, kinds=tuple(get_kind(k.name) for k in slots.kinds))
    share = in_spec_share(study.target, slots, band_pct=study.limits.band_pct, n_samples=SETTINGS.yield_samples,
                          seed=study.search.seed)
    if not study.wants_yield:
        return share, sc
    G = sc.G.copy()
    G[:, CONSTRAINTS.index("in_spec")] = yield_constraint(study, share, slots.n)
    F = sc.F.copy()
    if "in_spec_share" in study.search.objectives:
        F[:, study.search.objectives.index("in_spec_share")] = 1.0 - share
    return share, Scores(F, G, sc.response)



def _verify_top(study: Study, designs, sc, top: int) -> dict[str, float]:
    """Verified curve error of the ``top`` lowest-error feasible designs (NaN where skipped)."""
    from springsynth.checks.verify import verified_error_pct

    ok = np.flatnonzero(np.all(sc.G <= 0, axis=1))
    order = ok[np.argsort(sc.F[ok, 0], kind="stable")][:top]
    out = {}
    for i in order:
        d = designs[i]
        if not all(get_kind(e.kind).verify_quick for e in d.parts):  # left to `springsynth verify`
            out[d.name] = math.nan
            continue
        try:
            out[d.name] = verified_error_pct(d, study.target)
        except InputError:
            out[d.name] = math.nan
    return out

