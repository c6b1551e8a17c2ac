"""The polish solves every design as if alone, while evaluating all of them together."""

from __future__ import annotations

import threading
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import least_squares

import springsynth as ss
from springsynth.search.encoding import Encoding
from springsynth.search.loop import run_search
from springsynth.search.polish import _Lockstep, polish_designs
from springsynth.search.scoring import score

ROOT = Path(__file__).resolve().parents[2]


def test_lockstep_answers_every_solver_with_one_call_per_round():
    # three solvers of Rosenbrock-like problems (Moré, Garbow & Hillstrom 1981, problem 1,
    # minimum (1, 1)) of different starts: solved alone and in lockstep, the same answers;
    # in lockstep as many calls as the longest solve has requests
    def rosen(blocks):
        out = []
        for b in blocks:
            out.append(np.stack([10.0 * (b[:, 1] - b[:, 0] ** 2), 1.0 - b[:, 0]], axis=1))
        return out

    starts = [np.array([-1.2, 1.0]), np.array([2.0, 3.0]), np.array([0.5, -0.5])]
    alone = [least_squares(lambda z: rosen([z[None]])[0][0], s, method="trf").x for s in starts]
    lock = _Lockstep(rosen, len(starts))
    got, asks = {}, {}

    def solve(i):
        def fun(z):
            asks[i] = asks.get(i, 0) + 1
            return lock.evaluate(i, z[None])[0]
        try:
            got[i] = least_squares(fun, starts[i], method="trf").x
        finally:
            lock.leave()

    threads = [threading.Thread(target=solve, args=(i,)) for i in range(len(starts))]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for i, x in enumerate(alone):
        assert np.array_equal(got[i], x)
        assert np.allclose(x, [1.0, 1.0], atol=1e-6)
    assert lock.calls == max(asks.values()) and lock.evaluations == sum(asks.values())


def test_an_error_in_one_design_stays_with_its_solver():
    # the shared call fails; each block is then evaluated alone and only the solver whose
    # block raised sees the error (as when every design was evaluated on its own)
    def resid(blocks):
        out = []
        for b in blocks:
            if np.any(b[:, 0] > 5.0):
                raise ValueError("outside the model")
            out.append(b - 1.0)
        return out

    lock = _Lockstep(resid, 2)
    seen = {}

    def ask(i, x):
        try:
            seen[i] = lock.evaluate(i, np.array([[x, 0.0]]))
        except ValueError as e:
            seen[i] = e
        finally:
            lock.leave()

    threads = [threading.Thread(target=ask, args=(0, 2.0)), threading.Thread(target=ask, args=(1, 9.0))]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert np.array_equal(seen[0], [[1.0, -1.0]])
    assert isinstance(seen[1], ValueError)


@pytest.mark.slow
def test_polishing_designs_together_gives_what_polishing_each_alone_gives():
    study = ss.load_study(ROOT / "studies" / "latch-preload.toml")
    enc = Encoding(study)
    out = run_search(study, seed=3, population=24, generations=12, polish=False)
    X = out.X[:6]
    sc = score(study, enc.decode(X))
    together, info = polish_designs(study, enc, X, sc, max_nfev=15)
    alone = [polish_designs(study, enc, X[i:i + 1], score(study, enc.decode(X[i:i + 1])), max_nfev=15)
             for i in range(len(X))]
    assert info["starts"] == len(X) >= 3 and info["improved"] + info["made_feasible"] >= 1 and info["calls"] <= 2 * 15 + 1
    assert info["evaluations"] == sum(a[1]["evaluations"] for a in alone)
    assert np.array_equal(together, np.vstack([a[0] for a in alone]))
