"""Property tests of the ribbon and elastomer_pad kinds: scaling, monotonicity, validity."""

from __future__ import annotations

import numpy as np
import pytest

from springsynth.elements import get_kind, kind_names
from springsynth.elements.elastomer_pad import MODEL_STRAIN_LIMIT
from springsynth.model.materials import Material, MaterialArrays, material_from_mapping

RIBBON = get_kind("ribbon")
PAD = get_kind("elastomer_pad")

STEEL = Material(id="steel", name="steel", E_MPa=193000.0, G_MPa=69000.0, nu=0.3,
                 density_kg_m3=7900.0, yield_MPa=1300.0, uts_MPa=1500.0)
OGDEN = {"law": "ogden", "mu_MPa": [0.6178, 0.001177, -0.009807], "alpha": [1.3, 5.0, -2.0]}


def rubber(strain_limit=0.5, nu=0.4999, **law):
    law = law or OGDEN
    return material_from_mapping("r", {**law, "density_kg_m3": 930.0, "nu": nu, "strain_limit": strain_limit},
                                 where="test")


def ribbon_params(n=1, width=10.0, thickness=0.1, radius=10.0):
    return {"width_mm": np.full(n, width), "thickness_mm": np.full(n, thickness), "natural_radius_mm": np.full(n, radius)}


def pad_params(n=1, length=20.0, width=15.0, thickness=5.0):
    return {"length_mm": np.full(n, length), "width_mm": np.full(n, width), "thickness_mm": np.full(n, thickness)}


STROKE = np.linspace(0.0, 60.0, 64)[None, :]


def test_both_kinds_registered_with_design_parameter_names():
    assert {"ribbon", "elastomer_pad"} <= set(kind_names())
    assert RIBBON.param_names == ("width_mm", "thickness_mm", "natural_radius_mm")
    assert PAD.param_names == ("length_mm", "width_mm", "thickness_mm")
    assert RIBBON.forms == ("strip",) and PAD.forms == ("elastomer",)


# --------------------------------------------------------------------------- ribbon

def test_ribbon_force_linear_in_E():
    m1 = MaterialArrays.of(STEEL)
    m2 = m1.replace(E=2.0 * m1.E)
    p = ribbon_params()
    np.testing.assert_allclose(RIBBON.force(p, m2, STROKE), 2.0 * RIBBON.force(p, m1, STROKE), rtol=1e-12)


def test_ribbon_force_rises_with_thickness():
    t = np.array([0.05, 0.08, 0.1, 0.15])
    p = {"width_mm": np.full(4, 10.0), "thickness_mm": t, "natural_radius_mm": np.full(4, 10.0)}
    F = RIBBON.force(p, MaterialArrays.of(STEEL, 4), np.repeat(STROKE, 4, axis=0))
    assert np.all(np.diff(F[:, 1:], axis=0) > 0)


def test_ribbon_zero_at_zero_then_monotone_to_plateau_and_c1():
    p = ribbon_params()
    mat = MaterialArrays.of(STEEL)
    u = np.linspace(0.0, 80.0, 4001)[None, :]
    F = RIBBON.force(p, mat, u)[0]
    assert F[0] == 0.0
    assert np.all(np.diff(F) >= 0)
    assert F[-1] == pytest.approx(193000.0 * 10 * 0.1**3 / (26.4 * 100), rel=1e-12)
    slope = np.diff(F) / np.diff(u[0])
    assert np.max(np.abs(np.diff(slope))) < 1e-3 * np.max(slope)  # no jump in slope: C1


def test_ribbon_stress_constant_and_validity():
    p = ribbon_params()
    mat = MaterialArrays.of(STEEL)
    S = RIBBON.stress(p, mat, STROKE)
    assert np.all(S == S[0, 0]) and S.shape == STROKE.shape
    assert RIBBON.monotonic_stress
    ok = RIBBON.validity_margins(p, mat, np.array([60.0]))
    assert all(v[0] <= 0 for v in ok.values())
    # R_n/t = 20 < 50 and b/t = 5 < 10 are outside the model
    bad = RIBBON.validity_margins(ribbon_params(width=1.0, thickness=0.2, radius=4.0), mat, np.array([60.0]))
    assert bad["radius_thickness_ratio_low"][0] > 0 and bad["narrow_strip"][0] > 0


def test_ribbon_box_and_mass():
    p = ribbon_params()
    mat = MaterialArrays.of(STEEL)
    along, across, width = RIBBON.box(p, np.array([60.0]))
    D = 2.3 * 10.0
    assert along[0] == pytest.approx(60.0 + D)
    assert across[0] > D and width[0] == 10.0
    L = 60.0 + 1.5 * np.pi * D
    assert RIBBON.mass(p, mat, np.array([60.0]))[0] == pytest.approx(10 * 0.1 * L * 7900e-6)
    assert 0 < RIBBON.mass(p, mat)[0] < RIBBON.mass(p, mat, np.array([200.0]))[0]


# --------------------------------------------------------------------------- elastomer pad

def test_pad_zero_at_zero_positive_and_monotone():
    p = pad_params()
    u = np.linspace(0.0, 2.0, 64)[None, :]
    F = PAD.force(p, MaterialArrays.of(rubber()), u)[0]
    assert F[0] == 0.0 and not np.signbit(F[0])  # +0, not -0, in written curves
    assert np.all(np.diff(F) > 0)


def test_pad_force_linear_in_modulus_scale():
    m1 = MaterialArrays.of(rubber())
    # the whole law scales: shear moduli and Young's modulus (hence the bulk modulus) together
    m2 = m1.replace(ogden_mu=2.0 * m1.ogden_mu, E=2.0 * m1.E)
    p = pad_params()
    u = np.linspace(0.0, 1.0, 64)[None, :]
    np.testing.assert_allclose(PAD.force(p, m2, u), 2.0 * PAD.force(p, m1, u), rtol=1e-12)


def test_pad_thinner_is_stiffer_at_same_compression():
    t = np.array([2.0, 3.0, 5.0, 8.0])
    p = {"length_mm": np.full(4, 20.0), "width_mm": np.full(4, 20.0), "thickness_mm": t}
    F = PAD.force(p, MaterialArrays.of(rubber(), 4), np.full((4, 3), 0.3))
    assert np.all(np.diff(F, axis=0) < 0)


def test_pad_validity_beyond_strain_limit():
    p = pad_params(thickness=5.0)
    lim = MODEL_STRAIN_LIMIT
    # the model's own limit governs for strain_limit 0.5
    loose = MaterialArrays.of(rubber(strain_limit=0.5))
    assert PAD.validity_margins(p, loose, np.array([0.99 * lim * 5.0]))["compressive_strain"][0] <= 0
    assert PAD.validity_margins(p, loose, np.array([1.01 * lim * 5.0]))["compressive_strain"][0] > 0
    # the material's own limit governs when it is tighter
    tight = MaterialArrays.of(rubber(strain_limit=0.5 * lim))
    assert PAD.validity_margins(p, tight, np.array([0.6 * lim * 5.0]))["compressive_strain"][0] > 0
    ok = PAD.validity_margins(p, loose, np.array([0.5 * lim * 5.0]))
    assert all(v[0] <= 0 for v in ok.values())


def test_pad_stress_ratio_is_strain_over_limit():
    p = pad_params(thickness=5.0)
    mat = MaterialArrays.of(rubber(strain_limit=0.4))
    u = np.array([[0.0, 0.5, 1.0]])
    ratio = PAD.stress(p, mat, u) / PAD.allowable(p, mat)[:, None]
    np.testing.assert_allclose(ratio[0], [0.0, 0.1 / 0.4, 0.2 / 0.4], rtol=1e-12)
    assert PAD.monotonic_stress


def test_pad_geometry_limits_and_linear_material():
    mat = MaterialArrays.of(rubber())
    u_max = np.array([0.1])
    assert PAD.validity_margins(pad_params(length=100, width=100, thickness=2), mat, u_max)["shape_factor"][0] > 0
    assert PAD.validity_margins(pad_params(length=100, width=10, thickness=2), mat, u_max)["aspect_ratio"][0] > 0
    assert PAD.validity_margins(pad_params(length=10, width=10, thickness=20), mat, u_max)["slenderness"][0] > 0
    steel = MaterialArrays.of(STEEL)
    assert PAD.validity_margins(pad_params(), steel, u_max)["needs_hyperelastic_law"][0] > 0
    assert np.all(np.isfinite(PAD.force(pad_params(), steel, np.array([[0.0, 1.0]]))))


def test_pad_box_and_mass():
    p = pad_params(length=20, width=15, thickness=5)
    assert [v[0] for v in PAD.box(p, np.array([1.0]))] == [5.0, 20.0, 15.0]
    assert PAD.mass(p, MaterialArrays.of(rubber()))[0] == pytest.approx(20 * 15 * 5 * 930e-6)


def test_population_rows_are_independent():
    # mixed materials and sizes in one call give the same rows as one-by-one calls
    mats = [rubber(), rubber(law="neo_hookean", mu_MPa=0.4), rubber(law="mooney_rivlin", C10_MPa=0.16, C01_MPa=0.02)]
    mat = MaterialArrays.take(mats, np.array([0, 1, 2, 0]))
    p = {"length_mm": np.array([20.0, 10, 30, 5]), "width_mm": np.array([15.0, 10, 20, 5]),
         "thickness_mm": np.array([5.0, 2, 8, 4])}
    u = np.linspace(0, 1, 8)[None, :] * p["thickness_mm"][:, None] * 0.3
    F = PAD.force(p, mat, u)
    for i in range(4):
        pi = {k: v[i:i + 1] for k, v in p.items()}
        np.testing.assert_allclose(F[i:i + 1], PAD.force(pi, mat.subset(np.array([i])), u[i:i + 1]), rtol=1e-13)


def test_pad_kernel_matches_its_pointwise_model():
    # The kernel interpolates the secant modulus between three strains; the point-by-point
    # model (nominal_stress at every point) is its reference. Random pads of the catalogue
    # elastomers over the declared range: measured 0.13 %, tolerance 0.5 %.
    from springsynth.elements import elastomer_pad as ep
    from springsynth.model.materials import catalogue
    cat = catalogue()
    rng = np.random.default_rng(1)
    n = 2000
    mat = MaterialArrays.take([cat[m] for m in ("natural_rubber", "silicone", "tpu")], rng.integers(0, 3, n))
    W = 2.0 * 50.0 ** rng.random(n)
    L = W * 4.0 ** rng.uniform(-1.0, 1.0, n)
    S = rng.uniform(0.25, ep.S_MAX, n)
    t = L * W / (2.0 * S * (L + W))
    keep = t <= np.minimum(L, W)
    L, W, t, mat = L[keep], W[keep], t[keep], mat.subset(keep)
    e = np.broadcast_to(np.linspace(0.001, ep.MODEL_STRAIN_LIMIT, 40), (L.size, 40))
    F = PAD.force({"length_mm": L, "width_mm": W, "thickness_mm": t}, mat, e * t[:, None])
    pointwise = ep.nominal_stress(e, L, W, t, mat) * (L * W)[:, None]
    assert np.abs(F / pointwise - 1.0).max() <= 0.005


def test_pad_law_band_against_the_closed_forms_of_an_alpha_4_law():
    # A one-term Ogden law W = (mu/4)(l1^4 + l2^4 + l3^4 - 3) (R.W. Ogden, Proc. R. Soc. Lond. A
    # 326:565, 1972), small-strain shear modulus G = 2 mu. Simple shear (l1,2 = exp(+-s), gamma =
    # 2 sinh s): tau = dW/dgamma = mu sinh(4s)/cosh(s) = mu gamma (2 + gamma^2), secant over G
    # 1 + gamma^2/2. Uniaxial compression at stretch l: nominal stress mu (l^-3 - l^3), over the
    # neo-Hookean 2 mu (l^-2 - l). The kernel's margin is the larger of (r - 1)/(hi - 1) - 1 and
    # (1 - r)/(1 - lo) - 1 over both bands, at the largest stroke here (both ratios are monotonic),
    # with the bonded edge's shear strain gamma = 6 S eps/(1 - eps)^2.
    from springsynth.elements.elastomer_pad import SHEAR_SECANT_BAND, UNIAXIAL_RATIO_BAND, shape_factor
    mat = MaterialArrays.of(rubber(law="ogden", mu_MPa=[0.25], alpha=[4.0]), 3)
    p = pad_params(3, length=20.0, width=20.0, thickness=5.0)          # S = 1
    eps = np.array([0.02, 0.05, 0.1])
    margin = PAD.validity_margins(p, mat, eps * 5.0)["law_nonlinearity"]
    gamma = 6.0 * shape_factor(20.0, 20.0, 5.0) * eps / (1.0 - eps) ** 2
    lam = 1.0 - eps
    shear = (gamma**2 / 2.0) / (SHEAR_SECANT_BAND[1] - 1.0) - 1.0
    uniaxial = (1.0 - (lam**-3 - lam**3) / (2.0 * (lam**-2 - lam))) / (1.0 - UNIAXIAL_RATIO_BAND[0]) - 1.0
    np.testing.assert_allclose(margin, np.maximum(shear, uniaxial), rtol=1e-9)
    assert margin[0] < 0.0 < margin[2] and shear[2] > uniaxial[2]


def test_pad_law_band_leaves_linear_and_catalogue_laws_alone():
    from springsynth.model.materials import catalogue
    p = pad_params(1, length=20.0, width=20.0, thickness=20.0 / 7.0)    # S = 1.75, the largest
    u = np.array([MODEL_STRAIN_LIMIT * 20.0 / 7.0])
    nh = rubber(law="neo_hookean", mu_MPa=0.5)
    assert PAD.validity_margins(p, MaterialArrays.of(nh), u)["law_nonlinearity"][0] == pytest.approx(-1.0, abs=1e-12)
    mr = rubber(law="mooney_rivlin", C10_MPa=0.3, C01_MPa=0.1)
    assert PAD.validity_margins(p, MaterialArrays.of(mr), u)["law_nonlinearity"][0] < 0.0
    for m in ("natural_rubber", "silicone", "tpu"):
        assert PAD.validity_margins(p, MaterialArrays.of(catalogue()[m]), u)["law_nonlinearity"][0] < 0.0
    # a linear-elastic material has no law: only needs_hyperelastic_law speaks
    assert PAD.validity_margins(p, MaterialArrays.of(STEEL), u)["law_nonlinearity"][0] == -1.0
