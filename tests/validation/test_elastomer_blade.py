"""Validation of ``blade_clamped`` for hyperelastic strips at large deflection.

Reference, computed here and independent of the module: the finite-rotation
extensible elastica (Reissner rod without shear) of the half span of a strip clamped
at both ends (axially fixed) with a central load. Unknowns x, w, theta, M along the
unstretched arc length s; end forces (H, V) as parameters:

    x' = lam cos theta,  w' = lam sin theta,  theta' = M / (E I),
    M' = -(lam cos theta V - lam sin theta H),
    lam = P^-1((H cos theta + V sin theta) / A)      (the material's uniaxial law)

with theta = 0 at the clamp and at mid-span (symmetry), x(L/2) = L/2, w(L/2) = delta,
solved by ``scipy.integrate.solve_bvp`` with continuation in delta; F = 2 V. The
uniaxial nominal stresses P(lam) are written out here (incompressible neo-Hookean
``mu (lam - lam^-2)``, Mooney-Rivlin ``2 (C10 + C01/lam)(lam - lam^-2)``, Ogden
``sum mu_p (lam^(alpha_p - 1) - lam^(-alpha_p/2 - 1))``: common practice; R.W. Ogden,
Proc. R. Soc. Lond. A 326:565-584, 1972) with the constants typed in, not taken from the
module (natural rubber: Ogden's 1972 three-term fit to Treloar's data [memory]); their inverse is a dense cubic spline. Bending keeps the small-strain modulus
E of the catalogue (the same constitutive assumption as the module).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_bvp
from scipy.interpolate import CubicSpline

from springsynth.elements import blade_clamped as bc_mod
from springsynth.elements import get_kind
from springsynth.model.materials import MaterialArrays, catalogue, material_from_mapping

BLADE = get_kind("blade_clamped")
ROOT = Path(__file__).resolve().parents[2]


# ----------------------------------------------------------------------------- laws (see the module docstring)

def _mooney_rivlin(c10, c01):
    return lambda lam: 2.0 * (c10 + c01 / lam) * (lam - lam**-2)


def _neo_hookean(mu):
    return lambda lam: mu * (lam - lam**-2)


def _ogden(mu, alpha):
    return lambda lam: sum(m * (lam ** (a - 1.0) - lam ** (-a / 2.0 - 1.0)) for m, a in zip(mu, alpha))


def _linear(E):
    return lambda lam: E * (lam - 1.0)


LAWS = {
    "tpu": _mooney_rivlin(3.0, 1.0),
    "natural_rubber": _ogden((0.6178, 0.001177, -0.009807), (1.3, 5.0, -2.0)),
    "silicone": _neo_hookean(0.8),
}


def test_laws_typed_here_match_the_catalogue():
    # the constants typed above are the catalogue's (a guard, not a check of the model)
    cat = catalogue()
    lam = np.linspace(1.0, 2.0, 11)
    for mid, law in LAWS.items():
        m = cat[mid]
        other = sum(mu * (lam ** (a - 1) - lam ** (-a / 2 - 1)) for mu, a in zip(m.ogden_mu_MPa, m.ogden_alpha))
        np.testing.assert_allclose(law(lam), other, rtol=1e-12, atol=1e-15)


# ----------------------------------------------------------------------------- reference elastica

def _inverse(law):
    lam = np.concatenate([np.linspace(0.5, 1.0, 2001)[:-1], np.linspace(1.0, 4.0, 12001)])
    P = law(lam)
    assert np.all(np.diff(P) > 0)
    return CubicSpline(P, lam)


def elastica(law, E, L, t, deltas, b=1.0, step=0.025, tol=1e-7):
    """Force F (N) and peak fibre nominal strain at the strokes ``deltas`` (increasing)."""
    A, I = b * t, b * t**3 / 12.0
    inv = _inverse(law)
    mesh = np.linspace(0.0, L / 2.0, 201)

    def ode(s, y, prm):
        H, V = prm
        _, _, th, M = y
        lam = inv((H * np.cos(th) + V * np.sin(th)) / A)
        return np.vstack((lam * np.cos(th), lam * np.sin(th), M / (E * I),
                          -(lam * np.cos(th) * V - lam * np.sin(th) * H)))

    y = np.vstack((mesh, np.zeros_like(mesh), np.zeros_like(mesh), np.zeros_like(mesh)))
    prm = np.array([0.0, 96.0 * E * I * deltas[0] / L**3])
    grid = np.concatenate([[0.0], deltas])
    steps = []
    for lo, hi in zip(grid[:-1], grid[1:]):
        k = max(2, int(math.ceil((hi - lo) / (step * L))))
        steps += list(np.linspace(lo, hi, k + 1)[1:])
    F, strain = [], []
    for d in steps:
        def bc(ya, yb, prm, d=d):
            return np.array([ya[0], ya[1], ya[2], yb[0] - L / 2.0, yb[1] - d, yb[2]])

        sol = solve_bvp(ode, bc, mesh, y, p=prm, tol=tol, max_nodes=200000)
        assert sol.success, (d, sol.message)
        mesh, y, prm = sol.x, sol.y, sol.p
        if np.any(np.isclose(d, deltas)):
            H, V = prm
            lam = inv((H * np.cos(y[2]) + V * np.sin(y[2])) / A)
            F.append(2.0 * V)
            strain.append(np.max(lam - 1.0 + 0.5 * t * np.abs(y[3]) / (E * I)))
    return np.array(F), np.array(strain)


def _module(mat, L, t, deltas, b=1.0):
    p = {"length_mm": np.array([L]), "width_mm": np.array([b]), "thickness_mm": np.array([t])}
    m = MaterialArrays.of(mat)
    u = np.asarray(deltas, dtype=float)[None, :]
    return BLADE.force(p, m, u)[0], p, m


# delta/L points: moderate rotation (kept), blend zone, large deflection up to the declared limit
R_POINTS = np.array([0.02, 0.05, 0.08, 0.09, 0.1, 0.15, 0.2, 0.3, 0.4, 0.5, 0.6])


def test_declared_range():
    assert bc_mod.HYPER_ROTATION_LIMIT == R_POINTS[-1] == 0.6
    assert bc_mod.ROTATION_LIMIT == 0.08 and bc_mod.BLEND_END == 0.10
    assert bc_mod.SLENDERNESS_MIN == 20.0


@pytest.mark.slow
@pytest.mark.parametrize("mid, slenderness", [
    ("tpu", 20.0), ("tpu", 50.0), ("tpu", 100.0), ("tpu", 200.0),
    ("natural_rubber", 20.0), ("natural_rubber", 50.0), ("natural_rubber", 100.0), ("natural_rubber", 200.0),
    ("silicone", 50.0),
])
def test_force_against_hyperelastic_elastica(mid, slenderness):
    # reference computed here; requirement <= 3 % over delta/L <= 0.6 (the declared limit)
    mat = catalogue()[mid]
    L = 40.0
    t = L / slenderness
    d = R_POINTS * L
    F_ref, _ = elastica(LAWS[mid], mat.E_MPa, L, t, d)
    F, _, _ = _module(mat, L, t, d)
    dev = np.abs(F / F_ref - 1.0)
    assert dev.max() <= 0.03                        # the requirement
    # reached: the moderate-rotation form is kept up to delta/L = 0.08, where its
    # finite-rotation error is 2.0-2.6 % (L/t = 200..20); the chord model (w = 1, from
    # delta/L = 0.1 on) is within 0.56 % (measured 0.07 % at L/t = 200, 0.55 % at 20)
    assert dev.max() <= 0.027
    assert dev[R_POINTS >= 0.1].max() <= 0.006


@pytest.mark.slow
@pytest.mark.parametrize("mid, slenderness", [("tpu", 20.0), ("natural_rubber", 100.0)])
def test_peak_fibre_strain_against_elastica(mid, slenderness):
    # the strain margin and the stress use the peak fibre nominal strain at the clamp; the
    # reference takes the largest lam - 1 + (t/2)|M|/(E I) along the half span. The model
    # may err on the safe side only: 0-2.5 % high up to delta/L = 0.3, at most 7 % at 0.6
    mat = catalogue()[mid]
    L = 40.0
    t = L / slenderness
    r = R_POINTS[R_POINTS >= 0.1]
    d = r * L
    _, strain_ref = elastica(LAWS[mid], mat.E_MPa, L, t, d)
    p = {"length_mm": np.array([L]), "width_mm": np.array([1.0]), "thickness_mm": np.array([t])}
    m = MaterialArrays.of(mat)
    sol = bc_mod.hyperelastic_solution(p["length_mm"], p["thickness_mm"], m.E, m.ogden_mu, m.ogden_alpha,
                                       d[None, :])
    strain = sol["fibre"][0]
    rel = strain / strain_ref - 1.0
    assert rel.min() >= -0.005
    assert rel[r <= 0.3].max() <= 0.025
    assert rel.max() <= 0.07
    # the stress is the law's nominal stress at that fibre (w = 1 here)
    s = BLADE.stress(p, m, d[None, :])[0]
    np.testing.assert_allclose(s, LAWS[mid](1.0 + strain), rtol=1e-9)
    # strain margin at the end of the stroke
    g = BLADE.validity_margins(p, m, d[-1:])["strain"][0]
    assert g == pytest.approx(strain[-1] / mat.strain_limit - 1.0, rel=1e-9)


@pytest.mark.slow
def test_neo_hookean_strip_beyond_moderate_rotation():
    # the neo-Hookean strip of test_clamped_arch (mu = 2 MPa, L = 20, t = 0.5, L/t = 40) at
    # delta/L = 0.1..0.3: the moderate-rotation closure overestimates the elastica by 3-25 %,
    # the chord model is within 0.5 %
    mu, L, t = 2.0, 20.0, 0.5
    rub = material_from_mapping(
        "nh", {"law": "neo_hookean", "mu_MPa": mu, "density_kg_m3": 1100.0, "strain_limit": 2.0, "forms": ["strip"]},
        where="test",
    )
    d = np.array([2.0, 3.0, 4.0, 6.0])
    F_ref, _ = elastica(_neo_hookean(mu), rub.E_MPa, L, t, d)
    F, _, _ = _module(rub, L, t, d)
    assert np.max(np.abs(F / F_ref - 1.0)) <= 0.005


def test_linear_material_keeps_moderate_rotation_scope():
    # a linear strip is still limited to delta/L <= 0.08; hyperelastic strips to 0.6
    steel = material_from_mapping("st", {"E_MPa": 200000.0, "density_kg_m3": 7800.0, "yield_MPa": 1500.0},
                                  where="test")
    p = {"length_mm": np.array([40.0]), "width_mm": np.array([5.0]), "thickness_mm": np.array([0.4])}
    u = np.array([0.3 * 40.0])
    assert BLADE.validity_margins(p, MaterialArrays.of(steel), u)["rotation"][0] > 0
    g = BLADE.validity_margins(p, MaterialArrays.of(catalogue()["tpu"]), u)
    assert g["rotation"][0] == pytest.approx(0.3 / 0.6 - 1.0)
    assert g["deflection_range"][0] == -1.0          # no table for hyperelastic rows (delta/t = 30 here)


def _moderate_rotation_closure(law, E, L, t, delta):
    """Exact root of the moderate-rotation uniform-tension closure (the clamped-beam tension
    solution of test_clamped_arch.py, with the law): N = E I (4a/L)^2 = A P(1 + c(a) delta^2/L^2), F = 192 E I delta/L^3 R(a)."""
    from scipy.optimize import brentq

    A, I = t, t**3 / 12.0

    def parts(a):
        th = math.tanh(a)
        return a * (2 * a - 3 * th + a * (1 - th * th)) / (a - th) ** 2, a**3 / (3 * (a - th))

    def res(a):
        return E * I * (4 * a / L) ** 2 - A * law(1.0 + parts(a)[0] * delta**2 / L**2)

    a = brentq(res, 1e-3, 500.0, xtol=1e-14)
    return 192 * E * I * delta / L**3 * parts(a)[1]


@pytest.mark.parametrize("mid", ["tpu", "natural_rubber"])
def test_moderate_rotation_behaviour_kept_up_to_008(mid):
    # for delta/L <= 0.08 hyperelastic strips keep the exact moderate-rotation closure
    # (computed here by brentq); 2 fixed-point passes: 2e-4
    mat = catalogue()[mid]
    for slenderness in (20.0, 100.0, 1000.0):
        L = 40.0
        t = L / slenderness
        d = np.array([0.001, 0.01, 0.03, 0.05, 0.08]) * L
        F, _, _ = _module(mat, L, t, d)
        ref = [_moderate_rotation_closure(LAWS[mid], mat.E_MPa, L, t, x) for x in d]
        np.testing.assert_allclose(F, ref, rtol=2e-4)


@pytest.mark.slow
def test_showcase_elastomer_blade_cancellation_figure():
    # studies/elastomer-blade.design.toml: natural rubber strip L 30, b 8, t 0.5 pressed to
    # 13.5 mm (delta/L = 0.45). The figures quoted in its comment block, measured here against
    # the elastica with the Ogden (1972) law and with a linear law of the same small-strain modulus.
    from springsynth.assembly.evaluate import evaluate_design
    from springsynth.io.design_toml import load_design

    design = load_design(ROOT / "studies" / "elastomer-blade.design.toml")
    (el,) = design.elements
    mat = design.materials[el.material]
    L, b, t = el.params["length_mm"], el.params["width_mm"], el.params["thickness_mm"]
    X = 13.5
    x = np.linspace(0.0, X, 41)
    res = evaluate_design(design, x)
    F = res.force_N[0]
    h = 0.02
    pts = np.array([X / 2 - h, X / 2 + h, X - 2 * h, X])
    F_nr, _ = elastica(LAWS["natural_rubber"], mat.E_MPa, L, t, pts, b=b)
    F_lin, _ = elastica(_linear(mat.E_MPa), mat.E_MPa, L, t, pts, b=b)
    assert F[-1] == pytest.approx(F_nr[-1], rel=0.01)              # model vs elastica: -0.2 %
    assert F_nr[-1] == pytest.approx(1.71, rel=0.01) and F_lin[-1] == pytest.approx(2.39, rel=0.01)

    def tangent_ratio(Fp):  # tangent rate at the end over the one at mid-stroke
        return (Fp[3] - Fp[2]) / (Fp[1] - Fp[0])

    r_nr, r_lin = tangent_ratio(F_nr), tangent_ratio(F_lin)
    assert r_nr == pytest.approx(1.58, abs=0.03) and r_lin == pytest.approx(2.35, abs=0.03)
    assert 1.0 - (r_nr - 1.0) / (r_lin - 1.0) > 0.5                  # most of the rise in rate cancelled
    k0 = 192.0 * mat.E_MPa * b * t**3 / 12.0 / L**3
    S_nr, S_lin = F_nr[-1] / X / k0, F_lin[-1] / X / k0             # secant / small-deflection rate
    assert 1.0 - (S_nr - 1.0) / (S_lin - 1.0) == pytest.approx(0.29, abs=0.01)
    # feasible as shipped: every validity margin inside, stress ratio 0.29
    assert res.stress_ratio[0] == pytest.approx(0.29, abs=0.01)
    assert all(float(v[0]) <= 0.0 for v in res.validity.values())
