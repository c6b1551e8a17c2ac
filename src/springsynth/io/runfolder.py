"""Run folders: writing them and reading them back.

A run folder holds ``pareto.csv`` (the columns of :func:`~springsynth.search.synthesis.design_columns`),
``designs/<id>.toml`` (one design file per row), ``curves.csv`` (each design's force over
:func:`curve_grid`), copies of the inputs (``study.toml``, ``target.csv``), ``run.json``
(seed, budget, history, timings, versions) and, for a run interrupted with Ctrl-C, a
checkpoint for ``run --resume``; the figures and ``report.html`` are built from the folder
alone (:func:`build_report`).
"""

from __future__ import annotations

import json
import math
import platform
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from springsynth.assembly.design import Design
from springsynth.assembly.evaluate import evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.io.design_toml import design_to_toml, load_design, read_toml
from springsynth.io.files import new_folder, safe_folder_name, write_bytes_atomic, write_text_atomic
from springsynth.io.study_toml import load_study
from springsynth.model.errors import InputError
from springsynth.model.safety import CAUTION
from springsynth.model.study import Study, curve_grid
from springsynth.model.table import Table, TableError, csv_text, parse_csv
from springsynth.model.version import __version__

if TYPE_CHECKING:  # the run folder reads a result's fields: the search is not loaded to read a run, the
    # report (matplotlib) only to build one, and pandas never (the tables are written and read by model.table)
    from springsynth.report.html import ReportInput
    from springsynth.search.synthesis import Synthesis

__all__ = ["write_run", "read_run", "build_report", "RunFolder", "CHECKPOINT", "run_of_design", "run_target",
           "default_run_folder", "resumed_run_folder"]

#: file holding the search state of an interrupted run (``springsynth run --resume``)
CHECKPOINT = "checkpoint.pkl"


def _versions() -> dict[str, str]:
    from importlib.metadata import PackageNotFoundError, version

    def installed(name: str) -> str:      # without importing it (pandas alone takes some 0.3 s to import)
        try:
            return version(name)
        except PackageNotFoundError:
            return "not installed"

    return {"springsynth": __version__, "python": platform.python_version(), "numpy": np.__version__,
            **{name: installed(name) for name in ("scipy", "pymoo", "pandas", "matplotlib")}}


def curve_columns(study: Study, designs: tuple[Design, ...]) -> dict[str, list]:
    """Long table design_id, displacement_mm, force_N over :func:`curve_grid`, as named columns."""
    x = curve_grid(study)
    if not designs:
        return {"design_id": [], "displacement_mm": [], "force_N": []}
    r = evaluate_population(Slots.from_designs(list(designs)), x, x_max_mm=study.target.stroke_mm)
    return {"design_id": [d.name for d in designs for _ in range(x.size)],
            "displacement_mm": np.tile(x, len(designs)).tolist(), "force_N": r.force_N.ravel().tolist()}


def write_run(res: Synthesis, out: Path, *, parent: str | None = None, overrides: list[str] = (),
              plots: bool = True, resumed_from: str | None = None) -> Path:
    """Write the run folder; returns its path (a new folder or an existing empty one, never one with files in it)."""
    from springsynth.search.synthesis import design_columns  # the result came from the search: it is loaded

    st = res.study
    folder = new_folder(out)
    (folder / "designs").mkdir()
    write_text_atomic(folder / "pareto.csv", csv_text(design_columns(res)))
    header = f"springsynth {__version__} design {{}} from study {st.name!r}\n{CAUTION}"
    for d in res.designs:
        write_text_atomic(folder / "designs" / f"{d.name}.toml", design_to_toml(d, header=header.format(d.name)))
    write_text_atomic(folder / "curves.csv", csv_text(curve_columns(st, res.designs)))
    if st.path is not None:
        write_bytes_atomic(folder / "study.toml", Path(st.path).read_bytes())
    if st.target_path is not None:
        write_bytes_atomic(folder / "target.csv", Path(st.target_path).read_bytes())
    meta = {
        "study": st.name, "study_hash": st.hash(), "seed": res.seed,
        "budget": {"population": res.population, "generations": res.generations, "evaluations": res.evaluations},
        "feasible": res.feasible, "partial": res.partial, "designs": len(res.designs),
        "parent": parent, "overrides": list(overrides), "resumed_from": resumed_from,
        "timings_s": res.timings, "polish": res.polish, "versions": _versions(),
        "history": res.history, "caution": CAUTION,
    }
    if getattr(res, "yield_samples", 0):
        meta["yield_samples"] = res.yield_samples
    if res.checkpoint is not None:
        write_bytes_atomic(folder / CHECKPOINT, res.checkpoint)
    write_text_atomic(folder / "run.json", json.dumps(_plain(meta), indent=1) + "\n")
    if plots:  # figures and report.html from the folder alone, exactly as `springsynth report` does
        build_report(folder, study=st)
    return folder


def _plain(o):
    """JSON-safe copy: numpy scalars to Python, NaN/inf to None."""
    if isinstance(o, dict):
        return {str(k): _plain(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_plain(v) for v in o]
    if isinstance(o, (np.integer,)):
        return int(o)
    if isinstance(o, (float, np.floating)):
        return float(o) if math.isfinite(o) else None
    return o


@dataclass(frozen=True)
class RunFolder:
    path: Path
    meta: dict
    table: Table          # pareto.csv, typed as pandas types it (pandas itself is not loaded to read a run)
    designs: tuple[Design, ...]

    @property
    def partial(self) -> bool:
        return bool(self.meta.get("partial"))

    def checkpoint(self) -> bytes:
        p = self.path / CHECKPOINT
        if not self.partial or not p.exists():
            raise InputError("has no checkpoint to resume: it is not an interrupted run", where=str(self.path))
        return p.read_bytes()

    def study(self, extra_overrides: list[str] = ()) -> Study:
        """The run's study (its own copy and target), with its overrides and any new ones applied."""
        target = (self.path / "target.csv").resolve()
        ov = [f'target.file="{_toml_str(str(target))}"'] + list(self.meta.get("overrides", [])) + list(extra_overrides)
        return load_study(self.path / "study.toml", overrides=ov)


def _toml_str(s: str) -> str:
    return s.replace("\\", "\\\\").replace('"', '\\"')


def read_run(path: Path, *, with_study: bool = True) -> RunFolder:
    """The run folder at ``path``; ``with_study=False`` accepts a folder written from a study
    built in code (no study.toml or target.csv: the caller supplies the study)."""
    path = Path(path)
    if not path.is_dir():
        raise InputError("is not a run folder (expected a folder written by `springsynth run`)", where=str(path))
    for need in ("run.json", "pareto.csv") + (("study.toml", "target.csv") if with_study else ()):
        if not (path / need).exists():
            raise InputError(f"is not a complete run folder: {need} is missing", where=str(path))
    try:
        meta = json.loads((path / "run.json").read_text(encoding="utf-8"))
    except (json.JSONDecodeError, UnicodeDecodeError) as e:
        raise InputError(f"run.json is not valid JSON ({e})", where=str(path)) from None
    try:
        table = parse_csv((path / "pareto.csv").read_text(encoding="utf-8"))
    except (TableError, UnicodeDecodeError) as e:
        raise InputError(f"pareto.csv cannot be read ({e})", where=str(path)) from None
    designs = tuple(load_design(path / "designs" / f"{i}.toml") for i in table.get("design_id", []))
    return RunFolder(path, meta, table, designs)


def default_run_folder(study_name: str) -> Path:
    """``runs/<name>-<time>``, the study's name made a safe folder name (it may hold ``/`` or ``..``)."""
    from datetime import datetime

    return Path("runs") / f"{safe_folder_name(study_name, fallback='run')}-{datetime.now().strftime('%Y%m%d-%H%M%S')}"


def resumed_run_folder(run: Path) -> Path:
    """Where a resumed run finishes: beside the interrupted one, ``<run>-resumed`` (the interrupted
    run stays as it was; resuming a resumed run does not stack suffixes)."""
    import re

    run = Path(run).resolve()
    return run.parent / f"{re.sub(r'-resumed(-[0-9]+)?$', '', run.name)}-resumed"


def run_of_design(path: Path) -> Path | None:
    """The run folder a design file was written into (``<run>/designs/<id>.toml``), else None."""
    path = Path(path).resolve()
    run = path.parent.parent
    if path.parent.name == "designs" and (run / "run.json").is_file() and (run / "target.csv").is_file():
        return run
    return None


def run_target(run: Path):
    """The target a run searched for: its study's (with the run's overrides) or, for a run
    written from a study built in code, its ``target.csv``."""
    from springsynth.io.target_csv import load_target

    run = Path(run)
    if (run / "study.toml").is_file():
        return read_run(run).study().target
    return load_target(run / "target.csv")


def _report_input(folder: Path | RunFolder, study: Study | None) -> ReportInput:
    from springsynth.report.html import ReportInput

    if isinstance(folder, RunFolder):
        run = folder
    elif study is not None and not (Path(folder) / "study.toml").exists():
        run = read_run(Path(folder), with_study=False)
    else:
        run = read_run(Path(folder))
    path = run.path
    if study is None or (path / "study.toml").exists():
        study = run.study()
    raw = read_toml(path / "study.toml") if (path / "study.toml").exists() else dict(study.raw)
    return ReportInput(path, run.meta, run.table, run.designs, study, raw)


def build_report(folder: Path | RunFolder, *, study: Study | None = None) -> Path:
    """Rebuild every figure and ``report.html`` of a run folder; returns the report's path.

    Parameters
    ----------
    folder : Path or RunFolder
        A folder written by ``springsynth run`` (or :func:`read_run` of one).
    study : Study, optional
        Used only when the folder has no ``study.toml`` (a study built in code); the
        folder's own copy always wins, so ``run`` and ``report`` give the same result.

    Notes
    -----
    Nothing is searched again (:func:`springsynth.report.html.render_report`). Every
    file is written atomically.
    """
    run = _report_input(folder, study)
    from springsynth.report.html import REPORT, render_report

    rendered = render_report(run)
    for fname, png in rendered.figures.items():
        write_bytes_atomic(run.folder / fname, png)
    if rendered.design_figures:
        (run.folder / "designs").mkdir(exist_ok=True)
    for name, png in rendered.design_figures.items():
        write_bytes_atomic(run.folder / "designs" / f"{name}.png", png)
    out = run.folder / REPORT
    write_text_atomic(out, rendered.html)
    return out
