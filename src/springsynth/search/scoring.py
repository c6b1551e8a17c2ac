"""Objectives and constraints of a population for a study (no pymoo here).

Objectives (all minimised): ``curve_error_pct``, ``stress_ratio``, ``size_mm3``, then the
study's optional ones in ``[search] objectives`` (``fatigue_ratio``, ``in_spec_share`` as
``1 - share``: pymoo minimises).
Constraints (feasible when all <= 0, each normalised demand/allowable - 1):
``curve_error`` (a design that misses the curve by more than ``limits.max_error_pct`` is of
no use, however small), ``envelope_length``, ``envelope_cross``, ``stress``, ``validity``,
``min_thickness``, ``mass``, ``fatigue`` (the fatigue ratio over ``limits.fatigue_ratio``
under the study's duty; -1 for a study without a duty, so its results stay as they were),
``in_spec`` (``1 - share / limits.in_spec_share``; -1 without that limit).

The in-spec share (:mod:`springsynth.checks.in_spec`) is computed only when the study asks
for it (the limit or the objective), from ``SETTINGS.yield_search_samples`` parts with the
common random numbers of the run (seeded by ``study.search.seed``), and only for the designs
that meet every other constraint. NSGA-II ranks an infeasible design by its violation alone:
the others are taken as share 0 (``in_spec`` = 1, the most it can be), which ranks each of them
behind every design that meets the other constraints and keeps their order among themselves.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from springsynth.assembly.evaluate import Response, envelope_margins, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.checks.fatigue import fatigue_population
from springsynth.model.study import Study

__all__ = ["CONSTRAINTS", "Scores", "score", "constraints", "study_constraints"]

CONSTRAINTS = ("curve_error", "envelope_length", "envelope_cross", "stress", "validity", "min_thickness", "mass",
               "fatigue", "in_spec")
_IN_SPEC = CONSTRAINTS.index("in_spec")


def study_constraints(study: Study, *, smooth: bool = False) -> np.ndarray:
    """Columns of ``CONSTRAINTS`` the study asks for (``fatigue`` only under a duty, ``in_spec`` only
    with ``limits.in_spec_share``), indices; ``smooth=True`` leaves out ``in_spec``, a share of a
    fixed set of parts (a step function of the design, no use to a gradient)."""
    asked = {"fatigue": study.duty is not None, "in_spec": study.limits.in_spec_share > 0 and not smooth}
    return np.array([j for j, c in enumerate(CONSTRAINTS) if asked.get(c, True)], dtype=np.intp)


#: stand-in for a non-finite objective or constraint value
BIG = 1e6


@dataclass(frozen=True)
class Scores:
    """Objectives (n, len(objectives)), constraints (n, len(CONSTRAINTS)) and the response behind them."""

    F: np.ndarray
    G: np.ndarray
    response: Response

    @property
    def feasible(self) -> np.ndarray:
        return np.all(self.G <= 0.0, axis=1)

    @property
    def violation(self) -> np.ndarray:
        return np.sum(np.maximum(self.G, 0.0), axis=1)


def score(study: Study, slots: Slots, *, with_yield: bool = True, yield_samples: int | None = None) -> Scores:
    """Objectives and constraints of a population (see the module docstring).

    ``with_yield=False`` skips the in-spec share even where the study asks for it (the polish's
    residuals, which cannot follow it): ``in_spec`` is then -1 and the objective 1 - 0.
    ``yield_samples``: parts per design for the share (default ``SETTINGS.yield_search_samples``;
    the final choice of the front uses ``SETTINGS.yield_samples``).
    """
    t = study.target
    r = evaluate_population(slots, t.x_mm, x_max_mm=t.stroke_mm)
    with np.errstate(all="ignore"):
        err = t.curve_error_pct(r.force_N)
        fatigue = fatigue_population(slots, study.duty) if study.duty is not None else None
    G = constraints(study, r, err, fatigue)
    if study.wants_yield and with_yield:
        share = search_yield(study, slots, np.all(G[:, :_IN_SPEC] <= 0, axis=1), yield_samples)
        G[:, _IN_SPEC] = yield_constraint(study, share, slots.n)
    else:
        share = None
    obj_err = err
    if study.search.robust:  # [search] robust = true: 90th-percentile error over fixed tolerance samples
        from springsynth.checks.tolerance import robust_error

        obj_err = robust_error(study, slots)
    extra = {"fatigue_ratio": fatigue,
             "in_spec_share": np.ones(slots.n) if share is None else 1.0 - np.nan_to_num(share)}
    F = np.stack([obj_err, r.stress_ratio, r.size_mm3] + [extra[o] for o in study.search.objectives[3:]], axis=1)
    F = np.where(~r.finite[:, None] | ~np.isfinite(F), BIG, np.minimum(F, BIG))
    return Scores(F, G, r)


def constraints(study: Study, r: Response, err: np.ndarray, fatigue: np.ndarray | None) -> np.ndarray:
    """Normalised constraint values, shape (n, len(CONSTRAINTS)), of the responses ``r`` whose
    curve errors are ``err`` (%, shape (n,)) and fatigue ratios ``fatigue`` (shape (n,), None
    without a duty); row by row (a row's values never depend on the others). The in-spec
    column is -1 here: :func:`score` fills it where the study asks for it."""
    lim = study.limits
    n = err.shape[0]
    with np.errstate(all="ignore"):
        g_len, g_cross = envelope_margins(r.box_mm, study.envelope)
        g_stress = r.stress_ratio / lim.stress_ratio - 1.0
        g_valid = r.validity_worst
        g_thick = lim.min_thickness_mm / r.min_thickness_mm - 1.0 if lim.min_thickness_mm > 0 else np.full(n, -1.0)
        g_mass = r.mass_g / lim.max_mass_g - 1.0 if math.isfinite(lim.max_mass_g) else np.full(n, -1.0)
        g_err = err / lim.max_error_pct - 1.0
        g_fat = fatigue / lim.fatigue_ratio - 1.0 if fatigue is not None else np.full(n, -1.0)
    G = np.stack([g_err, g_len, g_cross, g_stress, g_valid, g_thick, g_mass, g_fat], axis=1)
    G = np.maximum(G, -1.0)  # only the sign matters below zero; keeps -inf out of pymoo
    bad = ~r.finite[:, None] | ~np.isfinite(G)
    return np.hstack([np.where(bad, BIG, np.minimum(G, BIG)), np.full((n, 1), -1.0)])


def search_yield(study: Study, slots: Slots, rows: np.ndarray, n_samples: int | None = None) -> np.ndarray:
    """In-spec share of ``n_samples`` parts (default ``SETTINGS.yield_search_samples``), shape (n,):
    computed for ``rows`` (a mask, shape (n,)), NaN elsewhere."""
    from springsynth.checks.in_spec import in_spec_share
    from springsynth.search.settings import SETTINGS

    share = np.full(slots.n, np.nan)
    if rows.any():
        share[rows] = in_spec_share(study.target, slots.take(rows), band_pct=study.limits.band_pct,
                                    n_samples=n_samples or SETTINGS.yield_search_samples, seed=study.search.seed)
    return share


def yield_constraint(study: Study, share: np.ndarray | None, n: int) -> np.ndarray:
    """The ``in_spec`` constraint, ``1 - share / limits.in_spec_share`` (>= -1), shape (n,); -1 without
    the limit or without a share (None). Where :func:`search_yield` left a row out (NaN) its share
    is taken as 0, its worst: 1, so that a design missing another constraint ranks behind every
    design that meets the others, whatever their shares (a violation of at most 1)."""
    lim = study.limits.in_spec_share
    if share is None or lim <= 0:
        return np.full(n, -1.0)
    return np.maximum(1.0 - np.nan_to_num(share) / lim, -1.0)
