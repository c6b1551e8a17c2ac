"""Check results written to files: the tolerance analysis folder, the verification of a run."""

from __future__ import annotations

from pathlib import Path

from springsynth.checks.tolerance import ToleranceResult
from springsynth.io.files import save_figure, write_text_atomic

__all__ = ["write_tolerance", "verify_run"]


def write_tolerance(res: ToleranceResult, folder, *, target=None) -> list:
    """Write tolerance.png, band.csv, samples.csv and sensitivity.csv into ``folder`` (atomically)."""
    from springsynth.report.plots import plot_tolerance

    folder = Path(folder)
    written = []
    for name, df in (("band.csv", res.to_frame()), ("samples.csv", res.samples), ("sensitivity.csv", res.sensitivity)):
        write_text_atomic(folder / name, df.to_csv(index=False, float_format="%.6g", lineterminator="\n"))
        written.append(folder / name)
    ax = plot_tolerance(res, target=target)
    ax.figure.tight_layout()
    save_figure(ax.figure, folder / "tolerance.png", dpi=120, tight=False)
    written.append(folder / "tolerance.png")
    return written


def verify_run(path: Path, *, points: int = 9, top: int | None = None) -> tuple[list, Path]:
    """Verify a run folder's designs (the ``top`` lowest-error ones) at ``points`` stroke points
    from 0 to its target's stroke; writes ``verification.csv`` there (atomically).

    Returns
    -------
    reports : list of VerificationReport
    written : Path
    """
    import numpy as np
    import pandas as pd

    from springsynth.checks.verify import verify_design
    from springsynth.io.runfolder import read_run
    from springsynth.model.errors import InputError

    if points < 2:
        raise InputError(f"--points must be at least 2, got {points}", where="verify")
    run = read_run(path)
    x = np.linspace(0.0, run.study().target.stroke_mm, points)
    designs = run.designs
    if top is not None:
        order = np.argsort(np.asarray(run.table["curve_error_pct"], float), kind="stable")[:top]
        designs = [designs[i] for i in order]
    reports = [verify_design(d, x) for d in designs]
    frame = pd.concat([r.to_frame() for r in reports], ignore_index=True) if reports else pd.DataFrame()
    dest = Path(path) / "verification.csv"
    write_text_atomic(dest, frame.to_csv(index=False, float_format="%.6g", lineterminator="\n"))
    return reports, dest
