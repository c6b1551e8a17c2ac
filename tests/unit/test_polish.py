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


def _run(lock, solve, ids):
    threads = [threading.Thread(target=solve, args=(i,)) for i in ids]
    for t in threads:
        t.start()
    lock.begin()
    for t in threads:
        t.join()


def test_lockstep_answers_every_solver_with_one_call_per_round():
    # three solvers of Rosenbrock's problem (Moré, Garbow & Hillstrom 1981, problem 1, minimum
    # (1, 1)) from different starts: in lockstep the answers they give alone; as many calls as
    # the longest solve has requests; never two solvers running at once
    def rosen(blocks):
        return [np.stack([10.0 * (b[:, 1] - b[:, 0] ** 2), 1.0 - b[:, 0]], axis=1) for b in blocks]

    starts = [np.array([-1.2, 1.0]), np.array([2.0, 3.0]), np.array([0.5, -0.5])]
    alone = [least_squares(lambda z: rosen([z[None]])[0][0], s, method="trf").x for s in starts]
    lock = _Lockstep(rosen, [0, 1, 2])
    got, asks, running = {}, {}, []

    def solve(i):
        def fun(z):
            asks[i] = asks.get(i, 0) + 1
            running.remove(i)
            r = lock.evaluate(i, z[None])[0]
            running.append(i)
            assert running == [i]
            return r
        try:
            lock.wait_turn(i)
            running.append(i)
            assert running == [i]
            got[i] = least_squares(fun, starts[i], method="trf").x
            running.remove(i)
        finally:
            lock.leave(i)

    _run(lock, solve, [0, 1, 2])
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

    lock = _Lockstep(resid, [0, 1])
    seen = {}

    def ask(i):
        try:
            lock.wait_turn(i)
            seen[i] = lock.evaluate(i, np.array([[2.0 if i == 0 else 9.0, 0.0]]))
        except ValueError as e:
            seen[i] = e
        finally:
            lock.leave(i)

    _run(lock, ask, [0, 1])
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
