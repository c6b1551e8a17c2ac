"""Property tests for ``blade_clamped`` and ``arch`` (robust facts, no reference numbers)."""

from __future__ import annotations

import numpy as np
import pytest

from springsynth.elements import get_kind, kind_names
from springsynth.model.materials import MaterialArrays, material_from_mapping

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


# ----------------------------------------------------------------------------- hyperelastic strips, large deflection

TPU_LIKE = material_from_mapping(   # Mooney-Rivlin strip, like the catalogue's tpu
    "lab_tpu",
    {"law": "mooney_rivlin", "C10_MPa": 3.0, "C01_MPa": 1.0, "density_kg_m3": 1200.0, "strain_limit": 1.0,
     "yield_MPa": 8.0, "forms": ["strip"]},
    where="test",
)


@pytest.mark.parametrize("mat", [RUBBER, TPU_LIKE])
@pytest.mark.parametrize("slenderness", [20.0, 100.0, 1000.0])
def test_hyper_blade_smooth_monotone_hardening_through_the_blend(mat, slenderness):
    # force and stress rise with the stroke, zero at zero, no kink at the blend into exact
    # kinematics (delta/L = 0.08..0.10): the tangent stiffness changes smoothly
    L = 40.0
    p = _p(length_mm=L, width_mm=3.0, thickness_mm=L / slenderness)
    u = np.linspace(0.0, 0.6 * L, 1201)[None, :]
    m = MaterialArrays.of(mat)
    f = BLADE.force(p, m, u)[0]
    s = BLADE.stress(p, m, u)[0]
    assert f[0] == 0.0 and s[0] == 0.0
    assert np.all(np.diff(f) > 0) and np.all(np.diff(s) > 0)       # monotonic_stress holds
    k = np.diff(f) / np.diff(u[0])                                  # tangent stiffness
    r = u[0, 1:-1] / L
    dk = np.diff(k) / k[1:]
    assert np.all(dk[r <= 0.45] > 0)                                # hardening up to delta/L = 0.45
    # (beyond, a softening law may flatten it: measured k drops <= 2.5 % by 0.6 for tpu)
    assert k[-1] / k.max() > 0.97
    # across the blend (delta/L = 0.08..0.10, 0.0005 L steps) the stiffness keeps rising
    # by less than 2 % per step, as just outside it: no kink
    zone = (r > 0.06) & (r < 0.12)
    assert np.all(dk[zone] > 0) and dk[zone].max() < 0.02


def test_hyper_rows_large_stroke_margins():
    # hyperelastic strips are valid to delta/L = 0.6 (table range does not apply); linear to 0.08
    n = 3
    p = _p(n, length_mm=40.0, width_mm=3.0, thickness_mm=0.2)     # L/t = 200: delta/t up to 120
    u_max = np.array([8.0, 16.0, 24.0])                           # delta/L = 0.2, 0.4, 0.6
    g = BLADE.validity_margins(p, MaterialArrays.of(RUBBER, n), u_max)
    np.testing.assert_allclose(g["rotation"], u_max / 40.0 / 0.6 - 1.0)
    assert np.all(g["deflection_range"] == -1.0)
    assert np.all(np.diff(g["strain"]) > 0) and g["strain"][0] < 0
    lin = BLADE.validity_margins(p, MaterialArrays.of(RUBBER_LINEAR, n), u_max)
    assert np.all(lin["rotation"] > 0) and lin["deflection_range"][1] > 0      # delta/t = 80 > 64
    # tpu-like strip (strain limit 1.0): the peak fibre strain (stretch plus clamp bending)
    # passes the limit between delta/L = 0.4 and 0.6
    gt = BLADE.validity_margins(p, MaterialArrays.of(TPU_LIKE, n), u_max)["strain"]
    assert gt[1] < 0 < gt[2]


def test_hyper_blade_vectorised_rows_match_single_rows():
    # a population mixing laws and strokes gives each row what it gives alone
    mats = MaterialArrays.take([RUBBER, TPU_LIKE, RUBBER_LINEAR], np.array([0, 1, 2, 1]))
    p = {"length_mm": np.array([30.0, 40.0, 20.0, 60.0]), "width_mm": np.array([2.0, 3.0, 5.0, 4.0]),
         "thickness_mm": np.array([0.5, 0.3, 0.5, 1.0])}
    u = np.linspace(0.0, 1.0, 9)[None, :] * np.array([[12.0], [20.0], [1.0], [30.0]])
    both_f = BLADE.force(p, mats, u)
    both_s = BLADE.stress(p, mats, u)
    for i in range(4):
        sub = {k: v[i:i + 1] for k, v in p.items()}
        np.testing.assert_allclose(both_f[i], BLADE.force(sub, mats.subset(np.array([i])), u[i:i + 1])[0], rtol=1e-14)
        np.testing.assert_allclose(both_s[i], BLADE.stress(sub, mats.subset(np.array([i])), u[i:i + 1])[0], rtol=1e-14)
