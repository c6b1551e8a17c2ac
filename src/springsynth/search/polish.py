"""The local polish: bounded least squares on the continuous genes of designs, all designs at once.

Every starting design is a small bounded least-squares problem of its own (a few to some twenty
free genes, one residual per curve point and per constraint near its bound). They are solved
together by :func:`solve_batch`, a damped Gauss–Newton method vectorised over the problems: at
each step every unfinished problem takes one damped step, and the trial points of all of them, each
with the forward-difference perturbations that give its Jacobian, are evaluated in one population
call. The model costs far more per call than per design, so a polish of some forty designs makes a
few dozen calls.

Method: Levenberg 1944 and Marquardt 1963 (damped normal equations), with the damping updated from
the ratio of actual to predicted reduction as in Nielsen 1999 (Madsen, Nielsen & Tingleff, "Methods
for non-linear least squares problems", 2004, eq. 3.16); bounds as in scipy's "trf" method, by the
scaling of Coleman & Li (Branch, Coleman & Li 1999, SIAM J. Sci. Comput. 21(1)), under which a
variable slows down as it nears the bound its descent direction points at, and a step that stops
short of the bounds (:func:`_damped_step`).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from springsynth.assembly.evaluate import evaluate_population
from springsynth.checks.fatigue import fatigue_population
from springsynth.model.study import Study
from springsynth.search.encoding import Encoding
from springsynth.search.scoring import CONSTRAINTS, Scores, constraints, score, study_constraints
from springsynth.search.settings import SETTINGS

__all__ = ["polish_designs", "solve_batch"]

#: forward-difference step on the genes (unit genes span [0, 1], the offset gene a few strokes)
_H = 1e-6
#: a problem stops when a step lowers its cost by less than this share (scipy's default ``ftol``) ...
_FTOL = 1e-8
#: ... or moves its point by less than this share of its size (scipy's default ``xtol``) ...
_XTOL = 1e-8
#: ... or its damping grows past this (no step along the gradient lowers the cost any more)
_LAM_MAX = 1e12
#: the damping of the first step
_LAM0 = 1e-2


def polish_designs(study: Study, enc: Encoding, X: np.ndarray, sc: Scores, *, max_steps: int = SETTINGS.polish_steps):
    """Refine offsets and continuous dimensions of each design by bounded least squares.

    Residuals are the weighted curve misfit (its norm is ``curve_error_pct``) plus
    100 x each constraint value that comes within ``SETTINGS.polish_margin`` of its bound, so the
    optimum stays just inside the feasible set; a refinement is kept only when it is feasible and
    lowers the error. The in-spec share, a step function of the design, is left out of both: the
    refinements join the population (or the final front) and are scored there with it, beside the
    designs they came from. Kinds, materials, counts, whole-number and categorical parameters stay
    fixed. All designs are solved together by :func:`solve_batch`, at most ``max_steps`` steps each.
    Under ``stock = "standard"`` the stock sizes stay fixed and the other genes are polished
    unrounded; the result is rounded to its resolution (the decode does it) and evaluated again, and
    kept only if that rounded design is still feasible and better.

    Returns
    -------
    X_new : ndarray, shape (k, n_var)
        The refinements kept.
    info : dict
        starts, improved, made_feasible, evaluations (designs evaluated), calls (population
        calls made) and the median error reduction, best error before and after.
    """
    X = np.asarray(X, dtype=float)
    cols = study_constraints(study, smooth=True)   # those that apply and have a gradient (not the in-spec share)
    free = [_free_genes(enc, x) for x in X]
    jobs = np.array([i for i, f in enumerate(free) if f.size], dtype=np.intp)
    n = max((free[i].size for i in jobs), default=0)
    genes = np.full((len(jobs), n), X.shape[1], dtype=np.intp)      # padding points at a spare column
    for row, i in enumerate(jobs):
        genes[row, :free[i].size] = free[i]
    mask = genes < X.shape[1]
    xl, xu = np.r_[enc.xl, 0.0], np.r_[enc.xu, 0.0]
    Xj = np.hstack([X[jobs], np.zeros((len(jobs), 1))])
    z0 = np.take_along_axis(Xj, genes, axis=1)

    def genomes(Z: np.ndarray, owner: np.ndarray) -> np.ndarray:
        full = Xj[owner].copy()
        np.put_along_axis(full, genes[owner], Z, axis=1)
        return full[:, :-1]

    rules = sorted(evaluate_population(enc.decode(X[jobs], snap=False), study.target.x_mm[:1]).validity) if len(jobs) else []
    fit = solve_batch(_residual_function(study, enc, cols, genomes, rules), z0, xl[genes], xu[genes], mask,
                      max_steps=max_steps)
    kept, gains, repaired = [], [], 0
    ok = fit.solved
    if ok.any():
        cand = genomes(fit.z[ok], np.flatnonzero(ok))
        s_new = score(study, enc.decode(cand), with_yield=False)
        for c, i in enumerate(jobs[ok]):
            was_ok = bool(np.all(sc.G[i, cols] <= 0))
            if np.all(s_new.G[c, cols] <= 0) and (not was_ok or s_new.F[c, 0] < sc.F[i, 0] * (1 - 1e-6)):
                kept.append(cand[c])
                if was_ok:
                    gains.append((sc.F[i, 0], s_new.F[c, 0]))
                else:
                    repaired += 1
    return _summary(study, enc, X, sc, kept, gains, repaired, fit, cols)


def _residual_function(study: Study, enc: Encoding, cols: np.ndarray, genomes: Callable, rules: list[str]):
    """The residuals of points of the polish's problems, ``(Z, owner) -> R`` of shape (rows, m + constraints).

    Constraints that are a maximum of several margins have a kink where the worst one changes, and a
    Gauss–Newton step stalls on such kinks, while a sum of squared hinges is smooth to first order. So
    the validity constraint (the worst margin over the rules of the trade) is split into one hinge per
    rule (``rules``; a rule not among them joins the last), and the cross-section (the larger of the
    width and height ratios in the better orientation) into a hinge for each of the two."""
    t = study.target
    w = np.sqrt(t.weight / t.weight.sum()) * 100.0 / t.scale_N
    split = [CONSTRAINTS.index("validity"), CONSTRAINTS.index("envelope_cross")]
    others = cols[~np.isin(cols, split)]

    def residuals(Z: np.ndarray, owner: np.ndarray) -> np.ndarray:
        slots = enc.decode(genomes(Z, owner), snap=False)   # unrounded: rounded once, after, and evaluated again
        r = evaluate_population(slots, t.x_mm, x_max_mm=t.stroke_mm)
        with np.errstate(all="ignore"):
            err = t.curve_error_pct(r.force_N)
            fatigue = fatigue_population(slots, study.duty) if study.duty is not None else None
        G = constraints(study, r, err, fatigue)[:, others]
        V = _rule_margins(r.validity, rules, len(Z))
        C = _cross_margins(r.box_mm, study.envelope)
        return np.hstack([(r.force_N - t.force_N) * w,
                          100.0 * np.maximum(np.hstack([G, V, C]) + SETTINGS.polish_margin, 0.0)])

    return residuals


def _cross_margins(box_mm: np.ndarray, env) -> np.ndarray:
    """Width and height margins (n, 2) in the better of the two quarter-turn orientations, the parts of
    :func:`~springsynth.assembly.evaluate.envelope_margins`' cross-section margin."""
    w, h = box_mm[:, 1], box_mm[:, 2]
    upright = np.maximum(w / env.width_mm, h / env.height_mm) <= np.maximum(w / env.height_mm, h / env.width_mm)
    return np.stack([np.where(upright, w / env.width_mm, h / env.width_mm),
                     np.where(upright, h / env.height_mm, w / env.height_mm)], axis=1) - 1.0


def _rule_margins(validity: dict, rules: list[str], n: int) -> np.ndarray:
    """The margins of the named rules, shape (n, len(rules)); rules not named fold into the last column."""
    V = np.full((n, max(len(rules), 1)), -np.inf)
    for name, v in validity.items():
        j = rules.index(name) if name in rules else V.shape[1] - 1
        V[:, j] = np.maximum(V[:, j], v)
    return V


class BatchFit:
    """What :func:`solve_batch` found: points ``z`` (k, n), costs ``0.5 |r|²`` (k,), ``solved`` (k,)
    (False where the start itself could not be evaluated), ``steps`` taken (k,), ``calls`` made and
    ``evaluations`` (points evaluated)."""

    def __init__(self, z, cost, solved, steps, calls, evaluations):
        self.z, self.cost, self.solved, self.steps = z, cost, solved, steps
        self.calls, self.evaluations = calls, evaluations


def solve_batch(residuals: Callable[[np.ndarray, np.ndarray], np.ndarray], z0: np.ndarray, lb: np.ndarray,
                ub: np.ndarray, mask: np.ndarray, *, max_steps: int, h: float = _H) -> BatchFit:
    """Minimise ``0.5 |r_i(z_i)|²`` subject to ``lb_i <= z_i <= ub_i`` for k problems at once.

    Parameters
    ----------
    residuals : callable
        ``residuals(Z, owner)``: the residual vectors (rows, m) of the points ``Z`` (rows, n), row j
        a point of problem ``owner[j]``; all rows of one step come in one call. Rows that cannot
        be evaluated are returned as NaN (the trial is then refused).
    z0, lb, ub : ndarray, shape (k, n)
        Starting points and bounds. Entries outside ``mask`` are padding: never moved, never
        evaluated apart.
    mask : ndarray of bool, shape (k, n)
        The variables of each problem (problems may have different numbers of variables).
    max_steps : int
        Steps per problem at most (one call each; the Jacobian of an accepted point comes with it).
    h : float
        Forward-difference step (taken backwards at an upper bound).
    """
    k, n = z0.shape
    z = np.clip(z0, lb + 1e-10 * (ub - lb), ub - 1e-10 * (ub - lb))    # strictly inside, as scipy's "trf" starts
    lam, nu = np.full(k, _LAM0), np.full(k, 2.0)
    steps = np.zeros(k, dtype=np.intp)
    tally = {"calls": 0, "evaluations": 0}
    r, J = _with_jacobian(residuals, z, np.arange(k), lb, ub, mask, h, tally)
    cost = 0.5 * np.einsum("km,km->k", r, r)
    cn = _column_norms(J, mask, np.zeros((k, n)))
    solved = np.isfinite(cost)
    active = solved.copy()
    for _ in range(max_steps):
        a = np.flatnonzero(active)
        if not a.size:
            break
        delta, pred = _damped_step(J[a], r[a], z[a], lb[a], ub[a], mask[a], lam[a], cn[a])
        zt = np.where(mask[a], np.clip(z[a] + delta, lb[a], ub[a]), z[a])
        rt, Jt = _with_jacobian(residuals, zt, a, lb, ub, mask, h, tally)
        with np.errstate(invalid="ignore", over="ignore"):
            ct = 0.5 * np.einsum("km,km->k", rt, rt)
            ct = np.where(np.isfinite(ct), ct, np.inf)
            gain = cost[a] - ct
            rho = np.where(pred > 0, gain / np.where(pred > 0, pred, 1.0), 0.0)
        acc = gain > 0
        steps[a] += 1
        moved = np.linalg.norm(zt - z[a], axis=1)
        small = (gain <= _FTOL * cost[a]) | (moved <= _XTOL * (_XTOL + np.linalg.norm(z[a], axis=1)))
        lam[a] = np.where(acc, lam[a] * np.maximum(1 / 3, 1 - (2 * np.minimum(rho, 1.0) - 1) ** 3), lam[a] * nu[a])
        nu[a] = np.where(acc, 2.0, 2.0 * nu[a])
        take = a[acc]
        z[take], r[take], J[take], cost[take] = zt[acc], rt[acc], Jt[acc], ct[acc]
        cn[take] = _column_norms(Jt[acc], mask[take], cn[take])
        active[a[(acc & small) | (cost[a] == 0.0) | (lam[a] > _LAM_MAX)]] = False
    return BatchFit(z, cost, solved, steps, tally["calls"], tally["evaluations"])


def _column_norms(J, mask, before):
    """The largest Jacobian column norms seen, (k, n) (scipy's ``x_scale="jac"``); 1 where a column is zero."""
    cn = np.maximum(before, np.sqrt(np.einsum("knm,knm->kn", J, J)))
    return np.where(mask & (cn > 0), cn, 1.0)


def _with_jacobian(residuals, z, owner, lb, ub, mask, h, tally):
    """Residuals (k, m) at the points ``z`` (k, n) of problems ``owner`` and their forward-difference
    Jacobians (k, n, m), from one call."""
    k, n = z.shape
    hs = np.where(z + h > ub[owner], -h, h)
    P = np.repeat(z[:, None, :], n + 1, axis=1)
    P[:, 1:, :] += hs[:, None, :] * np.eye(n)
    valid = np.hstack([np.ones((k, 1), dtype=bool), mask[owner]])
    R = _evaluate(residuals, P[valid], np.repeat(owner, valid.sum(axis=1)), tally)
    full = np.zeros((k, n + 1, R.shape[1]))
    full[valid] = R
    r = full[:, 0]
    with np.errstate(invalid="ignore"):
        J = (full[:, 1:] - r[:, None, :]) / hs[:, :, None]
    J = np.where(mask[owner][:, :, None] & np.isfinite(J), J, 0.0)
    return r, J


def _evaluate(residuals, P: np.ndarray, owner: np.ndarray, tally: dict) -> np.ndarray:
    """``residuals(P, owner)`` in one call; when that call raises, problem by problem, the rows of a
    problem whose own call raises NaN (its trial is refused, as if it had been evaluated alone)."""
    tally["evaluations"] += len(P)
    tally["calls"] += 1
    try:
        R = np.asarray(residuals(P, owner), dtype=float)
        tally["width"] = R.shape[1]
        return R
    except Exception:  # noqa: BLE001 - found again below, problem by problem
        tally["calls"] -= 1
    out = None
    for i in np.unique(owner):
        rows = owner == i
        tally["calls"] += 1
        try:
            R = np.asarray(residuals(P[rows], owner[rows]), dtype=float)
        except Exception:  # noqa: BLE001 - this problem's trial is refused
            continue
        tally["width"] = R.shape[1]
        if out is None:
            out = np.full((len(P), R.shape[1]), np.nan)
        out[rows] = R
    if out is None:
        if "width" not in tally:
            raise ValueError("no starting point of the polish could be evaluated")
        out = np.full((len(P), tally["width"]), np.nan)
    return out


def _damped_step(J, r, z, lb, ub, mask, lam, cn):
    """The damped step ``δ`` (k, n) in Coleman & Li's scaled variables and the reduction of ``0.5 |r|²``
    its quadratic model predicts (k,).

    As in scipy's bounded trust-region method ("trf"; Branch, Coleman & Li 1999, SIAM J. Sci. Comput.
    21(1)): each variable is scaled by ``sqrt(v) / cn``, where ``v`` is its distance to the bound its
    descent direction points at (so a variable slows down as it nears that bound) and ``cn`` the
    largest column norm of its Jacobian seen so far; the model gains the diagonal term ``g dv / cn``.
    The damped system ``(Ĵᵀ Ĵ + diag(c) + λ I) p = -ĝ`` replaces the trust-region subproblem, and the
    variables that would cross a bound stop short of it (at the share ``max(0.995, 1 - |g v|_inf)`` of
    the way), the others keep their step."""
    A = np.einsum("knm,kpm->knp", J, J)
    g = np.einsum("knm,km->kn", J, np.nan_to_num(r))
    dv = np.where(mask, np.sign(g), 0.0)
    v = np.where(g < 0, ub - z, np.where(g > 0, z - lb, 1.0))
    v = np.where(dv != 0, v * cn, v)
    dh = np.where(mask, np.sqrt(v) / cn, 0.0)
    Ah = A * dh[:, :, None] * dh[:, None, :]
    gh = g * dh
    c = np.where(mask, g * dv / cn, 0.0)
    M = Ah + np.eye(A.shape[1]) * (c + np.where(mask, lam[:, None], 1.0))[:, :, None]
    p = np.linalg.solve(M, -gh[:, :, None])[:, :, 0]
    delta = dh * p
    theta = np.maximum(0.995, 1.0 - np.max(np.abs(g * v), axis=1))[:, None]
    cut = np.clip(delta, theta * (lb - z), theta * (ub - z))
    p = np.where(dh > 0, p * np.divide(cut, delta, out=np.ones_like(delta), where=delta != 0), 0.0)
    delta = cut
    pred = -(np.einsum("kn,kn->k", gh, p) + 0.5 * (np.einsum("kn,knp,kp->k", p, Ah, p) + np.einsum("kn,kn->k", c * p, p)))
    return delta, pred


def _summary(study, enc, X, sc, kept, gains, repaired, fit: BatchFit, cols: np.ndarray):
    ok = np.all(sc.G[:, cols] <= 0, axis=1)
    info = {"starts": int(len(X)), "improved": len(gains), "made_feasible": repaired,
            "evaluations": int(fit.evaluations), "calls": int(fit.calls)}
    if gains:
        g = np.array(gains)
        info["median_reduction_pct"] = float(np.median(100 * (1 - g[:, 1] / g[:, 0])))
    if ok.any():
        info["best_error_before_pct"] = float(sc.F[ok, 0].min())
    if kept:
        s_all = score(study, enc.decode(np.array(kept)), with_yield=False)
        info["best_error_after_pct"] = float(min(s_all.F[:, 0].min(), info.get("best_error_before_pct", np.inf)))
    return (np.array(kept) if kept else np.empty((0, X.shape[1]))), info


def _free_genes(enc: Encoding, x: np.ndarray) -> np.ndarray:
    """Indices of the continuous genes of the occupied slots (offset and real-valued dimensions, not stock sizes)."""
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
            if not enc.param_integer[k, j] and enc.param_choices[k, j] == 0 and not enc.stock_gene(k, j):
                out.append(b + 4 + j)
    return np.array(out, dtype=np.intp)
