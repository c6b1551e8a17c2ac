"""Bonded elastomer blocks by continuum finite elements (felupe, a general-purpose non-linear FE library).

Notes
-----
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
With the plates' contact (same block, levels 3, 4, 5; forces in N): until the bulge
touches the plates the levels converge to first order (u/t = 0.1: 199.24, 197.83, 196.99;
the 3/4 and 4/5 extrapolations agree within 0.01 %, within 0.2 % up to u/t = 0.125).
Once it rolls onto them (u/t >= 0.15 here, S u/t >= about 0.13 in general) the level-to-level
change shrinks and loses its sign (u/t = 0.2: 470.78, 468.78, 469.44; 0.3: 871.78, 872.93,
872.35): the two extrapolations then differ by up to 2 %, and a first-order fit through the
three levels lies within 1 % of 4 F_4 - 3 F_3. The reference is uncertain by about 1 % there.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from springsynth.model.materials import Material


def _edge_graded(a: float, zone: float, n: int, n_in: int, grading: float = 0.6) -> np.ndarray:
    """Nodes on [0, a]: ``n_in`` equal elements up to ``a - zone``, then ``n`` elements shrinking
    toward ``a`` (the free side or the bonded face) by the ratio ``0.6^(3/n)`` (so that a finer
    level splits every element of the zone, not only the smallest)."""
    zone = min(zone, a)
    w = (grading ** (3.0 / n)) ** np.arange(n)
    x = a - zone + np.r_[0.0, np.cumsum(w / w.sum() * zone)]
    if a - zone > 1e-9 * a:
        x = np.r_[np.linspace(0.0, a - zone, n_in + 1)[:-1], x]
    x[-1] = a
    return x


def _block_mesh(fem, L, W, t, n_edge, grading):
    """One eighth of the block (27-node hexahedra graded toward the bonded edges) with the plate's
    reference point appended, and the indices of the free-side nodes that may touch the plate."""
    a, b, h = L / 2.0, W / 2.0, t / 2.0

    def nodes(half):
        zone = min(half, t)
        return _edge_graded(half, zone, n_edge, max(1, math.ceil((half - zone) / t)), grading)

    mesh = fem.Grid(nodes(a), nodes(b), _edge_graded(h, h, n_edge, 0, grading))
    mesh = mesh.add_midpoints_edges().add_midpoints_faces().add_midpoints_volumes()
    mesh.update(cell_type="hexahedron27")
    X = mesh.points
    free = np.flatnonzero(((np.abs(X[:, 0] - a) < 1e-9 * a) | (np.abs(X[:, 1] - b) < 1e-9 * b)) & (X[:, 2] < h * (1 - 1e-9)))
    mesh.add_points(np.array([[0.0, 0.0, h]]))            # the plate's reference point
    mesh.points_without_cells = mesh.points_without_cells[:-1]
    return mesh, free


def _load_ramp(u, t, max_step):
    """Compressions to step through (the requested ones, with steps of at most ``max_step t`` between
    them) and the indices of the requested ones in it."""
    grid = np.arange(1, math.ceil(u[-1] / (max_step * t)) + 1) * (max_step * t)
    ramp = np.unique(np.r_[u, grid[grid < u[-1] * (1 - 1e-9)]])
    ramp = ramp[np.r_[True, np.diff(ramp) > 1e-9 * t]]
    return ramp, np.searchsorted(ramp, u - 1e-9 * t)


def pad_force_fe(L: float, W: float, t: float, mat: Material, u: np.ndarray, *, n_edge: int = 4,
                 max_step: float = 0.025, grading: float = 0.6) -> np.ndarray:
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
    max_step : float
        Largest increment of the nominal strain u/t between load steps (steps are added
        between the requested compressions as needed; a step whose Newton iteration fails
        is cut into smaller increments, felupe ``CutbackPlugin``; the law is elastic, so
        the steps change no result, only how far Newton's method reaches).

    Returns
    -------
    ndarray, shape (k,)

    Notes
    -----
    felupe (A. Dutzler, open finite-element infrastructure for non-linear mechanics):
    one eighth of the block (three symmetry planes), tri-quadratic 27-node hexahedra,
    mixed u-p-J nearly-incompressible formulation (``NearlyIncompressible``), the
    material's own Ogden series (felupe's ``2 mu_i/alpha_i^2`` convention: mu_i =
    mu_p alpha_p / 2), bonded face: all displacement components prescribed;
    Newton-Raphson per step.

    Plates: they reach past the block's free sides. The bulge next to a bonded edge rolls
    onto the plate from u/t of about 0.15 (S = 1) on; the nodes of the free sides meet the
    plate's plane in frictionless node-to-plane contact (felupe ``MultiPointContact``,
    penalty 1e6 N/mm), and the contact force is part of the plate force. Without it (plates
    cut flush) the side face folds around the bonded edge, the corner elements turn inside
    out from u/t of about 0.2 on (earlier on finer meshes) and the force has no mesh limit.

    Mesh: graded toward the singular bonded edges; its convergence is in the module's Notes.
    """
    import felupe as fem
    import felupe.constitution.tensortrax as tmat

    mu = [m * a / 2.0 for m, a in zip(mat.ogden_mu_MPa, mat.ogden_alpha)]
    al = list(mat.ogden_alpha)
    bulk = mat.E_MPa / (3.0 * (1.0 - 2.0 * mat.nu))
    h = t / 2.0
    mesh, free = _block_mesh(fem, L, W, t, n_edge, grading)
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
    plate = fem.MultiPointContact(field_, points=free, centerpoint=mesh.npoints - 1, skip=(True, True, False))
    ramp, at = _load_ramp(np.asarray(u, dtype=float), t, max_step)
    step = fem.Step(items=[solid, plate], ramp={bc["top"]: -ramp / 2.0}, boundaries=bc)
    cutback = [fem.CutbackPlugin()] if hasattr(fem, "CutbackPlugin") else []   # felupe >= 11
    job = fem.CharacteristicCurve(steps=[step], boundary=bc["top"], plugins=cutback)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        job.evaluate(tol=1e-9, verbose=0)
    F = -4.0 * np.array(job.y)[:, 2]
    if F.size != ramp.size:
        raise RuntimeError("finite-element solution stopped before the last step")
    return F[at]


def pad_force_reference(L: float, W: float, t: float, mat: Material, u: np.ndarray) -> np.ndarray:
    """``pad_force_fe`` on levels 3 and 4, extrapolated to first order (see the module's mesh study)."""
    F3 = pad_force_fe(L, W, t, mat, u, n_edge=3)
    F4 = pad_force_fe(L, W, t, mat, u, n_edge=4)
    return 4.0 * F4 - 3.0 * F3
