"""Axially loaded column, straight or pre-curved, pinned or clamped ends.

Notes
-----
Stroke ``u`` = end shortening along the chord; force = axial end load ``P``.

Straight column (``rise_mm = 0``): axial shortening ``P = E A u / L`` up to the Euler
load ``P_cr = pi^2 E I / (K L)^2`` (``K = 1`` pinned, ``0.5`` clamped), then the
post-buckled elastica (Timoshenko & Gere 1961, sec. 2.7),
``P/P_cr = (2 K(k)/pi)^2``, ``Delta_b/L = 2 (1 - E(k)/K(k))`` (``k = sin(theta_end/2)``;
the clamped-clamped elastica is the pinned one of length ``L/2``, same ``Delta_b/L``
relation), with the axial compliance in series:
``u = P L / (E A) + Delta_b``. Near the Euler load the force is a plateau,
``P/P_cr ~ 1 + Delta_b / (2 L)``.

Curved column (``rise_mm = a0 > 0``; initial shape ``a0 sin(pi x/L)`` pinned,
``a0 (1 - cos 2 pi x/L)/2`` clamped): softening toward the plateau. At small load the
imperfect-column law (Timoshenko & Gere 1961, ch. 1): amplitude
``a = a0 / (1 - P/P_cr)``, bending shortening ``Delta_b = pi^2 (a^2 - a0^2) / (4 L)``
(the same expression for both shapes); at large shortening the exact inextensible
elastica of the imperfect column, tabulated as a smooth correction to that law (see
:mod:`springsynth.elements._buckling`). A clamped column is exactly two pinned columns
of span ``L/2`` and rise ``a0/2`` in series, so ``P/P_cr`` is the same function of
``(a0/L, Delta_b/L)`` for both end conditions.

Stress: axial plus bending at the section of largest moment,
``sigma = P/A + 6 M / (b t^2)`` with ``M = EI (kappa - kappa0) = P K w_mid`` (pinned:
mid-span; clamped: ends and mid-span, ``P w_mid / 2``), ``w_mid`` the lateral position
of mid-span, initial rise included. Rises monotonically with ``u``.

Validity: end shortening ``u <= 0.3 L``; ``rise <= 0.4 L``; effective slenderness
``K L / t >= 20`` (Euler-Bernoulli beam, shear negligible); elastic buckling, Euler
stress ``P_cr / A <=`` yield (otherwise the column buckles inelastically). Symmetric
buckling mode, ideal end conditions, load along the chord. Inside that range the
force is within 0.1 % of an exact extensible-elastica solution (tests/validation).

Box: along the stroke the span ``L``; across, the lateral envelope ``2 w_mid + t`` at
``u_max`` (either side, as a straight column may buckle to either) and the width.
Mass: ``rho b t S``, ``S`` the arc length of the initial shape.
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from springsynth.elements._buckling import arc_length_ratio, column_kernel

#: largest end shortening / span of the declared range
SHORTENING_MAX = 0.30
#: largest rise / span of the declared range (the table reaches 0.4)
RISE_RATIO_MAX = 0.40
#: smallest effective slenderness K L / t
SLENDERNESS_MIN = 20.0

_PI2 = math.pi**2


class Column(ElementKind):
    @staticmethod
    def _geometry(p):
        """Effective-length factor K, rise ratio a0/L and Euler strain P_cr/(E A), shapes (n,)."""
        L = p["length_mm"]
        t = p["thickness_mm"]
        K = np.where(p["ends"] > 0.5, 0.5, 1.0)
        Le = K * L
        alpha = p["rise_mm"] / L
        eps = _PI2 * t * t / (12.0 * Le * Le)        # P_cr / (E A)
        return K, alpha, eps

    def force(self, p, mat, u):
        K, alpha, eps = self._geometry(p)
        pcr = mat.E * p["width_mm"] * p["thickness_mm"] * eps      # pi^2 E I / (K L)^2
        return column_kernel(alpha, eps, p["length_mm"], u, pcr)

    def stress(self, p, mat, u):
        K, alpha, eps = self._geometry(p)
        L = p["length_mm"]
        # sigma = P/A (1 + 6 K L W / t),  P/A = p E eps,  W = w_mid / L
        return column_kernel(alpha, eps, L, u, mat.E * eps, 6.0 * K * L / p["thickness_mm"])

    def validity_margins(self, p, mat, u_max):
        K, alpha, eps = self._geometry(p)
        L = p["length_mm"]
        slender = K * L / p["thickness_mm"]
        return {
            "shortening": (u_max / L) / SHORTENING_MAX - 1.0,
            "rise_ratio": alpha / RISE_RATIO_MAX - 1.0,
            "slenderness": SLENDERNESS_MIN / slender - 1.0,
            "elastic_buckling": (mat.E * eps) / mat.yield_ - 1.0,
        }

    def stroke_reach(self, p):
        return SHORTENING_MAX * p["length_mm"]

    def stroke_marks(self, p):
        """A straight column's shortening at its Euler load, ``P_cr L / (E A)`` (NaN when curved)."""
        K, alpha, eps = self._geometry(p)
        return np.where(alpha > 0.0, np.nan, eps * p["length_mm"])[:, None]

    def box(self, p, u_max):
        K, alpha, eps = self._geometry(p)
        L = p["length_mm"]
        _, w = column_kernel(alpha, eps, L, u_max[:, None], np.ones_like(L), want_w=True)
        across = 2.0 * w[:, 0] * L + p["thickness_mm"]
        return L.astype(float, copy=True), across, p["width_mm"].astype(float, copy=True)

    def mass(self, p, mat, u_max=None):
        L = p["length_mm"]
        S = L * arc_length_ratio(p["rise_mm"] / L)
        return S * p["width_mm"] * p["thickness_mm"] * mat.rho * DENSITY_TO_G_PER_MM3


KIND = Column(
    name="column",
    glyph="column",
    verification="column",
    title="axially loaded column, straight or pre-curved: stiff start, then a near-flat buckling plateau",
    params=(
        Param("length_mm", "mm", 5.0, 200.0, log=True, doc="span between the ends (chord)", tolerance="linear"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="width, across the bending plane", tolerance="width"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="thickness, in the bending direction", tolerance="strip",
              stock="strip"),
        Param("rise_mm", "mm", 0.0, 20.0, doc="mid-span amplitude of the initial shape (0 = straight)", tolerance="linear",
              step="offset"),
        Param("ends", "-", 0.0, 1.0, choices=("pinned", "clamped"),
              doc="end conditions; initial shape half-sine (pinned) or (1 - cos 2 pi x/L)/2 (clamped)", tolerance="none"),
    ),
    forms=("strip",),
    validity=(
        f"end shortening <= {SHORTENING_MAX:g} L; rise <= {RISE_RATIO_MAX:g} L; effective slenderness "
        f"K L/t >= {SLENDERNESS_MIN:g} (K = 1 pinned, 0.5 clamped); Euler stress P_cr/A <= yield; "
        "symmetric buckling mode, ideal ends, load along the chord"
    ),
    sources=(
        "S.P. Timoshenko & J.M. Gere, Theory of Elastic Stability, 2nd ed., McGraw-Hill 1961: "
        "ch. 1 (initially curved bar, amplification factor), sec. 2.7 (elastica)",
        "exact inextensible elastica of the imperfect column, solved here (scipy solve_bvp) "
        "and tabulated in springsynth/data/column_table.npz",
    ),
    stroke_note="u = end shortening along the column axis",
    monotonic_stress=True,
    stress_note="axial P/A plus bending 6 M/(b t^2), M = P K w_mid at the section of largest moment",
)
