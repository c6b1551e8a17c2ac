"""Bonded elastomer pad: a rectangular block compressed through its thickness.

Notes
-----
Uniaxial law. Every hyperelastic material is held as an incompressible Ogden series
(Ogden 1972, Proc. R. Soc. Lond. A 326:565), whose uniaxial nominal (first Piola)
stress at stretch lambda is

    P(lambda) = sum_p mu_p (lambda^(alpha_p - 1) - lambda^(-alpha_p/2 - 1))

(tension positive). Neo-Hookean and Mooney-Rivlin laws are special cases of the series.

Bonded faces (Gent & Lindley, Proc. Inst. Mech. Eng. 173:111, 1959): bonding both loaded
faces to rigid plates raises the small-strain compression modulus to

    E_a = E (1 + beta S^2),   beta = 2,   S = L W / (2 t (L + W))

(S = one loaded area / force-free area; beta = 2 for square, circular or moderately
rectangular blocks), and for large S the bulk compliance adds in series,
1/E_a' = 1/E_a + 1/B, with B = E / (3 (1 - 2 nu)) from the material's E and nu.

Approximation used here (a modelling choice of this project): the finite-strain
uniaxial response is scaled by the same factor,

    F(u) = L W phi (-P(lambda)),  lambda = 1 - u/t,
    phi = (1 + beta S^2) / (1 + 3 (1 - 2 nu) (1 + beta S^2)),

which reproduces Gent & Lindley exactly at small strain (E_a' A / t) and follows the
rubber's own non-linearity beyond. The shape-factor theory is a small-strain result and
real bonded blocks stiffen faster than this as they thin, so the model is trusted only to
a nominal compressive strain u/t <= 0.2 (project choice; static design practice for
bonded rubber keeps compressive strains of the order of 10-20 %) and to the material's
own strain_limit, whichever is smaller.

Range of the correction: S <= 5 (beyond, the result hinges on the bulk modulus and bond
quality), aspect L/W between 1/4 and 4 ("moderately rectangular"; long strips follow a
different coefficient), and thickness t <= min(L, W) (tall blocks bulge unevenly, the
parabolic bulge behind the formula fails at small S, and they buckle; common practice).

Stress measure: a rubber pad fails by strain (bond-edge shear, fatigue cracking), not by
a yield stress, so the governing quantity is the nominal compressive strain. ``stress``
returns its equivalent E u/t (MPa) and ``allowable`` E * strain_limit, so the stress
ratio equals (u/t) / strain_limit.

Linear-elastic materials carry no Ogden series: their force is zero and the margin
``needs_hyperelastic_law`` marks the design infeasible.
"""

from __future__ import annotations

import numpy as np

from ._base import DENSITY_TO_G_PER_MM3, ElementKind, Param

#: Gent & Lindley (1959) coefficient for square, circular or moderately rectangular blocks
BETA = 2.0
#: largest shape factor for which the correction is trusted (project choice)
S_MAX = 5.0
#: largest plan aspect ratio counted as "moderately rectangular" (project choice)
ASPECT_MAX = 4.0
#: largest nominal compressive strain u/t of the model (project choice, see Notes)
MODEL_STRAIN_LIMIT = 0.2
#: stretch floor that keeps the law finite far outside the valid range
LAMBDA_MIN = 0.05


def ogden_uniaxial_stress(lam, mu, alpha):
    """Incompressible uniaxial nominal stress of an Ogden series, MPa (tension positive).

    Parameters
    ----------
    lam : ndarray, shape (n, m)
        Stretch, > 0.
    mu, alpha : ndarray, shape (n, k)
        Ogden moduli (MPa) and exponents per row; terms with mu = 0 add nothing.

    Returns
    -------
    P : ndarray, shape (n, m)
        ``sum_p mu_p (lam^(alpha_p - 1) - lam^(-alpha_p/2 - 1))``.

    Notes
    -----
    Evaluated as ``sum_p mu_p (q_p^-2 - q_p) / lam`` with ``q_p = lam^(-alpha_p/2)``:
    one exponential per term. Columns whose mu is zero for the whole population are
    skipped.
    """
    ln = np.log(lam)
    acc = np.zeros_like(lam)
    q = np.empty_like(lam)
    w = np.empty_like(lam)
    for k in range(mu.shape[1]):
        muk = mu[:, k]
        if not muk.any():
            continue
        np.multiply(ln, (-0.5 * alpha[:, k])[:, None], out=q)
        np.exp(q, out=q)                      # q = lam^(-alpha/2)
        np.multiply(q, q, out=w)
        np.reciprocal(w, out=w)               # lam^alpha
        np.subtract(w, q, out=w)
        np.multiply(w, muk[:, None], out=w)
        np.add(acc, w, out=acc)
    return np.divide(acc, lam, out=acc)


def shape_factor(L, W, t):
    """Gent & Lindley shape factor ``L W / (2 t (L + W))``, same shape as the inputs."""
    return L * W / (2.0 * t * (L + W))


def bonded_factor(S, nu):
    """Stiffening of bonded faces with bulk compliance, ``phi = E_a'/E``, shape of S.

    ``phi = f / (1 + 3 (1 - 2 nu) f)`` with ``f = 1 + 2 S^2`` (Gent & Lindley 1959),
    using ``E/B = 3 (1 - 2 nu)``.
    """
    f = 1.0 + BETA * S * S
    return f / (1.0 + 3.0 * (1.0 - 2.0 * nu) * f)


class ElastomerPad(ElementKind):
    def force(self, p, mat, u):
        L, W, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        k = L * W * bonded_factor(shape_factor(L, W, t), mat.nu)
        lam = u * (-1.0 / t)[:, None]
        np.add(lam, 1.0, out=lam)
        np.maximum(lam, LAMBDA_MIN, out=lam)
        # series with negated moduli = compressive nominal stress, positive (and +0 at u = 0)
        sigma = ogden_uniaxial_stress(lam, -mat.ogden_mu, mat.ogden_alpha)
        return np.multiply(sigma, k[:, None], out=sigma)

    def stress(self, p, mat, u):
        return u * (mat.E / p["thickness_mm"])[:, None]

    def allowable(self, p, mat):
        lim = np.where(np.isfinite(mat.strain_limit), mat.strain_limit, MODEL_STRAIN_LIMIT)
        return mat.E * lim

    def validity_margins(self, p, mat, u_max):
        L, W, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        eps = u_max / t
        lim = np.where(np.isfinite(mat.strain_limit), mat.strain_limit, np.inf)
        aspect = np.maximum(L, W) / np.minimum(L, W)
        return {
            "compressive_strain": eps / np.minimum(lim, MODEL_STRAIN_LIMIT) - 1.0,
            "shape_factor": shape_factor(L, W, t) / S_MAX - 1.0,
            "aspect_ratio": aspect / ASPECT_MAX - 1.0,
            "slenderness": t / np.minimum(L, W) - 1.0,
            "needs_hyperelastic_law": np.where(mat.hyperelastic, -1.0, 1.0),
        }

    def box(self, p, u_max):
        return p["thickness_mm"], p["length_mm"], p["width_mm"]

    def mass(self, p, mat, u_max=None):
        return p["length_mm"] * p["width_mm"] * p["thickness_mm"] * mat.rho * DENSITY_TO_G_PER_MM3


KIND = ElastomerPad(
    name="elastomer_pad",
    title="bonded elastomer block compressed through its thickness (hyperelastic law x shape factor)",
    params=(
        Param("length_mm", "mm", 2.0, 200.0, log=True, doc="block length L (loaded face)"),
        Param("width_mm", "mm", 2.0, 200.0, log=True, doc="block width W (loaded face)"),
        Param("thickness_mm", "mm", 0.5, 50.0, log=True, thickness=True, doc="block thickness t, along the stroke"),
    ),
    forms=("elastomer",),
    validity=(
        "hyperelastic material; u/t <= min(0.2, strain_limit); shape factor S = LW/(2t(L+W)) <= 5; "
        "1/4 <= L/W <= 4; t <= min(L, W)"
    ),
    sources=(
        "R.W. Ogden, Proc. R. Soc. Lond. A 326:565-584, 1972 (uniaxial law of the Ogden series)",
        "A.N. Gent & P.B. Lindley, Proc. Inst. Mech. Eng. 173:111-122, 1959 (E_a = E(1 + 2S^2), bulk compliance)",
        "scaling of the finite-strain law by the small-strain factor: springsynth modelling choice",
    ),
    stroke_note="u = compression of the block thickness",
    monotonic_stress=True,
    stress_note="nominal compressive strain as its equivalent E u/t; allowable E x strain_limit (ratio = strain / strain_limit)",
)
