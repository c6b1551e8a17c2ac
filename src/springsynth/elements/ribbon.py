"""Prestressed rolled-ribbon constant-force spring: a strip coiled to a natural radius.

Notes
-----
Plateau force and bending stress (spring handbooks, common practice; the factor 26.4 "to
compensate for cross curvature" was seen on secondary engineering and spring-maker pages,
the handbook attribution is from memory):

    F_p = E b t^3 / (26.4 R_n^2),        S = E t / (2 R_n)

with b the strip width, t its thickness and R_n the natural (free) inside radius of the
coil. Pure beam theory with the drum radius equal to R_n gives E b t^3/(24 R_n^2); the
handbook factor 26.4 allows for the cross curvature of a wide strip, so the formula is
trusted only for wide strips (b/t >= 10 here).

Mounting (usage rules of the handbooks, as reproduced on makers' pages): the coil sits on a drum of
diameter D_d = 1.15 * 2 R_n (the middle of the recommended 10-20 % oversize), at least
1.5 wraps stay on the drum at full extension, and full force develops after about
1.25 drum diameters of extension.

Ramp (a modelling choice of this project, not a published law): the force rises from 0
to F_p over the ramp length u_r = 1.25 D_d along the C1 quadratic

    F(u) = F_p * xi (2 - xi),   xi = min(u / u_r, 1),

which starts with a finite stiffness 2 F_p / u_r and joins the plateau with zero slope.
Designers who want only the plateau preload the strip (negative offset) past u_r.

Stress: the straightened part of the strip carries the full bending stress S as soon as
any strip has left the drum, so the governing stress is taken as the constant S over the
whole stroke (ramp included; conservative at u = 0). Its allowable is the material's
yield strength. Ribbon life is governed by this stress (handbooks give life charts in
terms of S, equivalently R_n/t, of a few thousand to some tens of thousands of cycles);
a stress ratio below 1 is a static check only, not a fatigue rating.

Fatigue (under a duty): every stretch of strip that leaves the drum during a duty cycle goes
from the drum curvature to straight and back, a stress cycle from S (1 - 1/DRUM_RATIO) (the
strip is bent on the drum to a radius DRUM_RATIO R_n, larger than its natural radius) to S,
once per duty cycle; a ribbon that does not move carries S steadily.

Validity: 50 <= R_n/t <= 1000 (common practice puts R_n/t at 50 or more; above 1000 the
coiling prestress is under 0.05 % strain, outside handbook practice - project choice),
b/t >= 10 (wide-strip assumption of the 26.4 factor). Long unsupported strokes need
guiding (the strip becomes unstable); the envelope bounds the stroke.
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, FatigueLoad, Param

#: handbook factor for the plateau force F = E b t^3 / (26.4 R_n^2) (spring handbooks, common practice)
HANDBOOK_FACTOR = 26.4
#: drum diameter / natural diameter (handbooks recommend 1.10-1.20; the middle is taken)
DRUM_RATIO = 1.15
#: extension to full force, in drum diameters (handbook usage rule)
RAMP_DRUM_DIAMETERS = 1.25
#: wraps left on the drum at full extension (handbook usage rule)
DEAD_WRAPS = 1.5
#: bounds of R_n/t (lower: common practice; upper: project choice)
RN_OVER_T_MIN = 50.0
RN_OVER_T_MAX = 1000.0
#: smallest width / thickness for the wide-strip factor 26.4
B_OVER_T_MIN = 10.0


def drum_diameter(R_n):
    """Drum diameter, mm, ``D_d = DRUM_RATIO * 2 R_n``; same shape as ``R_n``."""
    return 2.0 * DRUM_RATIO * R_n


def plateau_force(E, b, t, R_n):
    """Handbook plateau force ``E b t^3 / (26.4 R_n^2)``, N (broadcasting arrays, MPa and mm)."""
    return E * b * t**3 / (HANDBOOK_FACTOR * R_n**2)


class Ribbon(ElementKind):
    def force(self, p, mat, u):
        R_n = p["natural_radius_mm"]
        Fp = plateau_force(mat.E, p["width_mm"], p["thickness_mm"], R_n)
        u_r = RAMP_DRUM_DIAMETERS * drum_diameter(R_n)
        xi = u * (1.0 / u_r)[:, None]
        np.clip(xi, -np.inf, 1.0, out=xi)            # clip with scalar bounds: twice as fast as minimum
        F = np.subtract(2.0, xi)
        F *= xi
        F *= Fp[:, None]
        return F

    def stress(self, p, mat, u):
        S = mat.E * p["thickness_mm"] / (2.0 * p["natural_radius_mm"])
        return np.broadcast_to(S[:, None], u.shape).copy()

    def allowable(self, p, mat):
        return mat.yield_

    def fatigue_loads(self, p, mat, u_lo, u_hi):
        """Each stretch of strip that leaves the drum cycles from the drum's bending stress to S."""
        S = mat.E * p["thickness_mm"] / (2.0 * p["natural_radius_mm"])
        moves = u_hi > u_lo
        low = np.where(moves, S * (1.0 - 1.0 / DRUM_RATIO), S)
        return {"": FatigueLoad(self.fatigue, low, S, mat.uts, np.ones(S.shape))}

    def validity_margins(self, p, mat, u_max):
        t = p["thickness_mm"]
        rt = p["natural_radius_mm"] / t
        return {
            "radius_thickness_ratio_low": RN_OVER_T_MIN / rt - 1.0,
            "radius_thickness_ratio_high": rt / RN_OVER_T_MAX - 1.0,
            "narrow_strip": B_OVER_T_MIN / (p["width_mm"] / t) - 1.0,
        }

    @staticmethod
    def strip_length(p, u_max):
        """Strip length, mm, shape (n,): the stroke plus the dead wraps on the drum."""
        return u_max + DEAD_WRAPS * math.pi * drum_diameter(p["natural_radius_mm"])

    def box(self, p, u_max):
        D = drum_diameter(p["natural_radius_mm"])
        # the whole strip is wound on the drum when retracted: annulus area = t * length
        outer = np.sqrt(D**2 + (4.0 / math.pi) * p["thickness_mm"] * self.strip_length(p, u_max))
        return u_max + D, outer, p["width_mm"]

    def mass(self, p, mat, u_max=None):
        """Mass of the strip, g, shape (n,).

        With ``u_max`` the strip is the stroke plus 1.5 wraps on the drum. The element
        protocol does not pass the stroke, so without it the strip is taken as the
        shortest one that reaches full force: the ramp length plus the dead wraps
        (a lower bound).
        """
        if u_max is None:
            u_max = RAMP_DRUM_DIAMETERS * drum_diameter(p["natural_radius_mm"])
        L = self.strip_length(p, u_max)
        return p["width_mm"] * p["thickness_mm"] * L * mat.rho * DENSITY_TO_G_PER_MM3


KIND = Ribbon(
    name="ribbon",
    glyph="ribbon",
    verification="ribbon_plateau",
    title="prestressed rolled ribbon on a drum (constant-force spring), plateau after a short ramp",
    params=(
        Param("width_mm", "mm", 2.0, 50.0, log=True, doc="strip width b", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 1.0, log=True, thickness=True, doc="strip thickness t", tolerance="strip",
              stock="strip"),
        Param("natural_radius_mm", "mm", 2.0, 100.0, log=True, doc="natural (free) inside radius R_n of the coil", tolerance="set_radius"),
    ),
    forms=("strip",),
    validity=(
        "50 <= R_n/t <= 1000, b/t >= 10 (wide strip); drum 1.15 x natural diameter, 1.5 wraps left on it; "
        "plateau after a modelled C1 ramp of 1.25 drum diameters; long strokes need guiding"
    ),
    sources=(
        "spring handbooks (common practice): F = E b t^3/(26.4 R_n^2), S = E t/(2 R_n); usage rules: drum 10-20 % "
        "over the natural diameter, 1.5 wraps left, full force after about 1.25 drum diameters",
        "ramp shape F_p xi(2 - xi): springsynth modelling choice",
    ),
    stroke_note="u = extension of the strip off the drum",
    monotonic_stress=True,
    stress_note=(
        "bending stress E t/(2 R_n) of the straightened strip, constant over the stroke, allowable = yield; "
        "ribbon life is governed by this stress: give the study a [duty] to judge it"
    ),
)
