"""Helical compression spring of round wire, squared-and-ground ends.

Notes
-----
Symbols: d wire diameter, D mean coil diameter, C = D/d spring index, Na active
coils, Nt total coils, L0 free length, Ls solid length, F force, u deflection.

Rate and stress (Budynas & Nisbett, *Shigley's Mechanical Engineering Design*,
9th ed., ch. 10; Bergstraesser factor as used there for static service)::

    k   = G d^4 / (8 D^3 Na)
    tau = K_B 8 F D / (pi d^3),      K_B = (4C + 2) / (4C - 3)

K_B corrects the nominal torsional shear for direct shear and coil curvature at the
inner fibre; it lies within about 1 % of Wahl's K_W = (4C-1)/(4C-4) + 0.615/C over
4 <= C <= 12 (K_W is a little higher).

End geometry assumed: squared and ground at both ends (the usual form for a spring
that stands on a flat seat; Shigley Table 10-1): Nt = Na + 2, Ls = d Nt and
L0 = p Na + 2 d (p = pitch). The wire length, hence the mass, counts Nt coils.

Allowable stress (static, set not removed; Shigley Tables 10-4 and 10-6)::

    S_ut = A / d^m                      where the material gives a wire-size law
    S_ut = uts                          otherwise
    S_sy = torsion_share * S_ut         (0.45 cold-drawn, 0.50 hardened and tempered,
                                         0.35 austenitic stainless and non-ferrous)
    S_sy = 0.577 * yield                when the material has no torsion_share
                                        (von Mises shear yield of a ductile metal)

The wire-size law is applied over the whole searched wire range; its published fit
covers 0.1-6.5 mm for music wire and narrower ranges for some other wires (see the
material's source).

Validity (each a normalised margin, <= 0 inside). Two are rules of the trade, listed in
``design_rules``: the force law holds beyond them, the spring is only harder to make
(the search still keeps to them, so that it proposes springs a maker accepts):

* ``spring_index`` (design rule): 4 <= C <= 12 (Shigley's recommended range; SMI
  prefers the same). Below 4 coiling strains the wire, above 12 the spring tangles and
  its diameter is hard to hold. The rate and the curvature factors themselves hold for
  any index (the factors tend to 1 as C grows); see ``low_index`` for the model's end.
* ``solid_height`` (design rule): the stroke plus a fractional overrun xi = 0.15 must
  fit before the coils close, L0 >= Ls + (1 + xi) u_max (Shigley's static design rule).
* ``coils_close``: the coils must not close within the stroke, L0 >= Ls + u_max;
  beyond it the spring is solid and the linear rate no longer describes it.
* ``low_index``: C >= 2, where the correction factors are evaluated (below it they
  are held at C = 2, so the stress would be underestimated).
* ``active_coils``: Na >= 3 (Shigley); fewer coils make the rate depend on how the
  end coils seat.
* ``buckling``: u_max <= y_cr, the critical deflection of Shigley ch. 10,
  ``y_cr = L0 C1' [1 - sqrt(1 - C2'/lambda^2)]``, lambda = alpha L0/D,
  C1' = E/(2(E-G)), C2' = 2 pi^2 (E-G)/(2G+E), with alpha = 0.5 (both ends on flat
  parallel plates, squared-and-ground ends). Where C2'/lambda^2 >= 1 the spring is
  absolutely stable and the margin is -1.
* ``helix_angle``: pitch angle at free length <= 12 deg, the small-helix-angle
  assumption of the rate and stress formulas.

Fatigue (under a duty): the same corrected shear K_B 8FD/(pi d^3) at the two ends of the
duty, judged in torsion (:mod:`springsynth.checks.fatigue`) against the wire strength S_ut(d).

Outside the index range the correction factors are evaluated at max(C, 2) so that
the stress stays finite and positive (K_B diverges at C = 0.75); such designs are
flagged by ``spring_index`` anyway.
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param

__all__ = [
    "KIND", "bergstrasser_factor", "wahl_factor", "direct_shear_factor", "spring_rate",
    "wire_strength", "torsional_allowable", "critical_deflection",
]

#: recommended spring index range (Shigley ch. 10)
INDEX_MIN, INDEX_MAX = 4.0, 12.0
#: fewest active coils (Shigley ch. 10)
ACTIVE_COILS_MIN = 3.0
#: fractional overrun to closure (Shigley ch. 10, static design)
OVERRUN = 0.15
#: end-condition constant for ends on flat parallel plates (Shigley ch. 10)
ALPHA_FLAT_ENDS = 0.5
#: largest helix angle for the close-coiled formulas, rad
HELIX_ANGLE_MAX = math.radians(12.0)
#: coils added to Na for squared-and-ground ends (Shigley Table 10-1)
END_COILS = 2.0
#: smallest index the correction factors are evaluated at: below it they diverge or turn
#: negative (K_B at C = 0.75); such springs are outside the validity range anyway
INDEX_FACTOR_FLOOR = 2.0
#: shear yield / tensile yield by von Mises, used when a material has no torsion_share
VON_MISES_SHEAR = 0.577


# --------------------------------------------------------------------------- shared formulas

def direct_shear_factor(C):
    """``K_s = 1 + 0.5/C``, direct-shear factor (Shigley ch. 10)."""
    return 1.0 + 0.5 / C


def bergstrasser_factor(C):
    """``K_B = (4C + 2)/(4C - 3)``, curvature and direct-shear factor (Shigley ch. 10)."""
    return (4.0 * C + 2.0) / (4.0 * C - 3.0)


def wahl_factor(C):
    """``K_W = (4C - 1)/(4C - 4) + 0.615/C`` (A.M. Wahl, *Mechanical Springs*, 1963)."""
    return (4.0 * C - 1.0) / (4.0 * C - 4.0) + 0.615 / C


def spring_rate(G, d, D, Na):
    """``k = G d^4 / (8 D^3 Na)``, N/mm, for G in MPa and d, D in mm."""
    return G * d**4 / (8.0 * D**3 * Na)


def wire_strength(d, mat):
    """Tensile strength of the wire, MPa, shape (n,).

    ``S_ut = sut_A / d^sut_m`` where the material gives the law (Shigley Table 10-4),
    else its ``uts``.
    """
    return np.where(np.isfinite(mat.sut_A), mat.sut_A / d**mat.sut_m, mat.uts)


def torsional_allowable(d, mat):
    """Static torsional allowable, MPa, shape (n,).

    ``torsion_share * S_ut(d)`` (Shigley Table 10-6, set not removed), or
    ``0.577 * yield`` when the material gives no ``torsion_share``.
    """
    return np.where(np.isfinite(mat.torsion_share), mat.torsion_share * wire_strength(d, mat),
                    VON_MISES_SHEAR * mat.yield_)


def critical_deflection(L0, D, E, G, alpha):
    """Buckling deflection ``y_cr`` of a compression spring, mm (Shigley ch. 10).

    ``y_cr = L0 C1' [1 - sqrt(1 - C2'/lambda^2)]`` with ``lambda = alpha L0 / D``,
    ``C1' = E/(2(E-G))`` and ``C2' = 2 pi^2 (E-G)/(2G+E)``; ``inf`` where
    ``C2'/lambda^2 >= 1`` (absolutely stable).
    """
    L0, D, E, G, alpha = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (L0, D, E, G, alpha)))
    lam = alpha * L0 / D
    c1 = E / (2.0 * (E - G))
    r = 2.0 * math.pi**2 * (E - G) / (2.0 * G + E) / lam**2
    y = L0 * c1 * (1.0 - np.sqrt(np.maximum(1.0 - r, 0.0)))
    return np.where(r >= 1.0, np.inf, y)


# --------------------------------------------------------------------------- the kind

class HelicalCompression(ElementKind):
    @staticmethod
    def _rate(p, mat):
        return spring_rate(mat.G, p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"])

    def force(self, p, mat, u):
        return self._rate(p, mat)[:, None] * u

    def stress(self, p, mat, u):
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        per_mm = bergstrasser_factor(np.maximum(D / d, INDEX_FACTOR_FLOOR)) * 8.0 * D / (math.pi * d**3) * self._rate(p, mat)
        return per_mm[:, None] * u

    def allowable(self, p, mat):
        return torsional_allowable(p["wire_diameter_mm"], mat)

    def fatigue_ultimate(self, p, mat):
        return wire_strength(p["wire_diameter_mm"], mat)

    def validity_margins(self, p, mat, u_max):
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        Na, L0 = p["active_coils"], p["free_length_mm"]
        C = D / d
        Ls = d * (Na + END_COILS)
        pitch = (L0 - END_COILS * d) / Na
        y_cr = critical_deflection(L0, D, mat.E, mat.G, ALPHA_FLAT_ENDS)
        return {
            "spring_index": np.maximum(C / INDEX_MAX, INDEX_MIN / C) - 1.0,
            "low_index": INDEX_FACTOR_FLOOR / C - 1.0,
            "active_coils": ACTIVE_COILS_MIN / Na - 1.0,
            "solid_height": (Ls + (1.0 + OVERRUN) * u_max) / L0 - 1.0,
            "coils_close": (Ls + u_max) / L0 - 1.0,
            "buckling": u_max / y_cr - 1.0,
            "helix_angle": pitch / (math.pi * D * math.tan(HELIX_ANGLE_MAX)) - 1.0,
        }

    def box(self, p, u_max):
        across = p["mean_diameter_mm"] + p["wire_diameter_mm"]
        return p["free_length_mm"], across, across

    def mass(self, p, mat, u_max=None):
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        wire_length = math.pi * D * (p["active_coils"] + END_COILS)
        return mat.rho * (math.pi / 4.0) * d**2 * wire_length * DENSITY_TO_G_PER_MM3

    # search coordinates that follow the design rules: index instead of coil diameter,
    # free length as a multiple of the solid length
    @property
    def search_params(self):
        return _SEARCH

    def from_search(self, q):
        d, Na = q["wire_diameter_mm"], q["active_coils"]
        return {"wire_diameter_mm": d, "mean_diameter_mm": q["spring_index"] * d, "active_coils": Na,
                "free_length_mm": q["free_length_ratio"] * d * (Na + END_COILS)}

    def to_search(self, p):
        d, Na = p["wire_diameter_mm"], p["active_coils"]
        return {"wire_diameter_mm": d, "spring_index": p["mean_diameter_mm"] / d, "active_coils": Na,
                "free_length_ratio": p["free_length_mm"] / (d * (Na + END_COILS))}


#: search coordinates shared by the coil springs: wire, index within its recommended range, coils
COIL_SEARCH = (
    Param("wire_diameter_mm", "mm", 0.1, 6.0, log=True, thickness=True, stock="wire"),
    Param("spring_index", "-", INDEX_MIN, INDEX_MAX),
    Param("active_coils", "-", ACTIVE_COILS_MIN, 40.0, log=True),
)
_SEARCH = COIL_SEARCH + (Param("free_length_ratio", "-", 1.1, 12.0, log=True, doc="free length / solid length"),)


KIND = HelicalCompression(
    name="helical_compression",
    glyph="compression_coil",
    verification="coil_compression",
    fatigue="torsion",
    title="helical compression spring, round wire, squared-and-ground ends; linear rate",
    params=(
        Param("wire_diameter_mm", "mm", 0.1, 6.0, log=True, thickness=True, doc="wire diameter d", tolerance="wire",
              stock="wire"),
        Param("mean_diameter_mm", "mm", 1.0, 60.0, log=True, doc="mean coil diameter D", tolerance="coiling"),
        Param("active_coils", "-", 2.0, 40.0, log=True, doc="active coils Na (total Na + 2)", tolerance="coils"),
        Param("free_length_mm", "mm", 2.0, 300.0, log=True, doc="free length L0", tolerance="coiling"),
    ),
    forms=("wire",),
    validity=("active coils >= 3; spring index D/d >= 2; coils not closed within the stroke; stroke below "
              "the buckling deflection for ends on flat parallel plates (alpha = 0.5); helix angle <= 12 deg. "
              "Design rules: spring index 4 <= D/d <= 12; free length >= solid length d(Na+2) + 1.15 x stroke"),
    design_rules=frozenset({"spring_index", "solid_height"}),
    sources=(
        "R.G. Budynas & J.K. Nisbett, Shigley's Mechanical Engineering Design, 9th ed., ch. 10: "
        "rate, Bergstraesser factor, end types (Table 10-1), wire strength (Table 10-4), "
        "torsional allowables (Table 10-6), buckling, overrun xi = 0.15",
        "A.M. Wahl, Mechanical Springs, 2nd ed., 1963 (curvature correction)",
    ),
    stroke_note="u = compression of the spring from its free length",
    stress_note=("corrected shear stress K_B 8FD/(pi d^3) at the coil inside; allowable "
                 "torsion_share x S_ut(d) (Shigley Table 10-6, set not removed), or 0.577 x yield"),
)
