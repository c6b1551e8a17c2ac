"""Check results written to files: the tolerance analysis folder."""

from __future__ import annotations

from pathlib import Path

from springsynth.checks.tolerance import ToleranceResult
from springsynth.io.files import save_figure, write_text_atomic

__all__ = ["write_tolerance"]


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
