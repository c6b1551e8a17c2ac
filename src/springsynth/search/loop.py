"""The generation loop: NSGA-II (pymoo 0.6.2) over the study's genome, memetic polish steps,
stopping and resuming, then the final polish of the front.

The physics lives in the element kernels and :mod:`springsynth.search.scoring`; the
operators in :mod:`~springsynth.search.operators`, the polish in
:mod:`~springsynth.search.polish`, checkpoints in :mod:`~springsynth.search.checkpoint`.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Callable

import numpy as np
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.operators.selection.tournament import TournamentSelection

from springsynth.model.study import Study
from springsynth.search import checkpoint
from springsynth.search.encoding import Encoding
from springsynth.search.front import best_per_topology, pareto_front, rows_of, take
from springsynth.search.metrics import hypervolume
from springsynth.search.operators import (
    _Crossover,
    _Evaluator,
    _HashDuplicates,
    _Mutation,
    _Problem,
    _Repair,
    _Sampling,
    _TopologySurvival,
    tournament,
    values,
)
from springsynth.search.polish import polish_designs
from springsynth.search.scoring import CONSTRAINTS, Scores, score
from springsynth.search.settings import SETTINGS

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


def run_search(study: Study, *, seed: int, population: int, generations: int,
               warm_start: np.ndarray | None = None,
               on_generation: Callable[[Progress], None] | None = None,
               polish: bool = True, max_designs: int = SETTINGS.max_designs,
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
        state = _State.resumed(resume)
    else:
        state = _State.fresh(study, seed=seed, population=population, generations=generations,
                             warm_start=warm_start, polish=polish)
    t0 = time.perf_counter() - state.elapsed_s
    while state.algo.has_next():
        _generation(state, t0, on_generation)
        if should_stop is not None and state.algo.has_next() and should_stop():
            return _stopped(state, t0, max_designs)
    return _finish(state, t0, polish, max_designs)


@dataclass
class _State:
    """Everything a search needs to go on: what a checkpoint holds."""

    algo: NSGA2
    history: list[dict]
    polish_evals: int
    inject_at: set[int]
    generations: int

    @property
    def problem(self) -> _Problem:
        return self.algo.problem

    @property
    def elapsed_s(self) -> float:
        return self.history[-1]["time_s"] if self.history else 0.0

    @property
    def evaluations(self) -> int:
        return int(self.algo.evaluator.n_eval) + self.polish_evals

    @property
    def budget(self) -> tuple[int, int, int]:
        return int(self.algo.seed), int(self.algo.pop_size), self.generations

    @classmethod
    def fresh(cls, study: Study, *, seed: int, population: int, generations: int,
              warm_start: np.ndarray | None, polish: bool) -> "_State":
        enc = Encoding(study)
        algo = NSGA2(pop_size=population, sampling=_Sampling(enc, warm_start), crossover=_Crossover(enc),
                     selection=TournamentSelection(func_comp=tournament),
                     mutation=_Mutation(enc), repair=_Repair(enc), eliminate_duplicates=_HashDuplicates(enc),
                     survival=_TopologySurvival(enc), evaluator=_Evaluator())
        algo.setup(_Problem(study, enc), termination=("n_gen", generations), seed=seed, verbose=False)
        inject_at = ({generations // 3, (2 * generations) // 3}
                     if polish and generations >= SETTINGS.inject_min_generations else set())
        return cls(algo, [], 0, inject_at, generations)

    @classmethod
    def resumed(cls, data: bytes) -> "_State":
        s = checkpoint.loads(data)
        _pad_constraints(s["algo"])
        return cls(s["algo"], s["history"], s["polish_evals"], s["inject_at"], s["generations"])

    def dumps(self) -> bytes:
        return checkpoint.dumps({"algo": self.algo, "history": self.history, "polish_evals": self.polish_evals,
                                 "inject_at": self.inject_at, "generations": self.generations})


def _pad_constraints(algo: NSGA2) -> None:
    """A checkpoint written before a constraint was added: its designs satisfy the new ones (-1).

    Constraints are only ever appended (``CONSTRAINTS``), and a study of that time asked for
    none of the new ones (a study without a duty scores -1 on ``fatigue``), so padding the
    stored values gives what evaluating them again would.
    """
    from pymoo.core.population import Population

    k = len(CONSTRAINTS)
    if algo.problem.n_ieq_constr == k:
        return
    algo.problem.n_ieq_constr = k
    for pop in vars(algo).values():
        if isinstance(pop, Population):
            for ind in pop:
                g = np.asarray(ind.G, dtype=float)
                if g.size and g.size < k:
                    ind.G = np.r_[g, np.full(k - g.size, -1.0)]


def _generation(state: _State, t0: float, on_generation: Callable[[Progress], None] | None) -> None:
    """One generation, a memetic polish step where one is due, and its record."""
    algo = state.algo
    algo.next()
    if algo.n_gen in state.inject_at:
        state.polish_evals += _inject_polished(state.problem.study, state.problem.enc, state.problem, algo)
    F, G = values(algo.pop, "F"), values(algo.pop, "G")
    ok = np.all(G <= 0, axis=1)
    best = float(F[ok, 0].min()) if ok.any() else math.nan
    hv = hypervolume(state.problem.study, F, G)
    rec = dict(generation=int(algo.n_gen) - 1, evaluations=state.evaluations, feasible_share=float(ok.mean()),
               best_error_pct=best, hypervolume=hv, time_s=time.perf_counter() - t0)
    state.history.append(rec)
    if on_generation is not None:
        on_generation(Progress(rec["generation"], state.generations, rec["evaluations"], rec["feasible_share"],
                               best, hv))


def _stopped(state: _State, t0: float, max_designs: int) -> SearchOutcome:
    """The front so far, unpolished and marked partial, with the checkpoint that resumes it."""
    study, enc = state.problem.study, state.problem.enc
    Xpop = values(state.algo.pop, "X")
    X, sc, feasible_found = pareto_front(study, enc, Xpop, score(study, enc.decode(Xpop)), max_designs)
    return SearchOutcome(X=X, scores=sc, feasible_found=feasible_found, history=state.history,
                         evaluations=state.evaluations, timings={"search_s": time.perf_counter() - t0},
                         partial=True, checkpoint=state.dumps(), study=study, budget=state.budget)


def _finish(state: _State, t0: float, polish: bool, max_designs: int) -> SearchOutcome:
    """The front of the last population, then the final polish. Where the study asks for the in-spec
    share, the front is chosen on the share of ``SETTINGS.yield_samples`` parts (the loop's
    small sample are their first parts): ties and lucky draws of the small sample are settled there."""
    study, enc = state.problem.study, state.problem.enc
    t_search = time.perf_counter() - t0
    Xpop = values(state.algo.pop, "X")
    full = SETTINGS.yield_samples      # the front is chosen on the full sample of the in-spec share
    sc_pop = score(study, enc.decode(Xpop), yield_samples=full)
    X, sc, feasible_found = pareto_front(study, enc, Xpop, sc_pop, max_designs, yield_samples=full)
    out = SearchOutcome(X=X, scores=sc, feasible_found=feasible_found, history=state.history,
                        evaluations=state.evaluations, study=study, budget=state.budget)
    t1 = time.perf_counter()
    if polish:
        _final_polish(out, study, enc, Xpop, sc_pop, max_designs)
    out.timings = {"search_s": t_search, "polish_s": time.perf_counter() - t1}
    return out


def _final_polish(out: SearchOutcome, study: Study, enc: Encoding, Xpop: np.ndarray, sc_pop: Scores,
                  max_designs: int) -> None:
    """Polish the front and the best members of every topology in the final population, in place.

    A topology can be one polish away from the lowest error while still dominated.
    """
    front_rows = rows_of(out.X, Xpop)
    front_rows = front_rows[np.argsort(sc_pop.F[front_rows, 0], kind="stable")[:SETTINGS.polish_lowest]]
    starts = np.unique(np.r_[front_rows, best_per_topology(enc, Xpop, sc_pop,
                                                           per_topology=SETTINGS.polish_per_topology)]).astype(np.intp)
    X2, info = polish_designs(study, enc, Xpop[starts], take(sc_pop, starts))
    if len(X2):
        allX = np.vstack([Xpop, X2])
        full = SETTINGS.yield_samples
        out.X, out.scores, out.feasible_found = pareto_front(study, enc, allX,
                                                             score(study, enc.decode(allX), yield_samples=full),
                                                             max_designs, yield_samples=full)
    out.polish = info
    out.evaluations += info["evaluations"]


def _inject_polished(study, enc, problem, algo) -> int:
    """Memetic step: polish the best designs of each topology and merge the results back.

    Returns the number of model evaluations spent (each polish evaluates designs in batches).
    """
    from pymoo.core.population import Population

    X = values(algo.pop, "X")
    sc = score(study, enc.decode(X))
    starts = best_per_topology(enc, X, sc, per_topology=SETTINGS.inject_per_topology)
    X2, info = polish_designs(study, enc, X[starts], take(sc, starts), max_steps=SETTINGS.inject_steps)
    if len(X2):
        new = Population.new("X", X2)
        _Evaluator().eval(problem, new)
        merged = Population.merge(algo.pop, new)
        algo.pop = algo.survival.do(problem, merged, n_survive=algo.pop_size, algorithm=algo,
                                    random_state=algo.random_state)
    return int(info.get("evaluations", 0))
