"""How good a front is: objectives normalised by their feasible ranges, and its hypervolume."""

from __future__ import annotations

import numpy as np
from pymoo.indicators.hv import HV

from springsynth.model.study import Study

__all__ = ["normalised_objectives", "hypervolume"]


def normalised_objectives(study: Study, F: np.ndarray) -> np.ndarray:
    """Objectives scaled by their feasible ranges for the hypervolume: error / limits.max_error_pct,
    stress ratio / limits.stress_ratio, size / envelope volume, fatigue ratio / limits.fatigue_ratio,
    1 - in-spec share as it is (a feasible design lies in the unit cube)."""
    env = study.envelope
    lim = study.limits
    scale = {"curve_error_pct": lim.max_error_pct, "stress_ratio": lim.stress_ratio,
             "size_mm3": env.length_mm * env.width_mm * env.height_mm, "fatigue_ratio": lim.fatigue_ratio,
             "in_spec_share": 1.0}
    return np.stack([F[:, j] / scale[o] for j, o in enumerate(study.search.objectives)], axis=1)


_HV = {3: HV(ref_point=np.ones(3))}


def hypervolume(study: Study, F: np.ndarray, G: np.ndarray) -> float:
    """Hypervolume of the feasible points in the normalised objective space, reference (1, 1, 1)."""
    ok = np.all(G <= 0, axis=1)
    if not ok.any():
        return 0.0
    Z = normalised_objectives(study, F[ok])
    Z = Z[np.all(Z < 1.0, axis=1)]
    if not len(Z):
        return 0.0
    k = Z.shape[1]
    if k not in _HV:
        _HV[k] = HV(ref_point=np.ones(k))
    return float(_HV[k](Z))
