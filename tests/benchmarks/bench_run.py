"""The whole loop against its floor: a demo run and a report rebuild, measured side by side (a script).

Figures measured in one process, each the median of ``--repeats`` runs, each run a fresh
subprocess (imports included, as a user sees it):

* **floor**: a bare pymoo NSGA-II of the demo's budget (population 120 x 80 generations)
  on ZDT1, as its own process;
* **demo**: ``springsynth run studies/latch-preload.toml`` (search, polish, verification
  of the top designs, all figures and report.html);
* **report**: ``springsynth report RUN`` on the demo's run folder;
* the size of report.html;
* **core**: ``evaluate_population`` on 20,000 three-element designs of every kind against
  a plain numpy cubic written with multiplications, ``x * (a + b * x * x)``, on an array of
  the same size (n x 3 x 64); and the cost of one call at 120 designs, what the search sees.

Prints the ratios to the floor and to the cubic. Run:
``python tests/benchmarks/bench_run.py [--repeats 3]``.
"""

from __future__ import annotations

import argparse
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
STUDY = ROOT / "studies" / "latch-preload.toml"
FLOOR = """
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.optimize import minimize
from pymoo.problems import get_problem
minimize(get_problem("zdt1"), NSGA2(pop_size=120), ("n_gen", 80), seed=1, verbose=False)
"""


def _timed(cmd: list[str], cwd: Path) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, cwd=cwd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - t0


def _cli() -> list[str]:
    return [sys.executable, "-m", "springsynth.cli"]


def loop_figures(repeats: int) -> dict[str, float]:
    work = Path(tempfile.mkdtemp(prefix="bench-run-"))
    floor, demo, report = [], [], []
    size = 0
    try:
        for r in range(repeats):
            floor.append(_timed([sys.executable, "-c", FLOOR], work))
            out = work / f"run{r}"
            demo.append(_timed(_cli() + ["run", str(STUDY), "--out", str(out)], work))
            report.append(_timed(_cli() + ["report", str(out)], work))
            size = (out / "report.html").stat().st_size
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return {"floor_s": statistics.median(floor), "demo_s": statistics.median(demo),
            "report_s": statistics.median(report), "report_html_MB": size / 1e6}


def core_figures(repeats: int, n: int = 20000) -> dict[str, float]:
    sys.path.insert(0, str(Path(__file__).parent))
    from bench_core import random_population

    from springsynth.assembly.evaluate import evaluate_population

    x = np.linspace(0.0, 5.0, 64)
    big, small = random_population(n), random_population(120, seed=1)
    evaluate_population(big, x)
    arr = np.random.default_rng(1).random((n * 3, 64))
    a, b = 1.7, 0.3
    t_core, t_cubic, t_small = [], [], []
    for _ in range(repeats):
        t0 = time.perf_counter()
        evaluate_population(big, x)
        t_core.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        _ = arr * (a + b * arr * arr)
        t_cubic.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        for _ in range(20):
            evaluate_population(small, x)
        t_small.append((time.perf_counter() - t0) / 20)
    core, cubic = statistics.median(t_core), statistics.median(t_cubic)
    return {"core_s": core, "cubic_s": cubic, "core_over_cubic": core / cubic,
            "call_120_ms": 1e3 * statistics.median(t_small)}


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--skip-loop", action="store_true", help="only the core figures")
    a = ap.parse_args()
    core = core_figures(max(a.repeats, 5))
    print(f"core: 20,000 designs {core['core_s'] * 1e3:.1f} ms, plain cubic x*(a+b*x*x) "
          f"{core['cubic_s'] * 1e3:.1f} ms, ratio {core['core_over_cubic']:.1f} (goal <= 4); "
          f"one call at 120 designs {core['call_120_ms']:.2f} ms")
    if a.skip_loop:
        return
    f = loop_figures(a.repeats)
    print(f"floor (pymoo NSGA-II 120 x 80 on ZDT1, own process): {f['floor_s']:.2f} s")
    print(f"demo run incl. figures and report: {f['demo_s']:.2f} s = {f['demo_s'] / f['floor_s']:.1f} x floor (goal <= 4)")
    print(f"report rebuild: {f['report_s']:.2f} s = {f['report_s'] / f['floor_s']:.1f} x floor (goal <= 2)")
    print(f"report.html: {f['report_html_MB']:.2f} MB (goal <= 1.5)")


if __name__ == "__main__":
    main()
