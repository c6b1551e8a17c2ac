"""Batch summary: the table from the runs' rows, the fronts read from their Pareto tables, the figure."""

import math

import numpy as np
import pandas as pd
import pytest

from springsynth.batch import build_plan, summary_frame, write_summary
from springsynth.batch._plan import StudyEntry, Vary
from springsynth.batch._summary import _front_2d, read_fronts
from springsynth.batch._task import row_for


def _plan(varies):
    return build_plan([StudyEntry("/x/a.toml", "clamp", 1), StudyEntry("/x/b.toml", "latch", 1)], seeds=(1, 2, 3),
                      varies=varies)


def _fake_runs(tmp_path, plan, rng):
    """Rows and pareto.csv files as tasks would leave them; the last run of each study failed or was stopped."""
    rows = {}
    for i, r in enumerate(plan.runs):
        if i % 12 == 11:
            continue  # interrupted: no row
        if i % 12 == 10:
            rows[r.folder] = row_for(r, status="bad_input", message="[envelope].length_mm: must be > 0, got 0")
            continue
        n = 6
        err = np.sort(rng.uniform(0.2, 4.0, n))
        size = 1000 * (5 - err) * (1 + 0.1 * rng.standard_normal(n))
        feas = np.r_[np.ones(n - 1, bool), False]
        folder = tmp_path / r.folder
        folder.mkdir(parents=True)
        pd.DataFrame({"design_id": [f"D{j + 1:02d}" for j in range(n)], "curve_error_pct": err,
                      "stress_ratio": rng.uniform(0.2, 0.8, n), "size_mm3": size, "mass_g": 1.0,
                      "feasible": feas}).to_csv(folder / "pareto.csv", index=False)
        rows[r.folder] = row_for(r, status="ok", wall_time_s=3.0, metrics={
            "best_error_pct": float(err[feas].min()), "pareto_size": int(feas.sum()), "feasible_share": 0.4,
            "hypervolume": float(rng.uniform(0.2, 0.6))})
    return rows


def test_summary_table_has_one_row_per_planned_run(tmp_path):
    plan = _plan([Vary("target.scale_force", ("0.5", "1", "1.5", "2"))])
    rows = _fake_runs(tmp_path, plan, np.random.default_rng(3))
    frame = write_summary(tmp_path, plan, rows)
    assert len(frame) == 24 and frame["folder"].tolist() == [r.folder for r in plan.runs]
    back = pd.read_csv(tmp_path / "summary.csv", keep_default_na=False, na_values=[""])
    assert list(back.columns) == ["study", "target.scale_force", "seed", "best_error_pct", "pareto_size",
                                  "feasible_share", "hypervolume", "wall_time_s", "folder", "status", "message"]
    assert back["status"].value_counts().to_dict() == {"ok": 20, "bad_input": 2, "interrupted": 2}
    stopped = back[back.status == "interrupted"].iloc[0]
    assert "--resume" in stopped.message and math.isnan(stopped.best_error_pct) and stopped.pareto_size == 0
    bad = back[back.status == "bad_input"].iloc[0]
    assert "must be > 0" in bad.message
    ok = back[back.status == "ok"].iloc[0]
    assert ok.best_error_pct == pytest.approx(rows[ok.folder]["best_error_pct"], rel=1e-5)
    assert (tmp_path / "summary.png").stat().st_size > 30_000


def test_fronts_pool_the_feasible_designs_of_all_seeds(tmp_path):
    plan = _plan([Vary("envelope.length_mm", ("20", "40"))])
    rows = _fake_runs(tmp_path, plan, np.random.default_rng(5))
    frame = summary_frame(plan, rows)
    fronts = read_fronts(tmp_path, frame)
    F = fronts[("clamp", "length_mm=20")]
    assert F.shape == (3 * 5, 3)  # 3 seeds x 5 feasible designs; the infeasible one left out
    # the last variant of each study lost two of its seeds (bad input, interrupted): one seed's designs
    assert fronts[("latch", "length_mm=40")].shape == (5, 3)
    # a pareto.csv left in an unfinished run's folder is not read
    stopped = plan.runs[11]
    (tmp_path / stopped.folder).mkdir(parents=True)
    (tmp_path / stopped.folder / "pareto.csv").write_text("curve_error_pct,stress_ratio,size_mm3,feasible\n1,1,1,True\n")
    assert stopped.folder == "latch/length_mm=40/seed-3"
    assert read_fronts(tmp_path, frame)[("latch", "length_mm=40")].shape == (5, 3)


def test_front_2d_keeps_exactly_the_points_nothing_beats():
    rng = np.random.default_rng(11)
    F = rng.uniform(size=(200, 2))
    kept = _front_2d(F)
    beaten = [any((g <= f).all() and (g < f).any() for g in F) for f in F]
    assert {tuple(p) for p in kept} == {tuple(f) for f, b in zip(F, beaten) if not b}
    assert np.all(np.diff(kept[:, 0]) > 0) and np.all(np.diff(kept[:, 1]) < 0)


def test_figure_for_two_keys_and_for_no_key(tmp_path):
    varies = [Vary("target.scale_force", ("1", "2")), Vary("envelope.length_mm", ("20", "40", "60"))]
    plan = _plan(varies)
    (tmp_path / "two").mkdir()
    write_summary(tmp_path / "two", plan, _fake_runs(tmp_path / "two", plan, np.random.default_rng(2)))
    assert (tmp_path / "two" / "summary.png").stat().st_size > 30_000
    plain = _plan([])
    (tmp_path / "none").mkdir()
    write_summary(tmp_path / "none", plain, {})  # nothing finished: still a figure, saying so
    assert (tmp_path / "none" / "summary.png").exists()
    assert set(pd.read_csv(tmp_path / "none" / "summary.csv").status) == {"interrupted"}
