"""What the in-spec share costs the search per generation (a script, not a test).

A shipped study is searched for a few generations without polish (population 120 by default)
three ways: without the share, with ``limits.in_spec_share`` (a constraint) and with the
``in_spec_share`` objective. Each way runs ``--repeats`` times (seeds 1, 2, ...); the time of a
generation is the step of ``history[].time_s``, and the script prints the median over the
second half of the generations of every repeat, in ms, with the feasible share there: the
share is computed only for designs that meet every other constraint
(``SETTINGS.yield_search_samples`` parts each), few in the first generations.

Run:  nice python tests/benchmarks/bench_yield.py [--study studies/latch-preload.toml]
      [--population 120] [--generations 12] [--repeats 3]
"""

from __future__ import annotations

import argparse
import statistics
from pathlib import Path

import numpy as np

from springsynth.io.study_toml import load_study
from springsynth.search.settings import SETTINGS
from springsynth.search.synthesis import synthesize

ROOT = Path(__file__).resolve().parents[2]

WAYS = {
    "no share": [],
    "constraint 0.9": ["limits.in_spec_share=0.9"],
    "objective": ['search.objectives=["curve_error_pct", "stress_ratio", "size_mm3", "in_spec_share"]'],
}


def per_generation_ms(study: Path, extra: list[str], population: int, generations: int,
                      seed: int) -> tuple[list[float], list[float]]:
    """Time (ms) and feasible share of each generation of the second half of one search."""
    st = load_study(study, overrides=[f"search.population={population}", f"search.generations={generations}",
                                      "search.polish=false", "search.verify_top=0", *extra])
    res = synthesize(st, seed=seed)
    t = np.array([h["time_s"] for h in res.history])
    half = generations // 2
    return list(1000.0 * np.diff(t)[half - 1:]), [h["feasible_share"] for h in res.history[half:]]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--study", default=str(ROOT / "studies" / "latch-preload.toml"))
    ap.add_argument("--population", type=int, default=120)
    ap.add_argument("--generations", type=int, default=30)
    ap.add_argument("--repeats", type=int, default=3)
    a = ap.parse_args()
    print(f"{Path(a.study).name}: population {a.population}, {a.generations} generations (the second half "
          f"timed), no polish; "
          f"{SETTINGS.yield_search_samples} parts per design in the loop")
    base = None
    for way, extra in WAYS.items():
        steps, feasible = [], []
        for r in range(a.repeats):
            ms, fs = per_generation_ms(Path(a.study), extra, a.population, a.generations, seed=1 + r)
            steps += ms
            feasible += fs
        med = statistics.median(steps)
        base = base or med
        print(f"{way:>15}: {med:7.1f} ms/generation (median of {len(steps)}), x{med / base:.2f}; "
              f"feasible share {statistics.median(feasible):.2f}", flush=True)


if __name__ == "__main__":
    main()
