"""Objectives and constraints of a population for a study (no pymoo here).

Objectives (all minimised): ``curve_error_pct``, ``stress_ratio``, ``size_mm3``, then the
study's optional ones in ``[search] objectives`` (``fatigue_ratio``).
Constraints (feasible when all <= 0, each normalised demand/allowable - 1):
``curve_error`` (a design that misses the curve by more than ``limits.max_error_pct`` is of
no use, however small), ``envelope_length``, ``envelope_cross``, ``stress``, ``validity``,
``min_thickness``, ``mass``, ``fatigue`` (the fatigue ratio over ``limits.fatigue_ratio``
under the study's duty; -1 for a study without a duty, so its results stay as they were).
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
               "fatigue")


def study_constraints(study: Study) -> np.ndarray:
    """Columns of ``CONSTRAINTS`` the study asks for (``fatigue`` only under a duty), indices."""
    return np.array([j for j, c in enumerate(CONSTRAINTS) if c != "fatigue" or study.duty is not None], dtype=np.intp)


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


def score(study: Study, slots: Slots) -> Scores:
    """Objectives and constraints of a population (see the module docstring)."""
    t = study.target
    r = evaluate_population(slots, t.x_mm, x_max_mm=t.stroke_mm)
    with np.errstate(all="ignore"):
        err = t.curve_error_pct(r.force_N)
        fatigue = fatigue_population(slots, study.duty) if study.duty is not None else None
    G = constraints(study, r, err, fatigue)
    obj_err = err
    if study.search.robust:  # [search] robust = true: 90th-percentile error over fixed tolerance samples
        from springsynth.checks.tolerance import robust_error

        obj_err = robust_error(study, slots)
    extra = {"fatigue_ratio": fatigue}
    F = np.stack([obj_err, r.stress_ratio, r.size_mm3] + [extra[o] for o in study.search.objectives[3:]], axis=1)
    F = np.where(~r.finite[:, None] | ~np.isfinite(F), BIG, np.minimum(F, BIG))
    return Scores(F, G, r)


def constraints(study: Study, r: Response, err: np.ndarray, fatigue: np.ndarray | None) -> np.ndarray:
    """Normalised constraint values, shape (n, len(CONSTRAINTS)), of the responses ``r`` whose
    curve errors are ``err`` (%, shape (n,)) and fatigue ratios ``fatigue`` (shape (n,), None
    without a duty); row by row (a row's values never depend on the others)."""
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
    return np.where(bad, BIG, np.minimum(G, BIG))
