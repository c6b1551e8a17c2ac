"""One run of a batch, as a Dask task: the same public API as `springsynth run`.

The task loads the study with its overrides, calls :func:`springsynth.synthesize` with
the run's seed, writes the run folder with the writer `springsynth run` uses, and writes
the marker :data:`~springsynth.batch._files.MARKER` last. It returns the run's summary
row (a small dict), so nothing large travels back to the client.
"""

from __future__ import annotations

import json
import math
import shutil
import socket
import time
from pathlib import Path
from typing import Any, Mapping

import numpy as np

from springsynth.batch._files import MARKER, read_marker
from springsynth.batch._plan import RunSpec
from springsynth.io.files import write_text_atomic
from springsynth.io.runfolder import write_run
from springsynth.io.study_toml import load_study
from springsynth.model.errors import InputError
from springsynth.search.metrics import hypervolume
from springsynth.search.synthesis import Synthesis, synthesize

__all__ = ["run_one", "run_metrics", "row_for", "STATUSES"]

#: status of a run in summary.csv, and what it means
STATUSES = {
    "ok": "finished with at least one feasible design",
    "infeasible": "finished, no feasible design (the closest designs are written, marked infeasible)",
    "bad_input": "rejected: the study with this run's settings is not valid (message says why)",
    "error": "failed with an unexpected error after Dask's retries",
    "lost": "its worker died every time it ran it",
    "interrupted": "not finished: the batch was stopped; --resume runs it",
}


def row_for(run: RunSpec, *, status: str, message: str = "", wall_time_s: float = math.nan,
            metrics: Mapping[str, Any] | None = None) -> dict[str, Any]:
    """A summary row for ``run`` (metrics NaN unless given)."""
    m = {"best_error_pct": math.nan, "pareto_size": 0, "feasible_share": math.nan, "hypervolume": math.nan}
    m.update(metrics or {})
    return {"study": run.study, "variant": dict(run.variant), "seed": run.seed, **m, "wall_time_s": wall_time_s,
            "folder": run.folder, "status": status, "message": message}


def run_metrics(res: Synthesis) -> dict[str, float]:
    """The summary numbers of a finished search.

    Returns
    -------
    dict
        ``best_error_pct``: lowest curve error among the feasible Pareto designs (NaN if none);
        ``pareto_size``: feasible Pareto designs; ``feasible_share``: share of the last
        generation's population that is feasible; ``hypervolume``: of the feasible Pareto
        designs in the run's normalised objective space (error / limits.max_error_pct,
        stress ratio / limits.stress_ratio, size / envelope volume; reference point (1, 1, 1)),
        the measure the run's convergence history uses.
    """
    ok = np.all(res.constraints <= 0, axis=1)
    return {
        "best_error_pct": float(res.objectives[ok, 0].min()) if ok.any() else math.nan,
        "pareto_size": int(ok.sum()),
        "feasible_share": float(res.history[-1]["feasible_share"]) if res.history else math.nan,
        "hypervolume": hypervolume(res.study, res.objectives, res.constraints),
    }


def run_one(spec: Mapping[str, Any], out_dir: str) -> dict[str, Any]:
    """Make one run of a batch into ``out_dir/<study>/<variant>/seed-<n>``; return its summary row.

    Parameters
    ----------
    spec : mapping
        :meth:`RunSpec.to_dict` of the run (plain data, so it travels to any worker).
    out_dir : str
        The batch folder, as the worker sees it.

    Returns
    -------
    dict
        The summary row (see :func:`row_for`). Bad input (:class:`InputError`) gives a row
        with status ``bad_input`` and the message; other exceptions propagate, so Dask
        retries the task.
    """
    run = RunSpec.from_dict(spec)
    folder = Path(out_dir) / run.folder
    done = read_marker(folder)
    if done is not None:  # finished by an earlier attempt (e.g. one presumed lost)
        return done
    t0 = time.perf_counter()
    try:
        if not Path(run.study_path).exists():
            raise InputError(f"not found on the worker {socket.gethostname()}; with --scheduler, the studies and "
                             f"--out must be on a file system every worker sees", where=run.study_path)
        st = load_study(run.study_path, overrides=run.overrides)
        res = synthesize(st, seed=run.seed)
        if folder.exists():  # left half-written by an attempt whose worker died
            shutil.rmtree(folder)
        written = write_run(res, folder, overrides=run.overrides)
    except InputError as e:
        return row_for(run, status="bad_input", message=str(e), wall_time_s=time.perf_counter() - t0)
    if written != folder:  # another attempt created the folder meanwhile; keep the first
        shutil.rmtree(written, ignore_errors=True)
        raise RuntimeError(f"{folder} was created by another attempt of the same run")
    row = row_for(run, status="ok" if res.feasible else "infeasible", wall_time_s=time.perf_counter() - t0,
                  metrics=run_metrics(res))
    write_text_atomic(folder / MARKER, json.dumps(_json_safe(row), indent=1) + "\n")
    return row


def _json_safe(row: Mapping[str, Any]) -> dict[str, Any]:
    """NaN becomes null (strict JSON); :func:`read_marker` readers turn it back with ``float('nan')``."""
    return {k: (None if isinstance(v, float) and not math.isfinite(v) else v) for k, v in row.items()}
