"""Seeded end-to-end searches: robust facts only (recovery, determinism, files), never golden GA output."""

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from springsynth.assembly.design import Design, Element
from springsynth.assembly.evaluate import evaluate_design
from springsynth.cli import app
from springsynth.io.design_toml import load_design
from springsynth.io.study_toml import load_study
from springsynth.model.materials import catalogue
from springsynth.search.synthesis import synthesize
from tests.conftest import write_study, write_target

runner = CliRunner()

pytestmark = pytest.mark.slow          # seeded searches


def _known_design() -> Design:
    """A two-element mechanism: two guided blades, plus a coil spring engaging after a 2 mm gap."""
    cat = catalogue()
    return Design((
        Element("blade_guided", "stainless_17_7ph", 2, 0.0, {"length_mm": 30.0, "width_mm": 8.0, "thickness_mm": 0.25}),
        Element("helical_compression", "music_wire", 1, 2.0, {"wire_diameter_mm": 1.0, "mean_diameter_mm": 8.0,
                                                              "active_coils": 8.0, "free_length_mm": 30.0}),
    ), {"stainless_17_7ph": cat["stainless_17_7ph"], "music_wire": cat["music_wire"]})


@pytest.fixture(scope="module")
def known_study(tmp_path_factory):
    d = tmp_path_factory.mktemp("known")
    x = np.linspace(0, 5, 21)
    write_target(d / "t.csv", x, evaluate_design(_known_design(), x).force_N[0])
    return write_study(d, "t.csv", population=60, generations=30)


@pytest.mark.parametrize("seed", [1, 2])
def test_search_recovers_a_known_two_element_curve(known_study, seed):
    st = load_study(known_study)
    res = synthesize(st, seed=seed)
    assert res.feasible
    best = res.to_frame().sort_values("curve_error_pct").iloc[0]
    assert best.curve_error_pct < 0.5
    assert bool(best.feasible)


def test_run_folder_is_complete_deterministic_and_reproducible(known_study, tmp_path):
    out1, out2 = tmp_path / "a", tmp_path / "b"
    for out in (out1, out2):
        r = runner.invoke(app, ["run", str(known_study), "--out", str(out), "--population", "40", "--generations", "12"])
        assert r.exit_code == 0, r.output
    assert (out1 / "pareto.csv").read_bytes() == (out2 / "pareto.csv").read_bytes()
    for f in ("pareto.csv", "curves.csv", "run.json", "pareto.png", "curves.png", "study.toml", "target.csv"):
        assert (out1 / f).exists(), f
    meta = json.loads((out1 / "run.json").read_text())
    assert meta["seed"] == 3 and meta["budget"]["generations"] == 12 and len(meta["history"]) == 12
    assert {"best_error_pct", "feasible_share", "hypervolume"} <= set(meta["history"][-1])
    table = pd.read_csv(out1 / "pareto.csv")
    assert list(table.columns[:8]) == ["design_id", "curve_error_pct", "stress_ratio", "size_mm3", "in_spec_share",
                                       "mass_g", "feasible", "topology"]
    assert table["in_spec_share"].between(0, 1).all()
    curves = pd.read_csv(out1 / "curves.csv")
    # every written design re-evaluates to the curve in curves.csv (same code path, full-precision TOML)
    for did in table.design_id:
        d = load_design(out1 / "designs" / f"{did}.toml")
        c = curves[curves.design_id == did]
        f = evaluate_design(d, c.displacement_mm.to_numpy(), x_max_mm=5.0).force_N[0]
        assert np.allclose(f, c.force_N.to_numpy(), rtol=1e-5, atol=1e-9)


def test_a_run_folder_is_never_overwritten(known_study, tmp_path):
    out = tmp_path / "r"
    for _ in range(2):
        assert runner.invoke(app, ["run", str(known_study), "--out", str(out), "--population", "20",
                                   "--generations", "3"]).exit_code == 0
    assert (tmp_path / "r").is_dir() and (tmp_path / "r-2").is_dir()


def test_nothing_feasible_exits_1_and_names_the_binding_constraint(known_study, tmp_path):
    text = known_study.read_text().replace("length_mm = 60", "length_mm = 0.5")
    p = known_study.parent / "tiny.toml"
    p.write_text(text)
    out = tmp_path / "none"
    r = runner.invoke(app, ["run", str(p), "--out", str(out), "--population", "20", "--generations", "4"])
    assert r.exit_code == 1
    assert "length along the stroke exceeds the envelope" in r.output
    table = pd.read_csv(out / "pareto.csv")
    assert len(table) > 0 and not table.feasible.any()
    assert table.violations.str.contains("envelope").all()


def test_rerun_applies_overrides_and_records_its_parent(known_study, tmp_path):
    first = tmp_path / "first"
    assert runner.invoke(app, ["run", str(known_study), "--out", str(first), "--population", "30",
                               "--generations", "8"]).exit_code == 0
    second = tmp_path / "second"
    r = runner.invoke(app, ["rerun", str(first), "--set", "limits.stress_ratio=0.5", "--out", str(second),
                            "--generations", "8"])
    assert r.exit_code == 0, r.output
    meta = json.loads((second / "run.json").read_text())
    assert meta["parent"] == str(first) and meta["overrides"] == ["limits.stress_ratio=0.5"]
    table = pd.read_csv(second / "pareto.csv")
    assert (table.stress_ratio[table.feasible] <= 0.5 + 1e-9).all()
    bad = runner.invoke(app, ["rerun", str(first), "--set", "limits.stres_ratio=0.5", "--out", str(tmp_path / "x")])
    assert bad.exit_code == 2 and "did you mean 'stress_ratio'" in bad.output


@pytest.mark.slow
def test_rerun_drops_parents_that_no_longer_fit_and_goes_on(known_study, tmp_path):
    first = tmp_path / "first"
    assert runner.invoke(app, ["run", str(known_study), "--out", str(first), "--population", "12",
                               "--generations", "2"]).exit_code == 0
    # only columns now: none of the parents (blades and coil springs) has an element that fits
    r = runner.invoke(app, ["rerun", str(first), "--set", 'search.elements=["column"]', "--set",
                            'search.materials=["stainless_17_7ph"]', "--out", str(tmp_path / "second"),
                            "--population", "12", "--generations", "2"])
    assert r.exit_code in (0, 1), r.output
    assert "Traceback" not in r.output and "left out" in r.output and "none of their elements" in r.output
    table = pd.read_csv(tmp_path / "second" / "pareto.csv")
    assert len(table) > 0 and (table.e1_kind == "column").all()


@pytest.mark.slow
def test_a_study_name_with_a_path_keeps_the_run_inside_runs(known_study, tmp_path, monkeypatch):
    p = tmp_path / "study.toml"
    p.write_text(known_study.read_text().replace('name = "t"', 'name = "../../../x"')
                 .replace('file = "t.csv"', f'file = "{known_study.parent / "t.csv"}"'))
    work = tmp_path / "a" / "b" / "c"
    work.mkdir(parents=True)
    monkeypatch.chdir(work)
    r = runner.invoke(app, ["run", str(p), "--population", "8", "--generations", "2"])
    assert r.exit_code in (0, 1), r.output
    (folder,) = (work / "runs").iterdir()
    assert folder.name.startswith("x-") and (folder / "pareto.csv").exists()
    assert [f.parent for f in tmp_path.rglob("x-*") if f.is_dir()] == [work / "runs"]   # nowhere else
