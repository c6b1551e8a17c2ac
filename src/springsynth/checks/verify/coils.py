"""Coil springs by Castigliano: the strain energy of the actual helix integrated numerically; Wahl and
Winkler stresses."""

from __future__ import annotations

import functools
import math

import numpy as np
from scipy.integrate import quad


@functools.lru_cache(maxsize=16)
def gauss_legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Nodes and weights of the n-point Gauss-Legendre rule on [-1, 1] (numpy's ``leggauss``),
    computed once per n (read-only arrays, shape (n,))."""
    x, w = np.polynomial.legendre.leggauss(n)
    x.flags.writeable = w.flags.writeable = False
    return x, w


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
    xg, wg = gauss_legendre(48)
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
        psi, wp = gauss_legendre(48)
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
