"""The local polish: bounded least squares on the continuous genes of designs (scipy)."""

from __future__ import annotations

import numpy as np
from scipy.optimize import least_squares

from springsynth.model.study import Study
from springsynth.search.encoding import Encoding
from springsynth.search.scoring import Scores, score, study_constraints
from springsynth.search.settings import SETTINGS

__all__ = ["polish_designs"]


def polish_designs(study: Study, enc: Encoding, X: np.ndarray, sc: Scores, *, max_nfev: int = SETTINGS.polish_max_nfev):
    """Refine offsets and continuous dimensions of each design by bounded least squares.

    Residuals are the weighted curve misfit (its norm is ``curve_error_pct``) plus
    100 x each constraint value that comes within ``SETTINGS.polish_margin`` of its bound, so the
    optimum stays just inside the feasible set;
    a refinement is kept only when it is feasible and lowers the error. Kinds,
    materials, counts, whole-number and categorical parameters stay fixed. The
    Jacobian is taken by forward differences, all perturbed designs evaluated in
    one population call.
    """
    t = study.target
    w = np.sqrt(t.weight / t.weight.sum()) * 100.0 / t.scale_N
    cols = study_constraints(study)     # the constraints that apply; the others are -1 throughout
    kept, gains, repaired = [], [], 0
    n_eval = [0]
    for i in range(len(X)):
        x0 = X[i]
        free = _free_genes(enc, x0)
        if not free.size:
            continue

        def full(z):
            Z = np.repeat(x0[None, :], z.shape[0], axis=0)
            Z[:, free] = z
            return Z

        def resid_many(Z):
            n_eval[0] += Z.shape[0]
            s = score(study, enc.decode(Z))
            r = (s.response.force_N - t.force_N) * w
            return np.hstack([r, 100.0 * np.maximum(s.G[:, cols] + SETTINGS.polish_margin, 0.0)])

        fun = lambda z: resid_many(full(z[None, :]))[0]  # noqa: E731

        def jac(z):
            h = 1e-6
            Z = np.vstack([z, z + h * np.eye(z.size)])
            R = resid_many(full(Z))
            return ((R[1:] - R[0]) / h).T

        lb, ub = enc.xl[free], enc.xu[free]
        z0 = np.clip(x0[free], lb, ub)
        try:
            res = least_squares(fun, z0, jac=jac, bounds=(lb, ub), method="trf", max_nfev=max_nfev,
                                x_scale="jac")
        except (ValueError, np.linalg.LinAlgError):
            continue
        cand = full(res.x[None, :])
        s_new = score(study, enc.decode(cand))
        was_ok = bool(np.all(sc.G[i] <= 0))
        if s_new.feasible[0] and (not was_ok or s_new.F[0, 0] < sc.F[i, 0] * (1 - 1e-6)):
            kept.append(cand[0])
            if was_ok:
                gains.append((sc.F[i, 0], s_new.F[0, 0]))
            else:
                repaired += 1
    ok = np.all(sc.G <= 0, axis=1)
    info = {"starts": int(len(X)), "improved": len(gains), "made_feasible": repaired, "evaluations": n_eval[0]}
    if gains:
        g = np.array(gains)
        info["median_reduction_pct"] = float(np.median(100 * (1 - g[:, 1] / g[:, 0])))
    if ok.any():
        info["best_error_before_pct"] = float(sc.F[ok, 0].min())
    if kept:
        s_all = score(study, enc.decode(np.array(kept)))
        info["best_error_after_pct"] = float(min(s_all.F[:, 0].min(), info.get("best_error_before_pct", np.inf)))
    return (np.array(kept) if kept else np.empty((0, X.shape[1]))), info


def _free_genes(enc: Encoding, x: np.ndarray) -> np.ndarray:
    """Indices of the continuous genes of the occupied slots (offset and real-valued dimensions)."""
    out = []
    link = enc.links(x[None, :])[0]
    for s in range(enc.n_slots):
        b = s * enc.genes_per_slot
        k = int(round(x[b])) - 1
        if k < 0:
            continue
        if not link[s]:         # a chain's offset is its first slot's
            out.append(b + 3)
        for j in range(enc.n_search_params[k]):
            if not enc.param_integer[k, j] and enc.param_choices[k, j] == 0:
                out.append(b + 4 + j)
    return np.array(out, dtype=np.intp)
