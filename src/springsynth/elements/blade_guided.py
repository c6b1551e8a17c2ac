"""Guided blade flexure: one leaf, root clamped, far end guided, large deflection.

Notes
-----
A blade of length L, width b and thickness t (bending across t) is clamped at its
root; its far end may translate but not rotate and is free axially (as in a
parallelogram stage, where the shuttle follows the blades' shortening). The force P
acts perpendicular to the undeformed blade; the stroke u is the transverse travel of
the guided end.

By antisymmetry the blade bends into an S with an inflection point at mid-length, so
it is two cantilevers of length L/2, each carrying P at its tip and travelling u/2.
The exact cantilever is the elliptic-integral elastica of Bisshopp & Drucker (1945);
with xi = u/L, I = b t^3/12 and A(xi) = P (L/2)^2 / (E I xi) of that solution
(see :mod:`springsynth.elements._elastica`, which evaluates A by a fitted even
polynomial within 1.6e-4 of the exact solution for xi <= 0.5):

    P = 4 (E I / L^3) u A(u/L)                    -> 12 E I u / L^3 as u -> 0
    M = P a_half = 2 (E I / L^2) u B(u/L)         -> 6 E I u / L^2  (both ends)
    sigma = 6 M / (b t^2) = E t u B(u/L) / L^2    -> 3 E t u / L^2

with a_half the moment arm of P about each end of a half and B(xi) the fitted
normalised moment (within 3.6e-5). The force stiffens mildly (about 10 % at u = 0.3 L)
because the moment arms shorten as the blade rotates.

Assumptions and validity: Euler-Bernoulli beam, linear elastic, inextensible, load
perpendicular to the undeformed blade, no axial force; u / L <= 0.5 (the half
cantilevers then turn about 45 deg); L / t >= 10 (shear then adds at most ~3 % of
compliance, common practice). The beam modulus E is used: a wide blade whose
curvature is large against t / b^2 (Searle's parameter b^2 / (R t) >> 1) resists
anticlastic curvature and approaches the plate modulus E / (1 - nu^2), about 10 %
stiffer for metals [memory: G.F.C. Searle, Experimental Elasticity, 1908]; a
common rule of thumb uses E / (1 - nu^2) for blades wider than about 5 t [common
practice]. The model is therefore on the soft side for wide, strongly bent blades.

References: K.E. Bisshopp & D.C. Drucker, Q. Appl. Math. 3(3):272-275, 1945;
small-deflection limits, common practice (Roark's Formulas for Stress and Strain);
L.L. Howell, Compliant Mechanisms, Wiley 2001 (pseudo-rigid-body cross-check).
"""

from __future__ import annotations

from springsynth.elements import _elastica
from springsynth.elements._base import Param

#: Largest stroke / length inside the model's declared range.
STROKE_LIMIT = _elastica.GUIDED_XI_MAX


class BladeGuided(_elastica.ElasticaBlade):
    """Guided blade; kernels as in the module notes. Shapes: ``p`` (n,), ``u`` (n, m)."""

    def force(self, p, mat, u):
        L, b, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        inv_L = 1.0 / L
        scale = (mat.E * b * t**3 / 3.0) * inv_L**3       # 4 E I / L^3
        return _elastica.scaled_series(_elastica.guided_fit().force, u, inv_L, scale)

    def stress(self, p, mat, u):
        L, t = p["length_mm"], p["thickness_mm"]
        inv_L = 1.0 / L
        scale = mat.E * t * inv_L**2                       # sigma = E t u B / L^2
        return _elastica.scaled_series(_elastica.guided_fit().moment, u, inv_L, scale)


KIND = BladeGuided(
    name="blade_guided",
    glyph="guided_blade",
    verification="tip_beam",
    title="leaf flexure, far end guided (parallelogram blade), large deflection; near-linear, mild stiffening",
    params=(
        Param("length_mm", "mm", 2.0, 200.0, log=True, doc="free length of the blade between clamp and guided end", tolerance="linear"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="blade width, across the bending plane", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="blade thickness, in the bending direction", tolerance="strip",
              stock="strip"),
    ),
    forms=("strip",),
    validity=f"elastic; stroke u <= {STROKE_LIMIT:g} L; slenderness L/t >= {_elastica.SLENDERNESS_MIN:g}; "
    "guided end axially free; beam modulus E (wide blades may be up to 1/(1 - nu^2) stiffer)",
    sources=(
        _elastica.BISSHOPP_DRUCKER + ", applied to the two half-length cantilevers of the S-shaped blade",
        "small-deflection limit k = 12 E I / L^3, sigma = 3 E t u / L^2 (common practice; Roark's Formulas for Stress and Strain)",
        _elastica.HOWELL_PRBM,
    ),
    stroke_note="u = transverse travel of the guided end, perpendicular to the undeformed blade",
    monotonic_stress=True,
    stress_note="bending stress 6 M / (b t^2) at the clamped and guided ends, allowable = yield",
    extra={"stroke_limit": STROKE_LIMIT},
)
