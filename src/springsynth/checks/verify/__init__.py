"""Independent verification: re-solve each element of a design with a high-fidelity method.

The analytic kernels (:mod:`springsynth.elements`) are fast fits and closed forms. This
module re-solves every element with a method that shares no formula, fit or table
with its kernel, and reports how far the two disagree over the stroke.

Independent method per kind
---------------------------
========================  =====================================================================
kind                      independent solution (see the ``_solve_*`` functions)
========================  =====================================================================
blade_cantilever          planar inextensible elastica as a boundary-value problem
                          (``scipy.integrate.solve_bvp``), displacement continuation: y' = sin th,
                          th' = m, m' = -alpha cos th; th(0) = 0, m(1) = 0, y(1) = u/L
blade_guided, wire_guided the same elastica over the *whole* blade with a guided far end
                          (th(1) = 0, no axial force) - no use of the half-cantilever symmetry
blade_clamped             extensible (Reissner) elastica of the half span, ends clamped and
                          axially fixed, symmetric at mid-span; stretching from N = EA eps
arch                      the same rod with the cosine natural shape, mid-span guided
                          (no rotation), displacement control through the snap-through; at
                          every step the (1 - cos 4 pi x/L)/2 mode is tried as a perturbation
                          and the least-energy solution kept (branch switching onto the
                          bifurcated path); slow: tens of seconds per arch
column                    extensible elastica of the half span with the initial shape as natural
                          curvature (half-sine pinned, (1 - cos)/2 clamped), load along the
                          chord, displacement (end-shortening) control; the straight column
                          below its bifurcation is the exact axial solution
helical_compression       Castigliano: strain energy of torsion, bending, direct shear (Cowper
                          shear factor) and axial force integrated numerically along the
                          actual helix (pitch from the free length, updated as the coils close)
helical_extension         the same for the close-wound body plus two half-loop hooks in
                          in-plane bending; hook stress from Winkler curved-bar theory with the
                          neutral axis found by quadrature over the circular section
contact_sphere            Hertz pressure distribution p0 sqrt(1 - r^2/a^2): surface displacement
                          from the Boussinesq ring kernel integrated numerically, a and p0 from
                          the rigid-approach and profile conditions, force by quadrature
ribbon                    beam-theory energy of the prestressed strip unrolled from its drum
                          (drum radius 1.15 R_n, as the kind mounts it), quadrature through the
                          thickness: F = E I / 2 (2/(R_n R_d) - 1/R_d^2). The handbook factor
                          26.4 of the kernel is empirical; pure beam theory with R_d = R_n gives
                          24, so the two differ by design (about 8 %). Only the plateau
                          (u >= the kernel's ramp) is compared; the ramp is a modelling choice
                          without an independent solution
elastomer_pad             continuum finite elements (felupe, a general-purpose non-linear FE
                          library): one eighth of the bonded block, tri-quadratic hexahedra
                          with a mixed u-p-J nearly-incompressible formulation, the material's
                          own Ogden series, faces bonded to rigid plates, displacement control
========================  =====================================================================

Any other kind is reported as "not verified: no independent solver for <kind>".

Deviation measures (per element, per copy; and for the assembly):

    force_dev_pct  = 100 max_x |F_verified - F_kernel| / max_x |F_kernel|
    stress_dev_pct = 100 max_x |s_verified - s_kernel| / max_x |s_kernel|

with s the kind's governing stress; for the assembly the stress measure is the
stress ratio (stress / allowable, largest over the elements). A deviation above
``THRESHOLD_PCT`` (3 %) is flagged.

Expensive solvers (the rods, the finite elements) are run at no more than a few
stroke nodes per element and interpolated (cubic spline in u, through the origin)
onto many stroke points; with up to ``DIRECT_POINTS`` points they are solved at
every point.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Callable

import numpy as np
from scipy.integrate import quad, solve_bvp
from scipy.interpolate import CubicSpline
from scipy.special import ellipk

from springsynth.assembly.design import Design, Element
from springsynth.model.errors import InputError
from springsynth.model.materials import Material, MaterialArrays
from springsynth.elements import get_kind

__all__ = ["VerificationReport", "ElementCheck", "verify_design", "verified_forces", "verified_error_pct",
           "THRESHOLD_PCT", "solve_tip_loaded_beam", "solve_half_span", "helical_rate_castigliano",
           "hertz_force_numeric", "ribbon_plateau_beam", "pad_force_fe", "pad_force_reference", "SUPPORTED_KINDS"]

#: deviations above this, percent, are flagged
THRESHOLD_PCT = 3.0
#: up to this many stroke points the expensive solvers are run at every point
DIRECT_POINTS = 25
#: nodes of the interpolated solution otherwise
NODES = 13
#: continuation: largest step of the prescribed end displacement, in units of the length scale
_STEP = 0.05
_BVP_TOL = 1e-7


# =========================================================================== rods (solve_bvp)

def _bvp(fun, bc, s, y, p, tol=_BVP_TOL, quick=False):
    sol = solve_bvp(fun, bc, s, y, p=p, tol=tol, max_nodes=6000 if quick else 20000)
    if sol.status != 0 and not quick:
        sol = solve_bvp(fun, bc, sol.x, sol.y, p=sol.p, tol=tol * 10, max_nodes=50000)
    return sol


def _steps(targets: np.ndarray, start: float, step: float) -> list[tuple[float, int]]:
    """Continuation path from ``start`` through sorted ``targets``; (value, index or -1)."""
    path = []
    cur = start
    for i, t in enumerate(targets):
        n = max(1, int(math.ceil(abs(t - cur) / step)))
        for k in range(1, n):
            path.append((cur + (t - cur) * k / n, -1))
        path.append((t, i))
        cur = t
    return path


def solve_tip_loaded_beam(xi: np.ndarray, *, guided: bool) -> tuple[np.ndarray, np.ndarray]:
    """Inextensible elastica of a straight beam loaded at its far end perpendicular to the undeformed axis.

    Parameters
    ----------
    xi : ndarray, shape (k,)
        Prescribed end travel along the load / length, >= 0.
    guided : bool
        False: free tip (cantilever, ``m(1) = 0``); True: guided end (no rotation,
        ``theta(1) = 0``, axially free).

    Returns
    -------
    alpha : ndarray, shape (k,)
        ``P L^2 / (E I)``.
    moment : ndarray, shape (k,)
        Largest ``|M| L / (E I)`` along the beam (root, and for a guided beam either end).

    Notes
    -----
    Arc length s in units of L, slope theta, moment m = M L/(E I)::

        y' = sin(theta),  theta' = m,  m' = -alpha cos(theta)

    with y(0) = theta(0) = 0, y(1) = xi and the end condition; alpha is the unknown
    parameter. Solved by ``scipy.integrate.solve_bvp`` with continuation in xi.
    """
    xi = np.asarray(xi, dtype=float)
    order = np.argsort(xi)
    alpha = np.zeros(xi.size)
    mom = np.zeros(xi.size)
    s = np.linspace(0.0, 1.0, 41)
    k0 = 12.0 if guided else 3.0

    def fun(s, y, p):
        return np.vstack([np.sin(y[1]), y[2], -p[0] * np.cos(y[1])])

    def bc(ya, yb, p, target):
        end = yb[1] if guided else yb[2]
        return np.array([ya[0], ya[1], yb[0] - target, end])

    y = p = None
    for target, idx in _steps(xi[order], 0.0, _STEP):
        if target <= 0.0:
            if idx >= 0:
                alpha[order[idx]] = 0.0
                mom[order[idx]] = 0.0
            continue
        if y is None:   # linear solution as the first guess
            if guided:
                w = target * (3 * s**2 - 2 * s**3)
                th = target * (6 * s - 6 * s**2)
                m = target * (6 - 12 * s)
            else:
                w = target * (3 * s**2 - s**3) / 2
                th = target * (6 * s - 3 * s**2) / 2
                m = target * (3 - 3 * s)
            y, p, s_mesh = np.vstack([w, th, m]), np.array([k0 * target]), s
        sol = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), s_mesh, y, p)
        if sol.status != 0:
            raise RuntimeError(f"elastica did not converge at end travel {target:.4g} L: {sol.message}")
        s_mesh, y, p = sol.x, sol.y, sol.p
        if idx >= 0:
            alpha[order[idx]] = p[0]
            mom[order[idx]] = np.max(np.abs(y[2]))
    return alpha, mom


@dataclass(frozen=True)
class HalfSpan:
    """Solution of :func:`solve_half_span` at the prescribed end values, each shape (k,).

    Forces in units of E I / l^2, moments E I / l, lengths l (l = the half-span chord).
    """

    H: np.ndarray
    V: np.ndarray
    moment_max: np.ndarray
    fibre_max: np.ndarray   # max over s of |N|/A + |M| c / I, in units of E I / l^2 / A ... see caller
    y_max: np.ndarray


def _natural_shape(shape: Callable[[np.ndarray], np.ndarray], n: int = 4001):
    """Arc-length parametrisation of y0(x) on x in [0, 1]: (s grid, theta0(s), kappa0(s), S)."""
    x = np.linspace(0.0, 1.0, n)
    y0 = shape(x)
    dy = np.gradient(y0, x, edge_order=2)
    ds = np.sqrt(1.0 + dy**2)
    s = np.concatenate(([0.0], np.cumsum(0.5 * (ds[1:] + ds[:-1]) * np.diff(x))))
    th = np.arctan(dy)
    kap = np.gradient(th, s, edge_order=2)
    return s, th, kap, x, y0


def solve_half_span(targets: np.ndarray, *, shape: Callable[[np.ndarray], np.ndarray] | None,
                    lam2: float, start: str, mode: str, c_over_l: float, branch_amp: float = 0.0) -> HalfSpan:
    """Extensible planar elastica of a half span with a natural (initial) shape, symmetric at its far end.

    Parameters
    ----------
    targets : ndarray, shape (k,)
        ``mode == "transverse"``: prescribed lateral position of the far (mid-span)
        end, y_end / l, with the far end axially fixed at x = 1 (clamped-clamped beam or
        arch, both reactions unknown). ``mode == "axial"``: prescribed chord position
        x_end / l of the far end, no lateral force there (column).
    shape : callable or None
        Initial shape y0(x) / l for x in [0, 1] (None: straight).
    lam2 : float
        ``A l^2 / I`` (inf: inextensible).
    start : str
        ``"clamped"`` (theta(0) = theta0(0)) or ``"pinned"`` (m(0) = 0).
    c_over_l : float
        Distance of the outer fibre from the centroid / l (t/2/l), for the fibre stress.
    branch_amp : float
        > 0: at every step also start from the converged state plus and minus this
        amplitude of the symmetric (1 - cos 2 pi x)/2 mode (the arch's 4 pi mode) and keep
        the solution of least strain energy, so that the continuation follows the
        bifurcated (lower-energy) path instead of the unstable primary one.

    Returns
    -------
    HalfSpan

    Notes
    -----
    Reissner's rod with reference arc length s (units of l), internal force (H, V)
    constant along the half span (no distributed load), axial force
    N = H cos th + V sin th, strain eps = N / lam2, curvature th' = kappa0(s) + m::

        x' = (1 + eps) cos th,  y' = (1 + eps) sin th,
        th' = kappa0 + m,       m' = -(x' V - y' H)

    Start (s = 0): x = y = 0 and the end condition; far end (s = S/2): th = 0
    (symmetry), and x = 1, y = target (transverse) or x = target, V = 0 (axial).
    Solved by ``solve_bvp`` with continuation from the unloaded shape.
    """
    if shape is None:
        shape = lambda x: np.zeros_like(x)  # noqa: E731
    sg, thg, kg, xg, yg = _natural_shape(shape)
    S = sg[-1]
    inv = 0.0 if not math.isfinite(lam2) else 1.0 / lam2
    kappa0 = lambda s: np.interp(s, sg, kg)  # noqa: E731
    th0_start = float(thg[0])
    transverse = mode == "transverse"

    def unpack(p):
        return (p[0], p[1]) if transverse else (p[0], 0.0)

    def fun(s, y, p):
        H, V = unpack(p)
        c, sn = np.cos(y[2]), np.sin(y[2])
        e = 1.0 + (H * c + V * sn) * inv
        xp, yp = e * c, e * sn
        return np.vstack([xp, yp, kappa0(s) + y[3], -(xp * V - yp * H)])

    def bc(ya, yb, p, target):
        first = ya[2] - th0_start if start == "clamped" else ya[3]
        if transverse:
            return np.array([ya[0], ya[1], first, yb[2], yb[0] - 1.0, yb[1] - target])
        return np.array([ya[0], ya[1], first, yb[2], yb[0] - target])

    s0 = np.linspace(0.0, S, 61)
    y = np.vstack([np.interp(s0, sg, xg), np.interp(s0, sg, yg), np.interp(s0, sg, thg), np.zeros_like(s0)])
    p = np.zeros(2 if transverse else 1)
    mesh = s0
    y_start = float(yg[-1]) if transverse else 1.0
    order = np.argsort(targets)[::-1] if not transverse else None
    tg = np.asarray(targets, dtype=float)
    if transverse:
        # sweep in the direction of travel (from the unloaded end position)
        order = np.argsort(np.abs(tg - y_start))
    k = tg.size
    out = {n: np.zeros(k) for n in ("H", "V", "m", "fib", "ymax")}
    step = min(_STEP, 0.1 * abs(float(yg[-1])) + 0.01) if transverse else 0.01
    last = y_start
    for target, idx in _steps(tg[order], y_start, step):
        if abs(target - y_start) < 1e-15:
            if idx >= 0:
                for n in out:
                    out[n][order[idx]] = 0.0
                out["ymax"][order[idx]] = float(np.max(np.abs(yg)))
            continue
        sol = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), mesh, y, p)
        if branch_amp > 0 and sol.status == 0:
            best, e_best = sol, _energy(sol, inv, kappa0)
            xm = np.interp(mesh, sg, xg)
            for sgn in (1.0, -1.0):
                a = sgn * branch_amp
                y2 = y + np.vstack([np.zeros_like(mesh), a * 0.5 * (1 - np.cos(2 * np.pi * xm)),
                                    a * np.pi * np.sin(2 * np.pi * xm), a * 2 * np.pi**2 * np.cos(2 * np.pi * xm)])
                trial = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), mesh, y2, p, quick=True)
                if trial.status != 0:
                    trial = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), mesh, y2, p)
                if trial.status == 0:
                    e_t = _energy(trial, inv, kappa0)
                    if e_t < e_best - 1e-12 * max(1.0, abs(e_best)):
                        best, e_best = trial, e_t
            sol = best
        sub = 2
        while sol.status != 0 and sub <= 32:       # shorter steps from the last converged state
            m_, y_, p_ = mesh, y, p
            for k_ in range(1, sub + 1):
                tk = last + (target - last) * k_ / sub
                sol = _bvp(fun, lambda ya, yb, p, _t=tk: bc(ya, yb, p, _t), m_, y_, p_)
                if sol.status != 0:
                    break
                m_, y_, p_ = sol.x, sol.y, sol.p
            sub *= 4
        if sol.status != 0:
            raise RuntimeError(f"rod did not converge at end position {target:.5g}: {sol.message}")
        mesh, y, p = sol.x, sol.y, sol.p
        last = target
        if idx >= 0:
            H, V = unpack(p)
            yy = sol.sol(np.linspace(0.0, S, 401))
            N = H * np.cos(yy[2]) + V * np.sin(yy[2])
            # fibre stress in units of E I / l^2 / A... returned as (|N| / lam2 + |m| c/l) * E -> strain form
            strain = np.abs(N) * inv + np.abs(yy[3]) * c_over_l
            j = order[idx]
            out["H"][j], out["V"][j] = H, V
            out["m"][j] = float(np.max(np.abs(yy[3])))
            out["fib"][j] = float(np.max(strain))
            out["ymax"][j] = float(np.max(np.abs(yy[1])))
    return HalfSpan(out["H"], out["V"], out["m"], out["fib"], out["ymax"])


def _energy(sol, inv: float, kappa0) -> float:
    """Strain energy of a half-span solution (units E I / l): int m^2/2 + N^2/(2 lam2) ds."""
    s = np.linspace(0.0, sol.x[-1], 801)
    yy = sol.sol(s)
    p = sol.p
    H, V = (p[0], p[1]) if p.size == 2 else (p[0], 0.0)
    N = H * np.cos(yy[2]) + V * np.sin(yy[2])
    return float(np.trapezoid(0.5 * yy[3] ** 2 + 0.5 * N * N * inv, s))


def solve_straight_column(u_over_L: np.ndarray, *, lam2: float, start: str, c_over_l: float):
    """Straight column (half span l = L/2): exact axial branch, then the buckled elastica branch.

    Returns ``(P, fibre_strain)``: P in units of E I / l^2 (compression positive) and the
    largest fibre strain (|N|/(E A) + |M| c/(E I)), each shape (k,).

    The straight branch (``x_end = 1 - u/L``, P = E A u / L exactly for the rod model,
    N = -P, eps = -u/L) holds until the buckled branch carries less load; the buckled
    branch is found by :func:`solve_half_span` from a buckled-mode first guess.
    """
    u = np.asarray(u_over_L, dtype=float)
    P = np.zeros(u.size)
    fib = np.zeros(u.size)
    # Euler load of the half-span model, in units of EI/l^2: pinned pi^2/4 (span 2l), clamped pi^2
    pcr = (math.pi**2 / 4.0) if start == "pinned" else math.pi**2
    inv = 0.0 if not math.isfinite(lam2) else 1.0 / lam2
    u_cr = pcr * inv                                       # axial strain at the Euler load
    straight = u <= u_cr * (1.0 + 1e-9)
    P[straight] = u[straight] * lam2 if inv > 0 else 0.0
    fib[straight] = u[straight]
    bent = np.flatnonzero(~straight)
    if bent.size == 0:
        return P, fib
    order = bent[np.argsort(u[bent])]
    if start == "pinned":
        mode_y = lambda x: np.sin(math.pi * x / 2.0)             # noqa: E731 half of a half-sine
        mode_th = lambda x: (math.pi / 2.0) * np.cos(math.pi * x / 2.0)  # noqa: E731
    else:
        mode_y = lambda x: 0.5 * (1.0 - np.cos(math.pi * x))    # noqa: E731
        mode_th = lambda x: 0.5 * math.pi * np.sin(math.pi * x)  # noqa: E731

    def fun(s, y, p):
        c, sn = np.cos(y[2]), np.sin(y[2])
        e = 1.0 + p[0] * c * inv
        xp, yp = e * c, e * sn
        return np.vstack([xp, yp, y[3], yp * p[0]])

    def bc(ya, yb, p, target):
        first = ya[2] if start == "clamped" else ya[3]
        return np.array([ya[0], ya[1], first, yb[2], yb[0] - target])

    mesh = y = p = None
    for j in order:
        target = 1.0 - u[j]
        sol = None
        if y is not None:
            sol = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), mesh, y, p)
        if sol is None or sol.status != 0 or np.max(np.abs(sol.y[1])) < 1e-9:
            # (re)start on the buckled branch from the buckling mode; the amplitude of the
            # inextensible small-deflection estimate, Delta_b = pi^2 a^2 / (4 L), a/l = (4/pi) sqrt(Delta_b/L)
            db = max(u[j] - u_cr, 1e-8)
            amp = (4.0 / math.pi) * math.sqrt(db)
            s0 = np.linspace(0.0, 1.0, 61)
            for scale in (1.0, 1.5, 0.7, 2.5):
                a = amp * scale
                y0 = np.vstack([s0 * (1.0 - u[j]), a * mode_y(s0), a * mode_th(s0), np.zeros_like(s0)])
                trial = _bvp(fun, lambda ya, yb, p, _t=target: bc(ya, yb, p, _t), s0, y0,
                             np.array([-pcr * (1.0 + db / 2.0)]))
                if trial.status == 0 and np.max(np.abs(trial.y[1])) > 1e-3 * a:
                    sol = trial
                    break
        if sol is None or sol.status != 0:
            raise RuntimeError(f"column elastica did not converge at u/L = {u[j]:.4g}")
        mesh, y, p = sol.x, sol.y, sol.p
        H = p[0]
        yy = sol.sol(np.linspace(0.0, mesh[-1], 401))
        P[j] = -H
        fib[j] = float(np.max(np.abs(H * np.cos(yy[2])) * inv + np.abs(yy[3]) * c_over_l))
    return P, fib


# =========================================================================== springs, contact, strip

def _cowper_shear(nu: float) -> float:
    """Energy form factor of transverse shear for a solid circle, (7 + 6 nu)/(6 (1 + nu)) (Cowper 1966)."""
    return (7.0 + 6.0 * nu) / (6.0 * (1.0 + nu))


def helical_rate_castigliano(d: float, D: float, coils: float, pitch: float, E: float, G: float, nu: float,
                             *, terms: str = "full", hook_loops: int = 0) -> float:
    """Axial rate of a helix of round wire by Castigliano's theorem, N/mm.

    Parameters
    ----------
    d, D : float
        Wire and mean coil diameter, mm.
    coils : float
        Turns of the helix that carry the load.
    pitch : float
        Axial advance per turn, mm.
    E, G, nu : float
        Moduli (MPa) and Poisson's ratio.
    terms : str
        ``"full"``: torsion, bending, direct shear and axial force; ``"torsion"``: the
        close-coiled torsion term only (the classical limit).
    hook_loops : int
        Half-loops of radius D/2 in a plane containing the axis, loaded through the axis
        (extension-spring hooks), added in series.

    Notes
    -----
    The helix r(phi) = (R cos phi, R sin phi, c phi), c = pitch / (2 pi). A unit axial force
    through the axis acts on every section with the moment ``(a - r) x e_z`` (a on the
    axis) and the force e_z; both are resolved on the wire's tangent and normal axes and
    the complementary energy density

        T^2/(2 G J) + M_b^2/(2 E I) + N^2/(2 E A) + k_s V^2/(2 G A)

    is integrated numerically along the wire (Gauss-Legendre in phi, arc length
    ds = sqrt(R^2 + c^2) dphi). The deflection per unit force is twice the energy.
    """
    R = D / 2.0
    A = math.pi * d * d / 4.0
    I = math.pi * d**4 / 64.0
    J = 2.0 * I
    ks = _cowper_shear(nu)
    c = pitch / (2.0 * math.pi)
    full = terms == "full"
    xg, wg = np.polynomial.legendre.leggauss(48)
    phi = math.pi * (xg + 1.0)            # one turn; the integrand repeats every turn
    w = math.pi * wg
    r = np.stack([R * np.cos(phi), R * np.sin(phi), c * phi], axis=1)
    tan = np.stack([-R * np.sin(phi), R * np.cos(phi), np.full_like(phi, c)], axis=1)
    ds = np.linalg.norm(tan, axis=1)
    tan /= ds[:, None]
    Fv = np.array([0.0, 0.0, 1.0])
    arm = np.stack([-r[:, 0], -r[:, 1], np.zeros_like(phi)], axis=1)   # from the section to the axis
    Mv = np.cross(arm, Fv)
    T = np.sum(Mv * tan, axis=1)
    Mb2 = np.sum(Mv * Mv, axis=1) - T**2
    N = tan @ Fv
    V2 = 1.0 - N**2
    dens = T**2 / (G * J)
    if full:
        dens = dens + Mb2 / (E * I) + N**2 / (E * A) + ks * V2 / (G * A)
    compliance = coils * float(np.sum(w * dens * ds))          # = 2 U for a unit force
    if hook_loops:
        # half-loop of radius R in a plane containing the axis: point (R sin psi, R(1 - cos psi)) from
        # the attachment, force along the axis; moment arm = R sin psi; tangent (cos psi, sin psi)
        psi, wp = np.polynomial.legendre.leggauss(48)
        psi = 0.5 * math.pi * (psi + 1.0)
        wp = 0.5 * math.pi * wp
        M = R * np.sin(psi)
        Nh = np.sin(psi)
        Vh2 = 1.0 - Nh**2
        dens_h = M**2 / (E * I)
        if full:
            dens_h = dens_h + Nh**2 / (E * A) + ks * Vh2 / (G * A)
        compliance += hook_loops * float(np.sum(wp * dens_h * R))
    return 1.0 / compliance


def wahl_shear_per_N(d: float, D: float) -> float:
    """Corrected torsional shear per N at the coil inside, Wahl (1963): K_W 8 D/(pi d^3), MPa/N."""
    C = D / d
    kw = (4.0 * C - 1.0) / (4.0 * C - 4.0) + 0.615 / C
    return kw * 8.0 * D / (math.pi * d**3)


def winkler_inner_stress_per_N(d: float, r_c: float) -> float:
    """Inner-fibre stress per N of a hook loop in bending plus tension (Winkler curved bar), MPa/N.

    The loop of centroidal radius r_c carries the moment F r_c and the tension F at the
    section where the load line crosses it. The neutral radius r_n = A / int dA/r is
    found by quadrature over the circular section;
    ``sigma_i = M (r_n - r_i) / (A e r_i) + F/A``, e = r_c - r_n.
    """
    a = d / 2.0
    A = math.pi * a * a
    integ, _ = quad(lambda z: 2.0 * math.sqrt(max(a * a - z * z, 0.0)) / (r_c + z), -a, a, epsabs=0, epsrel=1e-12)
    r_n = A / integ
    e = r_c - r_n
    r_i = r_c - a
    return r_c * (r_n - r_i) / (A * e * r_i) + 1.0 / A


@lru_cache(maxsize=1)
def _hertz_constants() -> tuple[float, float, float]:
    """Surface displacement of the unit Hertz pressure sqrt(1 - r^2) on a unit circle, numerically.

    Returns ``(c0, c1, f)``: E* u_z(0) / p0, E* u_z(1) / p0 for a = 1 (the Boussinesq
    ring kernel integrated by quadrature, 1/E* the combined compliance), and the force
    integral int 2 pi r sqrt(1 - r^2) dr.
    """
    def uz(r):
        if r == 0.0:
            val, _ = quad(lambda q: 2.0 * math.sqrt(1.0 - q * q), 0.0, 1.0, epsrel=1e-12)
            return val   # (1/(pi E*)) * int p 2 pi q dq / q
        def ring(q):
            k2 = 4.0 * r * q / (r + q) ** 2
            if k2 >= 1.0 or q >= 1.0:
                return 0.0     # p = 0 at the contact edge (integrable log singularity of K)
            return math.sqrt(max(1.0 - q * q, 0.0)) * 4.0 * q / (r + q) * ellipk(k2) / math.pi
        pts = [r] if 0.0 < r < 1.0 else None
        val, _ = quad(ring, 0.0, 1.0, points=pts, limit=400, epsrel=1e-11)
        return val
    f, _ = quad(lambda q: 2.0 * math.pi * q * math.sqrt(1.0 - q * q), 0.0, 1.0, epsrel=1e-12)
    c1 = uz(1.0)
    return uz(0.0), c1, f


def hertz_force_numeric(R: float, E_star: float, delta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Force and peak pressure of a sphere (radius R) pressed on a flat by ``delta``, numerically.

    Parameters
    ----------
    R : float
        Relative radius, mm.
    E_star : float
        Combined modulus, 1/E* = (1-nu1^2)/E1 + (1-nu2^2)/E2, MPa.
    delta : ndarray, shape (k,)
        Approach, mm.

    Returns
    -------
    force_N, p0_MPa : ndarray, shape (k,)

    Notes
    -----
    For the pressure p0 sqrt(1 - r^2/a^2) the surface displacement scales as
    u_z(r) = (p0 a / E*) g(r/a); g(0) and g(1) come from :func:`_hertz_constants`.
    Contact: u_z(0) = delta and u_z(0) - u_z(a) = a^2/(2 R) (the sphere's profile), so
    p0 = a E* / (2 R (g0 - g1)), a^2 = 2 R delta (g0 - g1)/g0, F = p0 a^2 f.
    """
    g0, g1, f = _hertz_constants()
    delta = np.maximum(np.asarray(delta, dtype=float), 0.0)
    a = np.sqrt(2.0 * R * delta * (g0 - g1) / g0)
    p0 = a * E_star / (2.0 * R * (g0 - g1))
    return p0 * a * a * f, p0


def ribbon_plateau_beam(E: float, b: float, t: float, R_n: float, R_d: float) -> tuple[float, float]:
    """Plateau force (N) and strip stress (MPa) of a prestressed strip from beam-theory energy.

    Energy per unit strip length at curvature k, natural curvature k_n = 1/R_n, by
    quadrature through the thickness: U(k) = int E z^2 (k - k_n)^2 / 2 dA. The force is
    the energy released per unit length drawn off the drum (curvature 1/R_d) into the
    straight run: F = U(1/R_d) - U(0) with the sign of work done; the stress is the
    largest |E z k_n| of the straight run.
    """
    z, wz = np.polynomial.legendre.leggauss(8)
    z = 0.5 * t * z
    wz = 0.5 * t * wz * b
    kn = 1.0 / R_n
    U = lambda k: float(np.sum(wz * E * z * z * (k - kn) ** 2 / 2.0))  # noqa: E731
    F = U(0.0) - U(1.0 / R_d)
    return F, E * (t / 2.0) * kn


# =========================================================================== elastomer pad (felupe)

def _edge_graded(a: float, zone: float, n: int, n_in: int) -> np.ndarray:
    """Nodes on [0, a]: ``n_in`` equal elements up to ``a - zone``, then ``n`` elements shrinking
    toward ``a`` (the free side or the bonded face) by the ratio ``0.6^(3/n)`` (so that a finer
    level splits every element of the zone, not only the smallest)."""
    zone = min(zone, a)
    w = (0.6 ** (3.0 / n)) ** np.arange(n)
    x = a - zone + np.r_[0.0, np.cumsum(w / w.sum() * zone)]
    if a - zone > 1e-9 * a:
        x = np.r_[np.linspace(0.0, a - zone, n_in + 1)[:-1], x]
    x[-1] = a
    return x


def pad_force_fe(L: float, W: float, t: float, mat: Material, u: np.ndarray, *, n_edge: int = 4) -> np.ndarray:
    """Compression force (N) of a block bonded to rigid plates, by non-linear finite elements.

    Parameters
    ----------
    L, W, t : float
        Plan dimensions and thickness, mm.
    mat : Material
        Hyperelastic material (its Ogden series and bulk modulus E/(3(1-2 nu))).
    u : ndarray, shape (k,)
        Compressions, mm, increasing, > 0.
    n_edge : int
        Elements across each edge zone (mesh level).

    Notes
    -----
    felupe (A. Dutzler, open finite-element infrastructure for non-linear mechanics):
    one eighth of the block (three symmetry planes), tri-quadratic 27-node hexahedra,
    mixed u-p-J nearly-incompressible formulation (``NearlyIncompressible``), the
    material's own Ogden series (felupe's ``2 mu_i/alpha_i^2`` convention: mu_i =
    mu_p alpha_p / 2), bonded face: all displacement components prescribed;
    Newton-Raphson per step.

    Mesh: the stress is singular along the bonded edges, so the mesh is graded toward
    them. In plan, a zone of width t next to each free side gets ``n_edge`` elements whose
    sizes shrink by 0.6^(3/n_edge) toward the side, the interior about one element per t;
    through the half thickness ``n_edge`` elements shrink the same way toward the bonded
    face. Mesh study (square 20 x 20 x 5 block of the Ogden-1972 rubber, S = 1; apparent
    modulus F t/(A E u) for n_edge = 2, 3, 4, 6): at u/t = 0.002 3.3981, 3.3767, 3.3683,
    3.3615 (observed order 1.6, limit 3.354); at u/t = 0.1 4.0653, 4.0072, 3.9789, 3.9503
    (order 1.0, limit 3.891). The singular edge makes convergence slow at finite strain.
    ``pad_force_reference`` extrapolates levels 3 and 4 to first order, F = 4 F_4 - 3 F_3:
    -0.33 % at u/t = 0.002 and +0.07 % at u/t = 0.1 from the three-level limits above.
    """
    import felupe as fem
    import felupe.constitution.tensortrax as tmat

    mu = [m * a / 2.0 for m, a in zip(mat.ogden_mu_MPa, mat.ogden_alpha)]
    al = list(mat.ogden_alpha)
    bulk = mat.E_MPa / (3.0 * (1.0 - 2.0 * mat.nu))
    a, b, h = L / 2.0, W / 2.0, t / 2.0

    def nodes(half):
        zone = min(half, t)
        return _edge_graded(half, zone, n_edge, max(1, math.ceil((half - zone) / t)))

    mesh = fem.Grid(nodes(a), nodes(b), _edge_graded(h, h, n_edge, 0))
    mesh = mesh.add_midpoints_edges().add_midpoints_faces().add_midpoints_volumes()
    mesh.update(cell_type="hexahedron27")
    region = fem.RegionTriQuadraticHexahedron(mesh)
    field_ = fem.FieldsMixed(region, n=3)
    law = tmat.Hyperelastic(tmat.models.hyperelastic.ogden, mu=mu, alpha=al)
    solid = fem.SolidBody(fem.NearlyIncompressible(law, bulk=bulk), field_)
    bc = {
        "symx": fem.Boundary(field_[0], fx=0.0, skip=(0, 1, 1)),
        "symy": fem.Boundary(field_[0], fy=0.0, skip=(1, 0, 1)),
        "symz": fem.Boundary(field_[0], fz=0.0, skip=(1, 1, 0)),
        "bonded": fem.Boundary(field_[0], fz=h, skip=(0, 0, 1)),
        "top": fem.Boundary(field_[0], fz=h, skip=(1, 1, 0)),
    }
    u = np.asarray(u, dtype=float)
    step = fem.Step(items=[solid], ramp={bc["top"]: -u / 2.0}, boundaries=bc)
    job = fem.CharacteristicCurve(steps=[step], boundary=bc["top"])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        job.evaluate(tol=1e-9, verbose=0)
    F = -4.0 * np.array(job.y)[:, 2]
    if F.size != u.size:
        raise RuntimeError("finite-element solution stopped before the last step")
    return F


def pad_force_reference(L: float, W: float, t: float, mat: Material, u: np.ndarray) -> np.ndarray:
    """``pad_force_fe`` on levels 3 and 4, extrapolated to first order (see its mesh study)."""
    F3 = pad_force_fe(L, W, t, mat, u, n_edge=3)
    F4 = pad_force_fe(L, W, t, mat, u, n_edge=4)
    return 4.0 * F4 - 3.0 * F3


# =========================================================================== per-kind dispatch

@dataclass(frozen=True)
class _Solved:
    force: np.ndarray          # (k,) per copy, N
    stress: np.ndarray | None  # (k,) governing stress, MPa (None: not compared)
    method: str
    note: str = ""
    compared: np.ndarray | None = None   # (k,) bool: points with an independent force


def _kernel(kind, p: dict[str, float], mat: Material, u: np.ndarray):
    pa = {k: np.array([v]) for k, v in p.items()}
    ma = MaterialArrays.of(mat, 1)
    f = kind.force(pa, ma, u[None, :])[0]
    s = kind.stress(pa, ma, u[None, :])[0]
    return f, s, float(kind.allowable(pa, ma)[0])


def _nodes(u: np.ndarray) -> np.ndarray:
    """Stroke nodes at which an expensive solver runs (all points when few)."""
    uu = np.unique(u[u > 0])
    if uu.size <= DIRECT_POINTS:
        return uu
    k = np.arange(1, NODES + 1)
    return uu[-1] * (1.0 - np.cos(math.pi * k / (2 * NODES)))   # clustered near u = 0


def _onto(u: np.ndarray, nodes: np.ndarray, vals: np.ndarray) -> np.ndarray:
    """Values at ``u`` from values at ``nodes`` (exact where they coincide; spline through 0 otherwise)."""
    out = np.zeros(u.size)
    pos = u > 0
    if nodes.size == np.unique(u[pos]).size and np.allclose(nodes, np.unique(u[pos])):
        out[pos] = np.interp(u[pos], nodes, vals)
        return out
    cs = CubicSpline(np.r_[0.0, nodes], np.r_[0.0, vals])
    out[pos] = cs(u[pos])
    return out


def _solve_tip_beam(kind_name, p, mat, u):
    guided = kind_name != "blade_cantilever"
    L = p["length_mm"]
    if kind_name == "wire_guided":
        d = p["wire_diameter_mm"]
        I, c = math.pi * d**4 / 64.0, d / 2.0
    else:
        I, c = p["width_mm"] * p["thickness_mm"] ** 3 / 12.0, p["thickness_mm"] / 2.0
    nodes = _nodes(u)
    alpha, m = solve_tip_loaded_beam(nodes / L, guided=guided)
    F = alpha * mat.E_MPa * I / L**2
    sig = m * mat.E_MPa * c / L          # M c / I with M = m E I / L
    what = "guided end" if guided else "free tip"
    return _Solved(_onto(u, nodes, F), _onto(u, nodes, sig),
                   f"inextensible elastica BVP (solve_bvp, whole beam, {what}), displacement continuation")


def _solve_clamped(kind_name, p, mat, u):
    L, b, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
    l = L / 2.0
    I, A = b * t**3 / 12.0, b * t
    rise = p.get("rise_mm", 0.0)
    h = rise / l
    # a 1e-4 h trace of the (1 - cos 4 pi x/L)/2 mode lets the continuation leave the symmetric
    # primary path where that mode bifurcates (both are symmetric about mid-span)
    eps4 = 1e-4 * h
    shape = (lambda x: 0.5 * h * (1.0 - np.cos(math.pi * x)) + 0.5 * eps4 * (1.0 - np.cos(2 * math.pi * x))) \
        if rise > 0 else None
    nodes = _nodes(u)
    y_end = h - nodes / l
    sol = solve_half_span(y_end, shape=shape, lam2=A * l * l / I, start="clamped", mode="transverse",
                          c_over_l=(t / 2.0) / l, branch_amp=0.5 * h if rise > 0 else 0.0)
    F = -2.0 * sol.V * mat.E_MPa * I / l**2
    sig = sol.fibre_max * mat.E_MPa
    what = "cosine arch, mid-span guided, through snap-through" if rise > 0 else "straight, load at mid-span"
    return _Solved(_onto(u, nodes, F), _onto(u, nodes, sig),
                   f"extensible elastica BVP of the half span (solve_bvp), ends clamped and axially fixed, {what}")


def _solve_column(kind_name, p, mat, u):
    L, b, t, a0 = p["length_mm"], p["width_mm"], p["thickness_mm"], p["rise_mm"]
    ends = p["ends"]
    clamped = (ends == "clamped") if isinstance(ends, str) else float(ends) > 0.5
    l = L / 2.0
    I, A = b * t**3 / 12.0, b * t
    lam2 = A * l * l / I
    nodes = _nodes(u)
    start = "clamped" if clamped else "pinned"
    if a0 > 0:
        h = a0 / l
        shape = (lambda x: 0.5 * h * (1.0 - np.cos(math.pi * x))) if clamped else (lambda x: h * np.sin(math.pi * x / 2.0))
        sol = solve_half_span(1.0 - nodes / L, shape=shape, lam2=lam2, start=start, mode="axial", c_over_l=(t / 2.0) / l)
        P, fib = -sol.H, sol.fibre_max
    else:
        P, fib = solve_straight_column(nodes / L, lam2=lam2, start=start, c_over_l=(t / 2.0) / l)
    F = P * mat.E_MPa * I / l**2
    return _Solved(_onto(u, nodes, F), _onto(u, nodes, fib * mat.E_MPa),
                   f"extensible elastica BVP of the half span (solve_bvp), {start} ends, initial shape as natural "
                   "curvature, end-shortening continuation")


def _solve_helical_compression(kind_name, p, mat, u):
    d, D, Na, L0 = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"], p["free_length_mm"]
    pitch0 = (L0 - 2.0 * d) / Na            # squared-and-ground ends, as the kind assumes
    # secant force with the pitch updated as the active coils close: F(u) = int_0^u k(pitch(u')) du'
    F = np.zeros(u.size)
    for i, ui in enumerate(u):
        if ui <= 0:
            continue
        xg, wg = np.polynomial.legendre.leggauss(6)
        uu = 0.5 * ui * (xg + 1.0)
        k = [helical_rate_castigliano(d, D, Na, max(pitch0 - v / Na, d), mat.E_MPa, mat.G_MPa, mat.nu) for v in uu]
        F[i] = 0.5 * ui * float(np.dot(wg, k))
    sig = F * wahl_shear_per_N(d, D)
    return _Solved(F, sig, "Castigliano energy of the helix (torsion, bending, shear, axial) by quadrature, "
                           "pitch updated with the deflection; Wahl shear stress",
                   note="includes direct shear and pitch terms the close-coiled rate leaves out (~1/(2C^2))")


def _solve_helical_extension(kind_name, p, mat, u):
    kind = get_kind(kind_name)
    d, D, Na, Fi = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"], p["initial_tension_N"]
    Nb = Na - mat.G_MPa / mat.E_MPa          # body coils (the kind's Na counts the hooks as G/E)
    k = helical_rate_castigliano(d, D, Nb, d, mat.E_MPa, mat.G_MPa, mat.nu, hook_loops=2)
    F = np.where(u > 0, Fi + k * u, 0.0)
    pa = {n: np.array([v]) for n, v in p.items()}
    body_a, tors_a, bend_a = (float(v[0]) for v in kind._allowables(pa, MaterialArrays.of(mat, 1)))
    C2 = 4.0                                   # bend radius ratio at the hook root, as the kind assumes
    per_N = max(wahl_shear_per_N(d, D),
                wahl_shear_per_N(d, C2 * d) * (D / (C2 * d)) * body_a / tors_a,
                winkler_inner_stress_per_N(d, D / 2.0) * body_a / bend_a)
    return _Solved(F, F * per_N, "Castigliano energy of the close-wound helix plus two half-loop hooks by quadrature; "
                                 "Wahl body and hook-torsion shear, Winkler curved-bar hook bending",
                   note="initial tension taken as given (not an independent quantity)")


def _solve_sphere(kind_name, p, mat, u):
    E_star = mat.E_MPa / (2.0 * (1.0 - mat.nu**2))
    F, p0 = hertz_force_numeric(p["radius_mm"], E_star, u)
    return _Solved(F, p0, "Hertz pressure distribution with the Boussinesq displacement integrated numerically")


def _solve_ribbon(kind_name, p, mat, u):
    from springsynth.elements import ribbon as rb

    R_n = p["natural_radius_mm"]
    R_d = rb.DRUM_RATIO * R_n
    Fp, S = ribbon_plateau_beam(mat.E_MPa, p["width_mm"], p["thickness_mm"], R_n, R_d)
    u_r = rb.RAMP_DRUM_DIAMETERS * 2.0 * R_d
    plateau = u >= u_r
    return _Solved(np.where(plateau, Fp, np.nan), np.full(u.size, S),
                   "beam-theory energy of the prestressed strip unrolled from its drum (quadrature through t)",
                   note="plateau only; handbook 26.4 vs beam theory (24 at R_d = R_n) differ by design",
                   compared=plateau & (u > 0))


def _solve_pad(kind_name, p, mat, u):
    if not mat.hyperelastic:
        raise _NotVerified("elastomer_pad with a linear material (the kind marks it infeasible)")
    try:
        import felupe  # noqa: F401
        import tensortrax  # noqa: F401
    except ImportError:
        raise _NotVerified("elastomer_pad needs felupe and tensortrax (pip install felupe tensortrax)") from None
    uu = np.unique(u[u > 0])
    nodes = uu[-1] * np.arange(1, 6) / 5.0
    F = pad_force_reference(p["length_mm"], p["width_mm"], p["thickness_mm"], mat, nodes)
    return _Solved(_onto(u, nodes, F), None,
                   "continuum FE (felupe): 1/8 bonded block, 27-node hexahedra, mixed u-p-J, Ogden law, "
                   "meshes graded to the bonded edges, two levels extrapolated",
                   note="stress measure is the nominal strain u/t (kinematic): not compared")


class _NotVerified(Exception):
    pass


_SOLVERS: dict[str, Callable] = {
    "blade_cantilever": _solve_tip_beam,
    "blade_guided": _solve_tip_beam,
    "wire_guided": _solve_tip_beam,
    "blade_clamped": _solve_clamped,
    "arch": _solve_clamped,
    "column": _solve_column,
    "helical_compression": _solve_helical_compression,
    "helical_extension": _solve_helical_extension,
    "contact_sphere": _solve_sphere,
    "ribbon": _solve_ribbon,
    "elastomer_pad": _solve_pad,
}
SUPPORTED_KINDS = tuple(_SOLVERS)


# =========================================================================== report

@dataclass(frozen=True)
class ElementCheck:
    """Verification of one element (per copy, on its own stroke u = x - offset).

    Attributes
    ----------
    index : int
        1-based position in the design.
    kind, material : str
    verified : bool
        False when no independent solver covers the kind (see ``note``).
    method, note : str
    force_dev_pct, stress_dev_pct : float
        Largest deviation over the stroke, % of the kernel's largest |value| (NaN when not
        compared).
    flagged : bool
        A deviation above the threshold.
    force_kernel_N, force_verified_N : ndarray, shape (m,)
        Force of all copies on the design's stroke points (verified: the kernel's value
        where no independent value exists).
    stress_ratio_kernel, stress_ratio_verified : ndarray, shape (m,)
        Governing stress / allowable (verified: NaN where not compared).
    """

    index: int
    kind: str
    material: str
    verified: bool
    method: str
    note: str
    force_dev_pct: float
    stress_dev_pct: float
    flagged: bool
    force_kernel_N: np.ndarray = field(repr=False)
    force_verified_N: np.ndarray = field(repr=False)
    stress_ratio_kernel: np.ndarray = field(repr=False)
    stress_ratio_verified: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class VerificationReport:
    """Result of :func:`verify_design`.

    Attributes
    ----------
    design : str
    x_mm : ndarray, shape (m,)
    elements : tuple of ElementCheck
    force_kernel_N, force_verified_N : ndarray, shape (m,)
        Total force of the mechanism.
    assembly_force_dev_pct : float
        ``100 max|F_ver - F_kernel| / max|F_kernel|`` of the total force.
    assembly_stress_dev_pct : float
        Relative difference (%) of the peak stress ratio over elements and stroke.
    threshold_pct : float
    """

    design: str
    x_mm: np.ndarray
    elements: tuple[ElementCheck, ...]
    force_kernel_N: np.ndarray
    force_verified_N: np.ndarray
    assembly_force_dev_pct: float
    assembly_stress_dev_pct: float
    threshold_pct: float = THRESHOLD_PCT

    @property
    def flags(self) -> tuple[str, ...]:
        """Readable warnings: deviations above the threshold and unverified elements."""
        out = []
        for e in self.elements:
            if not e.verified:
                out.append(f"{self.design} element {e.index} ({e.kind}): {e.note}")
            elif e.flagged:
                out.append(f"{self.design} element {e.index} ({e.kind}): force {_pct(e.force_dev_pct)}, "
                           f"stress {_pct(e.stress_dev_pct)} from the independent solution"
                           + (f" ({e.note})" if e.note else ""))
        if self.assembly_force_dev_pct > self.threshold_pct or self.assembly_stress_dev_pct > self.threshold_pct:
            out.append(f"{self.design} assembly: force {_pct(self.assembly_force_dev_pct)}, "
                       f"peak stress ratio {_pct(self.assembly_stress_dev_pct)}")
        return tuple(out)

    def to_frame(self):
        """One row per element plus one ``assembly`` row (pandas DataFrame)."""
        import pandas as pd

        rows = [{"design_id": self.design, "element": str(e.index), "kind": e.kind, "material": e.material,
                 "verified": e.verified, "force_dev_pct": e.force_dev_pct, "stress_dev_pct": e.stress_dev_pct,
                 "flagged": e.flagged, "method": e.method, "note": e.note} for e in self.elements]
        rows.append({"design_id": self.design, "element": "assembly", "kind": "", "material": "",
                     "verified": all(e.verified for e in self.elements),
                     "force_dev_pct": self.assembly_force_dev_pct, "stress_dev_pct": self.assembly_stress_dev_pct,
                     "flagged": self.assembly_force_dev_pct > self.threshold_pct
                     or self.assembly_stress_dev_pct > self.threshold_pct,
                     "method": "sum of the elements", "note": ""})
        return pd.DataFrame(rows)


def _pct(v: float) -> str:
    return "n/a" if not math.isfinite(v) else f"{v:.2f} %"


def _dev(ver: np.ndarray, ker: np.ndarray, mask: np.ndarray) -> float:
    scale = float(np.max(np.abs(ker))) if ker.size else 0.0
    if not mask.any() or scale <= 0:
        return math.nan
    return 100.0 * float(np.max(np.abs(ver[mask] - ker[mask]))) / scale


def _check_element(i: int, e: Element, mat: Material, x: np.ndarray, *, stress: bool = True) -> ElementCheck:
    kind = get_kind(e.kind)
    vals = e.values()
    raw = {q.name: (e.params[q.name] if q.choices else vals[q.name]) for q in kind.params}
    u = np.maximum(x - e.offset_mm, 0.0)
    engaged = x - e.offset_mm > 0
    fk, sk, allow = _kernel(kind, vals, mat, u)
    fk = np.where(engaged, fk, 0.0) * e.count
    srk = np.where(engaged, sk / allow, 0.0)
    solver = _SOLVERS.get(e.kind)
    nan = np.full(x.size, np.nan)
    if solver is None:
        return ElementCheck(i, e.kind, e.material, False, "", f"not verified: no independent solver for {e.kind}",
                            math.nan, math.nan, False, fk, fk.copy(), srk, nan)
    try:
        solved = solver(e.kind, raw, mat, np.where(engaged, u, 0.0))
    except _NotVerified as exc:
        return ElementCheck(i, e.kind, e.material, False, "", f"not verified: {exc}", math.nan, math.nan, False,
                            fk, fk.copy(), srk, nan)
    except RuntimeError as exc:
        return ElementCheck(i, e.kind, e.material, False, "",
                            f"not verified: the independent solver did not converge ({exc})", math.nan, math.nan,
                            False, fk, fk.copy(), srk, nan)
    compared = engaged if solved.compared is None else (solved.compared & engaged)
    fv = np.where(compared, np.nan_to_num(solved.force) * e.count, fk)
    fv = np.where(engaged, fv, 0.0)
    force_dev = _dev(fv, fk, compared)
    if solved.stress is not None:
        srv = np.where(engaged, solved.stress / allow, 0.0)
        stress_dev = _dev(srv, srk, engaged)
    else:
        srv, stress_dev = nan, math.nan
    flagged = any(math.isfinite(v) and v > THRESHOLD_PCT for v in (force_dev, stress_dev))
    return ElementCheck(i, e.kind, e.material, True, solved.method, solved.note, force_dev, stress_dev, flagged,
                        fk, fv, srk, srv)


def verify_design(design: Design, x_mm: np.ndarray) -> VerificationReport:
    """Re-solve every element of ``design`` independently at the stroke points ``x_mm``.

    Parameters
    ----------
    design : Design
    x_mm : ndarray, shape (m,)
        Stroke points of the mechanism, mm, >= 0 (a moderate number, e.g. 9, keeps it fast).

    Returns
    -------
    VerificationReport
    """
    x = np.asarray(x_mm, dtype=float).ravel()
    if x.size < 2 or not np.all(np.isfinite(x)) or np.any(x < 0):
        raise InputError("stroke points must be at least two finite displacements >= 0 mm", where=design.name)
    checks = tuple(_check_element(i + 1, e, design.materials[e.material], x) for i, e in enumerate(design.elements))
    fk = np.sum([c.force_kernel_N for c in checks], axis=0)
    fv = np.sum([c.force_verified_N for c in checks], axis=0)
    dev = _dev(fv, fk, np.ones(x.size, bool))
    srk = max(float(np.max(c.stress_ratio_kernel)) for c in checks)
    srv_each = [np.where(np.isfinite(c.stress_ratio_verified), c.stress_ratio_verified, c.stress_ratio_kernel)
                for c in checks]
    srv = max(float(np.max(s)) for s in srv_each)
    sdev = 100.0 * abs(srv - srk) / srk if srk > 0 else math.nan
    return VerificationReport(design.name, x, checks, fk, fv, dev if math.isfinite(dev) else 0.0, sdev)


def verified_forces(design: Design, x_mm: np.ndarray) -> np.ndarray:
    """Total force of ``design`` at ``x_mm`` from the independent solvers, N, shape (m,).

    Elements (or stroke ranges) without an independent solution contribute their kernel force.
    """
    return verify_design(design, x_mm).force_verified_N


def verified_error_pct(design: Design, target) -> float:
    """Curve error (DESIGN.md: 100 RMS_w(F - F_target) / max|F_target|) with the verification solver's forces.

    Parameters
    ----------
    design : Design
    target : Target

    Returns
    -------
    float
    """
    F = verified_forces(design, target.x_mm)
    return float(target.curve_error_pct(F[None, :])[0])
