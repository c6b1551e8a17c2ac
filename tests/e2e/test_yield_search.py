"""The in-spec share in a search: as a constraint and as an objective (small real searches)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import springsynth as ss
from springsynth.io.runfolder import write_run
from springsynth.search.scoring import CONSTRAINTS

ROOT = Path(__file__).resolve().parents[2]
STUDY = ROOT / "studies" / "latch-preload.toml"

pytestmark = pytest.mark.slow


def test_the_constraint_holds_for_every_feasible_design_on_the_full_sample():
    st = ss.load_study(STUDY, overrides=["search.population=40", "search.generations=20", "search.verify_top=0",
                                         "limits.in_spec_share=0.85"])
    res = ss.synthesize(st, seed=2)
    tab = res.to_frame()
    feasible = tab["feasible"].to_numpy(bool)
    assert feasible.any()
    assert np.all(tab["in_spec_share"].to_numpy()[feasible] >= 0.85)
    g = res.constraints[:, CONSTRAINTS.index("in_spec")]
    np.testing.assert_allclose(g, np.maximum(1 - res.in_spec_share / 0.85, -1.0))
    assert res.yield_samples == 200


def test_the_objective_is_in_the_front_and_reported_as_the_share(tmp_path):
    st = ss.load_study(STUDY, overrides=["search.population=24", "search.generations=6", "search.verify_top=0",
                                         "search.polish=false",
                                         'search.objectives=["curve_error_pct", "stress_ratio", "size_mm3", '
                                         '"in_spec_share"]'])
    res = ss.synthesize(st, seed=5)
    assert res.objectives.shape[1] == 4
    np.testing.assert_allclose(res.objectives[:, 3], 1.0 - res.in_spec_share)
    folder = write_run(res, tmp_path / "run", plots=False)
    tab = pd.read_csv(folder / "pareto.csv")
    assert list(tab.columns[:5]) == ["design_id", "curve_error_pct", "stress_ratio", "size_mm3", "in_spec_share"]
    np.testing.assert_allclose(tab["in_spec_share"], res.in_spec_share, atol=5e-7)
    # the same seed gives the same shares
    again = ss.synthesize(st, seed=5)
    assert np.array_equal(again.in_spec_share, res.in_spec_share)
