"""The batch folder: the plan file, the run markers, and the study files a plan starts from.

Layout of a batch folder ``DIR``::

    DIR/batch.json                          the plan (studies, seeds, --vary, --set): what --resume reads
    DIR/<study>/<variant>/seed-<n>/         one run folder each, as `springsynth run` writes it
    DIR/<study>/<variant>/seed-<n>/finished.json   written last: the run is complete (its summary row)
    DIR/summary.csv, DIR/summary.png        across all runs, rewritten atomically after every batch

A run folder without ``finished.json`` is incomplete (its task was interrupted or its
worker died); ``--resume`` deletes it and runs it again.
"""

from __future__ import annotations

import hashlib
import json
from datetime import datetime
from pathlib import Path
from typing import Sequence

from springsynth.batch._plan import (
    Plan,
    StudyEntry,
    Vary,
    build_plan,
    check_vary_keys,
    parse_seeds,
    parse_vary,
    safe_name,
)
from springsynth.io.files import write_text_atomic
from springsynth.io.study_toml import load_study
from springsynth.model.errors import InputError
from springsynth.model.version import __version__

__all__ = ["PLAN_FILE", "MARKER", "open_batch", "plan_from_files", "start_folder", "read_plan", "finished_rows", "read_marker",
           "changed_studies"]

PLAN_FILE = "batch.json"
#: written last into a run folder: its presence marks the run complete; it holds the run's summary row
MARKER = "finished.json"


def plan_from_files(paths: Sequence[Path], *, seeds: Sequence[int] | None, varies: Sequence[Vary],
                    settings: Sequence[str] = ()) -> Plan:
    """Load and check each study (with ``settings`` applied) and the ``--vary`` keys; build the plan.

    Raises :class:`InputError` for a bad study, setting or key: nothing runs then.
    """
    entries, docs = [], {}
    for p in paths:
        st = load_study(p, overrides=list(settings))
        entries.append(StudyEntry(str(Path(p).resolve()), safe_name(st.name), st.search.seed))
        docs[str(p)] = st.raw
    check_vary_keys(varies, docs, settings)
    return build_plan(entries, seeds=seeds, varies=varies, settings=settings)


def open_batch(studies: Sequence[Path], out_dir: Path | None, *, seeds: str | None, vary: Sequence[str],
               settings: Sequence[str], resume: Path | None) -> tuple[Path, Plan, list[str]]:
    """The batch folder and plan from the command's options: a new batch (studies and ``out_dir``,
    folder created, plan written) or ``resume`` (the plan stored there). Also returns notices."""
    if resume is not None:
        if studies or out_dir is not None or seeds is not None or vary or settings:
            raise InputError("--resume continues the batch as it was planned; drop the studies, --out, --seeds, "
                             "--vary and --set", where="batch")
        plan = read_plan(resume)
        return Path(resume), plan, [f"{p} changed since the batch started; the runs made now use it as it is"
                                    for p in changed_studies(resume, plan)]
    if not studies or out_dir is None:
        raise InputError("give one or more STUDY files and --out DIR (or --resume DIR)", where="batch")
    varies = [parse_vary(v) for v in vary]
    plan = plan_from_files(studies, seeds=parse_seeds(seeds), varies=varies, settings=settings)
    return start_folder(out_dir, plan), plan, []


def _fingerprint(path: str) -> str | None:
    try:
        return hashlib.sha256(Path(path).read_bytes()).hexdigest()[:16]
    except OSError:
        return None


def start_folder(out_dir: Path, plan: Plan) -> Path:
    """Create the batch folder (new, or an existing empty one) and write the plan into it."""
    out_dir = Path(out_dir)
    if out_dir.exists():
        if not out_dir.is_dir():
            raise InputError("exists and is not a folder; choose another --out", where=str(out_dir))
        if (out_dir / PLAN_FILE).exists():
            raise InputError(f"already holds a batch; continue it with --resume {out_dir}, or choose a new "
                             f"folder with --out", where=str(out_dir))
        if any(out_dir.iterdir()):
            raise InputError("exists and is not empty; choose a new folder with --out", where=str(out_dir))
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
    except OSError as e:
        raise InputError(f"cannot create the folder ({e.strerror})", where=str(out_dir)) from None
    doc = {"springsynth": __version__, "created": datetime.now().isoformat(timespec="seconds"), **plan.to_dict(),
           "study_fingerprints": {s.path: _fingerprint(s.path) for s in plan.studies}}
    write_text_atomic(out_dir / PLAN_FILE, json.dumps(doc, indent=1) + "\n")
    return out_dir


def read_plan(out_dir: Path) -> Plan:
    """The plan of an earlier batch folder (for ``--resume``)."""
    p = Path(out_dir) / PLAN_FILE
    if not p.exists():
        raise InputError(f"is not a batch folder ({PLAN_FILE} is missing); --resume takes a folder written by "
                         f"`springsynth batch`", where=str(out_dir))
    try:
        doc = json.loads(p.read_text(encoding="utf-8"))
        return Plan.from_dict(doc)
    except (json.JSONDecodeError, UnicodeDecodeError, KeyError, TypeError, ValueError) as e:
        raise InputError(f"{PLAN_FILE} cannot be read ({e}); start a new batch", where=str(out_dir)) from None


def changed_studies(out_dir: Path, plan: Plan) -> list[str]:
    """Study files whose content differs from when the batch started (their resumed runs use the new one)."""
    try:
        doc = json.loads((Path(out_dir) / PLAN_FILE).read_text(encoding="utf-8"))
    except (OSError, json.JSONDecodeError, UnicodeDecodeError):
        return []
    old = doc.get("study_fingerprints") or {}
    return [s.path for s in plan.studies if s.path in old and old[s.path] != _fingerprint(s.path)]


def read_marker(folder: Path) -> dict | None:
    """The summary row stored in a complete run folder, or None when the run is not complete."""
    try:
        return json.loads((Path(folder) / MARKER).read_text(encoding="utf-8"))
    except (OSError, json.JSONDecodeError, UnicodeDecodeError):
        return None


def finished_rows(out_dir: Path, plan: Plan) -> dict[str, dict]:
    """Run folder (relative) -> summary row, for every complete run of the plan."""
    rows = {}
    for r in plan.runs:
        row = read_marker(Path(out_dir) / r.folder)
        if row is not None:
            rows[r.folder] = row
    return rows
