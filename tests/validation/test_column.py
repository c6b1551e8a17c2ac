"""The ``column`` kind against Euler, the elastica and the imperfect-column law.

Check values:

* Euler loads: S.P. Timoshenko & J.M. Gere, *Theory of Elastic Stability*, 2nd ed.,
  McGraw-Hill 1961, ch. 2, ``P_cr = pi^2 E I / (K L)^2`` with K = 1 (pinned) and 0.5
  (clamped) [common practice]; for E = 200 GPa, b = 10, t = 0.2, L = 50 this gives
  5.2638 N and 21.0552 N [computed from that formula].
* Pinned-pinned elastica: Timoshenko & Gere 1961, sec. 2.7 [memory; formulas
  re-derived], ``P/P_cr = (2K(k)/pi)^2``, ``Delta/L = 2(1 - E(k)/K(k))``, evaluated here
  with scipy's elliptic integrals; the table of P/P_cr at given Delta/L
  (``ELASTICA_TABLE``) was computed from those integrals to 5 decimals.
* Imperfect column: Timoshenko & Gere 1961, ch. 1 [memory], amplification
  ``a = a0/(1 - P/P_cr)``, bending shortening ``pi^2 (a^2 - a0^2)/(4L)``; for L = 100,
  a0 = 1 it gives a = 2, 5, 10 and Delta_b = 0.0740, 0.5922, 2.4427 mm at P/P_cr = 0.5,
  0.8, 0.9 [computed from those formulas].
* Curved columns: an exact reference solved in this file (extensible elastica of the
  imperfect column over the full span, scipy ``solve_bvp``, pinned or clamped boundary
  conditions written out directly), independent of the module's table.

The ``test_reference_*`` tests check this file's own reference helpers (``euler``,
``elastica_force_ratio``) against those published formulas; they cannot fail because
of the product, and the product tests rely on them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_bvp
from scipy.optimize import brentq
from scipy.special import ellipe, ellipk

from springsynth.elements import get_kind
from springsynth.model.materials import MaterialArrays, material_from_mapping

COLUMN = get_kind("column")
PINNED, CLAMPED = 0.0, 1.0
E_STEEL = 200_000.0          # MPa, the check column of the Euler values above


def steel(n=1, E=E_STEEL, yield_MPa=1500.0):
    m = material_from_mapping("test_steel", dict(E_MPa=E, nu=0.3, density_kg_m3=7850, yield_MPa=yield_MPa),
                              where="test")
    return MaterialArrays.of(m, n)


def params(L, b, t, rise, ends):
    return {"length_mm": np.array([L], float), "width_mm": np.array([b], float),
            "thickness_mm": np.array([t], float), "rise_mm": np.array([rise], float),
            "ends": np.array([ends], float)}


def force(p, u, mat=None):
    return COLUMN.force(p, mat or steel(), np.atleast_2d(np.asarray(u, float)))[0]


def euler(L, b, t, K, E=E_STEEL):
    return math.pi**2 * E * b * t**3 / 12.0 / (K * L) ** 2


# --------------------------------------------------------------------------- Euler


def test_reference_euler_helper():
    # reference self-check: Timoshenko & Gere 1961 ch. 2, E = 200 GPa, b = 10, t = 0.2,
    # L = 50 -> 5.2638 N pinned, 21.0552 N clamped [computed from P_cr = pi^2 E I/(K L)^2]
    assert euler(50, 10, 0.2, 1.0) == pytest.approx(5.2638, abs=1e-4)
    assert euler(50, 10, 0.2, 0.5) == pytest.approx(21.0552, abs=1e-4)


@pytest.mark.parametrize("ends, pcr", [(PINNED, 5.2638), (CLAMPED, 21.0552)])
def test_straight_column_axial_then_buckles_at_euler_load(ends, pcr):
    L, b, t = 50.0, 10.0, 0.2
    p = params(L, b, t, 0.0, ends)
    EA = E_STEEL * b * t
    u_cr = pcr * L / EA                       # shortening at the Euler load, axial only
    u = np.array([0.25, 0.5, 0.9]) * u_cr
    # below the Euler load: F = EA u / L (exact, up to rounding)
    np.testing.assert_allclose(force(p, u), EA * u / L, rtol=1e-9)
    # just past it the force stays at P_cr (within 0.5 %: the plateau rises as 1 + Delta/2L)
    F = force(p, [1.0001 * u_cr, u_cr + 0.002 * L])
    np.testing.assert_allclose(F, pcr, rtol=5e-3)


# --------------------------------------------------------------------------- elastica


def elastica_point(k):
    """Pinned-pinned elastica at modulus k (Timoshenko & Gere sec. 2.7): P/P_cr, Delta/L."""
    K, E = ellipk(k * k), ellipe(k * k)
    return (2 * K / math.pi) ** 2, 2 * (1 - E / K)


def elastica_force_ratio(delta):
    k = brentq(lambda k: elastica_point(k)[1] - delta, 1e-9, 0.99)
    return elastica_point(k)[0]


# Force at a given end shortening of the pinned-pinned elastica, P/P_cr against Delta/L
# (Timoshenko & Gere 1961 sec. 2.7 [memory]; computed from the elliptic integrals to 5 decimals)
ELASTICA_TABLE = [(0.01, 1.00503), (0.05, 1.02572), (0.1, 1.05299), (0.2, 1.11274), (0.3, 1.18070)]


@pytest.mark.parametrize("delta, ratio", ELASTICA_TABLE)
def test_reference_elliptic_helper(delta, ratio):
    # reference self-check of elastica_force_ratio: 5 printed decimals -> 1e-5
    assert elastica_force_ratio(delta) == pytest.approx(ratio, abs=1e-5)


@pytest.mark.parametrize("ends", [PINNED, CLAMPED])
def test_post_buckling_force_matches_elastica_table(ends):
    """The kernel at the tabulated shortenings, with the axial compliance in series, to 0.3 %.

    u = P L/(EA) + Delta_b with P = ratio * P_cr from ``ELASTICA_TABLE``; the clamped
    column is the pinned one of half span (Timoshenko & Gere sec. 2.7), same ratios.
    """
    L, b, t = 50.0, 10.0, 0.2
    pcr = 5.2638 if ends == PINNED else 21.0552          # Euler loads of this column (above)
    delta, ratio = np.array(ELASTICA_TABLE).T
    delta[-1] -= 1e-4                                      # stay just inside u <= 0.3 L
    u = (ratio * pcr / (E_STEEL * b * t) + delta) * L
    F = force(params(L, b, t, 0.0, ends), u)
    np.testing.assert_allclose(F / pcr, ratio, rtol=3e-3)


@pytest.mark.parametrize("ends", [PINNED, CLAMPED])
def test_straight_post_buckling_follows_elastica(ends):
    """Post-buckled force vs shortening, with the axial compliance in series, to 0.3 %.

    Reference: u = P L/(EA) + Delta_b, P/P_cr and Delta_b/L from the elliptic integrals;
    the clamped-clamped elastica is the pinned one of length L/2 (Timoshenko & Gere
    sec. 2.7), so the same Delta/L relation with P_cr = 4 pi^2 EI/L^2.
    """
    L, b, t = 50.0, 10.0, 0.2
    K = 1.0 if ends == PINNED else 0.5
    pcr = euler(L, b, t, K)
    eps = pcr / (E_STEEL * b * t)
    deltas = np.array([0.001, 0.01, 0.03, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3 - 1.3 * eps])
    ratios = np.array([elastica_force_ratio(d) for d in deltas])
    u = (ratios * eps + deltas) * L
    F = force(params(L, b, t, 0.0, ends), u)
    np.testing.assert_allclose(F / pcr, ratios, rtol=3e-3)


# --------------------------------------------------------------------------- imperfect column, small load


def test_reference_imperfect_column_law():
    # reference self-check of the amplification law used below (Timoshenko & Gere 1961 ch. 1):
    # L = 100, a0 = 1: P/P_cr = 0.5, 0.8, 0.9 -> a = 2, 5, 10 and Delta_b = 0.0740, 0.5922, 2.4427
    L, a0 = 100.0, 1.0
    for ratio, a_ref, db_ref in [(0.5, 2.0, 0.0740), (0.8, 5.0, 0.5922), (0.9, 10.0, 2.4427)]:
        a = a0 / (1 - ratio)
        assert a == pytest.approx(a_ref, abs=1e-3)
        assert math.pi**2 * (a * a - a0 * a0) / (4 * L) == pytest.approx(db_ref, abs=1e-4)


@pytest.mark.parametrize("ends", [PINNED, CLAMPED])
@pytest.mark.parametrize("ratio, db_ref, rtol", [(0.5, 0.0740, 2e-3), (0.8, 0.5922, 5e-3), (0.9, 2.4427, 1.5e-2)])
def test_imperfect_column_table(ends, ratio, db_ref, rtol):
    """L = 100, a0 = 1: the kernel's force at u = P L/(EA) + Delta_b is ratio * P_cr.

    Delta_b from the amplification law (Timoshenko & Gere 1961 ch. 1, values above). The
    law is a small-deflection result, O((a/L)^2) from the exact elastica the kernel
    follows: a/L = 0.02, 0.05, 0.1 here, so the tolerance widens with the load (measured
    0.11 %, 0.33 %, 1.2 %; the kernel is stiffer, as the exact solution is).
    """
    L, b, t, a0 = 100.0, 10.0, 0.5, 1.0
    pcr = euler(L, b, t, 1.0 if ends == PINNED else 0.5)
    u = ratio * pcr * L / (E_STEEL * b * t) + db_ref
    F = force(params(L, b, t, a0, ends), [u])[0]
    assert F / pcr == pytest.approx(ratio, rel=rtol)
    assert F / pcr >= ratio


@pytest.mark.parametrize("ends", [PINNED, CLAMPED])
def test_imperfect_column_amplification_at_small_load(ends):
    """At small load (a <= 1.5 a0, a0 = 0.5 % of L) the force follows the amplification law to 1 %.

    Inverting ``u = P L/(EA) + pi^2 (a^2 - a0^2)/(4L)`` with ``a = a0/(1 - P/P_cr)``
    (Timoshenko & Gere ch. 1; the same shortening expression holds for the clamped
    cosine shape). The tolerance covers the large-deflection correction, O((a/L)^2).
    """
    L, b, t, a0 = 100.0, 10.0, 0.5, 0.5
    K = 1.0 if ends == PINNED else 0.5
    pcr = euler(L, b, t, K)
    EA = E_STEEL * b * t
    ratios = np.array([0.05, 0.1, 0.2, 0.3])
    a = a0 / (1 - ratios)
    u = ratios * pcr * L / EA + math.pi**2 * (a * a - a0 * a0) / (4 * L)
    F = force(params(L, b, t, a0, ends), u)
    np.testing.assert_allclose(F / pcr, ratios, rtol=1e-2)


def test_zero_force_at_zero_stroke():
    # zero up to the kernel's root-finding precision (1e-8 of P_cr; 1e-6 allowed here)
    for ends, K in ((PINNED, 1.0), (CLAMPED, 0.5)):
        for rise in (0.0, 0.3, 5.0):
            F0 = force(params(50, 10, 0.2, rise, ends), [0.0])[0]
            assert abs(F0) <= 1e-6 * euler(50, 10, 0.2, K)


# --------------------------------------------------------------------------- exact curved columns


def exact_imperfect_column(L, b, t, rise, ends, shortenings, E=E_STEEL):
    """Extensible elastica of the initially curved column, full span, by collocation.

    Lengths scaled by the span L, moments by EI/L. Material coordinate xi = initial
    x/L in [0, 1]; initial shape w0 = h sin(pi xi) (pinned) or h (1 - cos 2 pi xi)/2
    (clamped), h = rise/L; ds = g dxi, g = sqrt(1 + w0'^2). The support at x = 0
    pushes with (P, V) and an end moment m0; then ``kappa - kappa0 = m0 - P y + V x``
    and the rod stretches by ``1 - (P cos(theta) + V sin(theta)) / a`` with
    ``a = EA L^2/EI = 12 (L/t)^2``. Pinned: m0 = V = 0, ends on the chord; clamped:
    end tangents fixed at zero, m0 and V unknown. Continuation in the total end
    shortening. Returns the end load P (N) and the largest lateral position (mm).
    """
    EI = E * b * t**3 / 12.0
    a = 12.0 * (L / t) ** 2
    h = rise / L
    clamped = ends == CLAMPED
    pi = math.pi
    if clamped:
        w0 = lambda x: h * 0.5 * (1 - np.cos(2 * pi * x))      # noqa: E731
        w1 = lambda x: h * pi * np.sin(2 * pi * x)              # noqa: E731
        w2 = lambda x: h * 2 * pi**2 * np.cos(2 * pi * x)       # noqa: E731
    else:
        w0 = lambda x: h * np.sin(pi * x)                       # noqa: E731
        w1 = lambda x: h * pi * np.cos(pi * x)                  # noqa: E731
        w2 = lambda x: -h * pi**2 * np.sin(pi * x)              # noqa: E731

    def rhs(x, z, q):
        th, X, Y = z
        P, m0, V = (q[0], q[1], q[2]) if clamped else (q[0], 0.0, 0.0)
        g = np.sqrt(1 + w1(x) ** 2)
        k0 = w2(x) / g**3
        stretch = 1 - (P * np.cos(th) + V * np.sin(th)) / a
        return np.vstack((g * (k0 + m0 - P * Y + V * X), g * stretch * np.cos(th), g * stretch * np.sin(th)))

    xs = np.linspace(0, 1, 61)
    z = np.vstack((np.arctan(w1(xs)), xs, w0(xs)))
    q = np.zeros(3 if clamped else 1)
    loads, wmax = [], []
    targets = np.asarray(shortenings) / L
    ramp = np.geomspace(1e-7, targets[0], 10)[:-1] if targets[0] > 1e-7 else []   # gentle start
    for i, d in enumerate(np.concatenate([ramp, targets])):
        if clamped:
            def bc(za, zb, q, d=d):
                return np.array([za[0], za[1], za[2], zb[0], zb[1] - (1 - d), zb[2]])
        else:
            def bc(za, zb, q, d=d):
                return np.array([za[1], za[2], zb[1] - (1 - d), zb[2]])
        sol = solve_bvp(rhs, bc, xs, z, q, tol=1e-6, max_nodes=20000)
        assert sol.success, sol.message
        z, q = sol.sol(xs), sol.p          # next step starts from this one, on the fixed mesh
        if i >= len(ramp):
            loads.append(q[0] * EI / L**2)
            wmax.append(np.max(np.abs(z[2])) * L)
    return np.array(loads), np.array(wmax)


CURVED = [
    # L, b, t, rise, ends  (a0/L from 0.004 to 0.3; t/L from 1/250 to 1/25)
    (50.0, 10.0, 0.2, 0.2, PINNED),
    (50.0, 10.0, 0.2, 2.0, PINNED),
    (50.0, 5.0, 1.0, 1.0, PINNED),
    (40.0, 5.0, 0.3, 12.0, PINNED),
    (50.0, 10.0, 0.2, 0.2, CLAMPED),
    (50.0, 10.0, 0.2, 2.0, CLAMPED),
    (80.0, 5.0, 1.0, 1.5, CLAMPED),
    (40.0, 5.0, 0.3, 12.0, CLAMPED),
]

@pytest.mark.slow
@pytest.mark.parametrize("L, b, t, rise, ends", CURVED)
def test_curved_column_matches_exact_elastica(L, b, t, rise, ends):
    """Within the declared range (u <= 0.3 L) the force is within 3 % of the exact solution."""
    fr = np.concatenate([np.geomspace(2e-4, 0.01, 6), np.linspace(0.02, 0.30, 15)])
    u = fr * L
    F_ref, _ = exact_imperfect_column(L, b, t, rise, ends, u)
    F = force(params(L, b, t, rise, ends), u)
    dev = np.max(np.abs(F / F_ref - 1))
    print(f"column L={L} t={t} rise={rise} ends={ends}: largest deviation {100 * dev:.2f} %")
    assert dev <= 0.03


@pytest.mark.slow
@pytest.mark.parametrize("ends", [PINNED, CLAMPED])
def test_curved_column_lateral_envelope_matches_exact(ends):
    """The box's lateral extent 2 w_max + t follows the exact mid-span deflection to 3 %."""
    L, b, t, rise = 50.0, 10.0, 0.2, 2.0
    u = np.array([0.05, 0.15, 0.3]) * L
    _, w_ref = exact_imperfect_column(L, b, t, rise, ends, np.concatenate([[0.001 * L], u]))
    p = {k: np.repeat(v, 3) for k, v in params(L, b, t, rise, ends).items()}
    _, across, width = COLUMN.box(p, u)
    np.testing.assert_allclose(across, 2 * w_ref[1:] + t, rtol=0.03)
    np.testing.assert_allclose(width, b)


@pytest.mark.slow
def test_stress_is_axial_plus_bending_at_largest_moment():
    """sigma = P/A + 6 M/(b t^2) with M = P w_max (pinned) and P w_max/2 (clamped)."""
    L, b, t, rise = 50.0, 10.0, 0.2, 2.0
    u = np.array([0.1 * L])
    for ends, K in [(PINNED, 1.0), (CLAMPED, 0.5)]:
        P_ref, w_ref = exact_imperfect_column(L, b, t, rise, ends, np.array([0.001 * L, u[0]]))
        sigma_ref = P_ref[1] / (b * t) + 6 * P_ref[1] * K * w_ref[1] / (b * t * t)
        s = COLUMN.stress(params(L, b, t, rise, ends), steel(), u[None, :])[0, 0]
        assert s == pytest.approx(sigma_ref, rel=0.03)


@pytest.mark.slow
def test_table_slice_regenerates():
    """The shipped table matches a fresh exact solution at a grid column (alpha = 0.1)."""
    from springsynth.elements._buckling import build_table, load_table

    tab = load_table()
    i = int(np.argmin(np.abs(tab.alpha - 0.1)))
    fresh = build_table(alphas=tab.alpha[i:i + 1], deltas=tab.delta[::8])
    np.testing.assert_allclose(fresh["C"][0], tab.C[i, ::8], rtol=1e-5)
    np.testing.assert_allclose(fresh["R"][0], tab.R[i, ::8], rtol=1e-5)
