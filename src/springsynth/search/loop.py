"""The genetic search (NSGA-II, pymoo 0.6.2) and the local polish: a thin adapter.

The physics lives in the element kernels and :mod:`._problem`; this module only
connects it to pymoo (vectorised ``Problem``, mixed-variable operators on one float
matrix, hash-based duplicate elimination) and to scipy's least squares.
"""

from __future__ import annotations

import math
import pickle
import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.core.crossover import Crossover
from pymoo.core.duplicate import DuplicateElimination
from pymoo.core.mutation import Mutation
from pymoo.core.problem import Problem
from pymoo.core.repair import Repair
from pymoo.core.sampling import Sampling
from pymoo.indicators.hv import HV
from pymoo.operators.survival.rank_and_crowding import RankAndCrowding
from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting
from scipy.optimize import least_squares

from springsynth.search.scoring import CONSTRAINTS, Encoding, Scores, score
from springsynth.model.study import Study

__all__ = ["run_search", "SearchOutcome", "Progress", "hypervolume"]


@dataclass(frozen=True)
class Progress:
    """What the search reports after each generation (for a progress bar)."""

    generation: int
    generations: int
    evaluations: int
    feasible_share: float
    best_error_pct: float
    hypervolume: float


@dataclass
class SearchOutcome:
    """What :func:`run_search` returns: the designs found (as genomes), their scores and the record."""

    X: np.ndarray                 # genomes of the returned designs (n, n_var)
    scores: Scores                # their scores
    feasible_found: bool
    history: list[dict] = field(default_factory=list)
    evaluations: int = 0
    polish: dict = field(default_factory=dict)
    timings: dict = field(default_factory=dict)
    partial: bool = False          # stopped early on request; ``checkpoint`` resumes it
    checkpoint: bytes | None = None
    study: Study | None = None     # the study searched (from the checkpoint when resumed)
    budget: tuple[int, int, int] = (0, 0, 0)  # seed, population, generations


# ---------------------------------------------------------------------- operators

class _Problem(Problem):
    def __init__(self, study: Study, enc: Encoding):
        super().__init__(n_var=enc.n_var, n_obj=3, n_ieq_constr=len(CONSTRAINTS), xl=enc.xl, xu=enc.xu)
        self.study, self.enc = study, enc

    def _evaluate(self, X, out, *args, **kwargs):
        sc = score(self.study, self.enc.decode(X))
        out["F"], out["G"] = sc.F, sc.G


class _Sampling(Sampling):
    def __init__(self, enc: Encoding, seed_X: np.ndarray | None = None):
        super().__init__()
        self.enc, self.seed_X = enc, seed_X

    def _do(self, problem, n_samples, *args, random_state=None, **kwargs):
        X = random_genomes(self.enc, n_samples, random_state)
        if self.seed_X is not None and len(self.seed_X):
            k = min(len(self.seed_X), n_samples // 2)
            X[:k] = self.seed_X[:k]
        return X


def random_genomes(enc: Encoding, n: int, rng: np.random.Generator) -> np.ndarray:
    """Uniform random genomes; slots after the first are empty with probability 1/2."""
    X = enc.xl + rng.random((n, enc.n_var)) * (enc.xu - enc.xl)
    K = len(enc.kinds)
    for s in range(enc.S):
        b = s * enc.G
        X[:, b] = rng.integers(1, K + 1, n)
        if s > 0:
            X[rng.random(n) < 0.5, b] = 0
        X[:, b + 2] = rng.integers(1, int(enc.xu[b + 2]) + 1, n)
    return X


class _Crossover(Crossover):
    """Slot-wise uniform crossover, then SBX on the real genes of slots whose kinds agree."""

    def __init__(self, enc: Encoding, eta: float = 15.0):
        super().__init__(2, 2, prob=0.9)
        self.enc, self.eta = enc, eta

    def _do(self, problem, X, *args, random_state=None, **kwargs):
        enc, rng = self.enc, random_state
        a, b = X[0].copy(), X[1].copy()
        n = a.shape[0]
        swap = rng.random((n, enc.S)) < 0.5
        swap_g = np.repeat(swap, enc.G, axis=1)
        c1, c2 = np.where(swap_g, b, a), np.where(swap_g, a, b)
        same = np.repeat(np.round(c1[:, ::enc.G]) == np.round(c2[:, ::enc.G]), enc.G, axis=1)
        real = same & ~enc.categorical[None, :] & (rng.random(c1.shape) < 0.5)
        y1, y2 = _sbx(c1, c2, enc.xl, enc.xu, self.eta, rng)
        c1, c2 = np.where(real, y1, c1), np.where(real, y2, c2)
        return np.stack([c1, c2])


def _sbx(a, b, xl, xu, eta, rng):
    """Simulated binary crossover (Deb & Agrawal 1995), bounded form, vectorised."""
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    d = np.maximum(hi - lo, 1e-14)
    u = rng.random(a.shape)

    def child(beta_side):
        alpha = 2.0 - beta_side ** (-(eta + 1.0))
        q = np.where(u <= 1.0 / alpha, (u * alpha) ** (1.0 / (eta + 1.0)),
                     (1.0 / np.maximum(2.0 - u * alpha, 1e-14)) ** (1.0 / (eta + 1.0)))
        return q

    q1 = child(1.0 + 2.0 * (lo - xl) / d)
    q2 = child(1.0 + 2.0 * (xu - hi) / d)
    y1 = 0.5 * ((lo + hi) - q1 * d)
    y2 = 0.5 * ((lo + hi) + q2 * d)
    flip = rng.random(a.shape) < 0.5
    y1, y2 = np.where(flip, y2, y1), np.where(flip, y1, y2)
    return np.clip(y1, xl, xu), np.clip(y2, xl, xu)


class _Mutation(Mutation):
    """Polynomial mutation on real and integer genes; reset-to-another-category on categories.

    A slot whose kind changes gets fresh random dimensions (the old ones meant
    something else).
    """

    def __init__(self, enc: Encoding, eta: float = 20.0):
        super().__init__(prob=1.0)
        self.enc, self.eta = enc, eta

    def _do(self, problem, X, *args, random_state=None, **kwargs):
        enc, rng = self.enc, random_state
        X = X.copy()
        n, nv = X.shape
        p_var = 1.0 / (enc.S * (2 + min(enc.P, 4)))
        real = ~enc.categorical
        m = (rng.random((n, nv)) < p_var) & real[None, :]
        X = np.where(m, _pm(X, enc.xl, enc.xu, self.eta, rng), X)
        K = len(enc.kinds)
        for s in range(enc.S):
            b = s * enc.G
            change = rng.random(n) < p_var
            new = rng.integers(0 if s else 1, K + 1, n).astype(float)
            changed = change & (new != np.round(X[:, b]))
            X[changed, b] = new[changed]
            X[np.ix_(changed, np.arange(b + 4, b + enc.G))] = rng.random((changed.sum(), enc.P))
            mm = rng.random(n) < p_var
            X[mm, b + 1] = rng.random(mm.sum()) * (1 - 1e-9)
        return X


def _pm(X, xl, xu, eta, rng):
    """Polynomial mutation (Deb & Goyal 1996), vectorised, bounded."""
    d = xu - xl
    d1, d2 = (X - xl) / d, (xu - X) / d
    u = rng.random(X.shape)
    p = 1.0 / (eta + 1.0)
    lo = 2 * u + (1 - 2 * u) * (1 - d1) ** (eta + 1)
    hi = 2 * (1 - u) + 2 * (u - 0.5) * (1 - d2) ** (eta + 1)
    dq = np.where(u <= 0.5, np.abs(lo) ** p - 1.0, 1.0 - np.abs(hi) ** p)
    return np.clip(X + dq * d, xl, xu)


class _Repair(Repair):
    """Round integer and category genes; nothing else (rounding reals would destroy them)."""

    def __init__(self, enc: Encoding):
        super().__init__()
        self.enc = enc

    def _do(self, problem, X, **kwargs):
        X = X.copy()
        cols = self.enc.integer.copy()
        cols[0::self.enc.G] = True
        X[:, cols] = np.round(X[:, cols])
        return np.clip(X, self.enc.xl, self.enc.xu)


class _HashDuplicates(DuplicateElimination):
    """Duplicates by hashing rounded genome rows: O(n), not pymoo's O(n^2) distance matrix."""

    @staticmethod
    def _keys(pop):
        X = pop.get("X")
        return [r.tobytes() for r in np.round(X, 9)]

    def _do(self, pop, other, is_duplicate):
        keys = self._keys(pop)
        seen = set(self._keys(other)) if other is not None else set()
        for i, k in enumerate(keys):
            if k in seen:
                is_duplicate[i] = True
            else:
                seen.add(k)
        return is_duplicate


class _TopologySurvival(RankAndCrowding):
    """NSGA-II survival that keeps a share of places for topologies otherwise lost.

    A new element kind joins a design with random dimensions and is nearly always
    worse at first than the designs around it, so plain rank-and-crowding survival
    drops it before crossover and mutation can tune it: the population settles on
    the first topology that works. Here the best-ranked ``1 - share`` of survivors
    are chosen as usual; the remaining places go first to the best member of each
    topology (the set of kinds in a design) not yet among them, then as usual.
    """

    def __init__(self, enc: Encoding, share: float = 0.25):
        super().__init__()
        self.enc, self.share = enc, share

    def do(self, problem, pop, *args, n_survive=None, random_state=None, return_indices=False, **kwargs):
        n_survive = min(n_survive or len(pop), len(pop))
        n_head = n_survive - int(self.share * n_survive)
        head = list(super().do(problem, pop, *args, n_survive=n_head, random_state=random_state,
                               return_indices=True, **kwargs))
        keys = topology_keys(self.enc, pop.get("X"))
        seen = {keys[i] for i in head}
        rest = np.setdiff1d(np.arange(len(pop)), head)
        cv, err = pop.get("CV")[:, 0], pop.get("F")[:, 0]
        extra = []
        for i in rest[np.lexsort((err[rest], cv[rest]))]:
            if len(extra) >= n_survive - n_head:
                break
            if keys[i] not in seen:
                seen.add(keys[i])
                extra.append(int(i))
        fill: list[int] = []
        left = n_survive - n_head - len(extra)
        if left > 0:
            others = np.setdiff1d(rest, extra)
            picked = super().do(problem, pop[others], *args, n_survive=left, random_state=random_state,
                                return_indices=True, **kwargs)
            fill = [int(others[j]) for j in picked]
        idx = head + extra + fill
        out = pop[idx]
        for ind in out:
            if ind.get("crowding") is None:
                ind.set("crowding", 0.0)
        return idx if return_indices else out


def topology_keys(enc: Encoding, X: np.ndarray) -> list[bytes]:
    """One key per genome: its sorted kind genes (the multiset of kinds, slots in any order)."""
    K = np.sort(np.round(X[:, ::enc.G]).astype(np.int16), axis=1)
    return [r.tobytes() for r in K]


# ---------------------------------------------------------------------- metrics

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


# ---------------------------------------------------------------------- search

def run_search(study: Study, *, seed: int, population: int, generations: int,
               warm_start: np.ndarray | None = None,
               on_generation: Callable[[Progress], None] | None = None,
               polish: bool = True, max_designs: int = 24,
               should_stop: Callable[[], bool] | None = None,
               resume: bytes | None = None) -> SearchOutcome:
    """NSGA-II over the study's genome, then the local polish of the Pareto designs.

    ``should_stop`` is asked after every generation; when it answers True the search
    stops there and returns the current front unpolished, marked partial, with a
    checkpoint (``SearchOutcome.checkpoint``). Passing that checkpoint back as
    ``resume`` continues exactly where it stopped: the finished result is identical
    to an uninterrupted run with the same seed.
    """
    if resume is not None:
        state = pickle.loads(resume)
        algo, history, polish_evals, inject_at = state["algo"], state["history"], state["polish_evals"], state["inject_at"]
        problem = algo.problem
        study, enc = problem.study, problem.enc
        generations = state["generations"]
        t_offset = history[-1]["time_s"] if history else 0.0
    else:
        enc = Encoding(study)
        problem = _Problem(study, enc)
        algo = NSGA2(pop_size=population, sampling=_Sampling(enc, warm_start), crossover=_Crossover(enc),
                     mutation=_Mutation(enc), repair=_Repair(enc), eliminate_duplicates=_HashDuplicates(),
                     survival=_TopologySurvival(enc))
        algo.setup(problem, termination=("n_gen", generations), seed=seed, verbose=False)
        history = []
        polish_evals = 0
        inject_at = {generations // 3, (2 * generations) // 3} if polish and generations >= 12 else set()
        t_offset = 0.0
    t0 = time.perf_counter() - t_offset
    while algo.has_next():
        algo.next()
        if algo.n_gen in inject_at:
            polish_evals += _inject_polished(study, enc, problem, algo)
        pop = algo.pop
        F, G = pop.get("F"), pop.get("G")
        ok = np.all(G <= 0, axis=1)
        best = float(F[ok, 0].min()) if ok.any() else math.nan
        hv = hypervolume(study, F, G)
        rec = dict(generation=int(algo.n_gen) - 1, evaluations=int(algo.evaluator.n_eval) + polish_evals,
                   feasible_share=float(ok.mean()), best_error_pct=best, hypervolume=hv,
                   time_s=time.perf_counter() - t0)
        history.append(rec)
        if on_generation is not None:
            on_generation(Progress(rec["generation"], generations, rec["evaluations"], rec["feasible_share"],
                                   best, hv))
        if should_stop is not None and algo.has_next() and should_stop():
            checkpoint = pickle.dumps({"algo": algo, "history": history, "polish_evals": polish_evals,
                                       "inject_at": inject_at, "generations": generations},
                                      protocol=pickle.HIGHEST_PROTOCOL)
            Xpop = algo.pop.get("X")
            X, sc, feasible_found = _front(study, enc, Xpop, score(study, enc.decode(Xpop)), max_designs)
            return SearchOutcome(X=X, scores=sc, feasible_found=feasible_found, history=history,
                                 evaluations=int(algo.evaluator.n_eval) + polish_evals,
                                 timings={"search_s": time.perf_counter() - t0}, partial=True,
                                 checkpoint=checkpoint, study=study,
                                 budget=(int(algo.seed), int(algo.pop_size), generations))
    t_search = time.perf_counter() - t0
    Xpop = algo.pop.get("X")
    sc_pop = score(study, enc.decode(Xpop))
    X, sc, feasible_found = _front(study, enc, Xpop, sc_pop, max_designs)
    out = SearchOutcome(X=X, scores=sc, feasible_found=feasible_found, history=history,
                        evaluations=int(algo.evaluator.n_eval) + polish_evals, study=study,
                        budget=(int(algo.seed), int(algo.pop_size), generations))
    t1 = time.perf_counter()
    if polish:
        # polish the front and the best member of every topology in the final population:
        # a topology can be one polish away from the lowest error while still dominated
        front_rows = _front_rows(X, Xpop)
        front_rows = front_rows[np.argsort(sc_pop.F[front_rows, 0], kind="stable")[:12]]
        starts = np.unique(np.r_[front_rows, _best_per_topology(enc, Xpop, sc_pop, per_topology=2)]).astype(np.intp)
        X2, info = polish_designs(study, enc, Xpop[starts], _take(sc_pop, starts))
        if len(X2):
            allX = np.vstack([Xpop, X2])
            out.X, out.scores, out.feasible_found = _front(study, enc, allX, score(study, enc.decode(allX)),
                                                           max_designs)
        out.polish = info
        out.evaluations += info["evaluations"]
    out.timings = {"search_s": t_search, "polish_s": time.perf_counter() - t1}
    return out


def _inject_polished(study, enc, problem, algo) -> int:
    """Memetic step: polish the best design of each topology and merge the results back.

    Returns the number of model evaluations spent (each polish evaluates designs in batches).
    """
    from pymoo.core.evaluator import Evaluator
    from pymoo.core.population import Population

    X = algo.pop.get("X")
    sc = score(study, enc.decode(X))
    starts = _best_per_topology(enc, X, sc, per_topology=1)
    X2, info = polish_designs(study, enc, X[starts], _take(sc, starts), max_nfev=25)
    if len(X2):
        new = Population.new("X", X2)
        Evaluator().eval(problem, new)
        merged = Population.merge(algo.pop, new)
        algo.pop = algo.survival.do(problem, merged, n_survive=algo.pop_size, algorithm=algo,
                                    random_state=algo.random_state)
    return int(info.get("evaluations", 0))


def _front_rows(X_front, Xpop):
    """Rows of ``Xpop`` equal to rows of ``X_front``."""
    keys = {r.tobytes() for r in X_front}
    return np.array([i for i, r in enumerate(Xpop) if r.tobytes() in keys], dtype=np.intp)


def _best_per_topology(enc, X, sc: Scores, per_topology: int = 3):
    """For each topology present, the rows with the least violation, then the lowest error."""
    keys = topology_keys(enc, X)
    order = np.lexsort((sc.F[:, 0], sc.violation))
    best: dict[bytes, list[int]] = {}
    for i in order:
        rows = best.setdefault(keys[i], [])
        if len(rows) < per_topology:
            rows.append(int(i))
    return np.array(sorted(i for rows in best.values() for i in rows), dtype=np.intp)


def _take(sc: Scores, rows) -> Scores:
    return Scores(sc.F[rows], sc.G[rows], sc.response)


def _front(study, enc, X, sc: Scores, max_designs: int):
    """Feasible non-dominated designs (distinct), or the least-violating ones when none is feasible."""
    ok = sc.feasible
    if ok.any():
        idx = np.flatnonzero(ok)
        F = sc.F[idx]
        front = idx[NonDominatedSorting().do(F, only_non_dominated_front=True)]
        # distinct by objectives (different genomes can decode to the same design)
        _, first = np.unique(np.round(sc.F[front], 9), axis=0, return_index=True)
        front = front[np.sort(first)]
        if len(front) > max_designs:
            front = _thin(normalised_objectives(study, sc.F[front]), front, max_designs)
        feasible = True
    else:
        order = np.argsort(sc.violation, kind="stable")
        front = order[: min(5, len(order))]
        feasible = False
    front = front[np.lexsort((sc.F[front, 2], sc.F[front, 0]))]
    sub = enc.decode(X[front])
    return X[front], score(study, sub), feasible


def _thin(Z, idx, k):
    """Keep k points spread over the front: extremes of each objective, then farthest-point picks."""
    keep = list(dict.fromkeys(int(i) for i in np.argmin(Z, axis=0)))
    d = np.min(np.linalg.norm(Z[:, None, :] - Z[None, keep, :], axis=2), axis=1)
    while len(keep) < k:
        j = int(np.argmax(d))
        keep.append(j)
        d = np.minimum(d, np.linalg.norm(Z - Z[j], axis=1))
    return idx[np.sort(keep)]


# ---------------------------------------------------------------------- polish

#: constraints are held this far (normalised) inside their bounds during the polish
_POLISH_MARGIN = 0.01


def polish_designs(study: Study, enc: Encoding, X: np.ndarray, sc: Scores, *, max_nfev: int = 60):
    """Refine offsets and continuous dimensions of each design by bounded least squares.

    Residuals are the weighted curve misfit (its norm is ``curve_error_pct``) plus
    100 x each constraint value that comes within ``_POLISH_MARGIN`` of its bound, so the
    optimum stays just inside the feasible set;
    a refinement is kept only when it is feasible and lowers the error. Kinds,
    materials, counts, whole-number and categorical parameters stay fixed. The
    Jacobian is taken by forward differences, all perturbed designs evaluated in
    one population call.
    """
    t = study.target
    w = np.sqrt(t.weight / t.weight.sum()) * 100.0 / t.scale_N
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
            return np.hstack([r, 100.0 * np.maximum(s.G + _POLISH_MARGIN, 0.0)])

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
    for s in range(enc.S):
        b = s * enc.G
        k = int(round(x[b])) - 1
        if k < 0:
            continue
        out.append(b + 3)
        for j in range(enc.npar[k]):
            if not enc.rnd[k, j] and enc.nch[k, j] == 0:
                out.append(b + 4 + j)
    return np.array(out, dtype=np.intp)
