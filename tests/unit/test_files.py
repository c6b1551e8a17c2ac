"""Writing files and folders: permissions as a plain write gives them, safe folder names, no overwriting."""

from __future__ import annotations

import os
import stat
from pathlib import Path

import pytest
from typer.testing import CliRunner

from springsynth.cli import app
from springsynth.io.design_toml import design_to_toml
from springsynth.io.files import new_file_mode, new_folder, safe_folder_name, write_text_atomic
from springsynth.io.runfolder import default_run_folder, resumed_run_folder
from tests.conftest import blade, design

runner = CliRunner()


@pytest.fixture
def umask():
    """Set the process umask for one test and put the old one back."""
    old = os.umask(0o022)
    yield lambda m: os.umask(m)
    os.umask(old)


def _mode(p: Path) -> int:
    return stat.S_IMODE(p.stat().st_mode)


@pytest.mark.parametrize("mask, expected", [(0o022, 0o644), (0o002, 0o664), (0o077, 0o600), (0o027, 0o640)])
def test_written_files_follow_the_umask(tmp_path, umask, mask, expected):
    # what open(path, "w") gives a new file: 0o666 with the umask's bits removed (POSIX open(2))
    umask(mask)
    assert new_file_mode() == expected
    write_text_atomic(tmp_path / "a.txt", "x")
    plain = tmp_path / "plain.txt"
    plain.write_text("x")
    assert _mode(tmp_path / "a.txt") == _mode(plain) == expected
    assert (tmp_path / "a.txt").read_text() == "x"
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_a_rewritten_file_keeps_its_own_permissions(tmp_path, umask):
    umask(0o022)
    p = tmp_path / "report.html"
    p.write_text("old")
    p.chmod(0o640)
    write_text_atomic(p, "new")
    assert p.read_text() == "new" and _mode(p) == 0o640


def test_files_of_a_results_folder_are_readable_by_the_group_and_others(tmp_path, umask, monkeypatch):
    # a whole folder written by a command (the tolerance analysis: figure and three tables)
    umask(0o022)
    d = tmp_path / "d.toml"
    d.write_text(design_to_toml(design(blade())))
    monkeypatch.chdir(tmp_path)
    r = runner.invoke(app, ["tolerance", str(d), "--to", "2", "--points", "5", "--samples", "20", "--out", "tol"])
    assert r.exit_code == 0, r.output
    files = list((tmp_path / "tol").iterdir())
    assert len(files) >= 4 and all(_mode(f) == 0o644 for f in files), {f.name: oct(_mode(f)) for f in files}


@pytest.mark.parametrize("name, expected", [
    ("../../../x", "x"), ("bench-clamp", "bench-clamp"), ("bench clamp", "bench-clamp"), ("/etc/passwd", "etc-passwd"),
    ("a/../b", "a-..-b"), ("..", "run"), ("", "run"), (".hidden", "hidden"), ("C:\\temp\\x", "C-temp-x"),
    ("Federn-ü", "Federn-ü"),
])
def test_study_names_become_safe_folder_names(name, expected):
    s = safe_folder_name(name)
    assert s == expected
    assert "/" not in s and "\\" not in s and not s.startswith(".")


def test_a_study_name_cannot_place_the_run_outside_runs(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    out = default_run_folder("../../../x")
    runs = (tmp_path / "runs").resolve()
    assert out.resolve().parent == runs and out.name.startswith("x-")


def test_a_resumed_run_finishes_beside_the_interrupted_one(tmp_path):
    assert resumed_run_folder(tmp_path / "runs" / "clamp-1") == (tmp_path / "runs" / "clamp-1-resumed").resolve()
    # resuming a resumed run does not stack suffixes
    assert resumed_run_folder(tmp_path / "clamp-1-resumed-2") == (tmp_path / "clamp-1-resumed").resolve()


def test_out_naming_an_empty_folder_is_used_as_it_is(tmp_path):
    empty = tmp_path / "out"
    empty.mkdir()
    assert new_folder(empty) == empty
    (empty / "pareto.csv").write_text("x")
    assert new_folder(empty) == tmp_path / "out-2"          # a folder with anything in it is never reused
    (tmp_path / "file").write_text("x")
    assert new_folder(tmp_path / "file") == tmp_path / "file-2"   # nor a file of that name
    assert new_folder(tmp_path / "new" / "deep") == tmp_path / "new" / "deep"
