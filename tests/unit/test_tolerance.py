"""Tolerance analysis (springsynth.checks.tolerance): statistics, vectorisation, robust scoring, command line."""

from __future__ import annotations

import math

import numpy as np
import pytest
from typer.testing import CliRunner

from springsynth.assembly.slots import Slots
from springsynth.checks import tolerance as T
from springsynth.cli import app
from springsynth.elements import get_kind
from springsynth.model.target import target_from_arrays
from tests.conftest import blade, design, write_target

runner = CliRunner()


def test_spread_matches_first_order_propagation():
    # linear guided blade (small stroke): F = 12 E b t^3 (x - offset) / L^3, so to first order
    # dF/F = sqrt((3 dt/t)^2 + (dE/E)^2 + (db/b)^2 + (3 dL/L)^2 + (d_off/x)^2), each d = tolerance / 3.
    # Tolerance of the comparison: 5 % of the spread (sampling error of a standard deviation from
    # 4000 samples ~1.1 %, truncation at 3 sigma -1.3 %, second-order terms ~1 %).
    L, b, t, x_end = 30.0, 10.0, 0.3, 0.3
    d = design(blade(params={"length_mm": L, "width_mm": b, "thickness_mm": t}))
    x = np.linspace(0.0, x_end, 5)
    res = T.tolerance_analysis(d, x, n_samples=4000, seed=2)
    cls = np.array([0])
    kind = get_kind("blade_guided")
    tol = lambda name, v: float(T.param_tolerance(kind.param(name), np.array([v]), cls)[0]) / 3.0  # noqa: E731
    rel = math.sqrt((3 * tol("thickness_mm", t) / t) ** 2 + (T.modulus_tolerance(cls)[0] / 3) ** 2
                    + (tol("width_mm", b) / b) ** 2 + (3 * tol("length_mm", L) / L) ** 2
                    + (float(T.offset_tolerance(cls)[0]) / 3 / x_end) ** 2)
    F = res.force_N[:, -1]
    measured = F.std() / res.nominal_N[-1]
    assert measured == pytest.approx(rel, rel=0.05)
    # elasticities d ln F / d ln p: 3 for the thickness, -3 for the length, 1 for width and modulus;
    # at this short stroke the offset (position) tolerance dominates the ranking
    s = res.sensitivity.set_index("quantity")
    assert s.loc["e1.thickness_mm", "elasticity"] == pytest.approx(3.0, rel=0.01)
    assert s.loc["e1.length_mm", "elasticity"] == pytest.approx(-3.0, rel=0.01)
    assert s.loc["e1.modulus", "elasticity"] == pytest.approx(1.0, rel=0.01)
    assert res.sensitivity.quantity.iloc[0] == "e1.offset_mm"


def test_vectorised_one_call(monkeypatch):
    calls = []
    real = T.evaluate_population

    def counting(slots, x, **kw):
        calls.append(slots.n)
        return real(slots, x, **kw)

    monkeypatch.setattr(T, "evaluate_population", counting)
    d = design(blade(), blade(material="beryllium_copper", offset_mm=1.0, params={"thickness_mm": 0.2}))
    x = np.linspace(0, 3, 7)
    t = target_from_arrays(x, 1.2 * x, tolerance_N=0.3)
    res = T.tolerance_analysis(d, x, target=t, n_samples=2000)
    assert len(calls) == 1 and calls[0] >= 2000
    assert res.force_N.shape == (2000, 7)
    assert 0.0 <= res.share_in_band <= 1.0 and res.in_band.shape == (2000,)
    assert np.all(res.p05_N <= res.p50_N + 1e-12) and np.all(res.p50_N <= res.p95_N + 1e-12)
    assert len(res.samples) == 2000 and "curve_error_pct" in res.samples


def test_process_override_and_bad_input():
    d = design(blade())
    x = np.linspace(0, 2, 5)
    a = T.tolerance_analysis(d, x, n_samples=500, seed=1)
    p = T.tolerance_analysis(d, x, n_samples=500, seed=1, process="printed")
    assert p.force_N[:, -1].std() > 3 * a.force_N[:, -1].std()      # +-0.1 mm on a 0.3 mm blade
    with pytest.raises(ValueError):
        T.tolerance_analysis(d, x, process="forged")


def test_robust_error_deterministic_and_vectorised(linear_study):
    from springsynth.io.study_toml import load_study

    st = load_study(linear_study)
    d1 = design(blade(count=1), name="a")
    d2 = design(blade(params={"thickness_mm": 0.25}), name="b")
    slots = Slots.from_designs([d1, d2], kinds=st.search.kinds, materials=st.search.materials)
    e1 = T.robust_error(st, slots, n_samples=8)
    e2 = T.robust_error(st, slots, n_samples=8)
    assert e1.shape == (2,) and np.array_equal(e1, e2)
    from springsynth.assembly.evaluate import evaluate_population

    nominal = st.target.curve_error_pct(evaluate_population(slots, st.target.x_mm).force_N)
    assert np.all(np.isfinite(e1)) and np.all(e1 >= nominal * 0.5)


def test_score_uses_robust_error_when_asked(tmp_path):
    from springsynth.io.study_toml import load_study
    from springsynth.search.scoring import score
    from tests.conftest import write_study

    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.3)
    nominal = load_study(write_study(tmp_path, "lin.csv"))
    robust = load_study(write_study(tmp_path, "lin.csv", extra="robust = true"))
    slots = Slots.from_designs([design(blade())], kinds=nominal.search.kinds, materials=nominal.search.materials)
    a, b = score(nominal, slots), score(robust, slots)
    assert b.F[0, 0] != a.F[0, 0] and np.array_equal(a.G, b.G) and np.array_equal(a.F[:, 1:], b.F[:, 1:])


# --------------------------------------------------------------------------- command line

def _design_file(tmp_path):
    p = tmp_path / "d.toml"
    p.write_text('name = "d"\n[[element]]\nkind = "blade_guided"\nmaterial = "stainless_17_7ph"\ncount = 2\n'
                 'offset_mm = 0.0\nlength_mm = 30.0\nwidth_mm = 10.0\nthickness_mm = 0.3\n')
    return p


def test_cli_tolerance_smoke(tmp_path):
    d = _design_file(tmp_path)
    x = np.linspace(0, 4, 9)
    tgt = write_target(tmp_path / "t.csv", x, 0.4 * x, tol=0.1)
    r = runner.invoke(app, ["tolerance", str(d), "--samples", "20", "--at", str(tgt), "--out", str(tmp_path / "tol")])
    assert r.exit_code == 0, r.output
    for f in ("tolerance.png", "band.csv", "samples.csv", "sensitivity.csv"):
        assert (tmp_path / "tol" / f).stat().st_size > 0
    assert "inside the target band" in r.output
    r = runner.invoke(app, ["tolerance", str(d), "--samples", "20"])
    assert r.exit_code == 2
    r = runner.invoke(app, ["tolerance", str(d), "--samples", "20", "--to", "3", "--process", "forged",
                            "--out", str(tmp_path / "x")])
    assert r.exit_code == 2 and "process" in r.output


def test_cli_verify_design_and_run(tmp_path, linear_study):
    d = _design_file(tmp_path)
    r = runner.invoke(app, ["verify", str(d), "--to", "5", "--points", "5"])
    assert r.exit_code == 0, r.output
    assert "blade_guided" in r.output
    assert runner.invoke(app, ["verify", str(d)]).exit_code == 2
    assert runner.invoke(app, ["verify", str(tmp_path / "missing.toml"), "--to", "3"]).exit_code == 2
    run_dir = tmp_path / "run"
    r = runner.invoke(app, ["run", str(linear_study), "--out", str(run_dir), "--population", "12", "--generations", "2"])
    assert r.exit_code in (0, 1), r.output
    r = runner.invoke(app, ["verify", str(run_dir), "--points", "5"])
    assert r.exit_code == 0, r.output
    text = (run_dir / "verification.csv").read_text()
    assert text.startswith("design_id,element,kind") and "assembly" in text
