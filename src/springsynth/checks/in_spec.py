"""Share of parts in spec (the yield) of a population under process tolerances.

A part is *in spec* when its force lies inside the acceptance band at every target point:
the target's own band, or where it has none +- ``limits.band_pct`` % of the target force
(:meth:`springsynth.model.target.Target.spec_band`, with its floor near zero force). The
parts are drawn from the process-tolerance model of :mod:`springsynth.checks.tolerance`
(every dimension, offset and modulus; +-T read as +-3 sigma of a normal, draws clipped there).

Common random numbers: every design of a population is perturbed by the *same*
standard-normal draws (:func:`yield_draws`, seeded from the run seed), so that two designs
are compared on the same parts, and the share of a design is a fixed function of the
design for a given seed and sample size (a search can rank on it, a rerun repeats it).
All ``n * n_samples`` parts are evaluated in one :func:`evaluate_population` call.

The share of ``N`` parts has a Monte Carlo standard error ``sqrt(p (1 - p) / N)``
(:func:`standard_error`): at most 3.5 points for N = 200.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from springsynth.assembly.evaluate import evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.checks.tolerance import SIGMAS_PER_TOLERANCE, perturb, sigmas
from springsynth.model.target import Target

__all__ = ["in_spec_share", "yield_draws", "standard_error", "worst_standard_error", "YIELD_STREAM"]

#: second word of the seed of the yield's draws: keeps them apart from the search's own stream
YIELD_STREAM = 0x5949454C
#: draws per part and slot: parameters in the first columns, the offset and the modulus in the last
#: two, whatever the population's parameter count (so populations of other kinds share them)
DRAW_COLUMNS = 16


@lru_cache(maxsize=8)
def yield_draws(n_samples: int, n_slots: int, n_params: int, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The common random numbers of a run, in sigmas, clipped at +-3 (as the tolerance model clips).

    Parameters
    ----------
    n_samples, n_slots, n_params : int
        Parts k, slots S and parameter columns P of the population.
    seed : int
        The run seed; the generator is ``numpy.random.default_rng([seed, YIELD_STREAM])``.

    Returns
    -------
    zp : ndarray, shape (k, S, P)
        Parameter draws.
    zo, ze : ndarray, shape (k, S)
        Offset and modulus draws. Read-only. The first ``k'`` parts of a draw of ``k >= k'``
        parts are the draw of ``k'`` parts (one stream, filled in order), and a population
        with fewer parameter columns gets the first columns of the same draws.
    """
    if n_params > DRAW_COLUMNS - 2:
        raise ValueError(f"{n_params} parameter columns; the draws have room for {DRAW_COLUMNS - 2}")
    rng = np.random.default_rng([int(seed), YIELD_STREAM])
    z = np.clip(rng.standard_normal((n_samples, n_slots, DRAW_COLUMNS)), -SIGMAS_PER_TOLERANCE,
                SIGMAS_PER_TOLERANCE)
    z.setflags(write=False)
    return z[:, :, :n_params], z[:, :, -2], z[:, :, -1]


def in_spec_share(target: Target, slots: Slots, *, band_pct: float, n_samples: int, seed: int) -> np.ndarray:
    """Share of each design's parts inside the acceptance band at every target point, shape (n,).

    Parameters
    ----------
    target : Target
        The band (its own, or +- ``band_pct`` % of its force: :meth:`Target.spec_band`) and the
        stroke points, mm.
    slots : Slots
        n designs.
    band_pct : float
        % of the target force, where the target has no band.
    n_samples : int
        Parts per design k (the same draws for every design: module notes).
    seed : int
        The run seed (:func:`yield_draws`).

    Returns
    -------
    ndarray, shape (n,)
        In [0, 1]; a part whose model gives no finite force counts as out of spec.
    """
    n, S, P = slots.params.shape
    if n == 0:
        return np.zeros(0)
    zp, zo, ze = yield_draws(int(n_samples), S, P, int(seed))
    parts = perturb(slots, sigmas(slots), zp, zo, ze)
    r = evaluate_population(parts, target.x_mm, x_max_mm=target.stroke_mm)
    with np.errstate(invalid="ignore"):
        ok = target.in_spec(r.force_N, band_pct) & r.finite
    return ok.reshape(n, n_samples).mean(axis=1)


def standard_error(share: float | np.ndarray, n_samples: int) -> float | np.ndarray:
    """Monte Carlo standard error of a share from ``n_samples`` parts, ``sqrt(p (1 - p) / N)``."""
    p = np.asarray(share, dtype=float)
    se = np.sqrt(p * (1.0 - p) / n_samples)
    return float(se) if se.ndim == 0 else se


def worst_standard_error(n_samples: int) -> float:
    """The largest standard error of a share of ``n_samples`` parts (at p = 1/2)."""
    return 0.5 / math.sqrt(n_samples)
