"""Property tests for ``blade_clamped`` and ``arch`` (robust facts, no reference numbers)."""

from __future__ import annotations

import numpy as np
import pytest

from springsynth._materials import MaterialArrays, material_from_mapping
from springsynth.elements import get_kind, kind_names

BLADE = get_kind("blade_clamped")
ARCH = get_kind("arch")

STEEL = material_from_mapping(
    "lab_steel", {"E_MPa": 200000.0, "density_kg_m3": 7800.0, "yield_MPa": 1500.0}, where="test"
)
RUBBER = material_from_mapping(   # neo-Hookean: softens in uniaxial tension
    "lab_rubber",
    {"law": "neo_hookean", "mu_MPa": 3.0, "density_kg_m3": 1200.0, "strain_limit": 3.0, "forms": ["strip"]},
    where="test",
)
# linear material with the rubber's small-strain modulus
RUBBER_LINEAR = material_from_mapping(
    "lab_rubber_lin", {"E_MPa": RUBBER.E_MPa, "density_kg_m3": 1200.0, "yield_MPa": 10.0}, where="test"
)


def _p(n=1, **kw):
    return {k: np.full(n, float(v)) for k, v in kw.items()}


def test_registered():
    assert {"blade_clamped", "arch"} <= set(kind_names())


@pytest.mark.parametrize("kind, p", [
    (BLADE, dict(length_mm=30.0, width_mm=4.0, thickness_mm=0.2)),
    (ARCH, dict(length_mm=30.0, width_mm=4.0, thickness_mm=0.2, rise_mm=1.2)),
])
def test_zero_at_zero_and_linear_in_E(kind, p):
    u = np.linspace(0.0, 1.0, 17)[None, :]
    f1 = kind.force(_p(**p), MaterialArrays.of(STEEL), u)
    assert f1[0, 0] == 0.0
    assert kind.stress(_p(**p), MaterialArrays.of(STEEL), u)[0, 0] == 0.0
    soft = material_from_mapping("half", {"E_MPa": 100000.0, "density_kg_m3": 7800.0, "yield_MPa": 1500.0}, where="t")
    f2 = kind.force(_p(**p), MaterialArrays.of(soft), u)
    np.testing.assert_allclose(f2, 0.5 * f1, rtol=1e-12, atol=0)


def test_blade_force_rises_with_thickness_and_hardens():
    t = np.array([0.1, 0.15, 0.2, 0.3, 0.5])
    p = {"length_mm": np.full(5, 40.0), "width_mm": np.full(5, 5.0), "thickness_mm": t}
    u = np.linspace(0.0, 2.0, 41)[None, :].repeat(5, axis=0)
    f = BLADE.force(p, MaterialArrays.of(STEEL, 5), u)
    assert np.all(np.diff(f[:, 1:], axis=0) > 0)
    # hardening: secant stiffness grows along the stroke
    assert np.all(np.diff(f[:, 1:] / u[:, 1:], axis=1) > 0)


def test_blade_softening_law_flattens_hardening():
    p = _p(length_mm=20.0, width_mm=5.0, thickness_mm=0.5)
    u = np.array([[1e-3, 0.5, 1.0, 2.0, 3.0]])
    f_nh = BLADE.force(p, MaterialArrays.of(RUBBER), u)[0]
    f_lin = BLADE.force(p, MaterialArrays.of(RUBBER_LINEAR), u)[0]
    assert f_nh[0] == pytest.approx(f_lin[0], rel=1e-3)        # same small-strain stiffness
    assert np.all(f_nh[2:] < f_lin[2:])                         # lower at large stroke
    assert np.all(np.diff(f_lin / f_nh) > 0)                    # and increasingly so


def test_blade_mixed_population_rows_are_independent():
    # a hyperelastic row must not change the linear rows evaluated with it
    p = {"length_mm": np.array([20.0, 20.0]), "width_mm": np.array([5.0, 5.0]), "thickness_mm": np.array([0.5, 0.5])}
    mats = MaterialArrays.take([RUBBER_LINEAR, RUBBER], np.array([0, 1]))
    u = np.linspace(0.0, 3.0, 7)[None, :].repeat(2, axis=0)
    both = BLADE.force(p, mats, u)
    alone = BLADE.force({k: v[:1] for k, v in p.items()}, MaterialArrays.of(RUBBER_LINEAR), u[:1])
    np.testing.assert_allclose(both[0], alone[0], rtol=1e-14)
    alone_h = BLADE.force({k: v[1:] for k, v in p.items()}, MaterialArrays.of(RUBBER), u[1:])
    np.testing.assert_allclose(both[1], alone_h[0], rtol=1e-14)


def test_arch_snaps_only_when_bistable():
    u_of = lambda h: np.linspace(0.0, 2.2 * h, 221)[None, :]  # noqa: E731
    t = 0.2
    for Q, crosses in ((1.5, False), (2.0, False), (3.0, True), (8.0, True)):
        p = _p(length_mm=40.0, width_mm=4.0, thickness_mm=t, rise_mm=Q * t)
        f = ARCH.force(p, MaterialArrays.of(STEEL), u_of(Q * t))[0]
        assert (f.min() < 0) == crosses
        assert f[1] > 0                                          # resists at first


def test_arch_peak_stress_over_stroke_covers_sampled_points():
    p = _p(length_mm=40.0, width_mm=4.0, thickness_mm=0.2, rise_mm=1.6)
    mat = MaterialArrays.of(STEEL)
    u = np.linspace(0.0, 3.0, 301)[None, :]
    sampled = ARCH.stress(p, mat, u).max() / STEEL.yield_MPa
    peak = ARCH.peak_stress_ratio(p, mat, u[:, ::50])
    assert peak[0] >= sampled * (1 - 1e-3)
    assert ARCH.monotonic_stress is False


def test_margins_box_mass_shapes_and_signs():
    n = 3
    mat = MaterialArrays.of(STEEL, n)
    pb = _p(n, length_mm=40.0, width_mm=5.0, thickness_mm=0.2)
    pa = _p(n, length_mm=40.0, width_mm=5.0, thickness_mm=0.2, rise_mm=1.0)
    u_max = np.array([0.5, 1.0, 2.0])
    for kind, p in ((BLADE, pb), (ARCH, pa)):
        for name, g in kind.validity_margins(p, mat, u_max).items():
            assert g.shape == (n,) and np.all(g <= 0), name
        along, a1, a2 = kind.box(p, u_max)
        assert along.shape == (n,) and np.all(along >= u_max)
        assert np.all(np.diff(along) >= 0)
        m = kind.mass(p, mat, u_max)
        assert m.shape == (n,) and np.all(m >= 7800 * 40 * 5 * 0.2 * 1e-6 * (1 - 1e-12))
    # outside: too much stroke for the arch, too much rotation for the blade
    assert ARCH.validity_margins(pa, mat, np.full(n, 2.5))["stroke_rise"].max() > 0
    assert BLADE.validity_margins(pb, mat, np.full(n, 4.0))["rotation"].max() > 0


def test_arch_box_includes_dip_below_clamps():
    # during snap-through the S-shaped beam dips below the clamp line: band > rise
    p = _p(length_mm=40.0, width_mm=5.0, thickness_mm=0.1, rise_mm=1.0)
    along, _, _ = ARCH.box(p, np.array([1.0]))
    assert along[0] > 1.0 + 0.1 + 0.2
