"""Validation of the stretching-dominated kinds: ``blade_clamped`` and ``arch``.

Every check value carries its source and an explicit tolerance. References marked
"computed here" are solved inside this file by code independent of the modules
under test (different formulation or solution method).

Sources:

* Clamped-clamped beam with a centre load and stretching: small-deflection rate
  ``192 E I / L^3`` (W.C. Young & R.G. Budynas, *Roark's Formulas for Stress and Strain*,
  7th ed. 2002, beam table, fixed-fixed centre load [memory; common practice]); the exact
  moderate-rotation tension solution ``delta = F/(2N) [L/2 - (2/kappa) tanh(kappa L/4)]``
  with ``N = (EA/2L) int w'^2`` (derived for this project and solved here); its values
  for a silicon MEMS beam (E = 160 GPa, w = 10 um, t = 2 um, L = 500 um) were computed
  from it: ``F L^3/(E I t)`` = 327.088 at delta = t, 15 324.134 at 5 t (5.5823 and
  261.5319 uN). The cubic ``k3 = 11.52 EA/L^3`` (Ritz energy with the exact static shape,
  the same as the asymptotic coefficient of the exact solution) over-predicts by 19 % at
  5 t [computed].
* Curved (cosine) arch: J. Qiu, J.H. Lang & A.H. Slocum, "A curved-beam bistable
  mechanism", J. Microelectromech. Syst. 13(2):137-146, 2004 [memory for the
  bibliographic data; equation forms as quoted in a public replication script]:
  single-mode force eq. 36, bistability for Q > sqrt(16/3), multimode peaks
  f_top ~ 740, f_bot ~ 370 E I h / l^3 (eqs. 43-44). The 40-mode Galerkin peaks with
  mode 2 constrained (743.2 / -368.9 at Q = 10, ...) and the single-mode peak 763.2 at
  Delta = 0.028 were computed for this project with a Galerkin buckling-mode expansion.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_bvp
from scipy.optimize import brentq, minimize

from springsynth.elements import arch as arch_mod
from springsynth.elements import get_kind
from springsynth.model.materials import MaterialArrays, material_from_mapping

BLADE = get_kind("blade_clamped")
ARCH = get_kind("arch")

STEEL = material_from_mapping(
    "lab_steel", {"E_MPa": 200000.0, "nu": 0.3, "density_kg_m3": 7800.0, "yield_MPa": 1500.0}, where="test"
)
# the silicon MEMS beam of the check values above: E = 160 GPa, w = 10 um, t = 2 um, L = 500 um (in mm)
SILICON = material_from_mapping(
    "lab_si", {"E_MPa": 160000.0, "nu": 0.22, "density_kg_m3": 2330.0, "yield_MPa": 5000.0}, where="test"
)


def _p(**kw):
    return {k: np.atleast_1d(np.asarray(v, dtype=float)) for k, v in kw.items()}


def _blade_force(mat, L, b, t, delta):
    p = _p(length_mm=L, width_mm=b, thickness_mm=t)
    return BLADE.force(p, MaterialArrays.of(mat), np.atleast_2d(np.asarray(delta, dtype=float)))[0]


# ----------------------------------------------------------------------------- blade_clamped


def test_blade_small_deflection_limit_192():
    # Roark / common practice: k = 192 E I / L^3 for a centre-loaded clamped-clamped beam
    L, b, t = 40.0, 5.0, 0.3
    k_ref = 192.0 * STEEL.E_MPa * b * t**3 / 12.0 / L**3
    u = 1e-4 * t
    assert _blade_force(STEEL, L, b, t, [u])[0] / u == pytest.approx(k_ref, rel=1e-5)


def test_blade_normalised_check_column_exact_tension_solution():
    # exact moderate-rotation solution [computed, see the module docstring]: F L^3/(E I t) = 327.088 at
    # delta = t, 15324.134 at 5 t (a geometry-independent vector: it depends on delta/t only)
    L, w, t = 0.5, 0.010, 0.002
    I = w * t**3 / 12.0
    F = _blade_force(SILICON, L, w, t, [t, 5 * t])
    norm = F * L**3 / (SILICON.E_MPa * I * t)
    assert norm[0] == pytest.approx(327.088, rel=2e-5)
    assert norm[1] == pytest.approx(15324.134, rel=2e-5)
    # same table in micro-newtons: 5.5823 uN and 261.5319 uN
    assert F * 1e6 == pytest.approx([5.5823, 261.5319], rel=1e-4)


def _tension_reference(x, L=1.0, t=0.01, E=1.0, b=1.0):
    """Exact moderate-rotation solution, computed here by brentq on N with the slope
    integral done by quadrature (the tension solution of the module docstring, force control).

    Returns (F, delta, sigma_max) for each target delta/t in ``x`` (by a second brentq
    on F)."""
    A, I = b * t, b * t**3 / 12.0

    def solve_N(F):
        def res(N):
            k = math.sqrt(N / (E * I))
            tanh = math.tanh(k * L / 4.0)

            def slope(s):
                return F / (2 * N) * (1.0 - math.cosh(k * s) + tanh * math.sinh(k * s))

            integral = 2.0 * quad(lambda s: slope(s) ** 2, 0.0, L / 2.0, epsabs=0, epsrel=1e-11, limit=200)[0]
            return N - E * A / (2 * L) * integral

        # res < 0 for a small N (stretching outgrows it), > 0 for a large one
        lo = 1e-12 * E * A
        hi = 4.0 * lo
        while res(hi) < 0:
            lo, hi = hi, 4.0 * hi
        return brentq(res, lo, hi, xtol=1e-300, rtol=1e-13)

    def delta_of(F):
        N = solve_N(F)
        k = math.sqrt(N / (E * I))
        return F / (2 * N) * (L / 2 - 2 / k * math.tanh(k * L / 4)), N, k

    out = []
    for xi in x:
        target = xi * t
        F_lin = 192 * E * I * target / L**3
        F = brentq(lambda F: delta_of(F)[0] - target, 0.2 * F_lin, 2e4 * F_lin, rtol=1e-13)
        d, N, k = delta_of(F)
        M = E * I * F / (2 * N) * k * math.tanh(k * L / 4)     # E I w''(0)
        out.append((F, d, 6 * M / (b * t**2) + N / A))
    return np.array(out)


@pytest.mark.slow
@pytest.mark.filterwarnings("ignore::scipy.integrate.IntegrationWarning")
def test_blade_against_exact_tension_solution_to_6t():
    # reference computed here (brentq + quadrature); requirement <= 3 % up to >= 5 t
    x = np.array([0.1, 0.25, 0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0, 6.0])
    ref = _tension_reference(x)
    L, b, t, E = 1.0, 1.0, 0.01, 1.0
    mat = material_from_mapping("unit", {"E_MPa": E, "density_kg_m3": 1000.0, "yield_MPa": 1.0}, where="test")
    p = _p(length_mm=L, width_mm=b, thickness_mm=t)
    F = BLADE.force(p, MaterialArrays.of(mat), ref[None, :, 1])[0]
    dev = np.max(np.abs(F / ref[:, 0] - 1.0))
    assert dev <= 0.03                 # the requirement
    assert dev <= 2e-4                 # table fidelity actually reached
    s = BLADE.stress(p, MaterialArrays.of(mat), ref[None, :, 1])[0]
    assert np.max(np.abs(s / ref[:, 2] - 1.0)) <= 5e-4


def test_blade_cubic_law_is_what_the_table_avoids():
    # the cubic k3 = 11.52 EA/L^3 (Ritz, exact static shape) over-predicts by 19 % at 5 t [computed]
    L, w, t = 0.5, 0.010, 0.002
    E = SILICON.E_MPa
    k1 = 16 * E * w * t**3 / L**3
    k3 = 11.52 * E * w * t / L**3
    cubic = k1 * 5 * t + k3 * (5 * t) ** 3
    F = _blade_force(SILICON, L, w, t, [5 * t])[0]
    assert cubic / F - 1.0 == pytest.approx(0.19, abs=0.005)


def _elastica_force(L, t, deltas, E=1.0, b=1.0):
    """Finite-rotation extensible elastica (Reissner rod), half-span with symmetry,
    computed here with solve_bvp and continuation in delta. Returns F = 2 V."""
    A, I = b * t, b * t**3 / 12.0
    s = np.linspace(0.0, L / 2.0, 201)

    def ode(s, y, prm):
        H, V = prm
        x, w, th, M = y
        n = H * np.cos(th) + V * np.sin(th)
        st = 1.0 + n / (E * A)
        return np.vstack((st * np.cos(th), st * np.sin(th), M / (E * I), -(st * np.cos(th) * V - st * np.sin(th) * H)))

    out = []
    y = np.vstack((s, np.zeros_like(s), np.zeros_like(s), np.zeros_like(s)))
    prm = np.array([0.0, 192 * E * I * deltas[0] / L**3 / 2])
    steps = np.concatenate([np.linspace(0.0, deltas[0], 4)[1:]] + [np.linspace(a, c, 4)[1:] for a, c in zip(deltas[:-1], deltas[1:])])
    for d in steps:
        def bc(ya, yb, prm, d=d):
            return np.array([ya[0], ya[1], ya[2], yb[0] - L / 2, yb[1] - d, yb[2]])

        sol = solve_bvp(ode, bc, s, y, p=prm, tol=1e-9, max_nodes=20000)
        assert sol.success, sol.message
        y, prm = sol.sol(s), sol.p
        if np.any(np.isclose(d, deltas)):
            out.append(2.0 * prm[1])
    return np.array(out)


@pytest.mark.slow
def test_blade_against_finite_rotation_elastica_within_declared_range():
    # reference computed here: extensible elastica, L/t = 100, delta/t up to 8 = delta/L 0.08
    # (the declared moderate-rotation limit); requirement <= 3 %
    L, t = 1.0, 0.01
    deltas = np.array([1.0, 2.0, 3.0, 5.0, 8.0]) * t
    F_ref = _elastica_force(L, t, deltas)
    mat = material_from_mapping("unit", {"E_MPa": 1.0, "density_kg_m3": 1000.0, "yield_MPa": 1.0}, where="test")
    F = BLADE.force(_p(length_mm=L, width_mm=1.0, thickness_mm=t), MaterialArrays.of(mat), deltas[None, :])[0]
    dev = np.abs(F / F_ref - 1.0)
    assert np.max(dev[:4]) <= 0.01      # up to 5 t (delta/L = 0.05)
    assert dev[4] <= 0.03               # at the rotation limit


def _neo_hookean_exact(mu, E, L, b, t, delta):
    """Exact closure of the uniform-tension model for a neo-Hookean strip (computed here):
    N = E I (4a/L)^2 = A P(1 + eps), eps = c(a) delta^2/L^2, F = 192 E I delta/L^3 R(a)."""
    A, I = b * t, b * t**3 / 12.0

    def parts(a):
        th = math.tanh(a)
        c = a * (2 * a - 3 * th + a / math.cosh(a) ** 2) / (a - th) ** 2
        return c, a**3 / (3 * (a - th))

    def res(a):
        c, _ = parts(a)
        lam = 1.0 + c * delta**2 / L**2
        return E * I * (4 * a / L) ** 2 - A * mu * (lam - lam**-2)

    a = brentq(res, 1e-2, 200.0, xtol=1e-14)
    return 192 * E * I * delta / L**3 * parts(a)[1]


def test_blade_hyperelastic_closure_matches_exact_root():
    # neo-Hookean strip, mu = 2 MPa; exact scalar root of the moderate-rotation closure computed
    # here; fixed point within 0.1 % inside that theory's range (delta/L <= 0.08). Beyond it the
    # kind switches to exact large-rotation kinematics, checked in test_elastomer_blade.py.
    mu, L, b, t = 2.0, 20.0, 5.0, 0.5
    rub = material_from_mapping(
        "nh", {"law": "neo_hookean", "mu_MPa": mu, "density_kg_m3": 1100.0, "strain_limit": 2.0, "forms": ["strip"]},
        where="test",
    )
    deltas = np.array([0.4, 0.8, 1.2, 1.6])            # up to delta/L = 0.08
    F = _blade_force(rub, L, b, t, deltas)
    ref = [_neo_hookean_exact(mu, rub.E_MPa, L, b, t, d) for d in deltas]
    assert F == pytest.approx(ref, rel=1e-3)


# ----------------------------------------------------------------------------- arch


def _arch_reference(Q, deltas, n_modes=30):
    """Shallow-arch force by direct energy minimisation, computed here.

    Symmetric modes phi_m = (1 - cos 2 m pi xi)/2, m = 1..n_modes (odd and even), with
    the midspan travel imposed by eliminating a_1; each state is minimised with BFGS
    from the previous one, with a small 4 pi perturbation so that the minimiser can
    leave the symmetric path once it loses stability. Energy in units E I h^2 / l^3:
    U = 1/16 sum lam_m^2 (a_m - a0_m)^2 + 3 Q^2/128 (sum lam_m (a_m^2 - a0_m^2))^2;
    F = dU/dDelta.
    """
    m = np.arange(1, n_modes + 1)
    lam = (2 * np.pi * m) ** 2
    odd = (m % 2 == 1).astype(float)
    a0 = (m == 1).astype(float)
    free = np.arange(1, n_modes)                 # a_2..a_n free; a_1 from the constraint

    def full(z, D):
        a = np.empty(n_modes)
        a[1:] = z
        a[0] = 1.0 - D - np.dot(odd[1:], z)
        return a

    def energy(z, D):
        a = full(z, D)
        S = np.dot(lam, a**2 - a0**2)
        U = np.dot(lam**2, (a - a0) ** 2) / 16 + 3 * Q**2 / 128 * S**2
        g_a = lam**2 * (a - a0) / 8 + 3 * Q**2 / 32 * S * lam * a
        grad = g_a[free] - g_a[0] * odd[1:]
        return U, grad, g_a[0]

    z = np.zeros(n_modes - 1)
    out = []
    for D in deltas:
        z = z.copy()
        z[0] += 1e-4                              # 4 pi mode perturbation
        r = minimize(lambda z: energy(z, D)[:2], z, jac=True, method="BFGS", options={"gtol": 1e-10, "maxiter": 5000})
        z = r.x
        out.append(-energy(z, D)[2])              # dU/dDelta = -dU/da_1
    return np.array(out)


def _arch_curve(Q, deltas, l=40.0, b=5.0, t=0.2):
    h = Q * t
    p = _p(length_mm=l, width_mm=b, thickness_mm=t, rise_mm=h)
    f = ARCH.force(p, MaterialArrays.of(STEEL), (np.asarray(deltas) * h)[None, :])[0]
    return f / (STEEL.E_MPa * b * t**3 / 12 * h / l**3)


@pytest.mark.slow
@pytest.mark.parametrize("Q", [3.0, 4.0, 10.0])
def test_arch_against_energy_minimisation_galerkin(Q):
    # reference computed here (30 symmetric modes, BFGS); requirement <= 3 % of the
    # largest |F| along the stroke, Delta = 0..2.2
    deltas = np.linspace(0.0, 2.2, 45)
    ref = _arch_reference(Q, deltas)
    F = _arch_curve(Q, deltas)
    dev = np.max(np.abs(F - ref)) / np.max(np.abs(ref))
    assert dev <= 0.03
    assert dev <= 0.01                  # reached


@pytest.mark.parametrize(
    "Q, top, bot",
    [(10.0, 743.2, -368.9), (4.0, 653.3, -279.0), (6.0, 714.5, -340.2), (20.0, 754.9, -380.6)],
)
def test_arch_peak_forces_multimode_galerkin(Q, top, bot):
    # 40-mode Galerkin, mode 2 constrained [computed for this project, see the module docstring]; 0.5 %
    d = np.linspace(0.0, 2.2, 4401)
    F = _arch_curve(Q, d)
    assert F[d <= 1.0].max() == pytest.approx(top, rel=5e-3)     # first peak, before the snap
    assert F.min() == pytest.approx(bot, rel=5e-3)


def test_arch_published_qiu_multimode_peaks():
    # Qiu, Lang & Slocum 2004, eqs. 43-44 (as quoted): f_top ~ 740, f_bot ~ 370 E I h / l^3
    # (matched to FEA, quoted for Q ~ 10); 3 %
    d = np.linspace(0.0, 2.2, 4401)
    F = _arch_curve(10.0, d)
    assert F[d <= 1.0].max() == pytest.approx(740.0, rel=0.03)
    assert -F.min() == pytest.approx(370.0, rel=0.03)


def test_arch_single_mode_closed_form():
    # Qiu et al. 2004 eq. 36, single mode F1 = pi^4 Delta [2 + 3Q^2/2 (1-Delta)(2-Delta)]
    # (as quoted; re-derived). For a monostable arch (Q = 1.5) the one-term solution is
    # close to the multimode one over the first 1.5 h of stroke: within 3 % of its peak
    # (the cosine Ritz k1 = 2 pi^4 is itself 1.5 % above 192; measured 2.4 %).
    Q = 1.5
    d = np.linspace(0.0, 1.5, 61)
    F1 = np.pi**4 * d * (2 + 1.5 * Q**2 * (1 - d) * (2 - d))
    F = _arch_curve(Q, d)
    assert np.max(np.abs(F - F1)) / np.max(F1) <= 0.03
    # single-mode peak at Q = 10 (763.2 at Delta = 0.028 [computed from eq. 36 and 39]): F1 meets the
    # mode-3 line F3 = 8 pi^4 - 6 pi^4 Delta where (3Q^2/2) Delta (2 - Delta) = 8; 0.1 %.
    # The multimode peak (743.2) is 2.6 % lower.
    Q = 10.0
    dt = 1.0 - math.sqrt(1.0 - 16.0 / (3.0 * Q**2))
    F1_top = np.pi**4 * dt * (2 + 1.5 * Q**2 * (1 - dt) * (2 - dt))
    assert dt == pytest.approx(0.028, abs=1e-3)
    assert F1_top == pytest.approx(763.2, rel=1e-3)
    assert F1_top == pytest.approx(8 * np.pi**4 - 6 * np.pi**4 * dt, rel=1e-12)
    top = _arch_curve(Q, np.linspace(0, 1, 2001)).max()
    assert top / F1_top == pytest.approx(743.2 / 763.2, rel=5e-3)


@pytest.mark.slow
def test_arch_bistability_threshold():
    # Qiu et al. 2004: force crosses zero iff Q > sqrt(16/3) = 2.3094 (single mode);
    # computed here with the module's Galerkin: the multimode threshold is the same
    # (zero-force states are pure mode-1 states), to 1e-4
    def fmin(Q):
        return arch_mod.galerkin(np.full(1101, Q), np.linspace(0.6, 2.2, 1101))["F"].min()

    assert brentq(fmin, 2.0, 2.6, xtol=1e-7) == pytest.approx(math.sqrt(16 / 3), abs=1e-4)
    # and the shipped table: monostable just below, bistable just above
    d = np.linspace(0.5, 2.2, 1701)
    assert _arch_curve(2.25, d).min() > 0.0
    assert _arch_curve(2.40, d).min() < 0.0


def test_arch_straight_limit_stiffness_and_stress():
    # Q -> 0: the clamped beam, f = 192 E I d / l^3 and sigma = 12 E t d / l^2 (Roark, common practice); 0.1 %
    l, b, t, h = 40.0, 5.0, 0.5, 0.002
    p = _p(length_mm=l, width_mm=b, thickness_mm=t, rise_mm=h)
    u = np.array([[0.5 * h, h]])
    mat = MaterialArrays.of(STEEL)
    k = 192 * STEEL.E_MPa * b * t**3 / 12 / l**3
    assert ARCH.force(p, mat, u)[0] == pytest.approx(k * u[0], rel=1e-3)
    # stress: 0.3 %, the arch's small axial part Q |S| / 16 adds ~0.12 % at Q = 0.004
    assert ARCH.stress(p, mat, u)[0] == pytest.approx(12 * STEEL.E_MPa * t * u[0] / l**2, rel=3e-3)


def test_arch_shipped_table_regenerates():
    # the shipped table is reproducible from the generating function (float32 storage)
    tab = arch_mod.table()
    q_all = arch_mod.q_nodes()
    np.testing.assert_array_equal(tab["Q"], q_all)
    np.testing.assert_array_equal(tab["Delta"], arch_mod.delta_nodes())
    np.testing.assert_allclose(tab["snap_quadratic"], arch_mod.snap_quadratic(), rtol=1e-12)
    rows = [int(np.argmin(np.abs(q_all - q))) for q in (2.4, 10.0)]
    new = arch_mod.build_table(q=q_all[rows])
    for key in ("F", "sigma", "sigma_peak", "band"):
        old = tab[key].flat.reshape(-1, tab[key].nx)[rows]
        scale = np.max(np.abs(old), axis=1, keepdims=True)
        assert np.max(np.abs(new[key] - old) / scale) <= 1e-6


def _snap_ends_reference(Q):
    """Strokes / h where the 4 pi mode appears and vanishes, found on the direct Galerkin
    solution (a 0.001 grid, then bisection on a2 > 0), not from the module's closed form."""
    d = np.linspace(0.0, 2.2, 2201)
    on = arch_mod.galerkin(np.repeat(Q, d.size), np.tile(d, Q.size))["a2"].reshape(Q.size, -1) > 0.0
    first = np.argmax(on, axis=1)
    last = d.size - 1 - np.argmax(on[:, ::-1], axis=1)
    lo1, hi1 = d[first - 1], d[first]                             # a2 = 0 at lo1, > 0 at hi1
    lo2, hi2 = d[last], d[last + 1]                               # a2 > 0 at lo2, = 0 at hi2
    for _ in range(40):
        m1, m2 = 0.5 * (lo1 + hi1), 0.5 * (lo2 + hi2)
        on1 = arch_mod.galerkin(Q, m1)["a2"] > 0.0
        on2 = arch_mod.galerkin(Q, m2)["a2"] > 0.0
        lo1, hi1 = np.where(on1, lo1, m1), np.where(on1, m1, hi1)
        lo2, hi2 = np.where(on2, m2, lo2), np.where(on2, hi2, m2)
    return hi1, lo2


#: Q off the table nodes: near the snap threshold 2.3145 and across the declared range
_SNAP_Q = np.array([2.3168, 2.3391, 2.4213, 2.5287, 2.8731, 3.6124, 5.437, 8.913, 14.62, 23.87])


def _arch_normalised(Q, deltas):
    """Force F = f l^3/(E I h), stress sigma l^2/(E t h) and the peak stress over the
    stroke 0..Delta (same normalisation) from the kernels, each shape (len(deltas),);
    the peak comes from one design per stroke end."""
    l, b, t, E = 40.0, 5.0, 0.2, STEEL.E_MPa
    h = Q * t
    m = len(deltas)
    p = _p(length_mm=l, width_mm=b, thickness_mm=t, rise_mm=h)
    u = (np.asarray(deltas) * h)[None, :]
    F = ARCH.force(p, MaterialArrays.of(STEEL), u)[0] / (E * b * t**3 / 12 * h / l**3)
    sigma = ARCH.stress(p, MaterialArrays.of(STEEL), u)[0] / (E * t * h / l**2)
    pk = {k: np.repeat(v, m) for k, v in p.items()}
    ratio = ARCH.peak_stress_ratio(pk, MaterialArrays.of(STEEL, m), u.reshape(-1, 1))
    return F, sigma, ratio * STEEL.yield_MPa / (E * t * h / l**2)


def test_arch_snap_columns_invert_snap_deltas():
    # the stress-table column coordinate is the inverse of the column strokes (exact algebra)
    coef = arch_mod.snap_quadratic()
    q = np.array([2.3391, 2.5287, 10.0, 23.87])
    ds = arch_mod.snap_deltas(q, coef)
    s = arch_mod.snap_columns(ds, q, coef)
    np.testing.assert_allclose(s, np.broadcast_to(np.arange(ds.shape[1]), s.shape), atol=1e-4)


@pytest.mark.slow
def test_arch_table_force_and_stress_match_direct_galerkin_through_the_snap():
    # Reference: the project's own many-mode solution, springsynth.elements.arch.galerkin
    # (40 odd modes + the 4 pi mode), solved directly at each point here; the shipped table
    # is built from the same function, so this checks the table and its interpolation
    # (the model itself is checked against the independent energy minimisation above and
    # the computed multimode peaks and Qiu et al.'s values). Points: a Delta grid over 0..2.2 and strokes
    # just before and after both ends of the snap path (the 4 pi mode grows as
    # sqrt(Delta - Delta_b1) and shrinks as sqrt(Delta_b2 - Delta), so the stress turns
    # steeply there), for ten Q between the table nodes.
    # Requirement <= 3 % (force: of the largest |F| along the stroke; stress and its running
    # peak: of the local value). Measured with the shipped table: force 0.21 % (Q = 3.61),
    # stress 0.09 %, peak 0.20 %; the former table (stress on plain Delta columns) failed
    # here with stress 6.8 % and peak 6.4 % at Q = 2.53, just past the snap ends.
    Q = _SNAP_Q
    D1, D2 = _snap_ends_reference(Q)
    np.testing.assert_allclose(np.column_stack(arch_mod.snap_strokes(Q, arch_mod.snap_quadratic())),
                               np.column_stack((D1, D2)), atol=1e-9)
    grid = np.linspace(0.0, 2.2, 89)
    near = np.array([-0.02, -1e-3, 1e-5, 1e-4, 1e-3, 3e-3, 0.01, 0.03])
    assert Q[0] > arch_mod.snap_threshold(arch_mod.snap_quadratic())
    F_dev, s_dev, pk_dev = [], [], []
    for i, q in enumerate(Q):
        d = np.unique(np.clip(np.concatenate((grid, D1[i] + near, D2[i] - near)), 0.0, 2.2))
        ref = arch_mod.galerkin(np.full(d.shape, q), d)
        F, sigma, peak = _arch_normalised(q, d)
        # running peak of the reference: over a 0.001 grid up to Delta, and Delta itself
        fine = np.linspace(0.0, 2.2, 2201)
        run = np.maximum.accumulate(arch_mod.galerkin(np.full(fine.shape, q), fine)["sigma"])
        peak_ref = np.maximum(run[np.searchsorted(fine, d, side="right") - 1], ref["sigma"])
        F_dev.append(np.max(np.abs(F - ref["F"])) / np.max(np.abs(ref["F"])))
        s_dev.append(np.max(np.abs(sigma[1:] / ref["sigma"][1:] - 1.0)))
        pk_dev.append(np.max(np.abs(peak[1:] / peak_ref[1:] - 1.0)))
    assert max(F_dev) <= 0.03 and max(s_dev) <= 0.03 and max(pk_dev) <= 0.03     # the requirement
    assert max(F_dev) <= 0.004 and max(s_dev) <= 0.003 and max(pk_dev) <= 0.004   # reached
