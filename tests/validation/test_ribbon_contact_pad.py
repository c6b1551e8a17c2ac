"""Validation of the ribbon, contact_sphere and elastomer_pad kinds against published values.

Every check value comes from /work/shared/reference/physics.md (the project's sourced
reference sheet); the section, its primary source and the tolerance stand beside each.
Tolerances cover the rounding of the printed value unless a wider one is stated.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from springsynth._materials import Material, MaterialArrays, material_from_mapping
from springsynth.elements import get_kind
from springsynth.elements.elastomer_pad import ogden_uniaxial_stress, shape_factor

RIBBON = get_kind("ribbon")
SPHERE = get_kind("contact_sphere")
PAD = get_kind("elastomer_pad")

#: kgf/cm^2 -> MPa (physics.md sec. 11, the conversion used with Treloar's data)
KGF_CM2 = 0.0980665
#: Ogden (1972) three-term fit to Treloar's data: mu in kg/cm^2, alpha (physics.md sec. 11)
OGDEN_1972 = {"mu_MPa": [6.3 * KGF_CM2, 0.012 * KGF_CM2, -0.1 * KGF_CM2], "alpha": [1.3, 5.0, -2.0]}


def linear_material(E, nu, yield_MPa=1500.0, rho=7900.0):
    return Material(id="check", name="check", E_MPa=E, G_MPa=E / (2 * (1 + nu)), nu=nu,
                    density_kg_m3=rho, yield_MPa=yield_MPa, uts_MPa=yield_MPa)


def rubber(law, nu=0.4999, strain_limit=0.5, **constants):
    return material_from_mapping("check_rubber", {"law": law, "density_kg_m3": 1000.0, "nu": nu,
                                                  "strain_limit": strain_limit, **constants}, where="test")


def arrays(**values):
    return {k: np.atleast_1d(np.asarray(v, dtype=float)) for k, v in values.items()}


# --------------------------------------------------------------------------- ribbon, sec. 9

@pytest.mark.parametrize(
    "E, b, t, R_n, F_check, S_check",
    [
        # physics.md sec. 9 check [computed from the handbook formula]: 301 SS, R_n/t = 100
        (193000.0, 10.0, 0.1, 10.0, 0.7311, 965.0),
        # same strip with R_n = 5
        (193000.0, 10.0, 0.1, 5.0, 2.9242, 1930.0),
        # steel, 1 in wide, 0.010 in thick, 1 in natural radius
        (207000.0, 25.4, 0.254, 25.4, 5.0586, 1035.0),
    ],
)
def test_ribbon_handbook_plateau(E, b, t, R_n, F_check, S_check):
    p = arrays(width_mm=b, thickness_mm=t, natural_radius_mm=R_n)
    mat = MaterialArrays.of(linear_material(E, 0.3))
    # well past the ramp (full force after ~1.25 drum diameters, drum <= 1.2 x natural diameter)
    u = np.array([[4.0 * R_n, 10.0 * R_n, 40.0 * R_n]])
    F = RIBBON.force(p, mat, u)
    S = RIBBON.stress(p, mat, u)
    # printed to 4 decimals: half a unit in the last place plus 10 %
    assert F == pytest.approx(np.full_like(u, F_check), abs=0.55e-4)
    assert S == pytest.approx(np.full_like(u, S_check), rel=1e-9)  # E t / (2 R_n) is exact here


def test_ribbon_full_force_after_one_and_a_quarter_drum_diameters():
    # physics.md sec. 9 usage rules: drum 10-20 % over the natural diameter, full force after
    # about 1.25 drum diameters. Tolerance 1 % of the plateau ("about" - the ramp shape is ours).
    R_n = 10.0
    p = arrays(width_mm=10.0, thickness_mm=0.1, natural_radius_mm=R_n)
    mat = MaterialArrays.of(linear_material(193000.0, 0.3))
    F_p = 0.7311  # sec. 9 check value
    u = np.array([[1.25 * 1.10 * 2 * R_n, 1.25 * 1.20 * 2 * R_n]])
    assert RIBBON.force(p, mat, u) == pytest.approx(np.full_like(u, F_p), rel=0.01)


# --------------------------------------------------------------------------- Hertz, sec. 10

def test_hertz_sphere_on_flat_check():
    # physics.md sec. 10 check [computed; Johnson 1985 ch. 4]: steel/steel E = 210 GPa, nu = 0.3,
    # ball R = 5 on a flat, F = 100 N -> a = 0.14812 mm, delta = 4.3882 um, p0 = 2176.1 MPa
    p = arrays(radius_mm=5.0)
    mat = MaterialArrays.of(linear_material(210000.0, 0.3))
    u = np.array([[4.3882e-3]])
    F = SPHERE.force(p, mat, u)[0, 0]
    p0 = SPHERE.stress(p, mat, u)[0, 0]
    # delta carries 5 significant figures (1.1e-5 relative); F ~ delta^1.5, p0 ~ delta^0.5
    assert F == pytest.approx(100.0, rel=1e-4)
    assert p0 == pytest.approx(2176.1, rel=1e-4)
    a = math.sqrt(3.0 * F / (2.0 * math.pi * p0))  # p0 = 3F / (2 pi a^2)
    assert a == pytest.approx(0.14812, rel=1e-4)


# --------------------------------------------------------------------------- elastomers, sec. 11

# Treloar (1944) uniaxial data, as tabulated in physics.md sec. 11 (lambda, P in kgf/cm^2),
# with the Ogden-1972 prediction computed there (MPa), up to lambda = 7.05.
TRELOAR = [
    (1.020, 0.26, 0.0243), (1.125, 1.37, 0.1354), (1.240, 2.30, 0.2327), (1.390, 3.23, 0.3333),
    (1.585, 4.16, 0.4350), (1.900, 5.10, 0.5583), (2.180, 6.00, 0.6451), (2.420, 6.90, 0.7111),
    (3.020, 8.80, 0.8683), (3.570, 10.7, 1.0301), (4.030, 12.5, 1.1966), (4.760, 16.2, 1.5534),
    (5.360, 19.9, 1.9647), (5.750, 23.6, 2.3058), (6.150, 27.4, 2.7278), (6.400, 31.0, 3.0335),
    (6.600, 34.8, 3.3035), (6.850, 38.5, 3.6754), (7.050, 42.1, 4.0022),
]


def _uniaxial(material, lam):
    mat = MaterialArrays.of(material)
    return ogden_uniaxial_stress(np.atleast_2d(np.asarray(lam, dtype=float)), mat.ogden_mu, mat.ogden_alpha)[0]


def test_ogden_1972_reproduces_treloar_loosely():
    # physics.md sec. 11 / pitfall 5: the published fit matches Treloar's data to about
    # +-12 % for lambda <= 7 (worst +11.6 % at lambda = 1.9). Tolerance 12 %.
    lam = np.array([r[0] for r in TRELOAR])
    P_data = np.array([r[1] for r in TRELOAR]) * KGF_CM2
    P = _uniaxial(rubber("ogden", **OGDEN_1972), lam)
    assert np.all(np.abs(P / P_data - 1.0) <= 0.12)


def test_ogden_1972_formula_matches_reference_column():
    # physics.md sec. 11 table, column "Ogden-1972 P (MPa) [computed]", printed to 4 decimals.
    lam = np.array([r[0] for r in TRELOAR])
    P_ref = np.array([r[2] for r in TRELOAR])
    P = _uniaxial(rubber("ogden", **OGDEN_1972), lam)
    assert P == pytest.approx(P_ref, abs=0.6e-4)


@pytest.mark.parametrize(
    "law, constants, expected",
    [
        # physics.md sec. 11 formula test vectors [computed], lambda = 1.5, 2, 3, MPa to 4 decimals
        ("neo_hookean", {"mu_MPa": 0.4}, (0.4222, 0.7000, 1.1556)),
        ("mooney_rivlin", {"C10_MPa": 0.16, "C01_MPa": 0.02}, (0.3659, 0.5950, 0.9630)),
        ("ogden", OGDEN_1972, (0.3939, 0.5911, 0.8629)),
    ],
)
def test_formula_vectors(law, constants, expected):
    P = _uniaxial(rubber(law, **constants), [1.5, 2.0, 3.0])
    assert P == pytest.approx(np.array(expected), abs=0.6e-4)


def test_pad_without_bonding_effect_is_uniaxial_compression():
    # physics.md sec. 11: neo-Hookean P = mu (lambda - lambda^-2). A tall slender block (S -> 0)
    # of a nearly incompressible rubber carries -P per unit loaded area. Tolerance 2e-4
    # (2 S^2 = 1.25e-7; bulk term 3(1 - 2 nu)(1 + 2 S^2) = 6e-5 for nu = 0.49999).
    mu = 0.4
    p = arrays(length_mm=1.0, width_mm=1.0, thickness_mm=1000.0)
    mat = MaterialArrays.of(rubber("neo_hookean", nu=0.49999, mu_MPa=mu))
    lam = np.array([0.95, 0.9, 0.8, 0.6])
    F = PAD.force(p, mat, (1000.0 * (1.0 - lam))[None, :])[0]
    assert F == pytest.approx(-mu * (lam - lam**-2), rel=2e-4)


def test_shape_factor_of_square_block():
    # physics.md sec. 11: square a x a x h has S = a / (4 h); a = 50, h = 10 -> 1.25
    assert shape_factor(50.0, 50.0, 10.0) == pytest.approx(1.25, rel=1e-12)


def test_gent_lindley_apparent_modulus_small_strain():
    # physics.md sec. 11: E_a = E (1 + 2 S^2) for bonded square blocks (Gent & Lindley 1959).
    # Natural rubber (Ogden 1972, E0 = 1.243 MPa [computed in sec. 11]), nu = 0.4999, square
    # 50 x 50 x 10 (S = 1.25): initial slope ~ A E0 (1 + 2 S^2) / t within 2 %.
    a, h = 50.0, 10.0
    p = arrays(length_mm=a, width_mm=a, thickness_mm=h)
    mat = MaterialArrays.of(rubber("ogden", nu=0.4999, **OGDEN_1972))
    du = 1e-6 * h
    slope = PAD.force(p, mat, np.array([[du]]))[0, 0] / du
    assert slope == pytest.approx(a * a * 1.243 * (1 + 2 * 1.25**2) / h, rel=0.02)


@pytest.mark.parametrize(
    "h, Ea_check",
    [
        # physics.md sec. 11 check [computed]: E = 3, B = 2000 MPa, beta = 2:
        # S = 1.25 -> E_a' = 12.299 MPa; S = 2.5 -> E_a' = 39.696 MPa
        (10.0, 12.299),
        (5.0, 39.696),
    ],
)
def test_gent_lindley_with_bulk_compliance(h, Ea_check):
    # neo-Hookean mu = 1 (E = 3 MPa); nu chosen so B = E / (3 (1 - 2 nu)) = 2000 MPa.
    nu = 0.5 - 3.0 / (6.0 * 2000.0)
    a = 50.0
    p = arrays(length_mm=a, width_mm=a, thickness_mm=h)
    mat = MaterialArrays.of(rubber("neo_hookean", nu=nu, mu_MPa=1.0))
    du = 1e-7 * h
    Ea = PAD.force(p, mat, np.array([[du]]))[0, 0] / du * h / (a * a)
    # 5 significant figures plus the 1e-7 strain's non-linearity: 1e-4 relative
    assert Ea == pytest.approx(Ea_check, rel=1e-4)
