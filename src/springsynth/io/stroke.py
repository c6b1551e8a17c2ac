"""Where a design is evaluated: the stroke points a command is given, or those of the run it came from."""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from springsynth.io.runfolder import run_of_design, run_target
from springsynth.io.target_csv import load_target
from springsynth.model.errors import InputError
from springsynth.model.target import Target

__all__ = ["StrokePoints", "stroke_points"]


@dataclass(frozen=True)
class StrokePoints:
    """Stroke points of one design and the target they come from.

    Attributes
    ----------
    x_mm : ndarray, shape (m,)
    target : Target or None
    target_name : str
        How to name the target to a reader ("" without one).
    run : Path or None
        The run folder whose target was taken (the design was written into it).
    """

    x_mm: np.ndarray
    target: Target | None = None
    target_name: str = ""
    run: Path | None = None


def stroke_points(design: Path, *, at: Path | None = None, to: float | None = None, points: int = 41,
                  where: str = "evaluate") -> StrokePoints:
    """From ``--at TARGET.csv``, ``--to X`` with ``--points N``, or, when neither is given and the
    design was written into a run folder (``<run>/designs/<id>.toml``), the run's own target.

    Raises
    ------
    InputError
        Both or neither given (outside a run), a non-positive ``to``, fewer than two points.
    """
    if at is not None and to is not None:
        raise InputError("give either --at TARGET.csv or --to X, not both", where=where)
    if at is not None:
        t = load_target(at)
        return StrokePoints(t.x_mm, t, str(at))
    run = run_of_design(design) if to is None else None
    if run is not None:
        t = run_target(run)
        return StrokePoints(t.x_mm, t, f"the run's target ({run / 'target.csv'})", run)
    if to is None:
        raise InputError("say where to evaluate: --to X (mm, with --points N) or --at TARGET.csv", where=where)
    if not (math.isfinite(to) and to > 0):
        raise InputError(f"--to must be a positive number of mm, got {to}", where=where)
    if points < 2:
        raise InputError(f"--points must be at least 2, got {points}", where=where)
    return StrokePoints(np.linspace(0.0, to, points))
