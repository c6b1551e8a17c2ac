"""Property tests of the ``column`` kind over random populations."""

from __future__ import annotations

import math

import numpy as np
import pytest

from springsynth.elements import get_kind, kind_names
from springsynth.model.materials import Material, MaterialArrays

COLUMN = get_kind("column")
N = 600          # more than one row block of the kernel at M = 64
M = 64

STEEL = Material(id="prop_steel", name="prop steel", E_MPa=200_000.0, G_MPa=76_923.0, nu=0.3,
                 density_kg_m3=7850.0, yield_MPa=1500.0, uts_MPa=1700.0)


def population(n=N, seed=0, rise_max=None):
    """Random designs within the parameter bounds, log-uniform where the param says so."""
    rng = np.random.default_rng(seed)
    p = {}
    for q in COLUMN.params:
        if q.choices:
            p[q.name] = rng.integers(0, len(q.choices), n).astype(float)
        elif q.log:
            p[q.name] = np.exp(rng.uniform(math.log(q.lo), math.log(q.hi), n))
        else:
            p[q.name] = rng.uniform(q.lo, q.hi, n)
    if rise_max is not None:
        p["rise_mm"] = rng.uniform(0, rise_max, n) * p["length_mm"]
    return p


def valid_population(n=N, seed=0):
    """Designs inside the declared range: slender, rise <= 0.4 L, a tenth of them straight."""
    p = population(n, seed, rise_max=0.4)
    K = np.where(p["ends"] > 0.5, 0.5, 1.0)
    p["thickness_mm"] = np.minimum(p["thickness_mm"], K * p["length_mm"] / 20.0)
    p["rise_mm"][::10] = 0.0
    return p


def strokes(p, frac_max=0.3, m=M):
    return np.linspace(0.0, 1.0, m)[None, :] * (frac_max * p["length_mm"])[:, None]


def euler(p):
    K = np.where(p["ends"] > 0.5, 0.5, 1.0)
    return math.pi**2 * STEEL.E_MPa * p["width_mm"] * p["thickness_mm"] ** 3 / 12 / (K * p["length_mm"]) ** 2


MAT = MaterialArrays.of(STEEL, N)


def test_registered():
    assert "column" in kind_names()
    assert COLUMN.param("thickness_mm").thickness
    assert COLUMN.param("ends").choices == ("pinned", "clamped")
    assert COLUMN.monotonic_stress


def test_finite_everywhere_in_the_parameter_box():
    p = population()
    u = strokes(p, 0.5)
    for arr in (COLUMN.force(p, MAT, u), COLUMN.stress(p, MAT, u)):
        assert np.all(np.isfinite(arr))
    for arr in (*COLUMN.box(p, u[:, -1]), COLUMN.mass(p, MAT), *COLUMN.validity_margins(p, MAT, u[:, -1]).values()):
        assert arr.shape == (N,) and np.all(np.isfinite(arr))


def test_force_and_stress_rise_monotonically_with_stroke():
    p = valid_population()
    u = strokes(p)
    F = COLUMN.force(p, MAT, u)
    S = COLUMN.stress(p, MAT, u)
    assert np.all(np.diff(F, axis=1) > 0)
    assert np.all(np.diff(S, axis=1) > 0)      # backs monotonic_stress = True


def test_zero_at_zero_stroke():
    p = population()
    F0 = COLUMN.force(p, MAT, np.zeros((N, 1)))[:, 0]
    assert np.all(np.abs(F0) <= 1e-6 * euler(p))


def test_force_linear_in_E():
    p = valid_population()
    u = strokes(p)
    stiff = MAT.replace(E=2.5 * MAT.E)
    F = COLUMN.force(p, MAT, u)
    # exact up to rounding (the u = 0 column holds round-off of order 1e-16 P_cr)
    np.testing.assert_allclose(COLUMN.force(p, stiff, u), 2.5 * F, rtol=1e-12, atol=1e-12 * F.max())


def test_force_rises_with_thickness():
    p = valid_population()
    u = strokes(p)[:, 1:]
    thicker = dict(p, thickness_mm=1.1 * p["thickness_mm"])
    assert np.all(COLUMN.force(thicker, MAT, u) > COLUMN.force(p, MAT, u))


def test_straight_plateau_is_nearly_flat():
    # pinned elastica (Timoshenko & Gere 1961 sec. 2.7): P/P_cr = 1.053 at Delta = 0.1 L [computed from the
    # elliptic integrals], so within 5.5 % of P_cr
    p = valid_population()
    p["rise_mm"][:] = 0.0
    F = COLUMN.force(p, MAT, 0.1 * p["length_mm"][:, None])[:, 0]
    ratio = F / euler(p)
    assert np.all((ratio >= 1.0) & (ratio <= 1.055))


def test_curved_column_softer_than_straight_at_small_shortening():
    p = valid_population()
    p["rise_mm"] = np.maximum(p["rise_mm"], 0.01 * p["length_mm"])
    straight = dict(p, rise_mm=np.zeros(N))
    # half the shortening at which the straight column reaches its Euler load
    eps = euler(p) / (STEEL.E_MPa * p["width_mm"] * p["thickness_mm"])
    u = (0.5 * eps * p["length_mm"])[:, None]
    assert np.all(COLUMN.force(p, MAT, u) < COLUMN.force(straight, MAT, u))


def test_population_equals_one_by_one():
    p = population(n=N, seed=3, rise_max=0.3)
    u = strokes(p)
    F = COLUMN.force(p, MAT, u)
    for i in (0, 255, 256, 511, 599):
        one = {k: v[i:i + 1] for k, v in p.items()}
        np.testing.assert_allclose(COLUMN.force(one, MaterialArrays.of(STEEL, 1), u[i:i + 1]), F[i:i + 1], rtol=1e-13)


def test_validity_margins():
    p = valid_population()
    u_max = 0.3 * p["length_mm"]
    g = COLUMN.validity_margins(p, MAT, u_max)
    assert set(g) == {"shortening", "rise_ratio", "slenderness", "elastic_buckling"}
    for name in ("shortening", "rise_ratio", "slenderness"):
        assert np.all(g[name] <= 1e-12), name
    bad = dict(p, rise_mm=0.5 * p["length_mm"], thickness_mm=p["length_mm"] / 5.0)
    gb = COLUMN.validity_margins(bad, MAT, 0.31 * p["length_mm"])
    for name in ("shortening", "rise_ratio", "slenderness"):
        assert np.all(gb[name] > 0), name
    # Euler stress above yield -> outside the elastic-buckling range
    stubby = dict(p, thickness_mm=p["length_mm"] / 10.0, ends=np.zeros(N))
    assert np.all(COLUMN.validity_margins(stubby, MAT, u_max)["elastic_buckling"] > 0)


def test_box_and_mass():
    p = valid_population()
    u_max = 0.2 * p["length_mm"]
    along, across, width = COLUMN.box(p, u_max)
    np.testing.assert_allclose(along, p["length_mm"])
    np.testing.assert_allclose(width, p["width_mm"])
    assert np.all(across >= 2 * p["rise_mm"] + p["thickness_mm"] - 1e-9)
    # a curved strip is longer than its span; a straight one weighs rho b t L
    m = COLUMN.mass(p, MAT)
    flat = STEEL.density_kg_m3 * 1e-6 * p["length_mm"] * p["width_mm"] * p["thickness_mm"]
    assert np.all(m >= flat * (1 - 1e-12))
    straight = p["rise_mm"] == 0
    np.testing.assert_allclose(m[straight], flat[straight], rtol=1e-12)


@pytest.mark.parametrize("ends", [0.0, 1.0])
def test_clamped_is_four_times_pinned_euler_load(ends):
    p = valid_population(n=50)
    p["rise_mm"][:] = 0.0
    p["ends"][:] = ends
    F = COLUMN.force(p, MaterialArrays.of(STEEL, 50), 0.05 * p["length_mm"][:, None])[:, 0]
    K = 0.5 if ends else 1.0
    pcr = math.pi**2 * STEEL.E_MPa * p["width_mm"] * p["thickness_mm"] ** 3 / 12 / (K * p["length_mm"]) ** 2
    assert np.all((F / pcr > 1.0) & (F / pcr < 1.03))


def test_table_lookup_is_bilinear_interpolation_of_the_grid():
    """The kernel's point-by-point table read equals textbook bilinear interpolation,
    including linear extrapolation of the last cell beyond the delta range."""
    from springsynth.elements._buckling import load_table

    tab = load_table()
    rng = np.random.default_rng(7)
    k, m = 40, 9
    alpha = rng.uniform(0.0, tab.alpha[-1], k)
    delta = rng.uniform(0.0, 1.2 * tab.delta[-1], (k, m))
    q = alpha / tab.da
    i = np.minimum(q.astype(int), len(tab.alpha) - 2)
    w = q - i
    s = delta / tab.dd
    jj = np.minimum(s.astype(int), len(tab.delta) - 2)
    f = s - jj
    start, w_k = tab.row_cells(alpha)
    np.testing.assert_array_equal(start, i * len(tab.delta))
    cell = start[:, None] + jj
    for name, v in (("C", tab.C), ("R", tab.R)):
        ii = i[:, None]
        lo = v[ii, jj] + f * (v[ii, jj + 1] - v[ii, jj])
        hi = v[ii + 1, jj] + f * (v[ii + 1, jj + 1] - v[ii + 1, jj])
        ref = lo + w[:, None] * (hi - lo)
        got = tab.lookup(name, cell, f, w_k[:, None], out=np.empty((k, m)), tmp=np.empty((k, m)))
        np.testing.assert_allclose(got, ref, rtol=1e-13, atol=1e-15)


def test_one_stroke_per_design_matches_the_curve():
    """Peak stress and box read the kernel at one stroke per design: same values as on a curve."""
    p = population(n=N, seed=5, rise_max=0.4)
    u = strokes(p)
    F = COLUMN.force(p, MAT, u)
    S = COLUMN.stress(p, MAT, u)
    for c in (0, 17, M - 1):
        np.testing.assert_allclose(COLUMN.force(p, MAT, u[:, c:c + 1])[:, 0], F[:, c], rtol=1e-13)
        np.testing.assert_allclose(COLUMN.stress(p, MAT, u[:, c:c + 1])[:, 0], S[:, c], rtol=1e-13)
    np.testing.assert_allclose(COLUMN.peak_stress_ratio(p, MAT, u[:, -1:]), S[:, -1] / STEEL.yield_MPa, rtol=1e-13)
