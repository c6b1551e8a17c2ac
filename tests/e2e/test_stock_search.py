"""A default run returns makeable designs: stock sizes, grid offsets, and the error of the design it writes.

Stock sizes and resolution are checked by exact membership (the lists of ``data/stock.toml``, the
grids of ``Param.resolution``); the reported error is compared with a fresh evaluation of each
written design file, so no rounding can happen after the search has scored a design.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import springsynth as ss
from springsynth.assembly.evaluate import evaluate_design
from springsynth.io.runfolder import write_run
from springsynth.model.stock import stock_list

ROOT = Path(__file__).resolve().parents[2]
STEPS = {"length": 0.1, "fine": 0.01, "coils": 0.25, "offset": 0.05}

pytestmark = pytest.mark.slow          # seeded searches


def _on_grid(v: float, step: float) -> bool:
    return abs(v / step - round(v / step)) < 1e-7


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    st = ss.load_study(ROOT / "studies" / "latch-preload.toml",
                       overrides=["search.population=40", "search.generations=10", "search.verify_top=0"])
    assert st.search.stock == "standard" and st.search.offset_step_mm == 0.05      # the defaults
    res = ss.synthesize(st, seed=1)
    return st, res, write_run(res, tmp_path_factory.mktemp("stock") / "run", plots=False)


def test_written_designs_have_only_stock_sizes_and_grid_values(run):
    st, _, folder = run
    table = pd.read_csv(folder / "pareto.csv")
    kinds = {k.name: k for k in st.search.kinds}
    n_stock = 0
    for did in table.design_id:
        d = ss.load_design(folder / "designs" / f"{did}.toml")
        for br in d.branches:
            assert _on_grid(br.offset_mm, 0.05), (did, br.offset_mm)
        for e in d.parts:
            for q in kinds[e.kind].params:
                v, r = e.params[q.name], q.resolution
                if r == "stock":
                    assert v in stock_list(e.material, q.stock).mm, (did, e.kind, q.name, v)
                    n_stock += 1
                elif r in STEPS:
                    assert _on_grid(v, STEPS[r]), (did, e.kind, q.name, v)
    assert n_stock >= len(table)


def test_reported_error_is_that_of_the_written_design(run):
    st, res, folder = run
    table = pd.read_csv(folder / "pareto.csv")
    t = st.target
    w = np.sqrt(t.weight / t.weight.sum()) * 100.0 / t.scale_N
    assert list(table.design_id) == [d.name for d in res.designs]
    for did, in_table, reported in zip(table.design_id, table.curve_error_pct, res.objectives[:, 0]):
        d = ss.load_design(folder / "designs" / f"{did}.toml")
        f = evaluate_design(d, t.x_mm, x_max_mm=t.stroke_mm).force_N[0]
        fresh = float(np.sqrt(np.sum(((f - t.force_N) * w) ** 2)))   # DESIGN.md: 100 RMS(F - F_t) / max|F_t|
        assert fresh == pytest.approx(reported, rel=1e-9, abs=1e-12), did
        assert fresh == pytest.approx(in_table, rel=1e-5), did                  # pareto.csv: 6 significant digits
