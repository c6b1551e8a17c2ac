"""Guided round-wire flexure: one wire, root clamped, far end guided, large deflection.

Notes
-----
The round-wire counterpart of ``blade_guided``: a wire of length L and diameter d,
clamped at its root, far end free to translate (axially too) but not to rotate,
loaded perpendicular to the undeformed wire; the stroke u is the transverse travel
of the guided end. A round section bends alike in every direction, so the plane of
the stroke does not matter.

By antisymmetry the wire is two cantilevers of length L/2 (inflection point at
mid-length), each solved exactly by the Bisshopp & Drucker (1945) elastica, see
:mod:`springsynth.elements._elastica` (fitted force A within 1.6e-4 and moment B
within 3.6e-5 of the exact solution for xi = u/L <= 0.5). With I = pi d^4/64:

    P = 4 (E I / L^3) u A(u/L)                    -> 12 E I u / L^3 as u -> 0
    M = 2 (E I / L^2) u B(u/L)                    -> 6 E I u / L^2  (both ends)
    sigma = 32 M / (pi d^3) = E d u B(u/L) / L^2  -> 3 E d u / L^2

Assumptions and validity: Euler-Bernoulli beam, linear elastic, inextensible, load
perpendicular to the undeformed wire, no axial force; u / L <= 0.5; L / d >= 10
(common practice; shear then adds about 2 % of compliance).

Fatigue (under a duty): the bending stress at the two ends of the duty, judged as spring wire
in bending (:mod:`springsynth.checks.fatigue`) against the wire strength S_ut(d).

References: K.E. Bisshopp & D.C. Drucker, Q. Appl. Math. 3(3):272-275, 1945;
small-deflection limit, common practice (Roark's Formulas for Stress and Strain);
L.L. Howell, Compliant Mechanisms, Wiley 2001 (pseudo-rigid-body cross-check).
"""

from __future__ import annotations

import math

from springsynth.elements import _elastica
from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from springsynth.elements.helical_compression import wire_strength

#: Largest stroke / length inside the model's declared range.
STROKE_LIMIT = _elastica.GUIDED_XI_MAX


class WireGuided(ElementKind):
    """Guided round wire; kernels as in the module notes. Shapes: ``p`` (n,), ``u`` (n, m)."""

    def force(self, p, mat, u):
        L, d = p["length_mm"], p["wire_diameter_mm"]
        inv_L = 1.0 / L
        scale = (mat.E * (math.pi / 16.0) * d**4) * inv_L**3   # 4 E I / L^3, I = pi d^4 / 64
        return _elastica.scaled_series(_elastica.guided_fit().force, u, inv_L, scale)

    def stress(self, p, mat, u):
        L, d = p["length_mm"], p["wire_diameter_mm"]
        inv_L = 1.0 / L
        scale = mat.E * d * inv_L**2                            # sigma = E d u B / L^2
        return _elastica.scaled_series(_elastica.guided_fit().moment, u, inv_L, scale)

    def fatigue_ultimate(self, p, mat):
        return wire_strength(p["wire_diameter_mm"], mat)

    def validity_margins(self, p, mat, u_max):
        L, d = p["length_mm"], p["wire_diameter_mm"]
        return {
            "stroke": _elastica.stroke_margin(u_max, L, STROKE_LIMIT),
            "slenderness": _elastica.slenderness_margin(L, d),
        }

    def box(self, p, u_max):
        d = p["wire_diameter_mm"]
        return u_max + d, p["length_mm"].copy(), d.copy()

    def mass(self, p, mat, u_max=None):
        volume = p["length_mm"] * (math.pi / 4.0) * p["wire_diameter_mm"] ** 2
        return mat.rho * volume * DENSITY_TO_G_PER_MM3


KIND = WireGuided(
    name="wire_guided",
    glyph="guided_wire",
    verification="tip_beam",
    fatigue="wire_bending",
    title="round-wire flexure, far end guided, large deflection; near-linear, mild stiffening",
    params=(
        Param("length_mm", "mm", 2.0, 200.0, log=True, doc="free length of the wire between clamp and guided end", tolerance="linear"),
        Param("wire_diameter_mm", "mm", 0.05, 5.0, log=True, thickness=True, doc="wire diameter", tolerance="wire",
              stock="wire"),
    ),
    forms=("wire",),
    validity=f"elastic; stroke u <= {STROKE_LIMIT:g} L; slenderness L/d >= {_elastica.SLENDERNESS_MIN:g}; "
    "guided end axially free",
    sources=(
        _elastica.BISSHOPP_DRUCKER + ", applied to the two half-length cantilevers of the S-shaped wire",
        "small-deflection limit k = 12 E I / L^3, I = pi d^4 / 64, sigma = 32 M / (pi d^3) (common practice; Roark's Formulas for Stress and Strain)",
        _elastica.HOWELL_PRBM,
    ),
    stroke_note="u = transverse travel of the guided end, perpendicular to the undeformed wire",
    monotonic_stress=True,
    stress_note="bending stress 32 M / (pi d^3) at the clamped and guided ends, allowable = yield",
    extra={"stroke_limit": STROKE_LIMIT},
)
