"""The polish: a projected Levenberg–Marquardt method solving many small bounded least-squares
problems at once, checked on published test problems with known minima, then on designs."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import springsynth as ss
from springsynth.search.encoding import Encoding
from springsynth.search.loop import run_search
from springsynth.search.polish import polish_designs, solve_batch
from springsynth.search.scoring import score, study_constraints

ROOT = Path(__file__).resolve().parents[2]


def _rosenbrock(z):        # Moré, Garbow & Hillstrom 1981, "Testing unconstrained optimization software", problem 1
    return np.stack([10.0 * (z[:, 1] - z[:, 0] ** 2), 1.0 - z[:, 0], 0 * z[:, 0]], axis=1)


def _beale(z):             # ibid., problem 5: minimum 0 at (3, 0.5)
    y = np.array([1.5, 2.25, 2.625])
    return y - z[:, :1] * (1.0 - z[:, 1:2] ** np.arange(1, 4))


def _helical_valley(z):    # ibid., problem 7: minimum 0 at (1, 0, 0)
    x1, x2, x3 = z[:, 0], z[:, 1], z[:, 2]
    theta = np.arctan2(x2, x1) / (2 * np.pi)
    return np.stack([10.0 * (x3 - 10.0 * theta), 10.0 * (np.hypot(x1, x2) - 1.0), x3], axis=1)


#: (residuals, n, start (the paper's), lower, upper, the minimiser)
PROBLEMS = [
    (_rosenbrock, 2, [-1.2, 1.0], [-5, -5], [5, 5], [1.0, 1.0]),
    (_beale, 2, [1.0, 1.0], [-4.5, -4.5], [4.5, 4.5], [3.0, 0.5]),
    (_helical_valley, 3, [-1.0, 0.0, 0.0], [-5, -5, -5], [5, 5, 5], [1.0, 0.0, 0.0]),
    # Rosenbrock's problem with x1 <= 0.5: the minimum lies on that bound, at (0.5, 0.25), where the
    # first residual vanishes and the cost is (1 - 0.5)^2 / 2 = 0.125 (worked by hand)
    (_rosenbrock, 2, [-1.2, 1.0], [-5, -5], [0.5, 5], [0.5, 0.25]),
]


def _padded():
    n = max(p[1] for p in PROBLEMS)
    k = len(PROBLEMS)
    z0, lb, ub = np.zeros((k, n)), np.zeros((k, n)), np.zeros((k, n))
    mask = np.zeros((k, n), dtype=bool)
    for i, (_, m, s, lo, hi, _) in enumerate(PROBLEMS):
        z0[i, :m], lb[i, :m], ub[i, :m], mask[i, :m] = s, lo, hi, True
    calls = []

    def residuals(Z, owner):
        calls.append(np.unique(owner))
        out = np.zeros((len(Z), 3))
        for i, (f, m, *_) in enumerate(PROBLEMS):
            rows = owner == i
            if rows.any():
                assert np.all(Z[rows, m:] == 0.0)          # padding never moves
                out[rows] = f(Z[rows, :m])
        return out

    return residuals, z0, lb, ub, mask, calls


def test_every_problem_reaches_its_known_minimum_in_one_call_per_step():
    residuals, z0, lb, ub, mask, calls = _padded()
    fit = solve_batch(residuals, z0, lb, ub, mask, max_steps=200)
    for i, p in enumerate(PROBLEMS):
        m = p[1]
        assert np.allclose(fit.z[i, :m], p[5], atol=1e-5), (i, fit.z[i])
    assert np.allclose(fit.cost, [0, 0, 0, 0.125], atol=1e-10)
    assert fit.solved.all() and fit.calls == len(calls) == 1 + fit.steps.max()
    # every call holds each unfinished problem's point with its forward differences (n + 1 rows)
    assert fit.evaluations == sum(p[1] + 1 for p in PROBLEMS) * (1 + 0) + sum(
        (p[1] + 1) * s for p, s in zip(PROBLEMS, fit.steps))


def test_a_problem_that_cannot_be_evaluated_stays_with_itself():
    # the second problem raises outside x1 < 2; the call then runs problem by problem and only its
    # trial points are refused: the first problem solves as before, the second stays inside
    def residuals(Z, owner):
        if np.any(Z[owner == 1, 0] > 2.0):
            raise ValueError("outside the model")
        return np.stack([Z[:, 0] - np.where(owner == 1, 3.0, 1.0), 0 * Z[:, 0]], axis=1)

    z0 = np.array([[0.0], [0.0]])
    fit = solve_batch(residuals, z0, z0 - 10, z0 + 10, np.ones((2, 1), dtype=bool), max_steps=50)
    assert fit.z[0, 0] == pytest.approx(1.0, abs=1e-9)
    assert 0.0 < fit.z[1, 0] <= 2.0 and fit.cost[1] < 0.5 * 3.0 ** 2


@pytest.mark.parametrize("generations", [12, 30])
def test_the_polish_lowers_the_error_of_designs_and_keeps_them_feasible(generations):
    # after 12 generations no design of this small run meets every constraint: the polish makes
    # some feasible; after 30 some do, and the polish lowers the lowest error among them
    study = ss.load_study(ROOT / "studies" / "latch-preload.toml")
    enc = Encoding(study)
    cols = study_constraints(study, smooth=True)
    out = run_search(study, seed=3, population=48, generations=generations, polish=False)
    X, sc = out.X[:8], score(study, enc.decode(out.X[:8]))
    ok = np.all(sc.G[:, cols] <= 0, axis=1)
    X2, info = polish_designs(study, enc, X, sc, max_steps=15)
    assert info["starts"] == len(X) and info["calls"] <= 16 and len(X2) == info["improved"] + info["made_feasible"] >= 1
    s2 = score(study, enc.decode(X2), with_yield=False)
    assert np.all(s2.G[:, cols] <= 0)
    if generations == 12:
        assert not ok.any() and info["made_feasible"] >= 1
    else:
        assert ok.any() and info["improved"] >= 1 and s2.F[:, 0].min() < sc.F[ok, 0].min()
