"""Independent check of the notch-hinge stage: plane-stress finite elements of one hinge.

The kernel (:mod:`springsynth.elements.notch_parallelogram`) takes the hinge stiffness
from the Euler-Bernoulli integral of Paros & Weisbord and the notch factor from a
published fit. This module solves the hinge as a two-dimensional elastic body instead
and composes the stage force from it with the pin-jointed kinematics of the
parallelogram (rigid links, both hinges of a link turning by ``theta = asin(x/L)``):
``F = 4 K theta / (L cos theta)``, stress ``sigma_peak(M = K theta)``.

Finite-element model
--------------------
One hinge between two links of width ``H = 2 R + t``: the notch zone ``|x| <= R`` (two
circular cut-outs of radius R, neck t) and a prismatic extension of length ``H`` on
each side, loaded by a pure moment. Under a pure moment the body is symmetric about
the neck plane x = 0 and antisymmetric about the mid-line y = 0, so one quarter is
meshed: ``u_x = 0`` on x = 0 and on y = 0, ``u_y = 0`` at the origin. The end face
x = R + H carries the linear traction ``sigma_xx = M y / I_H`` (``I_H = H^3/12`` per unit
width), which is the exact pure-bending state of the prismatic part (no end effect).
Linear elasticity, plane stress, felupe (A. Dutzler's open finite-element library):
9-node Lagrange quadrilaterals, 3 x 3 Gauss points, one sparse solve.

Mesh: a mapped grid. Along the link, the columns are spaced evenly in
``zeta = int R dphi / h(phi)`` over the notch angle ``phi`` (``x = R sin phi``, so element
lengths follow the local section height h and the arc length along the cut-out);
through the half height ``2^level`` equal rows, ``y = eta h(x) / 2``. The nodes on the
cut-out lie on the circle (curved isoparametric edges). Level ``l``: ``2^(l-1)`` columns
per unit of zeta (at least 6), ``2^l`` rows, ``2^l`` columns on the extension.

Measured quantities (per unit plate width, E = 1):

* rotation of the end face, work-conjugate to the traction,
  ``theta_face = sum f u_x / sum f y``; the hinge's own rotation is what is left after
  the exact beam rotation of the two extensions, ``2 (theta_face - M H / (E I_H))``,
  and ``K = M / that``;
* the peak stress at the neck surface (largest principal stress, from the displacement
  gradient at the node x = 0, y = t/2), ``K_t = sigma_peak t^2 / (6 M)``.

Mesh convergence (``K_FE / K_Paros-Weisbord`` and ``K_t`` at levels 1, 2, 3, 4, 5):

=======  ================================================  ================================================
t / R    K_FE / K_PW                                        K_t
=======  ================================================  ================================================
0.02     0.99200, 0.99206, 0.99206, 0.99206, 0.99206        1.00419, 1.00406, 1.00401, 1.00400, 1.00399
0.075    0.97063, 0.97103, 0.97105, 0.97105, 0.97105        1.01541, 1.01507, 1.01493, 1.01489, 1.01489
0.2      0.92896, 0.92815, 0.92825, 0.92825, 0.92825        1.04084, 1.03925, 1.03921, 1.03919, 1.03918
=======  ================================================  ================================================

``stage_fe`` uses level 3 (a few hundredths of a second): stiffness within 1e-5 and
notch factor within 5e-5 of level 5.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

__all__ = ["LEVEL", "hinge_fe", "hinge_fe_3d", "stage_fe"]

#: mesh level used by :func:`stage_fe` (see the module's convergence table)
LEVEL = 3


def _columns(tau: float, level: int):
    """Node columns of the quarter hinge (R = 1, neck ``tau``): x (k,), section height h (k,), rows eta, H."""
    R, t = 1.0, tau
    H = 2.0 * R + t
    per_zeta = 2.0 ** (level - 1)
    # zeta(phi) = int_0^phi R dphi / (t + 2 R (1 - cos phi)) in closed form (substitute tan(phi/2))
    a = math.sqrt(t * (t + 4.0 * R))
    c = math.sqrt((t + 4.0 * R) / t)
    zeta_end = 2.0 * R / a * math.atan(c)
    n = max(6, math.ceil(per_zeta * zeta_end))
    zeta = np.linspace(0.0, zeta_end, 2 * n + 1)
    phi = 2.0 * np.arctan(np.tan(zeta * a / (2.0 * R)) / c)
    phi[-1] = 0.5 * math.pi
    ne = 2**level
    x = np.concatenate((R * np.sin(phi), R + H * np.linspace(0.0, 1.0, 2 * ne + 1)[1:]))
    h = np.concatenate((t + 2.0 * R * (1.0 - np.cos(phi)), np.full(2 * ne, H)))
    return x, h, np.linspace(0.0, 1.0, 2 * 2**level + 1), H


def _mesh(tau: float, level: int):
    """Quarter hinge of notch radius 1 and neck ``tau``: points (p, 2), quad9 cells (c, 9), node grid."""
    x, h, eta, H = _columns(tau, level)
    grid = np.arange(x.size * eta.size).reshape(x.size, eta.size)
    pts = np.stack(np.broadcast_arrays(x[:, None], 0.5 * eta[None, :] * h[:, None]), axis=-1).reshape(-1, 2)
    i, j = np.meshgrid(np.arange(0, x.size - 1, 2), np.arange(0, eta.size - 1, 2), indexing="ij")
    i, j = i.ravel(), j.ravel()
    # felupe's quad9 order: corners counter-clockwise, then edge midpoints, then the centre
    corner = [(0, 0), (2, 0), (2, 2), (0, 2), (1, 0), (2, 1), (1, 2), (0, 1), (1, 1)]
    cells = np.stack([grid[i + di, j + dj] for di, dj in corner], axis=1)
    return pts, cells, grid, H


def _face_forces(y: np.ndarray, I: float) -> np.ndarray:
    """Consistent nodal forces of the traction ``y / I`` on the quadratic edges through ``y`` (2k+1,)."""
    g, w = np.polynomial.legendre.leggauss(3)
    s = 0.5 * (g + 1.0)
    N = np.stack([(1 - s) * (1 - 2 * s), 4 * s * (1 - s), s * (2 * s - 1)])    # nodes at s = 0, 1/2, 1
    f = np.zeros(y.size)
    for k in range(0, y.size - 1, 2):
        ya, yc = y[k], y[k + 2]
        f[k:k + 3] += N @ (w * (ya + (yc - ya) * s) / I) * 0.5 * (yc - ya)
    return f


@lru_cache(maxsize=256)
def _hinge_unit(tau: float, nu: float, level: int) -> tuple[float, float]:
    """(K / (E b), sigma_peak b / M) of a hinge with R = 1 and t = tau (module notes)."""
    import felupe as fem
    from scipy.sparse.linalg import spsolve

    pts, cells, grid, H = _mesh(tau, level)
    mesh = fem.Mesh(pts, cells, cell_type="quad9")
    field = fem.Field(fem.RegionBiQuadraticQuad(mesh), dim=2)
    fields = fem.FieldContainer([field])
    solid = fem.SolidBody(fem.LinearElasticPlaneStress(E=1.0, nu=nu), fields)
    x, y = pts.T
    tol = 1e-12
    bounds = {
        "sym_x": fem.Boundary(field, mask=np.abs(x) < tol, skip=(0, 1)),
        "anti_y": fem.Boundary(field, mask=np.abs(y) < tol, skip=(0, 1)),
        "origin": fem.Boundary(field, mask=(np.abs(x) < tol) & (np.abs(y) < tol), skip=(1, 0)),
    }
    I_H = H**3 / 12.0
    face = grid[-1]
    f = _face_forces(pts[face, 1], I_H)                  # moment 1/2 on the half face: M = 1
    _, dof1 = fem.dof.partition(fields, bounds)
    A = solid.assemble.matrix().tocsr()
    rhs = np.zeros(A.shape[0])
    rhs[2 * face] = f
    sol = np.zeros(A.shape[0])
    sol[dof1] = spsolve(A[dof1][:, dof1], rhs[dof1])
    uv = sol.reshape(-1, 2)
    theta_face = float(f @ uv[face, 0]) / float(f @ pts[face, 1])
    K = 1.0 / (2.0 * (theta_face - H / I_H))
    # displacement gradient at the neck surface node: natural corner (-1, 1) of the cell holding it
    neck = grid[0, -1]
    cell = int(np.flatnonzero(cells[:, 3] == neck)[0])
    scheme = fem.quadrature.Scheme(np.array([[-1.0, 1.0]]), np.array([1.0]))
    node_field = fem.Field(fem.RegionBiQuadraticQuad(mesh, quadrature=scheme), dim=2, values=uv.copy())
    G = node_field.grad()[:, :, 0, cell]
    exx, eyy, gxy = G[0, 0], G[1, 1], G[0, 1] + G[1, 0]
    sxx, syy = (exx + nu * eyy) / (1.0 - nu * nu), (eyy + nu * exx) / (1.0 - nu * nu)
    sxy = gxy / (2.0 * (1.0 + nu))
    peak = 0.5 * (sxx + syy) + math.sqrt(0.25 * (sxx - syy) ** 2 + sxy**2)
    return K, peak


#: felupe's hexahedron27 node order as (i, j, k) offsets in a 3 x 3 x 3 block of grid nodes
_HEX27 = [(0, 0, 0), (2, 0, 0), (2, 2, 0), (0, 2, 0), (0, 0, 2), (2, 0, 2), (2, 2, 2), (0, 2, 2), (1, 0, 0),
          (2, 1, 0), (1, 2, 0), (0, 1, 0), (1, 0, 2), (2, 1, 2), (1, 2, 2), (0, 1, 2), (0, 0, 1), (2, 0, 1),
          (2, 2, 1), (0, 2, 1), (0, 1, 1), (2, 1, 1), (1, 0, 1), (1, 2, 1), (1, 1, 0), (1, 1, 2), (1, 1, 1)]


def _layers(half_width: float, layers: int) -> np.ndarray:
    """Nodes through the half width: ``layers`` quadratic elements shrinking by 0.7 toward the free face."""
    w = 0.7 ** np.arange(layers)
    zc = np.r_[0.0, np.cumsum(w / w.sum())] * half_width
    z = np.empty(2 * layers + 1)
    z[0::2], z[1::2] = zc, 0.5 * (zc[:-1] + zc[1:])
    return z


@lru_cache(maxsize=64)
def _hinge_3d_unit(tau: float, width: float, nu: float, level: int, layers: int) -> float:
    """K / (E b) of a hinge with R = 1, neck ``tau`` and plate width ``width``, three-dimensional."""
    import felupe as fem
    from scipy.sparse.linalg import spsolve

    x, h, eta, H = _columns(tau, level)
    z = _layers(0.5 * width, layers)
    P = np.empty((x.size, eta.size, z.size, 3))
    P[..., 0] = x[:, None, None]
    P[..., 1] = (0.5 * eta[None, :] * h[:, None])[:, :, None]
    P[..., 2] = z[None, None, :]
    grid = np.arange(x.size * eta.size * z.size).reshape(P.shape[:3])
    i, j, k = (a.ravel() for a in np.meshgrid(np.arange(0, x.size - 1, 2), np.arange(0, eta.size - 1, 2),
                                              np.arange(0, z.size - 1, 2), indexing="ij"))
    cells = np.stack([grid[i + a, j + b, k + c] for a, b, c in _HEX27], axis=1)
    pts = P.reshape(-1, 3)
    field = fem.Field(fem.RegionTriQuadraticHexahedron(fem.Mesh(pts, cells, cell_type="hexahedron27")), dim=3)
    fields = fem.FieldContainer([field])
    solid = fem.SolidBody(fem.LinearElastic(E=1.0, nu=nu), fields)
    X, Y, Z = (np.abs(v) < 1e-12 for v in pts.T)
    bounds = {
        "sym_x": fem.Boundary(field, mask=X, skip=(0, 1, 1)),
        "anti_y": fem.Boundary(field, mask=Y, skip=(0, 1, 1)),
        "mid_z": fem.Boundary(field, mask=Z, skip=(1, 1, 0)),
        "origin": fem.Boundary(field, mask=X & Y & Z, skip=(1, 0, 1)),
    }
    I_H = H**3 / 12.0
    face = grid[-1]
    dz = np.diff(z[0::2])
    wz = np.zeros(z.size)
    for e, d in enumerate(dz):                       # a uniform load on quadratic edges: d (1, 4, 1) / 6
        wz[2 * e:2 * e + 3] += d * np.array([1.0, 4.0, 1.0]) / 6.0
    F = np.outer(_face_forces(P[-1, :, 0, 1], I_H), wz)      # sigma_xx = M y / I_H, M = 1 per unit width
    _, dof1 = fem.dof.partition(fields, bounds)
    A = solid.assemble.matrix().tocsr()
    rhs = np.zeros(A.shape[0])
    rhs[3 * face.ravel()] = F.ravel()
    sol = np.zeros(A.shape[0])
    sol[dof1] = spsolve(A[dof1][:, dof1], rhs[dof1])
    ux = sol.reshape(-1, 3)[face, 0]
    theta_face = float(np.sum(F * ux)) / float(np.sum(F * P[-1, :, :, 1]))
    return 1.0 / (2.0 * (theta_face - H / I_H))


def hinge_fe_3d(t: float, R: float, b: float, *, nu: float = 0.3, level: int = 2, layers: int = 4) -> float:
    """Stiffness of a circular notch hinge of plate width ``b`` by three-dimensional finite elements.

    The plane-stress model of :func:`hinge_fe` extruded through the plate: 27-node
    hexahedra, a quarter in the plane and half the width (mid-plane symmetry ``u_z = 0``),
    ``layers`` elements through the half width, finer toward the free faces; the same pure
    moment (``sigma_xx = M y / I_H`` on the end face, uniform across the width) and the same
    subtraction of the extensions' beam rotation. It measures how far a wide plate, which
    restrains the neck's anticlastic strain, stiffens the hinge over plane stress.

    Parameters
    ----------
    t, R, b : float
        Neck thickness, notch radius and plate width, mm.
    nu : float
        Poisson's ratio.
    level, layers : int
        In-plane mesh level (as :func:`hinge_fe`) and elements through the half width.

    Returns
    -------
    float
        ``K / (E b)``, mm^2.
    """
    return _hinge_3d_unit(float(t) / float(R), float(b) / float(R), float(nu), int(level), int(layers)) * R * R


def hinge_fe(t: float, R: float, *, nu: float = 0.3, level: int = LEVEL) -> tuple[float, float]:
    """Stiffness and peak stress of a circular notch hinge by plane-stress finite elements.

    Parameters
    ----------
    t, R : float
        Neck thickness and notch radius, mm.
    nu : float
        Poisson's ratio (plane-stress results barely depend on it).
    level : int
        Mesh level, 1 (coarse) .. 5 (see the module's convergence table).

    Returns
    -------
    stiffness : float
        ``K / (E b)``, mm^2 (K in N mm/rad for E in MPa and plate width b in mm).
    peak_stress : float
        Largest stress at the neck per unit moment per unit width, ``sigma b / M``, 1/mm^2.
    """
    k, s = _hinge_unit(float(t) / float(R), float(nu), int(level))
    return k * R * R, s / (R * R)


def stage_fe(L: float, b: float, t: float, R: float, E: float, nu: float,
             u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Stage force and neck stress from the finite-element hinge, per copy.

    Parameters
    ----------
    L, b, t, R : float
        Link length between hinge centres, plate width, neck thickness, notch radius, mm.
    E, nu : float
        Young's modulus (MPa) and Poisson's ratio.
    u : ndarray, shape (k,)
        Stage travel, mm.

    Returns
    -------
    force_N, stress_MPa : ndarray, shape (k,)
        ``4 K theta / (L cos theta)`` with ``theta = asin(u/L)`` and ``K`` of
        :func:`hinge_fe`; the peak neck stress under ``M = K theta``.
    """
    k, s = hinge_fe(t, R, nu=nu)
    K = E * b * k
    theta = np.arcsin(np.clip(np.asarray(u, dtype=float) / L, -1.0, 1.0))
    M = K * theta
    return 4.0 * M / (L * np.cos(theta)), s * M / b
