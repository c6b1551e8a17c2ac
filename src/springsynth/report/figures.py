"""Drawing a report's figures: every figure is an independent job, run in two worker processes
where the machine has two cores and leaves one idle, one after the other otherwise.

Matplotlib draws on one core, and a report is some thirty figures, so two processes nearly halve
the wait on an idle machine (on a busy one they only share the same core time). The work is the same either way and so are the bytes: each figure depends only on its
own data (:class:`~springsynth.report.design_figure.DesignCanvas` draws every design as a new
figure would). The workers are forked from this process, so they start with everything it
has imported, and they only return bytes; the files are written by the caller.
"""

from __future__ import annotations

import math
import multiprocessing
import os
import sys
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from typing import Any, Callable, Mapping, Sequence

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import Response
from springsynth.model.target import Target

__all__ = ["Job", "run_jobs", "default_workers", "design_jobs", "pareto_png", "pareto_fatigue_png", "curves_png",
           "convergence_png", "design_pngs", "design_results"]

#: a job: result key, a module-level function, its positional and keyword arguments
Job = tuple[str, Callable[..., Any], tuple, dict]

#: at most this many worker processes (the figures of one report are too few to feed more)
MAX_WORKERS = 2
#: fewer per-design figures than this are drawn here: starting workers would cost more
MIN_DESIGNS_FOR_WORKERS = 4


def default_workers() -> int:
    """Worker processes for a report: the cores this process may use that the machine leaves idle,
    at most :data:`MAX_WORKERS`. 1 (no workers) on a busy machine (where a second process only
    shares the same core time and adds its start), where processes cannot be forked safely (not
    Linux) and inside a daemonic process (a worker of a process pool, e.g. a batch task, may not
    start processes)."""
    if not sys.platform.startswith("linux") or multiprocessing.current_process().daemon:
        return 1
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - Linux has it
        cores = os.cpu_count() or 1
    busy = min(os.getloadavg()[0], _running_now())   # runnable processes, this one included
    idle = min(cores, os.cpu_count() or cores) - busy
    return max(1, min(MAX_WORKERS, cores, int(idle) + 1))


def _running_now() -> float:
    """Processes runnable at this moment, this one included (``/proc/loadavg``'s fourth field). The
    one-minute load average alone still counts a process that ended seconds ago (the previous
    command of a script, say) and would keep the second worker idle for a minute after it; the
    smaller of the two counts only what runs now and has run for a while."""
    try:
        with open("/proc/loadavg", encoding="ascii") as f:
            return float(f.read().split()[3].split("/")[0])
    except (OSError, IndexError, ValueError):
        return math.inf


def run_jobs(jobs: Sequence[Job], *, workers: int = 1) -> dict[str, Any]:
    """Run every job; returns ``{key: result}`` in the jobs' order.

    ``workers > 1`` runs them in that many forked processes, each taking the next job
    when it is free (give the largest first); otherwise, or when a worker process dies,
    here, one after the other. The results are the same.
    """
    if workers > 1 and len(jobs) > 1:
        try:
            ctx = multiprocessing.get_context("fork")
            with ProcessPoolExecutor(max_workers=min(workers, len(jobs)), mp_context=ctx) as pool:
                futures = {key: pool.submit(fn, *args, **kwargs) for key, fn, args, kwargs in jobs}
                return {key: f.result() for key, f in futures.items()}
        except (BrokenProcessPool, OSError):   # a worker died (or could not start): draw here instead
            pass
    return {key: fn(*args, **kwargs) for key, fn, args, kwargs in jobs}


# ------------------------------------------------------------------------- the jobs' functions


def pareto_png(ids: Sequence[str], F: np.ndarray, feasible: np.ndarray, stress_limit: float,
               in_spec: np.ndarray | None = None) -> bytes:
    from springsynth.report.plots import plot_pareto
    from springsynth.report.style import png_bytes

    return png_bytes(plot_pareto(ids, F, feasible, stress_limit=stress_limit, in_spec=in_spec))


def curves_png(target: Target, x: np.ndarray, curves: Mapping[str, np.ndarray], errors: Mapping[str, float]) -> bytes:
    from springsynth.report.plots import plot_curves
    from springsynth.report.style import png_bytes

    return png_bytes(plot_curves(target, x, curves, errors))


def convergence_png(history: Sequence[Mapping], polish: Mapping | None, max_error_pct: float) -> bytes:
    from springsynth.report.plots import plot_convergence
    from springsynth.report.style import png_bytes

    return png_bytes(plot_convergence(history, polish=polish, max_error_pct=max_error_pct))


def pareto_fatigue_png(ids: Sequence[str], F: np.ndarray, fatigue: np.ndarray, feasible: np.ndarray,
                       limit: float) -> bytes:
    from springsynth.report.fatigue import plot_pareto_fatigue
    from springsynth.report.style import png_bytes

    return png_bytes(plot_pareto_fatigue(ids, F, fatigue, feasible, limit=limit))


def _by_layout(item: tuple) -> tuple:
    return len(item[0].branches), item[0].layout


def design_pngs(items: Sequence[tuple], target: Target, stress_limit: float) -> dict[str, bytes]:
    """The figure of each design, ``items`` = (design, response, title, element stress or None),
    as PNG bytes keyed by design name, drawn on one canvas per number of branches."""
    from springsynth.report.design_figure import DesignCanvas

    canvases: dict = {}
    out = {}
    # designs of one layout one after the other: each canvas's frame changes as little as it can
    for design, resp, title, elem_sr in sorted(items, key=_by_layout):
        n = len(design.branches)
        if n not in canvases:
            canvases[n] = DesignCanvas(n)
        canvases[n].draw(design, resp, target=target, stress_limit=stress_limit, title=title, element_stress=elem_sr)
        out[design.name] = canvases[n].png()
    return out


def design_jobs(items: Sequence[tuple[Design, Response, str, np.ndarray | None]], target: Target,
                stress_limit: float, *, parts: int = 1) -> list[Job]:
    """The per-design figures as ``parts`` jobs (keys ``designs``, ``designs-2``, ...): one job draws
    each canvas and frame once, so one process is best served by one job; a pool of ``parts``
    processes by as many equal shares (designs of one frame, their layout and force limits, kept
    together where the cut allows; each share draws its own frames)."""
    items, parts = list(items), max(1, min(int(parts), len(items)))
    if parts > 1:       # designs of one frame (layout and force limits) together, so a frame is seldom drawn twice
        from springsynth.report.design_figure import design_force_limits

        limits = {id(it): design_force_limits(it[0], it[1], target) for it in items}
        items = sorted(items, key=lambda it: (_by_layout(it), limits[id(it)]))
    cuts = [round(k * len(items) / parts) for k in range(parts + 1)]
    return [("designs" if k == 0 else f"designs-{k + 1}", design_pngs, (items[cuts[k]:cuts[k + 1]], target, stress_limit),
             {}) for k in range(parts) if cuts[k + 1] > cuts[k]]


def design_results(done: Mapping[str, Any]) -> dict[str, bytes]:
    """The figures of every design job of :func:`design_jobs` in one mapping, keyed by design name."""
    return {name: png for key, part in done.items() if key == "designs" or key.startswith("designs-")
            for name, png in part.items()}
