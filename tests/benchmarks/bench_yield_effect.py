"""What the in-spec share as an objective does to the shipped studies (a script, not a test).

Each study of ``studies/*.toml`` is searched twice with the same seed and its default
budget: with its own objectives, and with ``in_spec_share`` added to them. For each run it
prints the best feasible curve error, the knee design (of curve error, stress ratio and
size, as the report picks it) and that design's in-spec share, and the highest share in the
front; the shares are those every run reports (``SETTINGS.yield_samples`` parts, common
random numbers of the seed). Verification is off (it changes neither number).

Run:  nice python tests/benchmarks/bench_yield_effect.py [--seed 1] [--out results.jsonl] [--set KEY=VALUE ...]
      [STUDY ...]    (``--set`` overrides apply to both searches, e.g. ``--set 'search.stock="standard"'``)
"""

from __future__ import annotations

import argparse
import json
import time
from pathlib import Path

import numpy as np

from springsynth.io.study_toml import load_study
from springsynth.report.plots import representatives
from springsynth.search.synthesis import synthesize

ROOT = Path(__file__).resolve().parents[2]


def measure(path: Path, seed: int, with_yield: bool, extra: list[str] = ()) -> dict:
    base = load_study(path, overrides=["search.verify_top=0", *extra])
    ov = ["search.verify_top=0", *extra]
    if with_yield:
        ov.append(f"search.objectives={json.dumps(list(base.search.objectives) + ['in_spec_share'])}")
    st = load_study(path, overrides=ov)
    t0 = time.perf_counter()
    res = synthesize(st, seed=seed)
    wall = time.perf_counter() - t0
    tab = res.to_frame()
    feas = tab["feasible"].to_numpy(bool)
    F = tab[["curve_error_pct", "stress_ratio", "size_mm3"]].to_numpy(float)
    share = tab["in_spec_share"].to_numpy(float)
    knee = representatives(list(tab["design_id"]), F, feas)["knee"]
    best = int(np.argmin(np.where(feas, F[:, 0], np.inf))) if feas.any() else -1
    return {"study": path.stem, "yield_objective": with_yield, "set": list(extra), "seed": seed, "feasible": bool(res.feasible),
            "designs": len(tab), "best_error_pct": float(F[best, 0]) if best >= 0 else None,
            "best_share": float(share[best]) if best >= 0 else None,
            "knee": tab["design_id"][knee], "knee_error_pct": float(F[knee, 0]), "knee_share": float(share[knee]),
            "max_share": float(share[feas].max()) if feas.any() else None, "wall_s": round(wall, 1),
            "search_s": round(res.timings.get("search_s", 0.0), 1)}


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("studies", nargs="*")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--out", default=None)
    ap.add_argument("--set", action="append", default=[], dest="extra")
    a = ap.parse_args()
    paths = [Path(p) for p in a.studies] or sorted(p for p in (ROOT / "studies").glob("*.toml")
                                                 if not p.name.endswith(".design.toml"))
    for p in paths:
        for with_yield in (False, True):
            row = measure(p, a.seed, with_yield, a.extra)
            line = json.dumps(row)
            print(line, flush=True)
            if a.out:
                with open(a.out, "a", encoding="utf-8") as f:
                    f.write(line + "\n")


if __name__ == "__main__":
    main()
