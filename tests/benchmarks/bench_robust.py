"""Does ``[search] robust = true`` give designs that stay in spec more often? (a script, not a test)

A small study (linear spring with preload, +-4 % band, guided blades and coil springs)
is searched twice with the same seed and budget, once with the nominal curve error as
objective and once with the 90th-percentile error over k fixed tolerance samples (--k). From
each Pareto set the design with the lowest value of the curve-error objective that run
minimised is taken (nominal, or 90th-percentile), and a 4000-part Monte Carlo
(:func:`springsynth.checks.tolerance.tolerance_analysis`) measures its share of parts inside
the band. GA outcomes are noisy: run several seeds (``--seeds``) and compare medians.

Run:  python tests/benchmarks/bench_robust.py [--seeds 1 2 3] [--generations 40]
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np

from springsynth.assembly.evaluate import evaluate_design
from springsynth.assembly.slots import Slots
from springsynth.checks.tolerance import robust_error, tolerance_analysis
from springsynth.io.study_toml import load_study
from springsynth.search.synthesis import synthesize

STUDY = """name = "bench-robust"
[target]
file = "target.csv"
[envelope]
length_mm = 50
width_mm = 30
height_mm = 20
[limits]
stress_ratio = 0.8
min_thickness_mm = 0.05
[search]
elements = ["blade_guided", "helical_compression"]
materials = ["stainless_17_7ph", "music_wire"]
max_elements = 2
population = {population}
generations = {generations}
robust = {robust}
"""


def pick(res, study):
    """Design with the lowest value of the run's curve-error objective; returns it and its nominal error."""
    target = study.target
    errs = np.array([float(target.curve_error_pct(evaluate_design(d, target.x_mm).force_N)[0]) for d in res.designs])
    obj = errs
    if study.search.robust:
        obj = robust_error(study, Slots.from_designs(list(res.designs), kinds=study.search.kinds,
                                                     materials=study.search.materials))
    i = int(np.argmin(obj))
    return res.designs[i], errs[i]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--seeds", type=int, nargs="+", default=[1, 2, 3])
    ap.add_argument("--population", type=int, default=80)
    ap.add_argument("--generations", type=int, default=40)
    ap.add_argument("--samples", type=int, default=4000)
    ap.add_argument("--k", type=int, default=32, help="tolerance samples per design in the robust objective")
    a = ap.parse_args()
    import springsynth.checks.tolerance as tol_mod

    d = list(tol_mod.robust_error.__defaults__)
    d[0] = a.k
    tol_mod.robust_error.__defaults__ = tuple(d)
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        x = np.linspace(0.0, 5.0, 11)
        f = 4.0 + 1.5 * x
        rows = "\n".join(f"{xi:g},{fi:g},{0.04 * fi:g}" for xi, fi in zip(x, f))
        (tmp / "target.csv").write_text("displacement_mm,force_N,tolerance_N\n" + rows + "\n")
        shares = {False: [], True: []}
        for seed in a.seeds:
            for robust in (False, True):
                (tmp / "s.toml").write_text(STUDY.format(population=a.population, generations=a.generations,
                                                         robust=str(robust).lower()))
                st = load_study(tmp / "s.toml")
                t0 = time.perf_counter()
                res = synthesize(st, seed=seed)
                dt = time.perf_counter() - t0
                d, e = pick(res, st)
                tol = tolerance_analysis(d, st.target.x_mm, target=st.target, n_samples=a.samples, seed=99)
                shares[robust].append(tol.share_in_band)
                print(f"seed {seed} robust={robust!s:5}: search {dt:5.1f} s, nominal error {e:5.2f} %, "
                      f"in band {100 * tol.share_in_band:5.1f} %  {d.topology()}")
        for robust in (False, True):
            print(f"robust={robust!s:5}: median in-band share {100 * statistics.median(shares[robust]):.1f} % "
                  f"over seeds {a.seeds}")


if __name__ == "__main__":
    main()
