"""Hertz contact of a sphere pressed on a flat of the same material.

Notes
-----
Hertz theory (K.L. Johnson, *Contact Mechanics*, Cambridge UP 1985, ch. 4):

    F = 4/3 E* R^(1/2) u^(3/2),      E* = E / (2 (1 - nu^2))   (identical bodies)
    a = sqrt(R u),                   p0 = 3 F / (2 pi a^2) = 2 E* a / (pi R)

First yield (von Mises) occurs below the surface when p0 = 1.60 Y for nu = 0.3
(Johnson 1985, sec. 6.2 [memory]); the governing stress reported here is p0 and its
allowable 1.60 Y, so the stress ratio is the ratio to first yield.

Fatigue (under a duty): the largest shear stress below the surface, 0.31 p0 at depth 0.48 a
for nu = 0.3 (Johnson 1985, sec. 3.4 [memory]; taken for every nu), at the two ends of the
duty, judged as a shear stress (:mod:`springsynth.checks.fatigue`). A screen for repeated
pressing of the same spot, not a rolling-contact life.

Valid while the contact stays small against the radius, a/R <= 0.1
(common practice for Hertz theory), frictionless and elastic.
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, FatigueLoad, Param

#: p0 at first yield / Y for a sphere, nu = 0.3 (Johnson 1985, sec. 6.2) [memory]
P0_YIELD_FACTOR = 1.60
#: largest shear stress below the contact / p0, at depth 0.48 a, for nu = 0.3 (Johnson 1985, sec. 3.4 [memory])
MAX_SHEAR_FACTOR = 0.31
#: largest contact radius / sphere radius for Hertz theory (common practice)
A_OVER_R_MAX = 0.1


class ContactSphere(ElementKind):
    @staticmethod
    def _estar(mat):
        return mat.E / (2.0 * (1.0 - mat.nu**2))

    def force(self, p, mat, u):
        coef = (4.0 / 3.0) * self._estar(mat) * np.sqrt(p["radius_mm"])
        f = np.sqrt(u)
        f *= u                       # u^1.5 without pow
        f *= coef[:, None]
        return f

    def stress(self, p, mat, u):
        R = p["radius_mm"][:, None]
        a = np.sqrt(R * u)
        return 2.0 * self._estar(mat)[:, None] * a / (math.pi * R)

    def allowable(self, p, mat):
        return P0_YIELD_FACTOR * mat.yield_

    def fatigue_loads(self, p, mat, u_lo, u_hi):
        """The largest shear stress below the contact, 0.31 p0, at the two strokes of a duty cycle."""
        p0 = self.stress(p, mat, np.stack([u_lo, u_hi], axis=1)) * MAX_SHEAR_FACTOR
        return {"": FatigueLoad(self.fatigue, p0.min(axis=1), p0.max(axis=1), mat.uts, np.ones(u_lo.shape))}

    def validity_margins(self, p, mat, u_max):
        a_over_R = np.sqrt(u_max / p["radius_mm"])
        return {"contact_size": a_over_R / A_OVER_R_MAX - 1.0}

    def box(self, p, u_max):
        d = 2.0 * p["radius_mm"]
        return d, d, d

    def mass(self, p, mat, u_max=None):
        return (4.0 / 3.0) * math.pi * p["radius_mm"] ** 3 * mat.rho * DENSITY_TO_G_PER_MM3


KIND = ContactSphere(
    name="contact_sphere",
    glyph="sphere",
    verification="hertz",
    fatigue="shear",
    title="sphere pressed on a flat of the same material (Hertz contact), F ~ u^1.5",
    params=(Param("radius_mm", "mm", 0.5, 50.0, log=True, doc="sphere radius", tolerance="linear"),),
    forms=("bulk",),
    validity="elastic, frictionless, contact radius a <= 0.1 R",
    sources=("K.L. Johnson, Contact Mechanics, Cambridge UP 1985, ch. 4 (Hertz) and sec. 6.2 (first yield p0 = 1.60 Y)",),
    stroke_note="u = approach of the sphere centre towards the flat",
    stress_note="maximum contact pressure p0, allowable 1.60 x yield (first yield below the surface)",
)
