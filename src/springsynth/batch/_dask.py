"""Running a batch's runs as Dask tasks, on a local cluster or a running scheduler.

Each run is one task (:func:`~springsynth.batch._task.run_one`). By default the tasks
go to a ``distributed.LocalCluster`` started here: one worker process per core, one
thread each (a search is single-threaded numpy; processes sidestep the GIL). With
``scheduler=ADDRESS`` they go to a running Dask scheduler and its workers, on any number
of machines; the batch folder and the study files must then be on a file system every
worker sees.

Nothing is lost when a worker dies: the scheduler hands the tasks it was running to
another worker (up to ``distributed.scheduler.allowed-failures`` deaths per task, 3 by
default), and a task that raises is retried ``retries`` times. Ctrl-C cancels what has
not finished; finished run folders stay, and ``--resume`` runs the rest.
"""

from __future__ import annotations

import contextlib
import logging
import os
import signal
import threading
import time
import uuid
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Sequence

from springsynth.batch._plan import RunSpec
from springsynth.batch._task import row_for, run_one
from springsynth.model.errors import InputError

__all__ = ["BatchProgress", "execute", "local_workers", "check_scheduler"]


@dataclass(frozen=True)
class BatchProgress:
    """Counts shown while a batch runs (``done`` includes runs finished before a resume)."""

    total: int
    done: int
    running: int
    failed: int
    workers: int


def local_workers(n_runs: int, workers: int | None = None) -> int:
    """Worker processes of the local cluster: ``workers``, else one per available core, at most one per run."""
    if workers is None:
        try:
            workers = len(os.sched_getaffinity(0))
        except AttributeError:  # not Linux
            workers = os.cpu_count() or 1
    return max(1, min(workers, n_runs))


def execute(runs: Sequence[RunSpec], out_dir: Path, *, scheduler: str | None = None, workers: int | None = None,
            retries: int = 2, already_done: int = 0, total: int | None = None,
            on_progress: Callable[[BatchProgress], None] | None = None,
            task: Callable[[dict, str], dict] = run_one, worker_setup: Callable[[], object] | None = None,
            poll_s: float = 0.25) -> tuple[dict[str, dict], bool]:
    """Run ``runs`` as Dask tasks; return (run folder -> summary row, interrupted).

    Parameters
    ----------
    runs : sequence of RunSpec
        The runs to make (already finished ones left out by the caller).
    out_dir : Path
        The batch folder; passed to each task as an absolute path.
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:8786``); default a local cluster
        of ``workers`` processes (see :func:`local_workers`).
    retries : int
        Dask retries of a task that raises (bad input does not raise: it is a row).
    already_done, total : int
        For the progress counts of a resumed batch.
    on_progress : callable, optional
        Called with a :class:`BatchProgress` whenever the counts change.
    task : callable
        ``task(spec, out_dir) -> row``; :func:`run_one` (others serve tests and wrappers).
    worker_setup : callable, optional
        Called once in every worker process, restarted ones included (the command line
        tunes the memory allocator there as it does for `springsynth run`).

    Notes
    -----
    Ctrl-C (KeyboardInterrupt) while waiting cancels the unfinished tasks and returns
    ``interrupted=True``; runs not finished get status ``interrupted``.
    """
    from distributed import Client, LocalCluster

    out = str(Path(out_dir).resolve())
    total = len(runs) + already_done if total is None else total
    cluster = None
    if scheduler is None:
        with _workers_ignore_ctrl_c():
            cluster = LocalCluster(n_workers=local_workers(len(runs), workers), threads_per_worker=1, processes=True,
                                   dashboard_address=None, silence_logs=logging.CRITICAL)
        client = Client(cluster, set_as_default=False)
    else:
        client = _connect(scheduler)
    try:
        if worker_setup is not None:
            client.register_plugin(_setup_plugin(worker_setup), name="springsynth-setup")
        return _wait(client, runs, out, retries=retries, already_done=already_done, total=total,
                     on_progress=on_progress, task=task, poll_s=poll_s)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


@contextlib.contextmanager
def _workers_ignore_ctrl_c():
    """SIGINT ignored while the local workers start, so they inherit that (a process started with SIGINT
    ignored keeps it so: Python installs its KeyboardInterrupt handler only over the default action).
    Ctrl-C in a terminal reaches the whole process group; only this process acts on it, cancelling the
    tasks and closing the cluster, and no worker prints a traceback. Outside the main thread (where
    handlers cannot be set) nothing changes."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)


def _setup_plugin(fn: Callable[[], object]):
    """A Dask worker plugin that calls ``fn`` in each worker as it starts."""
    from distributed.diagnostics.plugin import WorkerPlugin

    class Setup(WorkerPlugin):
        def setup(self, worker):
            fn()

    return Setup()


def _connect(address: str):
    from distributed import Client
    from distributed.comm.addressing import parse_address, parse_host_port

    where = f"--scheduler {address}"
    try:
        scheme, location = parse_address(address)
        parse_host_port(location)
    except ValueError as e:
        raise InputError(f"not a scheduler address ({e}); give it as `dask scheduler` prints it, e.g. "
                         f"tcp://192.168.1.20:8786", where=where) from None
    if scheme not in ("tcp", "tls", "ws", "wss", "ucx", "inproc"):
        raise InputError(f"unknown protocol {scheme!r}; give the address as `dask scheduler` prints it, e.g. "
                         f"tcp://192.168.1.20:8786", where=where)
    try:
        return Client(address, timeout="15s", set_as_default=False)
    except (OSError, TimeoutError, ValueError) as e:
        raise InputError(f"cannot reach a Dask scheduler there ({type(e).__name__}: {e}); start one with "
                         f"`dask scheduler` and pass the address it prints", where=where) from None


def check_scheduler(address: str) -> None:
    """Raise :class:`InputError` unless a Dask scheduler answers at ``address`` (before anything is written)."""
    _connect(address).close()


def _wait(client, runs, out, *, retries, already_done, total, on_progress, task, poll_s):
    from distributed import KilledWorker

    token = uuid.uuid4().hex[:8]
    futures = {}
    for i, r in enumerate(runs):
        key = f"springsynth-run-{token}-{i}"
        futures[key] = (r, client.submit(task, r.to_dict(), out, key=key, retries=retries, pure=False))
    rows: dict[str, dict] = {}
    failed, last, t_info = 0, None, 0.0
    running, n_workers = 0, 0
    try:
        while len(rows) < len(runs):
            for key, (r, f) in futures.items():
                if r.folder in rows or not f.done():
                    continue
                rows[r.folder] = _row(r, f, KilledWorker)
                failed += rows[r.folder]["status"] not in ("ok", "infeasible")
            if time.monotonic() - t_info > 1.0:  # counts from the scheduler, once a second
                running, n_workers = _running(client, futures), len(client.nthreads())
                t_info = time.monotonic()
            counts = BatchProgress(total, already_done + len(rows), running, failed, n_workers)
            if on_progress is not None and counts != last:
                on_progress(counts)
                last = counts
            if len(rows) < len(runs):
                time.sleep(poll_s)
    except KeyboardInterrupt:
        client.cancel([f for _, f in futures.values() if not f.done()])
        for r, _ in futures.values():
            rows.setdefault(r.folder, row_for(r, status="interrupted", message="the batch was stopped before it "
                                                                                "finished; --resume runs it"))
        return rows, True
    return rows, False


def _running(client, futures) -> int:
    """Our tasks being executed: per worker, our tasks assigned to it, at most its threads."""
    try:
        threads = client.nthreads()
        return sum(min(len([k for k in keys if k in futures]), threads.get(w, 1))
                   for w, keys in client.processing().items())
    except (OSError, TimeoutError):
        return 0


def _row(r: RunSpec, f: Any, killed_worker: type) -> dict:
    """The summary row of a finished future (a result, or the failure it ended with)."""
    if f.status == "finished":
        return f.result()
    if f.status == "error":
        e = f.exception()
        if isinstance(e, killed_worker):
            return row_for(r, status="lost", message="its worker died each time it ran it (out of memory? killed?); "
                                                     "--resume tries again")
        text = " ".join(f"{type(e).__name__}: {e}".split())[:500]
        if isinstance(e, ModuleNotFoundError):
            text += " (every worker machine needs springsynth installed)"
        return row_for(r, status="error", message=text)
    return row_for(r, status="lost", message=f"the task ended {f.status} (scheduler lost?); --resume tries again")
