"""A full disk or an unwritable folder: a clear message, exit code 2, earlier runs intact."""

import errno
import hashlib

import numpy as np
import pytest
from typer.testing import CliRunner

import springsynth.io.files as fileio
from springsynth.cli import app
from tests.conftest import write_study, write_target

runner = CliRunner()

pytestmark = pytest.mark.slow          # two runs per case


@pytest.fixture
def study(tmp_path):
    x = np.linspace(0, 4, 9)
    write_target(tmp_path / "t.csv", x, 1.0 + 2.0 * x, tol=0.3)
    return write_study(tmp_path, "t.csv", population=20, generations=3)


def _digest(folder):
    return {p.relative_to(folder): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


@pytest.mark.parametrize("err, words", [(errno.ENOSPC, "the disk is full"), (errno.EROFS, "not writable"),
                                        (errno.EACCES, "not writable")])
def test_write_failure_exits_2_and_keeps_earlier_runs(study, tmp_path, monkeypatch, err, words):
    first = tmp_path / "runs" / "first"
    assert runner.invoke(app, ["run", str(study), "--out", str(first)]).exit_code == 0
    before = _digest(first)
    real = fileio.os.replace
    calls = {"n": 0}

    def failing_replace(src, dst):
        calls["n"] += 1
        if calls["n"] > 2:  # a few files land, then the disk "fills"
            raise OSError(err, "simulated")
        return real(src, dst)

    monkeypatch.setattr(fileio.os, "replace", failing_replace)
    r = runner.invoke(app, ["run", str(study), "--out", str(tmp_path / "runs" / "second")])
    assert r.exit_code == 2, r.output
    assert words in r.output and "Traceback" not in r.output
    assert _digest(first) == before
    # no temporary or half-written file is left behind in the new folder
    second = tmp_path / "runs" / "second"
    assert not [p for p in second.rglob("*") if p.name.endswith(".tmp")]
