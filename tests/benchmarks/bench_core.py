"""Throughput of the analytic core: designs evaluated per second (a script, not a test).

A population of 3-element designs of mixed kinds (every registered kind, random
materials that suit it, random dimensions inside the bounds, counts, gaps and
preloads) is evaluated at 64 stroke points through the same function the search
uses. Prints the median over repeats of designs/s, and the ratio to a plain numpy
cubic written with multiplications, ``x * (a + b * x * x)``, evaluated on an array of the
same size (n x 3 x 64) in the same loop (also the ratio of the fastest repeats, which other
processes on a shared machine disturb least); and the cost of one call at 120 designs (what
the search sees: a generation), the median over repeats of the mean of 20 calls.

``--per-kind`` also times each kind alone: ``n / 4`` one-element designs of that kind (about
its share of the rows of the mixed population) and 10 such designs (the fixed cost of a
kind per call). ``--one-core`` pins the process to one CPU (steadier on a shared machine).

Each figure is measured twice in the same process: first with the C library's default
allocator settings, then after ``keep_temporaries_on_heap()``, which the command line
applies at start (see ``springsynth/_allocator.py``).

With ``--chains`` it measures chains instead: a population of two-link designs evaluated
with the two slots in parallel, then the same population with the two slots as one chain
in series (the loading path composed from both links' curves, snaps included), for a
coil spring with a column, a coil spring with an arch (a falling link: the path folds),
and random pairs of every kind. Prints designs/s for both and the ratio of times.

Run:  python tests/benchmarks/bench_core.py [--n 20000] [--repeats 7] [--chains] [--per-kind] [--one-core]
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import statistics
import time

import numpy as np

from springsynth._allocator import keep_temporaries_on_heap
from springsynth.assembly.evaluate import evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.elements import registry
from springsynth.model.materials import catalogue


def random_population(n: int, slots: int = 3, seed: int = 0, kinds=None) -> Slots:
    rng = np.random.default_rng(seed)
    kinds = tuple(registry().values()) if kinds is None else tuple(registry()[k] for k in kinds)
    mats = tuple(catalogue().values())
    P = max(len(k.params) for k in kinds)
    kind = rng.integers(0, len(kinds), (n, slots))
    mat = np.zeros((n, slots), dtype=np.intp)
    params = np.zeros((n, slots, P))
    for ki, k in enumerate(kinds):
        suit = np.array([i for i, m in enumerate(mats) if m.suits(k.forms)])
        rows = kind == ki
        mat[rows] = rng.choice(suit, rows.sum())
        for j, q in enumerate(k.params):
            z = rng.random(rows.sum())
            if q.choices:
                v = np.floor(z * len(q.choices))
            elif q.log and q.lo > 0:
                v = q.lo * (q.hi / q.lo) ** z
            else:
                v = q.lo + z * (q.hi - q.lo)
            params[rows, j] = np.round(v) if q.integer else v
    count = rng.integers(1, 4, (n, slots)).astype(float)
    offset = rng.uniform(-2.0, 2.0, (n, slots))
    return Slots(kind, mat, count, offset, params, kinds, mats)


def pair_population(n: int, first, second, seed: int = 0) -> Slots:
    """n two-slot designs: slot 1 of a kind in ``first``, slot 2 of a kind in ``second`` (names)."""
    a = random_population(n, slots=1, seed=seed, kinds=first)
    b = random_population(n, slots=1, seed=seed + 1, kinds=second)
    kinds = tuple(dict.fromkeys(a.kinds + b.kinds))
    ka = np.array([kinds.index(k) for k in a.kinds])[a.kind]
    kb = np.array([kinds.index(k) for k in b.kinds])[b.kind]
    P = max(len(k.params) for k in kinds)
    params = np.zeros((n, 2, P))
    params[:, :1, :a.params.shape[2]] = a.params
    params[:, 1:, :b.params.shape[2]] = b.params
    return Slots(np.hstack([ka, kb]), np.hstack([a.material, b.material]), np.hstack([a.count, b.count]),
                 np.hstack([a.offset_mm, b.offset_mm]), params, kinds, a.materials)


def _median_time(pop: Slots, x: np.ndarray, repeats: int) -> float:
    evaluate_population(pop, x)     # warm-up
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        evaluate_population(pop, x)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def chains(n: int, repeats: int) -> None:
    """Two-link designs: the same population in parallel and as chains."""
    x = np.linspace(0.0, 5.0, 64)
    every = list(registry())
    cases = (("coil spring + column", ["helical_compression"], ["column"]),
             ("coil spring + arch (snaps)", ["helical_compression"], ["arch"]),
             ("random pairs of every kind", every, [k for k in every if k != "arch"]))
    print(f"population {n} x 2 elements x 64 points, {repeats} repeats (median)")
    for label, first, second in cases:
        par = pair_population(n, first, second)
        link = np.zeros(par.kind.shape, dtype=bool)
        link[:, 1] = True
        ch = dataclasses.replace(par, link=link)
        tp, tc = _median_time(par, x, repeats), _median_time(ch, x, repeats)
        print(f"{label}: in parallel {n / tp:,.0f} designs/s, as chains {n / tc:,.0f} designs/s; "
              f"ratio of times {tc / tp:.1f}")


def _median_call(pop: Slots, x: np.ndarray, repeats: int, calls: int) -> float:
    """Median over repeats of the mean time of ``calls`` calls, s."""
    evaluate_population(pop, x)
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        for _ in range(calls):
            evaluate_population(pop, x)
        times.append((time.perf_counter() - t0) / calls)
    return statistics.median(times)


def per_kind(n: int, repeats: int) -> None:
    """Each kind alone: n/4 one-element designs (its share of the mixed rows), and 10 (its fixed cost)."""
    x = np.linspace(0.0, 5.0, 64)
    rows = max(n // 4, 1)
    print(f"each kind alone: {rows} and 10 one-element designs x 64 points (median of {repeats})")
    for name in registry():
        big = _median_call(random_population(rows, slots=1, kinds=[name]), x, repeats, 1)
        small = _median_call(random_population(10, slots=1, kinds=[name]), x, repeats, 50)
        print(f"  {name:22s} {1e3 * big:8.2f} ms ({1e9 * big / (rows * x.size):5.1f} ns per point)   "
              f"10 designs {1e3 * small:6.3f} ms")


def mixed(n: int, repeats: int, kinds) -> None:
    """The mixed population against the plain cubic, and one call at 120 designs."""
    pop, small = random_population(n, kinds=kinds), random_population(120, seed=1, kinds=kinds)
    x = np.linspace(0.0, 5.0, 64)
    evaluate_population(pop, x)  # warm-up: builds cached tables
    arr = np.random.default_rng(1).random((n * 3, 64))
    a, b = 1.7, 0.3
    print(f"kinds: {', '.join(k.name for k in pop.kinds)}")
    print(f"population {n} x 3 elements x 64 points, {repeats} repeats (median)")
    for label in ("default allocator", "allocator as the command line sets it"):
        if label.startswith("allocator"):
            keep_temporaries_on_heap()
        t_core, t_cubic = [], []
        for _ in range(repeats):
            t0 = time.perf_counter()
            evaluate_population(pop, x)
            t_core.append(time.perf_counter() - t0)
            t0 = time.perf_counter()
            _ = arr * (a + b * arr * arr)
            t_cubic.append(time.perf_counter() - t0)
        med, medc = statistics.median(t_core), statistics.median(t_cubic)
        call = _median_call(small, x, repeats, 20)
        print(f"{label}: core {1e3 * med:.1f} ms ({n / med:,.0f} designs/s), plain cubic x*(a+b*x*x) "
              f"{1e3 * medc:.1f} ms; ratio of times {med / medc:.1f}; one call at 120 designs {1e3 * call:.2f} ms")
        print(f"  fastest of the {repeats} (less disturbed by other processes): core {1e3 * min(t_core):.1f} ms, "
              f"cubic {1e3 * min(t_cubic):.1f} ms, ratio {min(t_core) / min(t_cubic):.1f}")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--n", type=int, default=20000)
    ap.add_argument("--repeats", type=int, default=7)
    ap.add_argument("--kinds", nargs="*", help="restrict to these kinds (default: all registered)")
    ap.add_argument("--chains", action="store_true", help="measure chains against the same kinds in parallel")
    ap.add_argument("--per-kind", action="store_true", help="also time each kind alone")
    ap.add_argument("--one-core", action="store_true", help="pin this process to one CPU")
    a = ap.parse_args()
    if a.one_core:
        os.sched_setaffinity(0, {max(os.sched_getaffinity(0))})
    if a.chains:
        keep_temporaries_on_heap()
        chains(a.n, a.repeats)
        return
    mixed(a.n, a.repeats, a.kinds)
    if a.per_kind:
        per_kind(a.n, a.repeats)


if __name__ == "__main__":
    main()
