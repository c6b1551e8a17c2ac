"""End-loaded cantilever blade, load of fixed direction, large deflection.

Notes
-----
A blade of length L, width b and thickness t (bending across t) is clamped at its
root and loaded at its free tip by a force P whose direction stays perpendicular to
the undeformed blade; the stroke u is the tip travel along P. As the blade bends its
tip draws back towards the root, the moment arm a of P shrinks and the blade
stiffens.

Exact solution: the elliptic-integral elastica of Bisshopp & Drucker (1945), see
:mod:`springsynth.elements._elastica`. With xi = u/L, I = b t^3/12 and the fitted
normalised force A(xi) = P L^2/(E I xi) (within 3.0e-4 of the exact solution for
xi <= 0.7) and moment B(xi) = M L/(E I xi) (within 6.0e-5):

    P = (E I / L^3) u A(u/L)                      -> 3 E I u / L^3 as u -> 0
    M = P a = (E I / L^2) u B(u/L)                -> P L (root moment)
    sigma = 6 M / (b t^2) = E t u B(u/L) / (2 L^2)

Check values of the exact solution: u/L = 0.302 at alpha = P L^2/(E I) = 1 and
0.811 at alpha = 10 (Bisshopp & Drucker 1945).

Assumptions and validity: Euler-Bernoulli beam, linear elastic, inextensible, load
direction fixed in space (not a follower load, no friction where it is applied);
u / L <= 0.7 (tip slope then about 68 deg); L / t >= 10 (common practice; shear adds
under 1 % of compliance). The beam modulus E is used: a wide blade at large
curvature (Searle's parameter b^2 / (R t) >> 1) approaches the plate modulus
E / (1 - nu^2), about 10 % stiffer for metals [memory: G.F.C. Searle, Experimental
Elasticity, 1908; common practice], so the model is on the soft side there.

References: K.E. Bisshopp & D.C. Drucker, Q. Appl. Math. 3(3):272-275, 1945;
small-deflection limit, common practice (Roark's Formulas for Stress and Strain);
L.L. Howell, Compliant Mechanisms, Wiley 2001, ch. 5 (pseudo-rigid-body model,
gamma = 0.8517, K_Theta = 2.67617 for this load case, a cross-check).
"""

from __future__ import annotations

from springsynth.elements import _elastica
from springsynth.elements._base import Param

#: Largest stroke / length inside the model's declared range.
STROKE_LIMIT = _elastica.CANTILEVER_XI_MAX


class BladeCantilever(_elastica.ElasticaBlade):
    """End-loaded cantilever; kernels as in the module notes. Shapes: ``p`` (n,), ``u`` (n, m)."""

    def force(self, p, mat, u):
        L, b, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        inv_L = 1.0 / L
        scale = (mat.E * b * t**3 / 12.0) * inv_L**3      # E I / L^3
        return _elastica.scaled_series(_elastica.cantilever_fit().force, u, inv_L, scale)

    def stress(self, p, mat, u):
        L, t = p["length_mm"], p["thickness_mm"]
        inv_L = 1.0 / L
        scale = 0.5 * mat.E * t * inv_L**2                 # sigma = E t u B / (2 L^2)
        return _elastica.scaled_series(_elastica.cantilever_fit().moment, u, inv_L, scale)


KIND = BladeCantilever(
    name="blade_cantilever",
    glyph="cantilever",
    verification="tip_beam",
    title="end-loaded cantilever blade, load direction fixed, large deflection; stiffening",
    params=(
        Param("length_mm", "mm", 2.0, 200.0, log=True, doc="free length from the clamp to the loaded tip", tolerance="linear"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="blade width, across the bending plane", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="blade thickness, in the bending direction", tolerance="strip",
              stock="strip"),
    ),
    forms=("strip",),
    validity=f"elastic; stroke u <= {STROKE_LIMIT:g} L; slenderness L/t >= {_elastica.SLENDERNESS_MIN:g}; "
    "load direction fixed; beam modulus E (wide blades may be up to 1/(1 - nu^2) stiffer)",
    sources=(
        _elastica.BISSHOPP_DRUCKER,
        "small-deflection limit k = 3 E I / L^3, sigma = 6 P L / (b t^2) (common practice; Roark's Formulas for Stress and Strain)",
        _elastica.HOWELL_PRBM,
    ),
    stroke_note="u = tip travel along the load, which stays perpendicular to the undeformed blade",
    monotonic_stress=True,
    stress_note="bending stress 6 P a / (b t^2) at the root (a = current moment arm), allowable = yield",
    extra={"stroke_limit": STROKE_LIMIT},
)
