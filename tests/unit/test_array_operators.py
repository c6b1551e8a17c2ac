"""The search's survival, tournament and evaluator work on arrays; they must choose exactly what
pymoo's own per-individual implementations (pymoo 0.6.2, the reference) choose."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest
from pymoo.algorithms.moo.nsga2 import binary_tournament
from pymoo.core.evaluator import Evaluator
from pymoo.core.individual import calc_cv
from pymoo.core.population import Population
from pymoo.core.problem import Problem
from pymoo.operators.survival.rank_and_crowding import RankAndCrowding

from springsynth.search.operators import _Evaluator, _TopologySurvival, tournament


class _Toy(Problem):
    """Three objectives with ties and two constraints, some designs infeasible."""

    def __init__(self):
        super().__init__(n_var=2, n_obj=3, n_ieq_constr=2, xl=0.0, xu=1.0)

    def _evaluate(self, X, out, *args, **kwargs):
        a, b = np.round(X[:, 0], 1), np.round(X[:, 1], 1)      # rounded: equal objectives and crowding ties
        out["F"] = np.stack([a, 1 - a + b, (a - 0.5) ** 2 + b], axis=1)
        out["G"] = np.stack([b - 0.7, 0.2 - a], axis=1)


def _population(seed, n=60, evaluator=Evaluator):
    X = np.random.default_rng(seed).random((n, 2))
    pop = Population.new("X", X)
    evaluator().eval(_Toy(), pop)
    return pop


@pytest.mark.parametrize("seed", range(5))
def test_our_evaluator_sets_what_pymoos_sets(seed):
    ours, theirs = _population(seed, evaluator=_Evaluator), _population(seed)
    for a, b in zip(ours, theirs):
        assert np.array_equal(a.F, b.F) and np.array_equal(a.G, b.G) and a.evaluated == b.evaluated
        assert np.array_equal(a.CV, b.CV) and np.array_equal(a.CV, [calc_cv(G=b.G, H=b.H)])


@pytest.mark.parametrize("seed", range(5))
@pytest.mark.parametrize("n_survive", [10, 30, 55])
def test_rank_and_crowding_on_arrays_keeps_what_pymoo_keeps(seed, n_survive):
    pop = _population(seed)
    ref = RankAndCrowding().do(_Toy(), pop, n_survive=n_survive, random_state=np.random.default_rng(seed),
                               return_indices=True)
    ours = _TopologySurvival(enc=None)
    F = np.array([ind.F for ind in pop])
    cv = np.array([ind.CV[0] for ind in pop])
    rank, crowd = np.full(len(pop), -1), np.zeros(len(pop))
    got = ours._rank_and_crowding(F, cv, np.arange(len(pop)), n_survive, np.random.default_rng(seed), rank, crowd)
    assert list(got) == list(ref)
    for i in got:                        # pymoo wrote rank and crowding into the individuals it sorted
        if cv[i] <= 0:
            assert rank[i] == pop[i].get("rank") and crowd[i] == pop[i].get("crowding")


@pytest.mark.parametrize("seed", range(5))
def test_the_tournament_on_arrays_picks_pymoos_winners(seed):
    pop = _population(seed)
    RankAndCrowding().do(_Toy(), pop, n_survive=len(pop), random_state=np.random.default_rng(0))   # rank, crowding
    P = np.random.default_rng(seed + 10).integers(0, len(pop), (200, 2))
    algo = SimpleNamespace(tournament_type="comp_by_dom_and_crowding", random_state=np.random.default_rng(seed))
    ref = binary_tournament(pop, P, algo)
    got = tournament(pop, P, None, random_state=np.random.default_rng(seed))
    assert np.array_equal(got, ref)
    assert len(np.unique(got)) > 10                  # not one design winning everything
