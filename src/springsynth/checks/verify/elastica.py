"""Planar rods as boundary-value problems (scipy solve_bvp): the inextensible elastica of a tip-loaded
beam, the extensible (Reissner) elastica of a half span, and the straight column."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np
from scipy.integrate import solve_bvp

#: continuation: largest step of the prescribed end displacement, in units of the length scale
_STEP = 0.05


_BVP_TOL = 1e-7


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
    """Arc-length parametrisation of y0(x) on x in [0, 1]: (s, theta0(s), kappa0(s), x(s), y0(s)), each shape (n,)."""
    x = np.linspace(0.0, 1.0, n)
    y0 = shape(x)
    dy = np.gradient(y0, x, edge_order=2)
    ds = np.sqrt(1.0 + dy**2)
    s = np.concatenate(([0.0], np.cumsum(0.5 * (ds[1:] + ds[:-1]) * np.diff(x))))
    th = np.arctan(dy)
    kap = np.gradient(th, s, edge_order=2)
    return s, th, kap, x, y0


class _HalfSpanRod:
    """Equations and end conditions of the half-span rod of :func:`solve_half_span` (see its notes).

    Holds the natural shape sampled along its arc length (``sg``, ``thg``, ``kg``, ``xg``,
    ``yg``, each shape (4001,)), its length ``S``, the axial compliance ``inv = 1 / lam2``
    (0 when inextensible), the start condition and the loading mode.
    """

    def __init__(self, shape, lam2: float, start: str, mode: str):
        if shape is None:
            shape = lambda x: np.zeros_like(x)  # noqa: E731
        self.sg, self.thg, self.kg, self.xg, self.yg = _natural_shape(shape)
        self.S = self.sg[-1]
        self.inv = 0.0 if not math.isfinite(lam2) else 1.0 / lam2
        self.th0_start = float(self.thg[0])
        self.start = start
        self.transverse = mode == "transverse"

    def kappa0(self, s):
        """Natural curvature at arc length ``s``."""
        return np.interp(s, self.sg, self.kg)

    def forces(self, p):
        """Internal force ``(H, V)`` from the unknown parameters (V = 0 when axial)."""
        return (p[0], p[1]) if self.transverse else (p[0], 0.0)

    def fun(self, s, y, p):
        H, V = self.forces(p)
        c, sn = np.cos(y[2]), np.sin(y[2])
        e = 1.0 + (H * c + V * sn) * self.inv
        xp, yp = e * c, e * sn
        return np.vstack([xp, yp, self.kappa0(s) + y[3], -(xp * V - yp * H)])

    def bc(self, target: float):
        """Boundary conditions with the far end at ``target``."""
        def bc(ya, yb, p):
            first = ya[2] - self.th0_start if self.start == "clamped" else ya[3]
            if self.transverse:
                return np.array([ya[0], ya[1], first, yb[2], yb[0] - 1.0, yb[1] - target])
            return np.array([ya[0], ya[1], first, yb[2], yb[0] - target])
        return bc

    def solve(self, target: float, mesh, y, p, quick: bool = False):
        """One ``solve_bvp`` at end position ``target`` from the guess ``(mesh, y, p)``."""
        return _bvp(self.fun, self.bc(target), mesh, y, p, quick=quick)

    def unloaded(self):
        """The unloaded shape as the first guess: ``(mesh, y, p)``."""
        s0 = np.linspace(0.0, self.S, 61)
        y = np.vstack([np.interp(s0, self.sg, self.xg), np.interp(s0, self.sg, self.yg),
                       np.interp(s0, self.sg, self.thg), np.zeros_like(s0)])
        return s0, y, np.zeros(2 if self.transverse else 1)


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
    Solved by ``solve_bvp`` with continuation from the unloaded shape
    (:class:`_HalfSpanRod`); each step may look for a lower-energy branch
    (:func:`_lowest_energy_branch`) and, when it fails, retry in shorter steps
    (:func:`_in_shorter_steps`).
    """
    rod = _HalfSpanRod(shape, lam2, start, mode)
    tg = np.asarray(targets, dtype=float)
    if rod.transverse:      # sweep in the direction of travel (from the unloaded end position)
        y_start = float(rod.yg[-1])
        order = np.argsort(np.abs(tg - y_start))
        step = min(_STEP, 0.1 * abs(float(rod.yg[-1])) + 0.01)
    else:                   # from the longest chord down
        y_start = 1.0
        order = np.argsort(targets)[::-1]
        step = 0.01
    out = {n: np.zeros(tg.size) for n in ("H", "V", "m", "fib", "ymax")}
    mesh, y, p = rod.unloaded()
    last = y_start
    for target, idx in _steps(tg[order], y_start, step):
        if abs(target - y_start) < 1e-15:
            if idx >= 0:
                for n in out:
                    out[n][order[idx]] = 0.0
                out["ymax"][order[idx]] = float(np.max(np.abs(rod.yg)))
            continue
        sol = rod.solve(target, mesh, y, p)
        if branch_amp > 0 and sol.status == 0:
            sol = _lowest_energy_branch(rod, sol, target, mesh, y, p, branch_amp)
        if sol.status != 0:
            sol = _in_shorter_steps(rod, last, target, mesh, y, p)
        if sol.status != 0:
            raise RuntimeError(f"rod did not converge at end position {target:.5g}: {sol.message}")
        mesh, y, p = sol.x, sol.y, sol.p
        last = target
        if idx >= 0:
            _record(out, order[idx], rod, sol, c_over_l)
    return HalfSpan(out["H"], out["V"], out["m"], out["fib"], out["ymax"])


def _lowest_energy_branch(rod: _HalfSpanRod, sol, target: float, mesh, y, p, amp: float):
    """``sol`` or a solution of less strain energy started from ``y`` plus or minus ``amp``
    of the symmetric (1 - cos 2 pi x)/2 mode (the arch's 4 pi mode)."""
    best, e_best = sol, _energy(sol, rod.inv)
    xm = np.interp(mesh, rod.sg, rod.xg)
    for sgn in (1.0, -1.0):
        a = sgn * amp
        y2 = y + np.vstack([np.zeros_like(mesh), a * 0.5 * (1 - np.cos(2 * np.pi * xm)),
                            a * np.pi * np.sin(2 * np.pi * xm), a * 2 * np.pi**2 * np.cos(2 * np.pi * xm)])
        trial = rod.solve(target, mesh, y2, p, quick=True)
        if trial.status != 0:
            trial = rod.solve(target, mesh, y2, p)
        if trial.status == 0:
            e_t = _energy(trial, rod.inv)
            if e_t < e_best - 1e-12 * max(1.0, abs(e_best)):
                best, e_best = trial, e_t
    return best


def _in_shorter_steps(rod: _HalfSpanRod, last: float, target: float, mesh, y, p):
    """From the last converged state at ``last`` to ``target`` in 2, 8 and 32 steps; the
    first subdivision that converges all the way (or the last failed solution)."""
    sol = None
    sub = 2
    while sub <= 32:
        m_, y_, p_ = mesh, y, p
        for k_ in range(1, sub + 1):
            sol = rod.solve(last + (target - last) * k_ / sub, m_, y_, p_)
            if sol.status != 0:
                break
            m_, y_, p_ = sol.x, sol.y, sol.p
        if sol.status == 0:
            break
        sub *= 4
    return sol


def _record(out: dict, j: int, rod: _HalfSpanRod, sol, c_over_l: float) -> None:
    """End forces, largest moment, fibre strain and lateral position of ``sol`` into row ``j`` of ``out``."""
    H, V = rod.forces(sol.p)
    yy = sol.sol(np.linspace(0.0, rod.S, 401))
    N = H * np.cos(yy[2]) + V * np.sin(yy[2])
    # fibre strain |N| / (E A) + |M| c / (E I) (times E: the fibre stress)
    strain = np.abs(N) * rod.inv + np.abs(yy[3]) * c_over_l
    out["H"][j], out["V"][j] = H, V
    out["m"][j] = float(np.max(np.abs(yy[3])))
    out["fib"][j] = float(np.max(strain))
    out["ymax"][j] = float(np.max(np.abs(yy[1])))


def _energy(sol, inv: float) -> float:
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
