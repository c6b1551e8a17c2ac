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

Prints the ratios to the floor and to the cubic, in wall time (what a user waits) and in
CPU time of the process and its children (steadier on a shared machine), with the load
average before and after. ``--one-core`` runs every subprocess on one CPU (its affinity
set to a single core), to see what the loop costs without the report's second worker.
``--profile`` also prints the phases of the demo run from its run.json.

Byte code: every subprocess runs with Python's byte-code cache on, in a fresh cache folder
(``PYTHONPYCACHEPREFIX``), after one untimed run of each command fills it, as on a machine
where the package was installed (``pip install`` compiles it) or imported once before. A
machine that sets ``PYTHONDONTWRITEBYTECODE`` would otherwise compile this package's sources
on every start (some 0.3 s) but not those of the installed pymoo. Run:
``python tests/benchmarks/bench_run.py [--repeats 3] [--one-core] [--profile]``.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
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


def _children_cpu() -> float:
    ru = resource.getrusage(resource.RUSAGE_CHILDREN)
    return ru.ru_utime + ru.ru_stime


def _env(cache: Path) -> dict[str, str]:
    """The subprocesses' environment: byte code cached in ``cache`` (see the module's notes)."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPYCACHEPREFIX"] = str(cache)
    return env


def _timed(cmd: list[str], cwd: Path, one_core: bool = False) -> tuple[float, float]:
    """Wall and CPU seconds (the process and everything it started) of one command."""
    pin = (lambda: os.sched_setaffinity(0, {min(os.sched_getaffinity(0))})) if one_core else None
    c0, t0 = _children_cpu(), time.perf_counter()
    subprocess.run(cmd, cwd=cwd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, preexec_fn=pin,
                   env=_env(cwd / "pycache"))
    return time.perf_counter() - t0, _children_cpu() - c0


def _cli() -> list[str]:
    return [sys.executable, "-m", "springsynth.cli"]


def loop_figures(repeats: int, one_core: bool = False) -> dict:
    work = Path(tempfile.mkdtemp(prefix="bench-run-"))
    got: dict[str, list] = {"floor": [], "demo": [], "report": []}
    size, phases = 0, {}
    try:
        _timed([sys.executable, "-c", FLOOR], work)                # untimed: fill the byte-code cache
        _timed(_cli() + ["run", str(STUDY), "--out", str(work / "warm")], work)
        _timed(_cli() + ["report", str(work / "warm")], work)
        for r in range(repeats):
            got["floor"].append(_timed([sys.executable, "-c", FLOOR], work, one_core))
            out = work / f"run{r}"
            got["demo"].append(_timed(_cli() + ["run", str(STUDY), "--out", str(out)], work, one_core))
            got["report"].append(_timed(_cli() + ["report", str(out)], work, one_core))
            size = (out / "report.html").stat().st_size
            phases = json.loads((out / "run.json").read_text())["timings_s"]
    finally:
        shutil.rmtree(work, ignore_errors=True)
    out = {"report_html_MB": size / 1e6, "phases": phases}
    for k, v in got.items():
        out[f"{k}_s"] = statistics.median(w for w, _ in v)
        out[f"{k}_cpu_s"] = statistics.median(c for _, c in v)
        out[f"{k}_all"] = v
    for k in ("demo", "report"):   # ratios of the same repeat, then their median
        out[f"{k}_ratio"] = statistics.median(a[0] / f[0] for a, f in zip(got[k], got["floor"]))
        out[f"{k}_cpu_ratio"] = statistics.median(a[1] / f[1] for a, f in zip(got[k], got["floor"]))
    return out


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
    ap.add_argument("--one-core", action="store_true", help="run the subprocesses on one CPU")
    ap.add_argument("--profile", action="store_true", help="print the demo run's phases")
    a = ap.parse_args()
    print(f"load average before: {' '.join(f'{v:.1f}' for v in os.getloadavg())} on {os.cpu_count()} CPUs")
    core = core_figures(max(a.repeats, 5))
    print(f"core: 20,000 designs {core['core_s'] * 1e3:.1f} ms, plain cubic x*(a+b*x*x) "
          f"{core['cubic_s'] * 1e3:.1f} ms, ratio {core['core_over_cubic']:.1f} (goal <= 4); "
          f"one call at 120 designs {core['call_120_ms']:.2f} ms")
    if not a.skip_loop:
        f = loop_figures(a.repeats, a.one_core)
        print(f"floor (pymoo NSGA-II 120 x 80 on ZDT1, own process): {f['floor_s']:.2f} s wall, {f['floor_cpu_s']:.2f} s CPU"
              + (" (one core)" if a.one_core else ""))
        for k, goal in (("demo", 4), ("report", 2)):
            what = "demo run incl. figures and report" if k == "demo" else "report rebuild"
            print(f"{what}: {f[k + '_s']:.2f} s wall = {f[k + '_ratio']:.1f} x floor (goal <= {goal}); "
                  f"{f[k + '_cpu_s']:.2f} s CPU = {f[k + '_cpu_ratio']:.1f} x floor's CPU")
        print(f"report.html: {f['report_html_MB']:.2f} MB (goal <= 1.5)")
        print("each repeat (wall s, CPU s): " + "; ".join(
            f"{k} " + ", ".join(f"({w:.1f}, {c:.1f})" for w, c in f[k + "_all"]) for k in ("floor", "demo", "report")))
        if a.profile:
            print("demo phases (run.json, wall s): " + ", ".join(f"{k} {v:.2f}" for k, v in f["phases"].items()))
    print(f"load average after: {' '.join(f'{v:.1f}' for v in os.getloadavg())}")


if __name__ == "__main__":
    main()
