"""Search quality and speed on every shipped study at its default budget (a script, not a test).

For each study in studies/*.toml prints: wall time, evaluations (genetic search plus
polish), best feasible curve_error_pct, the time at which the best feasible error first
fell under 2 %, and the hypervolume of the final Pareto set against that of pure random
sampling of the same genome with the same number of evaluations (ratio > 1: the search
beats random sampling). Hypervolumes are in the normalised objective space of
``springsynth.search.metrics.hypervolume`` (error / limits.max_error_pct, stress ratio /
limits.stress_ratio, size / envelope volume; reference point (1, 1, 1)).

Run:  python tests/benchmarks/bench_search.py [studies/x.toml ...] [--seed 1]
"""

from __future__ import annotations

import argparse
import glob
import math
import time
from pathlib import Path

import numpy as np

from springsynth.io.study_toml import load_study
from springsynth.search.encoding import Encoding
from springsynth.search.metrics import hypervolume
from springsynth.search.operators import random_genomes
from springsynth.search.scoring import score
from springsynth.search.synthesis import synthesize

ROOT = Path(__file__).resolve().parents[2]


def random_hv(study, evaluations: int, seed: int) -> tuple[float, float]:
    """Hypervolume and best feasible error of ``evaluations`` uniform random genomes."""
    enc = Encoding(study)
    rng = np.random.default_rng(seed)
    F_all, G_all = [], []
    left = evaluations
    while left > 0:
        n = min(left, 20000)
        sc = score(study, enc.decode(random_genomes(enc, n, rng)))
        F_all.append(sc.F)
        G_all.append(sc.G)
        left -= n
    F, G = np.vstack(F_all), np.vstack(G_all)
    ok = np.all(G <= 0, axis=1)
    best = float(F[ok, 0].min()) if ok.any() else math.nan
    # the hypervolume only counts non-dominated points; thin to the feasible set first
    return hypervolume(study, F[ok], G[ok]), best


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("studies", nargs="*")
    ap.add_argument("--seed", type=int, default=None)
    a = ap.parse_args()
    files = a.studies or sorted(glob.glob(str(ROOT / "studies" / "*.toml")))
    files = [f for f in files if not f.endswith(".design.toml")]
    rows = []
    for f in files:
        st = load_study(f)
        t0 = time.perf_counter()
        res = synthesize(st, seed=a.seed)
        wall = time.perf_counter() - t0
        feas = np.all(res.constraints <= 0, axis=1)
        best = float(res.objectives[feas, 0].min()) if feas.any() else math.nan
        under = [h["time_s"] for h in res.history if h["best_error_pct"] is not None
                 and not math.isnan(h["best_error_pct"]) and h["best_error_pct"] < 2.0]
        t2 = under[0] if under else (wall if best < 2.0 else math.nan)
        hv = hypervolume(st, res.objectives, res.constraints)
        hv_r, best_r = random_hv(st, res.evaluations, seed=12345)
        rows.append((st.name, wall, res.evaluations, best, t2, hv, hv_r, best_r))
        print(f"{st.name}: {wall:.1f} s, {res.evaluations} evaluations, best {best:.3g} %", flush=True)
    print()
    print(f"{'study':22s} {'wall s':>7s} {'evals':>7s} {'best err %':>10s} {'t(<2%) s':>9s} "
          f"{'HV':>7s} {'HV rand':>7s} {'ratio':>6s} {'rand best %':>11s}")
    for name, wall, ev, best, t2, hv, hv_r, best_r in rows:
        ratio = hv / hv_r if hv_r > 0 else math.inf
        print(f"{name:22s} {wall:7.1f} {ev:7d} {best:10.3g} {t2:9.2f} {hv:7.4f} {hv_r:7.4f} {ratio:6.2f} "
              f"{best_r:11.3g}")


if __name__ == "__main__":
    main()
