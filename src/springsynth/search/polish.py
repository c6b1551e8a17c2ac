"""The local polish: bounded least squares on the continuous genes of designs (scipy), all designs
evaluated together.

Each starting design is refined by its own ``scipy.optimize.least_squares`` (trust region
reflective), exactly as if it were alone. The model, though, costs far more per call than
per design, so the solvers run side by side in lockstep: each runs in a thread of its own
that hands every point it needs (a trial point, or a point with its finite-difference
perturbations) to a shared :class:`_Lockstep` and waits; when every unfinished solver has
asked, the points of all of them are evaluated in one population call, in design order,
and each solver goes on with its own rows. A polish of some thirty designs then makes a
hundred calls instead of a few thousand. The solvers take turns, in design order: exactly
one thread runs at a time (the others wait for their turn), so nothing is computed
concurrently and the results are those of solving the designs one after another, the same
on every run.
"""

from __future__ import annotations

import threading

import numpy as np
from scipy.optimize import least_squares

from springsynth.assembly.evaluate import evaluate_population
from springsynth.checks.fatigue import fatigue_population
from springsynth.model.study import Study
from springsynth.search.encoding import Encoding
from springsynth.search.scoring import Scores, constraints, score, study_constraints
from springsynth.search.settings import SETTINGS

__all__ = ["polish_designs"]

#: forward-difference step on the genes (unit genes span [0, 1], the offset gene a few strokes)
_H = 1e-6


def polish_designs(study: Study, enc: Encoding, X: np.ndarray, sc: Scores, *, max_nfev: int = SETTINGS.polish_max_nfev):
    """Refine offsets and continuous dimensions of each design by bounded least squares.

    Residuals are the weighted curve misfit (its norm is ``curve_error_pct``) plus
    100 x each constraint value that comes within ``SETTINGS.polish_margin`` of its bound, so the
    optimum stays just inside the feasible set;
    a refinement is kept only when it is feasible and lowers the error. The in-spec share, a
    step function of the design, is left out of both: the refinements join the population
    (or the final front) and are scored there with it, beside the designs they came from. Kinds,
    materials, counts, whole-number and categorical parameters stay fixed. The
    Jacobian is taken by forward differences. Every design's solver runs in lockstep
    with the others (:class:`_Lockstep`): all the points they ask for at one step are
    evaluated in one population call. Under ``stock = "standard"`` the stock sizes stay fixed
    and the other genes are polished unrounded; the result is rounded to its resolution (the
    decode does it) and evaluated again, and kept only if that rounded design is still
    feasible and better.

    Returns
    -------
    X_new : ndarray, shape (k, n_var)
        The refinements kept.
    info : dict
        starts, improved, made_feasible, evaluations (designs evaluated), calls (population
        calls made) and the median error reduction, best error before and after.
    """
    t = study.target
    w = np.sqrt(t.weight / t.weight.sum()) * 100.0 / t.scale_N
    cols = study_constraints(study, smooth=True)   # those that apply and have a gradient (not the in-spec share)

    def residuals(blocks: list[np.ndarray]) -> list[np.ndarray]:
        """Residuals of each block of genomes, shape (rows, m + constraints), from one model call."""
        edges = np.cumsum([len(b) for b in blocks])[:-1]
        slots = enc.decode(np.vstack(blocks), snap=False)   # unrounded: rounded once, below, and evaluated again
        r = evaluate_population(slots, t.x_mm, x_max_mm=t.stroke_mm)
        with np.errstate(all="ignore"):
            # the curve error block by block: the last bits of a matrix product depend on its number
            # of rows, and each solver must see exactly what it would see alone
            err = np.concatenate([t.curve_error_pct(f) for f in np.split(r.force_N, edges)])
            fatigue = fatigue_population(slots, study.duty) if study.duty is not None else None
        G = constraints(study, r, err, fatigue)[:, cols]
        R = np.hstack([(r.force_N - t.force_N) * w, 100.0 * np.maximum(G + SETTINGS.polish_margin, 0.0)])
        return np.split(R, edges)

    X = np.asarray(X, dtype=float)
    jobs = [(i, f) for i, f in ((i, _free_genes(enc, x)) for i, x in enumerate(X)) if f.size]
    lock = _Lockstep(residuals, [i for i, _ in jobs])
    found: dict[int, np.ndarray] = {}
    threads = [threading.Thread(target=_solve, args=(lock, i, X[i], free, enc, max_nfev, found), daemon=True)
               for i, free in jobs]
    for th in threads:
        th.start()
    lock.begin()
    for th in threads:
        th.join()
    lock.raise_failure()
    kept, gains, repaired = [], [], 0
    rows = sorted(found)
    if rows:
        cand = np.array([found[i] for i in rows])
        s_new = score(study, enc.decode(cand), with_yield=False)
        for c, i in enumerate(rows):
            was_ok = bool(np.all(sc.G[i, cols] <= 0))
            if np.all(s_new.G[c, cols] <= 0) and (not was_ok or s_new.F[c, 0] < sc.F[i, 0] * (1 - 1e-6)):
                kept.append(cand[c])
                if was_ok:
                    gains.append((sc.F[i, 0], s_new.F[c, 0]))
                else:
                    repaired += 1
    return _summary(study, enc, X, sc, kept, gains, repaired, lock, cols)


def _solve(lock: "_Lockstep", i: int, x0: np.ndarray, free: np.ndarray, enc: Encoding, max_nfev: int,
           found: dict) -> None:
    """One design's least squares (a thread's work); its result lands in ``found[i]``."""

    def full(z):
        Z = np.repeat(x0[None, :], z.shape[0], axis=0)
        Z[:, free] = z
        return Z

    def fun(z):
        return lock.evaluate(i, full(z[None, :]))[0]

    def jac(z):
        Z = np.vstack([z, z + _H * np.eye(z.size)])
        R = lock.evaluate(i, full(Z))
        return ((R[1:] - R[0]) / _H).T

    lb, ub = enc.xl[free], enc.xu[free]
    try:
        lock.wait_turn(i)
        res = least_squares(fun, np.clip(x0[free], lb, ub), jac=jac, bounds=(lb, ub), method="trf",
                            max_nfev=max_nfev, x_scale="jac")
        found[i] = full(res.x[None, :])[0]
    except (ValueError, np.linalg.LinAlgError, _Abandoned):
        pass
    finally:
        lock.leave(i)


class _Abandoned(Exception):
    """Raised in the waiting solvers when the shared evaluation failed (the failure itself is re-raised
    in the calling thread by :meth:`_Lockstep.raise_failure`)."""


class _Lockstep:
    """Solvers ``ids`` taking turns, in this order, and one population call for a round of their requests.

    Exactly one solver runs at a time: it runs until it asks for residuals
    (``evaluate(i, rows)``) or ends (``leave(i)``), then hands the turn to the next solver
    of the round; the last to ask evaluates every block of the round in one call (in solver
    order, so the call is the same on every run) and hands the turn back to the first. A
    thread waits for its first turn with ``wait_turn``; ``begin()`` gives the first one.
    """

    def __init__(self, residuals, ids: list[int]):
        self._residuals = residuals
        self._order = list(ids)                       # solvers still running, in turn order
        self._turn = {i: threading.Event() for i in ids}
        self._asked: dict[int, np.ndarray] = {}
        self._answers: dict[int, object] = {}
        self._failure: BaseException | None = None
        self._mutex = threading.Lock()                # for the solvers leaving together after a failure
        self.calls = 0
        self.evaluations = 0

    def begin(self) -> None:
        if self._order:
            self._turn[self._order[0]].set()

    def wait_turn(self, i: int) -> None:
        self._turn[i].wait()
        self._turn[i].clear()
        if self._failure is not None:
            raise _Abandoned

    def evaluate(self, i: int, rows: np.ndarray) -> np.ndarray:
        self._asked[i] = rows
        self._pass_on(self._order.index(i) + 1)
        self.wait_turn(i)
        answer = self._answers.pop(i)
        if isinstance(answer, Exception):
            raise answer
        return answer

    def leave(self, i: int) -> None:
        with self._mutex:
            at = self._order.index(i)
            self._order.pop(at)
            if self._failure is not None:      # every solver is awake and leaving
                return
        self._turn.pop(i)
        self._pass_on(at)

    def raise_failure(self) -> None:
        if self._failure is not None:
            raise self._failure

    def _pass_on(self, at: int) -> None:
        """The turn to the solver at position ``at`` of this round, or, past the last one, the round's
        call and then the turn to the first solver (every waiting solver, when the call failed)."""
        if at < len(self._order):
            self._turn[self._order[at]].set()
            return
        if self._asked:
            order = [k for k in self._order if k in self._asked]
            blocks = [self._asked.pop(k) for k in order]
            try:
                self._answers.update(zip(order, self._evaluate(blocks)))
            except BaseException as e:  # noqa: BLE001 - an interrupt: re-raised by raise_failure in the caller
                self._failure = e
                for ev in list(self._turn.values()):
                    ev.set()
                return
        if self._order:
            self._turn[self._order[0]].set()

    def _evaluate(self, blocks: list[np.ndarray]) -> list:
        """Residuals of every block from one call; when that call raises, block by block, each
        block's own error going back to its solver (as if it had been evaluated alone)."""
        try:
            out = self._residuals(blocks)
            self.calls += 1
            self.evaluations += sum(len(b) for b in blocks)
            return out
        except Exception:  # noqa: BLE001 - found again below, block by block
            out = []
            for b in blocks:
                try:
                    out.append(self._residuals([b])[0])
                    self.evaluations += len(b)
                except Exception as e:  # noqa: BLE001 - raised in the solver that asked
                    out.append(e)
                self.calls += 1
            return out


def _summary(study, enc, X, sc, kept, gains, repaired, lock: _Lockstep, cols: np.ndarray):
    ok = np.all(sc.G[:, cols] <= 0, axis=1)
    info = {"starts": int(len(X)), "improved": len(gains), "made_feasible": repaired,
            "evaluations": int(lock.evaluations), "calls": int(lock.calls)}
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
