"""Reading a very large target CSV: time and peak memory (a script, not a test).

Writes a 10^6-row target (displacement_mm, force_N, tolerance_N) to a temporary folder,
reads it with ``load_target`` (which resamples it, with a notice) and prints the read
time, the peak Python heap (tracemalloc) and the process's peak resident set (maxrss).

Run:  python tests/benchmarks/bench_big_target.py [--rows 1000000]
"""

from __future__ import annotations

import argparse
import resource
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

from springsynth.io.target_csv import load_target


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=1_000_000)
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "big.csv"
        x = np.linspace(0.0, 10.0, a.rows)
        f = 5.0 + 2.0 * x + 0.1 * np.sin(40 * x)
        with p.open("w") as fh:
            fh.write("displacement_mm,force_N,tolerance_N\n")
            np.savetxt(fh, np.column_stack([x, f, np.full_like(x, 0.2)]), delimiter=",", fmt="%.10g")
        del x, f
        rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
        t0 = time.perf_counter()
        t = load_target(p)
        dt = time.perf_counter() - t0
        rss1 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
        tracemalloc.start()  # a second read, traced (tracemalloc slows it down)
        load_target(p)
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        scale = 1024 if sys.platform != "darwin" else 1024 * 1024  # ru_maxrss: KiB on Linux, bytes on macOS
        print(f"file: {a.rows} rows, {p.stat().st_size / 1e6:.1f} MB")
        print(f"read in {dt:.2f} s -> {t.x_mm.size} points; notices: {'; '.join(t.notices)}")
        print(f"peak resident set: {rss1 * scale / 1e6:.1f} MB (before the read {rss0 * scale / 1e6:.1f} MB)")
        print(f"peak Python heap during the read (tracemalloc): {peak / 1e6:.1f} MB")


if __name__ == "__main__":
    main()
