"""Interruption and resume: partial results are saved, and a resumed run ends byte-identical."""

import json
import os
import re
import select
import signal
import subprocess
import sys
import time

import numpy as np
import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from springsynth.io.runfolder import read_run, write_run
from springsynth.io.study_toml import load_study
from springsynth.search.synthesis import synthesize
from tests.conftest import write_study, write_target

runner = CliRunner()
GENS = 14

pytestmark = pytest.mark.slow          # seeded searches and a subprocess run


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    d = tmp_path_factory.mktemp("resume")
    x = np.linspace(0, 5, 11)
    write_target(d / "t.csv", x, 2.0 + 1.5 * x + 0.05 * x**3, tol=0.3)
    return write_study(d, "t.csv", population=24, generations=GENS)


@pytest.fixture(scope="module")
def reference(study, tmp_path_factory):
    out = tmp_path_factory.mktemp("ref") / "run"
    return write_run(synthesize(load_study(study)), out, plots=False)


@pytest.mark.parametrize("stop_after", [1, 5, 9, 13])
def test_resumed_run_is_byte_identical(study, reference, tmp_path, stop_after):
    seen = []
    res = synthesize(load_study(study), on_generation=lambda p: seen.append(p.generation),
                     should_stop=lambda: seen[-1] >= stop_after)
    assert res.partial and res.checkpoint and res.history[-1]["generation"] == stop_after
    part = write_run(res, tmp_path / "part", plots=False)
    assert json.loads((part / "run.json").read_text())["partial"] is True
    folder = read_run(part)
    done = synthesize(folder.study(), resume=folder.checkpoint())
    assert not done.partial and len(done.history) == GENS
    final = write_run(done, tmp_path / "final", plots=False, resumed_from=str(part))
    assert (final / "pareto.csv").read_bytes() == (reference / "pareto.csv").read_bytes()


def _read_until(proc, pattern: bytes, timeout_s: float) -> bytes:
    """Read the process's stderr until ``pattern`` (a regex) appears; fail on exit or timeout."""
    seen, deadline = b"", time.monotonic() + timeout_s
    while not re.search(pattern, seen):
        assert time.monotonic() < deadline, f"no {pattern!r} within {timeout_s} s: {seen[-2000:]!r}"
        assert proc.poll() is None, f"exited {proc.returncode} before {pattern!r}: {seen[-2000:]!r}"
        if select.select([proc.stderr], [], [], 0.5)[0]:
            seen += os.read(proc.stderr.fileno(), 65536)
    return seen


def test_sigint_saves_partial_results_and_exits_130(study, tmp_path):
    out = tmp_path / "sig"
    # rich draws its live progress line only on an interactive terminal: say this pipe is one, so
    # that the signal can follow the first finished generation ("evals N" appears with it)
    env = dict(os.environ, PYTHONUNBUFFERED="1", TTY_COMPATIBLE="1", TTY_INTERACTIVE="1", NO_COLOR="1",
               COLUMNS="200")
    # a budget far beyond what can finish before the signal arrives
    proc = subprocess.Popen([sys.executable, "-m", "springsynth.cli", "run", str(study), "--out", str(out),
                             "--generations", "100000"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    try:
        seen = _read_until(proc, rb"evals \d+", timeout_s=300)
        proc.send_signal(signal.SIGINT)
        _, rest = proc.communicate(timeout=120)
    finally:
        if proc.poll() is None:
            proc.kill()
    stderr = re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", (seen + rest).decode(errors="replace"))   # terminal codes
    assert proc.returncode == 130, stderr
    assert "Traceback" not in stderr
    stopped = int(re.search(r"interrupted after generation (\d+) of 100000", stderr).group(1))
    meta = json.loads((out / "run.json").read_text())
    assert meta["partial"] is True and (out / "checkpoint.pkl").exists() and (out / "pareto.csv").exists()
    assert len(meta["history"]) == stopped >= 1


def test_partial_run_resumes_from_the_command_line(study, reference, tmp_path):
    seen = []
    res = synthesize(load_study(study), on_generation=lambda p: seen.append(p.generation),
                     should_stop=lambda: seen[-1] >= 3)
    part = write_run(res, tmp_path / "part", plots=False)
    r = runner.invoke(app, ["run", "--resume", str(part), "--out", str(tmp_path / "cont")])
    assert r.exit_code == 0, r.output
    meta = json.loads((tmp_path / "cont" / "run.json").read_text())
    assert meta["partial"] is False and meta["resumed_from"] == str(part) and len(meta["history"]) == GENS
    # the command line resumes to the uninterrupted run's Pareto table, byte for byte
    assert (tmp_path / "cont" / "pareto.csv").read_bytes() == (reference / "pareto.csv").read_bytes()
    r = runner.invoke(app, ["run", "--resume", str(part), "--generations", "5"])
    assert r.exit_code == 2 and "drop --population" in r.output


def test_resume_needs_an_interrupted_run(reference, tmp_path):
    r = runner.invoke(app, ["run", "--resume", str(reference), "--out", str(tmp_path / "x")])
    assert r.exit_code == 2 and "not an interrupted run" in r.output


@pytest.mark.slow
def test_resume_decodes_with_the_checkpoints_own_study(study, tmp_path):
    # the caller's study differs (one element, other kinds): the checkpoint's study decodes the genomes
    seen = []
    part = synthesize(load_study(study), on_generation=lambda p: seen.append(p.generation),
                      should_stop=lambda: seen[-1] >= 11)
    other = write_study(tmp_path, str(study.parent / "t.csv"), elements=("column",), materials=("stainless_17_7ph",))
    done = synthesize(load_study(other), resume=part.checkpoint)
    assert not done.partial and done.study.search.max_elements == 2
    assert {e.kind for d in done.designs for e in d.elements} <= {"blade_guided", "helical_compression"}
    # written and read back: catalogue materials stay catalogue ids after the round trip through the pickle
    folder = write_run(done, tmp_path / "final", plots=False)
    assert not any("[materials." in p.read_text() for p in (folder / "designs").glob("*.toml"))
    assert len(read_run(folder).designs) == len(done.designs)


@pytest.mark.slow
def test_resume_on_the_command_line_finishes_beside_the_interrupted_run(study, tmp_path, monkeypatch):
    seen = []
    res = synthesize(load_study(study), on_generation=lambda p: seen.append(p.generation),
                     should_stop=lambda: seen[-1] >= 11)
    part = write_run(res, tmp_path / "runs" / "part", plots=False)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    old = os.umask(0o022)
    try:
        r = runner.invoke(app, ["run", "--resume", str(part)])
    finally:
        os.umask(old)
    assert r.exit_code in (0, 1), r.output
    done = tmp_path / "runs" / "part-resumed"
    assert "the finished run is in" in r.output and "part-resumed" in r.output
    assert json.loads((done / "run.json").read_text())["partial"] is False
    assert not (elsewhere / "runs").exists()
    assert json.loads((part / "run.json").read_text())["partial"] is True        # left as it was
    modes = {p.name: p.stat().st_mode & 0o777 for p in done.rglob("*") if p.is_file()}
    assert set(modes.values()) == {0o644}, modes                                 # the umask, not 0600
