"""The malformed-input corpus through the real command line.

Every file under ``tests/corpus/{targets,studies,designs}`` is listed in
``tests/corpus/expected.toml`` with the words its error must contain. Each one runs
``python -m springsynth.cli check FILE`` (designs also ``evaluate FILE --to 5``, studies
also ``run FILE --out DIR``) in a subprocess: a bad file must exit with code 2 and print
exactly one line on stderr, no traceback, naming the file, the row or field, the value
and the fix.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tomllib
import traceback
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

import pytest

from springsynth.model.errors import InputError

CORPUS = Path(__file__).resolve().parents[1] / "corpus"
INDEX = tomllib.loads((CORPUS / "expected.toml").read_text(encoding="utf-8"))
FOLDERS = ("targets", "studies", "designs")


#: evaluate / run also go through a subprocess for these; the rest run in-process (same
#: command functions and error guard, without an interpreter start-up each)
SUBPROCESS_TOO = {"designs/offset_nan.toml", "designs/inline_negative_modulus.toml", "designs/dimension_huge_int.toml",
                  "studies/population_zero.toml", "studies/target_is_folder.toml", "studies/target_bad_csv.toml"}


def _commands(rel: str, spec: dict, out_dir: Path) -> list[tuple[str, list[str]]]:
    path = str(CORPUS / rel)
    cmds = [("check", ["check", path])]
    if spec.get("exit", 2) == 2:
        if rel.startswith("designs/"):
            cmds.append(("evaluate", ["evaluate", path, "--to", "5"]))
        elif rel.startswith("studies/") and rel.endswith(".toml"):
            cmds.append(("run", ["run", path, "--out", str(out_dir / Path(rel).stem)]))
    return cmds


@dataclass
class Result:
    returncode: int
    stdout: str
    stderr: str


def _run(args: list[str]) -> Result:
    env = {**os.environ, "NO_COLOR": "1", "COLUMNS": "400"}
    r = subprocess.run([sys.executable, "-m", "springsynth.cli", *args], capture_output=True, text=True,
                       timeout=120, env=env, cwd=CORPUS)
    return Result(r.returncode, r.stdout, r.stderr)


def _invoke(args: list[str]) -> Result:
    from typer.testing import CliRunner

    from springsynth.cli import app

    r = CliRunner().invoke(app, args)
    tb = "".join(traceback.format_exception(r.exc_info[1])) if r.exc_info and r.exception and \
        not isinstance(r.exception, SystemExit) else ""
    return Result(r.exit_code, r.stdout, r.stderr + tb)


@pytest.fixture(scope="module")
def results(tmp_path_factory):
    """All command-line round-trips; the subprocesses run a few at a time (mostly interpreter start-up)."""
    out_dir = tmp_path_factory.mktemp("runs")
    jobs = [(rel, name, args) for rel, spec in INDEX.items() for name, args in _commands(rel, spec, out_dir)]
    sub = [(rel, name, args) for rel, name, args in jobs if name == "check" or rel in SUBPROCESS_TOO]
    with ThreadPoolExecutor(max_workers=4) as pool:
        done = list(pool.map(lambda j: _run(j[2]), sub))
    out = {(rel, name): r for (rel, name, _), r in zip(sub, done)}
    for rel, name, args in jobs:
        if name != "check":
            out[(rel, name + " (in-process)")] = _invoke(args)
    return out


def test_index_lists_every_corpus_file():
    on_disk = {f"{d}/{p.name}" for d in FOLDERS for p in (CORPUS / d).iterdir() if p.is_file()}
    assert on_disk == set(INDEX), (on_disk - set(INDEX), set(INDEX) - on_disk)
    bad = [k for k, v in INDEX.items() if v.get("exit", 2) == 2]
    assert len(bad) >= 40


@pytest.mark.slow
@pytest.mark.parametrize("rel", sorted(INDEX))
def test_corpus_file(rel, results):
    spec = INDEX[rel]
    want = spec.get("exit", 2)
    for (r_rel, name), r in results.items():
        if r_rel != rel:
            continue
        what = f"{name} {rel}"
        assert "Traceback" not in r.stderr, f"{what}: traceback\n{r.stderr}"
        assert r.returncode == want, f"{what}: exit {r.returncode}\nstdout: {r.stdout}\nstderr: {r.stderr}"
        if want != 2:
            assert all(w.lower() in r.stdout.lower() for w in spec["words"]), f"{what}: {r.stdout}"
            continue
        lines = r.stderr.strip().splitlines()
        assert len(lines) == 1, f"{what}: expected one line on stderr, got {len(lines)}:\n{r.stderr}"
        msg = lines[0]
        assert msg.startswith("error: "), msg
        assert spec.get("names", Path(rel).name) in msg, f"{what}: message does not name the file: {msg}"
        missing = [w for w in spec["words"] if w.lower() not in msg.lower()]
        assert not missing, f"{what}: {missing} not in: {msg}"


# ------------------------------------------------------------------- faults made at test time

@pytest.mark.slow
def test_unreadable_target_file(tmp_path):
    """A target the user may not read: one line naming the file and why."""
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        pytest.skip("root reads every file")
    p = tmp_path / "locked.csv"
    p.write_text("displacement_mm,force_N\n0,0\n1,1\n2,2\n")
    p.chmod(0)
    try:
        r = _run(["check", str(p)])
    finally:
        p.chmod(0o600)
    assert r.returncode == 2 and len(r.stderr.strip().splitlines()) == 1
    assert "locked.csv" in r.stderr and "cannot be read" in r.stderr


def test_unreadable_target_file_in_process(tmp_path, monkeypatch):
    """Same fault without file permissions (root): the reader turns any OSError into InputError."""
    from springsynth.io.target_csv import load_target

    p = tmp_path / "locked.csv"
    p.write_text("displacement_mm,force_N\n0,0\n1,1\n2,2\n")

    def deny(self, *a, **k):
        raise PermissionError(13, "Permission denied", str(self))

    monkeypatch.setattr(Path, "open", deny)
    with pytest.raises(InputError, match=r"locked\.csv: cannot be read \(Permission denied\)"):
        load_target(p)


def test_study_target_path_through_a_file(tmp_path):
    """``file = "t.csv/x.csv"`` (a file used as a folder) and a NUL byte in the path."""
    from springsynth.io.study_toml import load_study

    (tmp_path / "t.csv").write_text("displacement_mm,force_N\n0,1\n1,2\n2,3\n")
    body = (CORPUS / "studies" / "valid.toml").read_text()
    for bad, words in (("t.csv/x.csv", "not found"), ("t\\u0000.csv", "cannot be used"), ("x" * 5000 + ".csv", "cannot be used")):
        s = tmp_path / "s.toml"
        s.write_text(body.replace('file = "target.csv"', f'file = "{bad}"'))
        with pytest.raises(InputError) as e:
            load_study(s)
        assert "[target].file" in str(e.value) and words in str(e.value)
