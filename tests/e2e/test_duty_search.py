"""Seeded searches under a duty: robust facts, never exact GA output.

The shipped study ``studies/pump-valve.toml`` (an invented scenario: a dosing pump's check
valve, 1e8 strokes from its seat to full lift) is run with and without its ``[duty]`` on a
small budget.
"""

from __future__ import annotations

import copy
from pathlib import Path

import numpy as np
import pytest

import springsynth as ss
from springsynth.assembly.slots import Slots
from springsynth.checks.fatigue import fatigue_population
from springsynth.io.design_toml import read_toml
from springsynth.io.runfolder import write_run
from springsynth.io.study_toml import study_from_mapping

ROOT = Path(__file__).resolve().parents[2]
STUDY = ROOT / "studies" / "pump-valve.toml"
BUDGET = dict(seed=2, population=40, generations=15)

pytestmark = pytest.mark.slow


def _without_duty() -> ss.Study:
    doc = copy.deepcopy(read_toml(STUDY))
    doc.pop("duty")
    doc["limits"].pop("fatigue_ratio")
    return study_from_mapping(doc, where=str(STUDY), base_dir=STUDY.parent)


def test_the_duty_removes_designs_that_would_break(tmp_path):
    st = ss.load_study(STUDY, overrides=["search.verify_top=0"])
    assert st.duty.cycles == 1e8 and st.duty.stroke_max_mm == st.target.stroke_mm
    with_duty = ss.synthesize(st, **BUDGET)
    without = ss.synthesize(_without_duty(), **BUDGET)
    assert with_duty.feasible and without.feasible
    limit = st.limits.fatigue_ratio
    ok = np.all(with_duty.constraints <= 0, axis=1)
    assert np.all(with_duty.fatigue_ratio[ok] <= limit + 1e-9)
    # the same designs judged independently, one by one
    for d, r in zip(with_duty.designs, with_duty.fatigue_ratio):
        assert ss.fatigue_design(d).ratio == pytest.approx(r, rel=1e-9)
    # without the duty the search keeps small, highly stressed springs that would not last
    judged = fatigue_population(Slots.from_designs(list(without.designs)), st.duty)
    assert np.max(judged) > limit
    assert without.objectives[:, 1].max() > with_duty.objectives[ok, 1].max()

    run_with = write_run(with_duty, tmp_path / "with", plots=True)
    run_without = write_run(without, tmp_path / "without", plots=False)
    head_with = (run_with / "pareto.csv").read_text().splitlines()[0].split(",")
    head_without = (run_without / "pareto.csv").read_text().splitlines()[0].split(",")
    assert head_with[:5] == ["design_id", "curve_error_pct", "stress_ratio", "size_mm3", "fatigue_ratio"]
    assert "fatigue_ratio" not in head_without
    assert (run_with / "pareto_fatigue.png").stat().st_size > 10_000
    first = with_duty.designs[0].name
    assert (run_with / "designs" / f"{first}.fatigue.png").stat().st_size > 10_000
    assert ss.load_design(run_with / "designs" / f"{first}.toml").duty == st.duty
    assert "<h4>Fatigue</h4>" in (run_with / "report.html").read_text(encoding="utf-8")


def test_fatigue_as_a_fourth_objective():
    st = ss.load_study(STUDY, overrides=["search.verify_top=0", "search.polish=false",
                                         'search.objectives=["curve_error_pct", "stress_ratio", "size_mm3", '
                                         '"fatigue_ratio"]'])
    res = ss.synthesize(st, seed=1, population=24, generations=6)
    assert res.objectives.shape[1] == 4
    np.testing.assert_allclose(res.objectives[:, 3], res.fatigue_ratio)
    assert all(np.isfinite(h["hypervolume"]) for h in res.history)
