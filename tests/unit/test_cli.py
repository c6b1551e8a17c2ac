"""Command line: outputs, files, exit codes, and one-line errors without tracebacks."""

import subprocess
import sys

import pandas as pd
import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from springsynth.io.design_toml import design_to_toml
from tests.conftest import blade, design

runner = CliRunner()


def _design_file(tmp_path):
    p = tmp_path / "d.toml"
    p.write_text(design_to_toml(design(blade(count=2), blade(offset_mm=1.0, params={"thickness_mm": 0.4}))))
    return p


def test_evaluate_writes_csv_and_plot(tmp_path):
    p = _design_file(tmp_path)
    r = runner.invoke(app, ["evaluate", str(p), "--to", "3", "--points", "31", "--out", str(tmp_path / "e.csv"),
                            "--plot", str(tmp_path / "e.png")])
    assert r.exit_code == 0, r.output
    df = pd.read_csv(tmp_path / "e.csv")
    assert list(df.columns) == ["displacement_mm", "force_N", "stress_ratio", "e1_blade_guided_N", "e2_blade_guided_N"]
    assert len(df) == 31
    assert (df.e1_blade_guided_N + df.e2_blade_guided_N - df.force_N).abs().max() < 1e-6 * df.force_N.abs().max()
    assert (tmp_path / "e.png").stat().st_size > 10_000
    assert "Caution" in r.output


def test_evaluate_at_target_reports_error(tmp_path):
    p = _design_file(tmp_path)
    t = tmp_path / "t.csv"
    t.write_text("displacement_mm,force_N\n0,0\n1,5\n2,10\n")
    r = runner.invoke(app, ["evaluate", str(p), "--at", str(t)])
    assert r.exit_code == 0 and "curve error" in r.output


def test_evaluate_flags_a_design_outside_its_valid_range(tmp_path):
    p = _design_file(tmp_path)
    r = runner.invoke(app, ["evaluate", str(p), "--to", "25"])  # stroke near the blade length
    assert r.exit_code == 0
    assert "outside the models' valid range" in r.output and "stroke" in r.output


def test_catalogues():
    r = runner.invoke(app, ["materials", "--format", "csv"])
    assert r.exit_code == 0 and r.output.startswith("id,") and "music_wire" in r.output and "source" in r.output
    r = runner.invoke(app, ["elements"])
    assert r.exit_code == 0 and "helical_compression" in r.output and "source:" in r.output
    r = runner.invoke(app, ["elements", "--format", "csv"])
    assert r.exit_code == 0 and "blade_guided,length_mm,mm" in r.output


def test_check_accepts_each_file_type(tmp_path, linear_study):
    assert "design with 2 element(s)" in runner.invoke(app, ["check", str(_design_file(tmp_path))]).output
    assert "study 't'" in runner.invoke(app, ["check", str(linear_study)]).output
    assert "target with 13 points" in runner.invoke(app, ["check", str(linear_study.parent / "lin.csv")]).output


@pytest.mark.slow
def test_bad_input_exits_2_with_one_line_and_no_traceback(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text('[[element]]\nkind = "blade_guided"\nmaterial = "music_wier"\nlength_mm = 1\nwidth_mm = 1\nthickness_mm = 0.1\n')
    r = subprocess.run([sys.executable, "-m", "springsynth.cli", "evaluate", str(bad), "--to", "1"],
                       capture_output=True, text=True)
    assert r.returncode == 2
    assert "Traceback" not in r.stderr and "bad.toml" in r.stderr and "did you mean 'music_wire'" in r.stderr
    r = subprocess.run([sys.executable, "-m", "springsynth.cli", "run", str(tmp_path / "missing.toml")],
                       capture_output=True, text=True)
    assert r.returncode == 2 and "not found" in r.stderr and "Traceback" not in r.stderr
