"""Parallelogram stage guided by four circular notch hinges, cut from one plate.

Notes
-----
Geometry. A plate of thickness ``b`` (``width_mm``, out of the plane of motion) is cut
into a ground bar, a stage bar and two parallel links. Each link is a bar of in-plane
width ``H = 2 R + t`` with a circular notch hinge at each end: two semicircular
cut-outs of radius ``R`` (``notch_radius_mm``) facing each other leave a neck of
thickness ``t`` (``thickness_mm``). ``L`` (``length_mm``) is the distance between the
hinge centres of a link. The stroke ``x`` is the stage's travel perpendicular to the
undeformed links; the load acts along it and the stage is free to follow its arc.

Hinge stiffness. Euler-Bernoulli bending of the neck, thickness
``h(s) = t + 2 (R - sqrt(R^2 - s^2))`` over ``|s| <= R``, material outside the notch
rigid. The rotation per unit moment is the exact integral, in closed form the full
formula of Paros & Weisbord (1965), with ``beta = t / (2 R)``::

    1/K = int_{-R}^{R} 12 ds / (E b h(s)^3)
        = 3 / (2 E b R^2) [ (2 beta^2 + 4 beta + 3) / (beta^2 (1 + beta) (2 + beta)^2)
                            + 6 (1 + beta) / (beta (2 + beta))^(5/2) atan(sqrt((2 + beta)/beta)) ]

Its thin-neck limit is Paros & Weisbord's simplified ``K = 2 E b t^(5/2) / (9 pi R^(1/2))``
(0.9 % low at ``t/R = 0.07``); Lobontiu (2002) writes the same integral in
``s = R/t``. Tseytlin's (2002) two-dimensional closed form is not reproduced: its
coefficients could not be checked against the paper.

Kinematics (exact for rigid links with pin joints at the hinge centres). Both hinges
of a link turn by the link's rotation ``theta``; the stage translates without turning:

    x = L sin(theta),   theta = asin(x / L),   parasitic travel  L (1 - cos(theta))

(the stage moves toward the ground by the parasitic travel). Strain energy
``U = 4 K theta^2 / 2``, so by virtual work

    F = dU/dx = 4 K theta / (L cos(theta))     -> 4 K x / L^2 for small x.

Stress. Each hinge carries ``M = K theta``; the peak is at the neck surface,
``sigma = K_t 6 M / (b t^2)`` with the notch factor of the circular hinge in bending,
``K_t = (1 + beta)^(9/20)`` (Smith 2000, after Peterson [memory]). The links' axial
force ``N = 2 K theta tan(theta) / L`` adds ``N/(b t)``, at most ``t tan(theta)/(3 L)`` of
the bending stress (< 0.2 % in the range below) and is left out; so is the links'
shear. Allowable: the yield stress. Rises monotonically with ``x``.

Validity (outside it a design is infeasible):

* neck ratio ``t / R <= 0.07``. The beam integral ignores the spread of stress into
  the thick material beside the neck; a plane-stress finite-element model of the
  hinge (``springsynth.checks.verify.notch``, mesh-converged to 1e-5) is softer by
  ``0.40 t/R`` to first order: 0.8 % at ``t/R = 0.02``, 2.0 % at 0.05, 2.7 % at 0.07
  (3.8 % at 0.1, 7.2 % at 0.2, 15 % at 0.5). Inside the range the force is within
  2.8 % of that model, the notch factor within 0.2 % and the peak stress within 2.9 %
  (the kernel is the stiffer and the more stressed of the two).
* link rotation ``theta <= 10 deg``: the hinge is a linear rotational spring and the
  bending zone a point (common practice for notch hinges; strain, not rotation, is
  what the linear law needs, and metals reach yield at a few degrees);
* ``L >= 4 R``: each link has a rigid part at least as long as its two hinges;
* rigid links: the links' own bending takes at most 1 % of the strain energy,
  ``2 K (L - 2 R)^3 / (L^2 E b H^3) <= 0.01`` (Euler-Bernoulli link of width H under
  the antisymmetric end moments of the parallelogram);
* a linear-elastic material (hyperelastic rows are outside).

Plane stress (modulus E), as in the formulas above. A plate much thicker than the
hinge's bending zone (``b >> sqrt(R t)``) restrains the neck's anticlastic strain and
is stiffer, up to the plane-strain factor ``1/(1 - nu^2)`` (about 10 % for metals).
Three-dimensional finite elements of the hinge (``hinge_fe_3d`` in
``springsynth.checks.verify.notch``, nu = 0.3) over plane stress, at ``t/R = 0.05``:
+0.0 % at ``b = t``, +1.0 % at ``4 t``, +2.8 % at ``10 t``, +4.5 % at ``20 t``, +6.4 % at
``40 t`` (at ``t/R = 0.1``: +1.4, +3.5, +5.3, +7.1 %). For wide plates this partly
cancels the beam integral's excess stiffness (``0.40 t/R``) against plane stress.

Box (plate outline): along the stroke the two links at a centre spacing
``d = max(L, 3 H)`` (a square parallelogram, the links at least two link widths apart;
the layout ``springsynth export`` draws) plus one link width, ``d + H``, plus the
travel; across, ``L + 2 R`` between the outer ends of the hinges plus a ground and a
stage bar of depth ``H`` each; and the plate thickness ``b``. Mass: the plate material
of the two bars, ``2 (d + H) H``, and of the two links, each ``(L - 2 R) H`` plus two
hinge zones of ``2 R H - pi R^2``, times ``b``.

References: J.M. Paros & L. Weisbord, "How to design flexure hinges", Machine Design
37 (27), 151-156, 1965 [memory]; N. Lobontiu, Compliant Mechanisms: Design of Flexure
Hinges, CRC Press 2002, ch. 2 (circular hinge) [memory]; S.T. Smith, Flexures:
Elements of Elastic Mechanisms, Gordon & Breach 2000 (notch factor) [memory];
Y.M. Tseytlin, "Notch flexure hinges: an effective theory", Rev. Sci. Instrum. 73,
3363, 2002 (not reproduced).
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param

#: largest neck thickness / notch radius (plane-stress FE within 3 % in force and stress)
NECK_RATIO_MAX = 0.07
#: largest link rotation, rad (10 deg)
ROTATION_MAX = math.radians(10.0)
#: smallest link length / notch radius
LENGTH_RATIO_MIN = 4.0
#: largest share of the strain energy in the links' own bending
LINK_ENERGY_MAX = 0.01
#: centre spacing of the two links: max(L, LINK_SPACING_WIDTHS * H) (the layout of the plate outline)
LINK_SPACING_WIDTHS = 3.0
#: stroke / L is clipped here (60 deg) so that far outside the range forces stay finite
_SIN_CLIP = math.sin(math.radians(60.0))


def hinge_stiffness(E, b, t, R):
    """Rotational stiffness of a circular notch hinge, Paros & Weisbord full formula, N mm/rad.

    Parameters
    ----------
    E : ndarray
        Young's modulus, MPa.
    b, t, R : ndarray
        Plate width (out of plane), neck thickness and notch radius, mm; all broadcast.

    Returns
    -------
    ndarray
        ``K = M / theta`` (module notes), the broadcast shape of the inputs.
    """
    be = t / (2.0 * R)
    q = be * (2.0 + be)
    c = (2.0 * be**2 + 4.0 * be + 3.0) / (be**2 * (1.0 + be) * (2.0 + be) ** 2) \
        + 6.0 * (1.0 + be) / q**2.5 * np.arctan(np.sqrt((2.0 + be) / be))
    return (2.0 * E * b * R**2 / 3.0) / c


def notch_factor(t, R):
    """Stress-concentration factor of the circular hinge in bending, ``(1 + t/(2R))^(9/20)``; shape of ``t``."""
    return (1.0 + t / (2.0 * R)) ** 0.45


def link_rotation(x, L):
    """Link rotation ``asin(x / L)``, rad; ``x`` may be negative (the stage moved the other way)."""
    return np.arcsin(np.clip(x / L, -_SIN_CLIP, _SIN_CLIP))


def stage_force(K, L, x):
    """Force on the stage of four hinges of stiffness ``K`` (N mm/rad), ``4 K theta / (L cos theta)``, N.

    Parameters
    ----------
    K, L : ndarray, shape (n, 1) or broadcastable
    x : ndarray, shape (n, m)
        Stage travel, mm (either sign: the force is odd in x).
    """
    s = np.asarray(np.clip(x / L, -_SIN_CLIP, _SIN_CLIP))   # sin(theta); one temporary, then in place
    th = np.arcsin(s)
    np.multiply(s, s, out=s)
    np.subtract(1.0, s, out=s)
    np.sqrt(s, out=s)                                  # cos(theta)
    th /= s
    th *= 4.0 * K / L
    return th


def parasitic_travel(L, x):
    """Travel of the stage toward the ground, ``L (1 - cos theta)``, mm; even in ``x``.

    Written ``L s^2 / (1 + cos theta)`` with ``s = sin theta = x / L`` (no cancellation at small x).
    """
    s = np.clip(x / L, -_SIN_CLIP, _SIN_CLIP)
    s2 = s * s
    return L * s2 / (1.0 + np.sqrt(1.0 - s2))


class NotchParallelogram(ElementKind):
    """Notch-hinge parallelogram; kernels as in the module notes. Shapes: ``p`` (n,), ``u`` (n, m)."""

    @staticmethod
    def _stiffness(p, mat):
        return hinge_stiffness(mat.E, p["width_mm"], p["thickness_mm"], p["notch_radius_mm"])

    def force(self, p, mat, u):
        K = self._stiffness(p, mat)
        return stage_force(K[:, None], p["length_mm"][:, None], u)

    def stress(self, p, mat, u):
        b, t, R, L = p["width_mm"], p["thickness_mm"], p["notch_radius_mm"], p["length_mm"]
        per_rad = notch_factor(t, R) * 6.0 * self._stiffness(p, mat) / (b * t * t)
        return per_rad[:, None] * link_rotation(u, L[:, None])

    def validity_margins(self, p, mat, u_max):
        b, t, R, L = p["width_mm"], p["thickness_mm"], p["notch_radius_mm"], p["length_mm"]
        H = 2.0 * R + t
        rigid = np.maximum(L - 2.0 * R, 0.0)
        link_share = 2.0 * self._stiffness(p, mat) * rigid**3 / (L * L * mat.E * b * H**3)
        return {
            "neck_ratio": (t / R) / NECK_RATIO_MAX - 1.0,
            "rotation": np.arcsin(np.minimum(u_max / L, 1.0)) / ROTATION_MAX - 1.0,
            "hinge_spacing": LENGTH_RATIO_MIN * R / L - 1.0,
            "link_rigidity": link_share / LINK_ENERGY_MAX - 1.0,
            "material_law": np.where(mat.hyperelastic, 1.0, -1.0),
        }

    def box(self, p, u_max):
        t, R, L = p["thickness_mm"], p["notch_radius_mm"], p["length_mm"]
        H = 2.0 * R + t
        d = np.maximum(L, LINK_SPACING_WIDTHS * H)
        return d + H + u_max, L + 2.0 * R + 2.0 * H, p["width_mm"].astype(float, copy=True)

    def mass(self, p, mat, u_max=None):
        t, R, L = p["thickness_mm"], p["notch_radius_mm"], p["length_mm"]
        H = 2.0 * R + t
        bars = 2.0 * (np.maximum(L, LINK_SPACING_WIDTHS * H) + H) * H
        links = 2.0 * ((L - 2.0 * R) * H + 2.0 * (2.0 * R * H - math.pi * R * R))
        return (bars + links) * p["width_mm"] * mat.rho * DENSITY_TO_G_PER_MM3

    def extra_outputs(self, p, mat, u):
        return {"parasitic_mm": parasitic_travel(p["length_mm"][:, None], u)}

    # the valid designs keep t/R <= 0.07: search in the neck ratio instead of R
    @property
    def search_params(self):
        return _SEARCH

    def from_search(self, q):
        out = {k: v for k, v in q.items() if k != "neck_ratio"}
        out["notch_radius_mm"] = q["thickness_mm"] / q["neck_ratio"]
        return out

    def to_search(self, p):
        out = {k: v for k, v in p.items() if k != "notch_radius_mm"}
        out["neck_ratio"] = p["thickness_mm"] / p["notch_radius_mm"]
        return out


# the neck and the cut-outs are machined (wire EDM, milling): tolerance class "linear"; b is the plate's
_PARAMS = (
    Param("length_mm", "mm", 3.0, 200.0, log=True, tolerance="linear", doc="distance between the hinge centres of a link"),
    Param("width_mm", "mm", 0.5, 50.0, log=True, tolerance="strip", stock="strip",
          doc="plate thickness b (out of the plane of motion)"),
    Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, tolerance="linear", step="fine",
          doc="neck thickness t of each hinge"),
    Param("notch_radius_mm", "mm", 0.2, 100.0, log=True, tolerance="linear", doc="radius R of the two cut-outs of each hinge"),
)
_SEARCH = _PARAMS[:3] + (Param("neck_ratio", "-", 0.01, NECK_RATIO_MAX, log=True, tolerance="none", doc="t / R"),)

KIND = NotchParallelogram(
    name="notch_parallelogram",
    glyph="notch_stage",
    verification="notch_fe",
    title="stage on two rigid links with four circular notch hinges, one plate; near-linear, parasitic travel",
    params=_PARAMS,
    forms=("strip", "bulk"),
    validity=(
        f"neck ratio t/R <= {NECK_RATIO_MAX:g}; link rotation <= {math.degrees(ROTATION_MAX):g} deg; "
        f"L >= {LENGTH_RATIO_MIN:g} R; links rigid (their bending <= {100 * LINK_ENERGY_MAX:g} % of the "
        "energy); linear-elastic material; plane stress (wide plates are stiffer, up to 1/(1 - nu^2))"
    ),
    sources=(
        ("J.M. Paros & L. Weisbord, How to design flexure hinges, Machine Design 37(27):151-156, 1965 "
         "(full and simplified formulas)"),
        "N. Lobontiu, Compliant Mechanisms: Design of Flexure Hinges, CRC Press 2002, ch. 2",
        "S.T. Smith, Flexures: Elements of Elastic Mechanisms, Gordon & Breach 2000 (notch factor)",
        "plane-stress finite elements of the hinge (felupe), springsynth.checks.verify.notch",
    ),
    stroke_note="u = travel of the stage perpendicular to the undeformed links (pin-jointed kinematics, asin)",
    monotonic_stress=True,
    stress_note="K_t 6 M / (b t^2) at the neck surface, M = K theta, K_t = (1 + t/(2R))^0.45",
)
