"""Tolerance analysis (springsynth.checks.tolerance): statistics, vectorisation, robust scoring.

The `tolerance` and `verify` commands are tested in test_cli_checks.py."""

from __future__ import annotations

import math

import numpy as np
import pytest

from springsynth.assembly.evaluate import evaluate_design, evaluate_population
from springsynth.assembly.slots import Slots
from springsynth.checks import tolerance as T
from springsynth.elements import get_kind
from springsynth.model.target import target_from_arrays
from tests.conftest import blade, design, write_study, write_target


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


def _own_curve_study(folder, d, x):
    """A study whose target is the nominal curve of design ``d`` (nominal curve error 0)."""
    from springsynth.io.study_toml import load_study

    write_target(folder / "own.csv", x, evaluate_design(d, x).force_N[0])
    return load_study(write_study(folder, "own.csv", elements=("blade_guided",), materials=("stainless_17_7ph",)))


def test_robust_error_is_the_90th_percentile_of_the_toleranced_curve_error(tmp_path):
    """Against a Monte Carlo of the linear blade written out here (not the module's sampling).

    A guided 17-7PH blade L = 30, b = 10, t = 0.3 at strokes up to 0.6 mm (L/50: linear to
    well under 0.1 %), target = its own nominal curve, so each part's error is that of
    ``F = k0 r max(x - d_off, 0)`` against ``k0 x`` with ``r = (1 + dE)(1 + db/b)(1 + dt/t)^3 /
    (1 + dL/L)^3`` (k = 12 E b t^3 / L^3). Tolerances (+-3 sigma, normal clipped at 3 sigma),
    as the module's table states them: t +-0.020 (EN 10140 cold-rolled strip, t <= 0.4
    [memory]), b +-0.10 (slit edge [memory]), L +-0.2 (ISO 2768-m, 6..30 mm), E +-3 %
    (metals [common practice]), offset +-0.05 (ISO 2768-f). 400 000 draws give the
    reference 90th percentile; the module's 4000 fixed draws estimate it to about 2 %
    (sampling error of a 90th percentile), tolerance 5 %.
    """
    d = design(blade())
    x = np.linspace(0.0, 0.6, 13)
    st = _own_curve_study(tmp_path, d, x)
    slots = Slots.from_designs([d], kinds=st.search.kinds, materials=st.search.materials)
    rng = np.random.default_rng(1)
    z = np.clip(rng.standard_normal((400_000, 5)), -3.0, 3.0) / 3.0
    L, b, t = 30.0, 10.0, 0.3
    r = (1 + 0.03 * z[:, 0]) * (1 + 0.10 * z[:, 1] / b) * (1 + 0.020 * z[:, 2] / t) ** 3 / (1 + 0.2 * z[:, 3] / L) ** 3
    k0 = 12 * 203_000.0 * b * t**3 / L**3           # E of stainless_17_7ph, 203 GPa
    f0 = k0 * x
    fs = r[:, None] * k0 * np.maximum(x[None, :] - 0.05 * z[:, 4:5], 0.0)
    ref = np.percentile(100 * np.sqrt(np.mean((fs - f0) ** 2, axis=1)) / f0.max(), 90)
    assert st.target.curve_error_pct(evaluate_design(d, x).force_N)[0] == 0.0
    assert T.robust_error(st, slots, n_samples=4000)[0] == pytest.approx(ref, rel=0.05)
    # the 99th percentile of the same parts is larger, the 50th smaller
    assert T.robust_error(st, slots, n_samples=4000, percentile=50)[0] < ref
    assert T.robust_error(st, slots, n_samples=4000, percentile=99)[0] > ref


def test_robust_error_deterministic_and_independent_per_design(linear_study):
    from springsynth.io.study_toml import load_study

    st = load_study(linear_study)
    d1 = design(blade(count=1), name="a")
    d2 = design(blade(params={"thickness_mm": 0.25}), name="b")
    both = Slots.from_designs([d1, d2], kinds=st.search.kinds, materials=st.search.materials)
    e = T.robust_error(st, both, n_samples=8)
    assert e.shape == (2,) and np.array_equal(e, T.robust_error(st, both, n_samples=8))
    # every design sees the same fixed draws: its value does not depend on its neighbours
    for i, d in enumerate((d1, d2)):
        alone = Slots.from_designs([d], kinds=st.search.kinds, materials=st.search.materials)
        assert T.robust_error(st, alone, n_samples=8)[0] == pytest.approx(e[i], rel=1e-12)
    # and another seed draws other parts
    assert not np.array_equal(e, T.robust_error(st, both, n_samples=8, seed=1))


def test_score_uses_robust_error_when_asked(tmp_path):
    from springsynth.io.study_toml import load_study
    from springsynth.search.scoring import score

    x = np.linspace(0, 6, 13)
    write_target(tmp_path / "lin.csv", x, 3.0 + 1.2 * x, tol=0.3)
    nominal = load_study(write_study(tmp_path, "lin.csv"))
    robust = load_study(write_study(tmp_path, "lin.csv", extra="robust = true"))
    slots = Slots.from_designs([design(blade())], kinds=nominal.search.kinds, materials=nominal.search.materials)
    a, b = score(nominal, slots), score(robust, slots)
    # the error objective: the nominal curve error, or the robust error with its default 32 samples
    assert a.F[0, 0] == pytest.approx(nominal.target.curve_error_pct(evaluate_population(slots, x).force_N)[0],
                                      rel=1e-12)
    assert b.F[0, 0] == pytest.approx(T.robust_error(robust, slots)[0], rel=1e-12)
    assert b.F[0, 0] != pytest.approx(a.F[0, 0], rel=1e-3)
    # the other objectives and the constraints are untouched
    assert np.array_equal(a.G, b.G) and np.array_equal(a.F[:, 1:], b.F[:, 1:])


def test_sensitivity_of_a_zero_nominal_is_a_one_sided_difference():
    # a straight column (rise 0) keeps a rise tolerance (ISO 2768-m, +-0.05 mm below 0.5 mm): the rise
    # can only grow, so its sensitivity is the forward difference over one sigma, F(rise = sigma) - F(0),
    # computed here with the forward model itself: spread = 100 RMS(F(sigma) - F(0)) / RMS(F(0)).
    from springsynth.assembly.design import Element

    def column(rise):
        return design(Element("column", "stainless_17_7ph", 1, 0.0, {"length_mm": 30.0, "width_mm": 5.0,
                                                                     "thickness_mm": 0.3, "rise_mm": rise,
                                                                     "ends": "pinned"}))

    x = np.linspace(0.0, 2.0, 9)
    res = T.tolerance_analysis(column(0.0), x, n_samples=50, seed=0)
    row = res.sensitivity.set_index("quantity").loc["e1.rise_mm"]
    sigma = 0.05 / T.SIGMAS_PER_TOLERANCE
    F0, F1 = (evaluate_design(column(r), x).force_N[0] for r in (0.0, sigma))
    expected = 100.0 * math.sqrt(np.mean((F1 - F0) ** 2)) / math.sqrt(np.mean(F0**2))
    assert row.tolerance_pm == pytest.approx(0.05)
    assert math.isfinite(row.spread_pct) and row.spread_pct == pytest.approx(expected, rel=1e-9)
    assert math.isnan(row.elasticity) and math.isnan(row.tolerance_pct)   # no relative measure of a zero value
    assert res.sensitivity.spread_pct.notna().all()
