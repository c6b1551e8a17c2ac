"""Hertz contact of a sphere on a flat, solved numerically from the Boussinesq ring kernel."""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.integrate import quad
from scipy.special import ellipk


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
