"""How good a front is: objectives normalised by their feasible ranges, and its hypervolume."""

from __future__ import annotations

import numpy as np
from pymoo.indicators.hv import HV

from springsynth.model.study import Study

__all__ = ["normalised_objectives", "hypervolume"]


def normalised_objectives(study: Study, F: np.ndarray) -> np.ndarray:
    """Objectives scaled by their feasible ranges for the hypervolume: error / limits.max_error_pct,
    stress ratio / limits.stress_ratio, size / envelope volume (a feasible design lies in the unit cube)."""
    env = study.envelope
    vol = env.length_mm * env.width_mm * env.height_mm
    lim = study.limits
    return np.stack([F[:, 0] / lim.max_error_pct, F[:, 1] / lim.stress_ratio, F[:, 2] / vol], axis=1)


_HV = HV(ref_point=np.ones(3))


def hypervolume(study: Study, F: np.ndarray, G: np.ndarray) -> float:
    """Hypervolume of the feasible points in the normalised objective space, reference (1, 1, 1)."""
    ok = np.all(G <= 0, axis=1)
    if not ok.any():
        return 0.0
    Z = normalised_objectives(study, F[ok])
    Z = Z[np.all(Z < 1.0, axis=1)]
    return float(_HV(Z)) if len(Z) else 0.0
