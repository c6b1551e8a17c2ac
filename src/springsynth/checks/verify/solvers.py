"""One independent solver per verification method a kind declares (``ElementKind.verification``).

Each ``_solve_*`` takes ``(kind_name, params, material, u)`` for one element and returns a
:class:`Solved`; :data:`SOLVERS` maps the method names to them."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np
from scipy.interpolate import CubicSpline

from springsynth.checks.verify.coils import (
    gauss_legendre,
    helical_rate_castigliano,
    wahl_shear_per_N,
    winkler_inner_stress_per_N,
)
from springsynth.checks.verify.elastica import solve_half_span, solve_straight_column, solve_tip_loaded_beam
from springsynth.checks.verify.hertz import hertz_force_numeric
from springsynth.checks.verify.notch import LEVEL as NOTCH_LEVEL
from springsynth.checks.verify.notch import stage_fe
from springsynth.checks.verify.pad_fe import pad_force_reference
from springsynth.checks.verify.ribbon import ribbon_plateau_beam
from springsynth.elements import get_kind
from springsynth.model.materials import Material, MaterialArrays

__all__ = ["SOLVERS", "Solved", "NotVerified", "solver_for", "kernel_curves", "DIRECT_POINTS", "NODES"]


#: up to this many stroke points the expensive solvers are run at every point
DIRECT_POINTS = 25


#: nodes of the interpolated solution otherwise
NODES = 13


@dataclass(frozen=True)
class Solved:
    force: np.ndarray          # (k,) per copy, N
    stress: np.ndarray | None  # (k,) governing stress, MPa (None: not compared)
    method: str
    note: str = ""
    compared: np.ndarray | None = None   # (k,) bool: points with an independent force


def kernel_curves(kind, p: dict[str, float], mat: Material, u: np.ndarray):
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
    return Solved(_onto(u, nodes, F), _onto(u, nodes, sig),
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
    return Solved(_onto(u, nodes, F), _onto(u, nodes, sig),
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
    note = ""
    P = None
    if a0 > 0:
        h = a0 / l
        shape = (lambda x: 0.5 * h * (1.0 - np.cos(math.pi * x))) if clamped else (lambda x: h * np.sin(math.pi * x / 2.0))
        sol = solve_half_span(1.0 - nodes / L, shape=shape, lam2=lam2, start=start, mode="axial", c_over_l=(t / 2.0) / l)
        P, fib = -sol.H, sol.fibre_max
        # Euler load of the half span in these units: pi^2 / 4 (pinned) or pi^2 (clamped). Inside the valid
        # range (shortening <= 0.3 L) no column carries more than ~1.3 of it; a continuation that has stayed
        # on the unbuckled (axial) path does, when the rise is too small for it to leave that path
        if np.max(P) > 2.0 * (math.pi**2 if clamped else math.pi**2 / 4.0):
            note = (f"rise {a0:.2g} mm too small for the imperfect-column continuation to leave the unbuckled "
                    "path; solved as a straight column (its limit as the rise goes to 0)")
            P = None
    if P is None:
        P, fib = solve_straight_column(nodes / L, lam2=lam2, start=start, c_over_l=(t / 2.0) / l)
    F = P * mat.E_MPa * I / l**2
    return Solved(_onto(u, nodes, F), _onto(u, nodes, fib * mat.E_MPa),
                   f"extensible elastica BVP of the half span (solve_bvp), {start} ends, initial shape as natural "
                   "curvature, end-shortening continuation", note)


def _solve_helical_compression(kind_name, p, mat, u):
    d, D, Na, L0 = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"], p["free_length_mm"]
    pitch0 = (L0 - 2.0 * d) / Na            # squared-and-ground ends, as the kind assumes
    # secant force with the pitch updated as the active coils close: F(u) = int_0^u k(pitch(u')) du'
    F = np.zeros(u.size)
    for i, ui in enumerate(u):
        if ui <= 0:
            continue
        xg, wg = gauss_legendre(6)
        uu = 0.5 * ui * (xg + 1.0)
        k = [helical_rate_castigliano(d, D, Na, max(pitch0 - v / Na, d), mat.E_MPa, mat.G_MPa, mat.nu) for v in uu]
        F[i] = 0.5 * ui * float(np.dot(wg, k))
    sig = F * wahl_shear_per_N(d, D)
    return Solved(F, sig, "Castigliano energy of the helix (torsion, bending, shear, axial) by quadrature, "
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
    return Solved(F, F * per_N, "Castigliano energy of the close-wound helix plus two half-loop hooks by quadrature; "
                                 "Wahl body and hook-torsion shear, Winkler curved-bar hook bending",
                   note="initial tension taken as given (not an independent quantity)")


def _solve_sphere(kind_name, p, mat, u):
    E_star = mat.E_MPa / (2.0 * (1.0 - mat.nu**2))
    F, p0 = hertz_force_numeric(p["radius_mm"], E_star, u)
    return Solved(F, p0, "Hertz pressure distribution with the Boussinesq displacement integrated numerically")


def _solve_ribbon(kind_name, p, mat, u):
    from springsynth.elements import ribbon as rb

    R_n = p["natural_radius_mm"]
    R_d = rb.DRUM_RATIO * R_n
    Fp, S = ribbon_plateau_beam(mat.E_MPa, p["width_mm"], p["thickness_mm"], R_n, R_d)
    u_r = rb.RAMP_DRUM_DIAMETERS * 2.0 * R_d
    plateau = u >= u_r
    return Solved(np.where(plateau, Fp, np.nan), np.full(u.size, S),
                   "beam-theory energy of the prestressed strip unrolled from its drum (quadrature through t)",
                   note="plateau only; handbook 26.4 vs beam theory (24 at R_d = R_n) differ by design",
                   compared=plateau & (u > 0))


def _solve_pad(kind_name, p, mat, u):
    if not mat.hyperelastic:
        raise NotVerified("elastomer_pad with a linear material (the kind marks it infeasible)")
    try:
        import felupe  # noqa: F401
        import tensortrax  # noqa: F401
    except ImportError:
        raise NotVerified("elastomer_pad needs felupe and tensortrax (pip install felupe tensortrax)") from None
    uu = np.unique(u[u > 0])
    nodes = uu[-1] * np.arange(1, 6) / 5.0
    F = pad_force_reference(p["length_mm"], p["width_mm"], p["thickness_mm"], mat, nodes)
    return Solved(_onto(u, nodes, F), None,
                   "continuum FE (felupe): 1/8 bonded block, 27-node hexahedra, mixed u-p-J, Ogden law, "
                   "meshes graded to the bonded edges, two levels extrapolated",
                   note="stress measure is the nominal strain u/t (kinematic): not compared")


def _solve_notch(kind_name, p, mat, u):
    if mat.hyperelastic:
        raise NotVerified("notch_parallelogram with a hyperelastic material (the kind marks it infeasible)")
    F, S = stage_fe(p["length_mm"], p["width_mm"], p["thickness_mm"], p["notch_radius_mm"], mat.E_MPa, mat.nu, u)
    return Solved(F, S, "plane-stress FE of one hinge (felupe, 9-node quadrilaterals on a mapped mesh following "
                        f"the cut-outs, level {NOTCH_LEVEL}), pure moment; stage force from pin-jointed kinematics",
                  note="plane stress: a plate much thicker than the hinge is stiffer (up to 1/(1 - nu^2))")


class NotVerified(Exception):
    pass


#: the independent solver of each verification method a kind may declare
SOLVERS: dict[str, Callable] = {
    "tip_beam": _solve_tip_beam,
    "clamped_span": _solve_clamped,
    "column": _solve_column,
    "coil_compression": _solve_helical_compression,
    "coil_extension": _solve_helical_extension,
    "hertz": _solve_sphere,
    "ribbon_plateau": _solve_ribbon,
    "pad_fe": _solve_pad,
    "notch_fe": _solve_notch,
}


def solver_for(kind_name: str) -> Callable | None:
    """The solver a kind declares, or None when it declares ``"none"`` (not verified)."""
    return SOLVERS.get(get_kind(kind_name).verification)
