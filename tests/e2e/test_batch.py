"""springsynth batch on real Dask clusters: a 2 x 2 batch, results equal to single runs, resume,
a worker killed mid-task, a scheduler given by address, bad variants recorded, and Ctrl-C."""

from __future__ import annotations

import glob
import json
import os
import shutil
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import cloudpickle
import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

import springsynth as ss
from springsynth.batch import MARKER, RunSpec, plan_from_files, run_batch, run_one, start_folder, write_summary
from springsynth.cli import app
from springsynth.io.runfolder import read_run
from tests.conftest import write_study, write_target

# the test's own task wrapper travels to the workers by value
cloudpickle.register_pickle_by_value(sys.modules[__name__])

pytestmark = pytest.mark.slow
runner = CliRunner()
#: a tiny budget: these tests check the batch machinery, not the search
TINY = 'polish = false\nverify_top = 0'


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    d = tmp_path_factory.mktemp("batch-study")
    x = np.linspace(0, 5, 11)
    write_target(d / "t.csv", x, 2.0 + 1.5 * x, tol=0.4)
    return write_study(d, "t.csv", population=12, generations=3, extra=TINY)


@pytest.fixture(scope="module")
def two_by_two(study, tmp_path_factory):
    out = tmp_path_factory.mktemp("b22") / "batch"
    r = runner.invoke(app, ["batch", str(study), "--out", str(out), "--seeds", "2",
                            "--vary", "target.scale_force=1:2:2"])
    return out, r


def _feasible_min_error(folder: Path) -> float:
    t = pd.read_csv(folder / "pareto.csv")
    return t.loc[t.feasible, "curve_error_pct"].min()


def test_two_by_two_batch(study, two_by_two):
    out, r = two_by_two
    assert r.exit_code in (0, 1), r.output
    assert "runs done" in r.output and "4 made now" in r.output
    folders = sorted(p.parent.relative_to(out).as_posix() for p in out.glob(f"*/*/*/{MARKER}"))
    assert folders == ["t/scale_force=1/seed-1", "t/scale_force=1/seed-2", "t/scale_force=2/seed-1",
                       "t/scale_force=2/seed-2"]
    for f in folders:  # each one a complete run folder, as `springsynth run` writes it
        for name in ("pareto.csv", "curves.csv", "run.json", "report.html", "pareto.png", "study.toml"):
            assert (out / f / name).exists(), (f, name)
    s = pd.read_csv(out / "summary.csv")
    assert list(s.columns) == ["study", "target.scale_force", "seed", "best_error_pct", "pareto_size",
                               "feasible_share", "hypervolume", "wall_time_s", "folder", "status", "message"]
    assert s["folder"].tolist() == folders and s["target.scale_force"].tolist() == [1, 1, 2, 2]
    assert set(s.status) <= {"ok", "infeasible"} and (s.wall_time_s > 0).all()
    for _, row in s[s.status == "ok"].iterrows():  # the summary agrees with the run's own Pareto table
        assert row.best_error_pct == pytest.approx(_feasible_min_error(out / row.folder), rel=1e-5)
        assert 0 < row.hypervolume <= 1 and row.pareto_size >= 1
    assert (out / "summary.png").stat().st_size > 20_000
    # a variant's run folder rebuilds its own study: the target's forces doubled
    run = read_run(out / "t/scale_force=2/seed-1")
    assert run.meta["overrides"] == ["target.scale_force=2"]
    assert run.study().target.force_N == pytest.approx(2 * ss.load_study(study).target.force_N)


def test_results_identical_to_single_runs(study, two_by_two, tmp_path):
    out, r = two_by_two
    assert r.exit_code in (0, 1), r.output
    scaled = study.with_name("scaled.toml")
    scaled.write_text(study.read_text().replace('file = "t.csv"', 'file = "t.csv"\nscale_force = 2'))
    for path, variant, seed in ((study, "scale_force=1", 1), (study, "scale_force=1", 2), (scaled, "scale_force=2", 2)):
        single = tmp_path / f"{variant}-{seed}"
        rr = runner.invoke(app, ["run", str(path), "--seed", str(seed), "--out", str(single)])
        assert rr.exit_code in (0, 1), rr.output
        for name in ("pareto.csv", "curves.csv"):
            assert (single / name).read_bytes() == (out / "t" / variant / f"seed-{seed}" / name).read_bytes()


def test_resume_makes_only_missing_runs(two_by_two, tmp_path):
    src, r = two_by_two
    assert r.exit_code in (0, 1), r.output
    out = tmp_path / "copy"
    shutil.copytree(src, out)
    shutil.rmtree(out / "t/scale_force=2/seed-2")              # never made
    (out / "t/scale_force=1/seed-2" / MARKER).unlink()          # its task died while writing
    (out / "t/scale_force=1/seed-2/stray.txt").write_text("half-written")
    kept = {f: ((out / f / MARKER).stat().st_mtime_ns, (out / f / MARKER).read_bytes())
            for f in ("t/scale_force=1/seed-1", "t/scale_force=2/seed-1")}
    rr = runner.invoke(app, ["batch", "--resume", str(out)])
    assert rr.exit_code in (0, 1), rr.output
    assert "2 already complete, 2 made now" in rr.output
    for f, (mtime, data) in kept.items():
        assert (out / f / MARKER).stat().st_mtime_ns == mtime and (out / f / MARKER).read_bytes() == data
    assert not (out / "t/scale_force=1/seed-2/stray.txt").exists()
    for f in ("t/scale_force=1/seed-2", "t/scale_force=2/seed-2"):
        assert (out / f / MARKER).exists()
        assert (out / f / "pareto.csv").read_bytes() == (src / f / "pareto.csv").read_bytes()
    assert set(pd.read_csv(out / "summary.csv").status) <= {"ok", "infeasible"}


def _dies_once(spec, out_dir):
    """The task, except that the first attempt at seed 2 kills its own worker process half-way
    through writing the run folder (SIGKILL: no clean-up, as when a machine goes away), and the
    first attempt at seed 3 raises."""
    flag = Path(out_dir) / "killed.txt"
    if spec["seed"] == 3 and not (Path(out_dir) / "raised.txt").exists():
        (Path(out_dir) / "raised.txt").write_text("once")
        raise OSError("a passing fault (network file system hiccup)")
    if spec["seed"] == 2 and not flag.exists():
        flag.write_text(str(os.getpid()))
        folder = Path(out_dir) / RunSpec.from_dict(spec).folder
        threading.Thread(target=run_one, args=(spec, out_dir), daemon=True).start()
        t0 = time.monotonic()
        while not (folder / "pareto.csv").exists() and time.monotonic() - t0 < 120:
            time.sleep(0.002)
        os.kill(os.getpid(), signal.SIGKILL)
    row = run_one(spec, out_dir)
    (Path(out_dir) / f"finished-{spec['seed']}.pid").write_text(str(os.getpid()))
    return row


def test_worker_killed_mid_task_and_the_batch_completes(study, two_by_two, tmp_path):
    src, r = two_by_two
    plan = plan_from_files([study], seeds=(1, 2, 3), varies=[])
    out = start_folder(tmp_path / "killed", plan)
    outcome = run_batch(plan, out, workers=2, task=_dies_once)
    # the run was finished by another worker process than the one killed, and the raising task was retried
    assert (out / "finished-2.pid").read_text() != (out / "killed.txt").read_text()
    assert (out / "raised.txt").exists() and (out / "finished-3.pid").exists()
    assert not outcome.interrupted and outcome.ran == 3
    assert {row["status"] for row in outcome.rows.values()} <= {"ok", "infeasible"}
    assert sorted(p.name for p in (out / "t/base").iterdir()) == ["seed-1", "seed-2", "seed-3"]  # no seed-2-2
    # the retried run equals an undisturbed one
    assert (out / "t/base/seed-2/pareto.csv").read_bytes() == (src / "t/scale_force=1/seed-2/pareto.csv").read_bytes()
    frame = write_summary(out, plan, outcome.rows)
    assert len(frame) == 3 and (out / "summary.csv").exists()


def test_scheduler_address_and_a_bad_variant_recorded(study, tmp_path):
    from distributed import LocalCluster

    with LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        out = tmp_path / "remote"
        r = runner.invoke(app, ["batch", str(study), "--out", str(out), "--scheduler", cluster.scheduler_address,
                                "--vary", "envelope.length_mm=0,60"])
        prefixes = list(cluster.scheduler.task_prefixes)
    assert f"on scheduler {cluster.scheduler_address}" in r.output
    assert any(p.startswith("springsynth") for p in prefixes), prefixes  # the tasks ran on that cluster
    assert r.exit_code == 2, r.output  # one variant was bad input; the other still ran
    s = pd.read_csv(out / "summary.csv").set_index("envelope.length_mm")
    assert s.loc[0, "status"] == "bad_input" and "[envelope].length_mm: must be > 0, got 0" in s.loc[0, "message"]
    assert s.loc[60, "status"] in ("ok", "infeasible") and (out / s.loc[60, "folder"] / MARKER).exists()
    assert "bad input: t/length_mm=0/seed-3" in r.output


def test_ctrl_c_keeps_finished_runs_and_resume_makes_the_rest(study, tmp_path):
    out = tmp_path / "stopped"
    env = dict(os.environ, PYTHONUNBUFFERED="1", NO_COLOR="1")
    # a new session: Ctrl-C in a terminal reaches the whole process group, workers included
    proc = subprocess.Popen([sys.executable, "-m", "springsynth.cli", "batch", str(study), "--out", str(out),
                             "--seeds", "4", "--workers", "1", "--set", "search.generations=8"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env, start_new_session=True)
    t0 = time.monotonic()
    while not glob.glob(str(out / "*/*/*" / MARKER)) and time.monotonic() - t0 < 180:
        time.sleep(0.1)
    os.killpg(proc.pid, signal.SIGINT)
    stdout, stderr = proc.communicate(timeout=180)
    assert proc.returncode == 130, stderr.decode()
    assert b"Traceback" not in stderr and b"--resume" in stderr
    s = pd.read_csv(out / "summary.csv")
    done = s[s.status != "interrupted"]
    assert 1 <= len(done) < 4 and set(done.status) <= {"ok", "infeasible"}
    for f in done.folder:
        assert (out / f / MARKER).exists()
    r = runner.invoke(app, ["batch", "--resume", str(out)])
    assert r.exit_code in (0, 1), r.output
    assert f"{len(done)} already complete, {4 - len(done)} made now" in r.output
    assert set(pd.read_csv(out / "summary.csv").status) <= {"ok", "infeasible"}
    assert json.loads((out / "batch.json").read_text())["set"] == ["search.generations=8"]
