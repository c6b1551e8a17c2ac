"""The prestressed strip unrolled from its drum: beam-theory energy by quadrature through the thickness."""

from __future__ import annotations

import numpy as np


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
