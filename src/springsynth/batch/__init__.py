"""Many independent runs at once on Dask: product families, seed spreads and sweeps.

A batch is studies x variants x seeds (:mod:`._plan`, pure); each run is one Dask task
that makes the same run folder as `springsynth run` (:mod:`._task`), on a local cluster
or a running scheduler (:mod:`._dask`); the batch folder holds the plan and the run
markers (:mod:`._files`), and ``summary.csv`` / ``summary.png`` across the runs
(:mod:`._summary`).

Example::

    from springsynth.batch import parse_vary, plan_from_files, run_batch, start_folder, write_summary

    plan = plan_from_files(["studies/latch-preload.toml"], seeds=(1, 2, 3),
                           varies=[parse_vary("target.scale_force=0.5:2:4")])
    folder = start_folder(Path("runs/family"), plan)
    outcome = run_batch(plan, folder)
    write_summary(folder, plan, outcome.rows)
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from springsynth.batch._dask import BatchProgress, check_scheduler, execute, local_workers
from springsynth.batch._files import (
    MARKER,
    PLAN_FILE,
    changed_studies,
    finished_rows,
    open_batch,
    plan_from_files,
    read_plan,
    start_folder,
)
from springsynth.batch._plan import Plan, RunSpec, Vary, build_plan, parse_seeds, parse_vary
from springsynth.batch._summary import plot_summary, summary_frame, variant_table, write_summary
from springsynth.batch._task import STATUSES, run_one

__all__ = ["BatchOutcome", "BatchProgress", "MARKER", "PLAN_FILE", "Plan", "RunSpec", "STATUSES", "Vary",
           "build_plan", "changed_studies", "check_scheduler", "local_workers", "open_batch", "parse_seeds",
           "parse_vary", "plan_from_files", "plot_summary", "read_plan", "run_batch", "run_one", "start_folder",
           "summary_frame", "variant_table", "write_summary"]


@dataclass(frozen=True)
class BatchOutcome:
    """What a batch did.

    Attributes
    ----------
    rows : dict
        Run folder (relative) -> summary row, for every run finished now or before.
    ran : int
        Runs made by this call (finished or failed; not those interrupted).
    skipped : int
        Runs already complete in the folder (``--resume``), not made again.
    interrupted : bool
        Ctrl-C stopped the batch; unfinished runs have status ``interrupted``.
    wall_time_s : float
    """

    rows: dict
    ran: int
    skipped: int
    interrupted: bool
    wall_time_s: float


def run_batch(plan: Plan, out_dir: Path, *, scheduler: str | None = None, workers: int | None = None,
              retries: int = 2, on_progress: Callable[[BatchProgress], None] | None = None,
              task: Callable[[dict, str], dict] = run_one,
              worker_setup: Callable[[], object] | None = None) -> BatchOutcome:
    """Make every run of ``plan`` that ``out_dir`` does not hold complete yet.

    Parameters
    ----------
    plan : Plan
    out_dir : Path
        The batch folder (from :func:`start_folder`, or an earlier batch's to resume).
    scheduler : str, optional
        Address of a running Dask scheduler; default a local cluster of ``workers``
        processes (one per core).
    retries : int
        Dask retries of a task that raises.
    on_progress : callable, optional
        Called with a :class:`BatchProgress` as runs start and finish.
    task : callable
        What each task calls, ``task(spec, out_dir) -> row`` (default :func:`run_one`).
    worker_setup : callable, optional
        Called once in every worker process as it starts.
    """
    import time

    t0 = time.perf_counter()
    done = finished_rows(out_dir, plan)
    todo = [r for r in plan.runs if r.folder not in done]
    rows, interrupted = dict(done), False
    if todo:
        new, interrupted = execute(todo, Path(out_dir), scheduler=scheduler, workers=workers, retries=retries,
                                   already_done=len(done), total=len(plan.runs), on_progress=on_progress, task=task,
                                   worker_setup=worker_setup)
        rows.update(new)
        if interrupted:  # runs that finished while the batch was being stopped
            for folder, row in finished_rows(out_dir, plan).items():
                if rows[folder]["status"] == "interrupted":
                    rows[folder] = row
    ran = sum(rows[r.folder]["status"] != "interrupted" for r in todo)
    return BatchOutcome(rows, ran, len(done), interrupted, time.perf_counter() - t0)
