"""Helical extension spring of round wire with initial tension and full-loop end hooks.

Notes
-----
Symbols as in :mod:`.helical_compression`; Fi initial tension, Nb body coils.
Budynas & Nisbett, *Shigley's Mechanical Engineering Design*, 9th ed., ch. 10
(extension springs)::

    F   = Fi + k u            (u > 0; the spring does not move below Fi)
    k   = G d^4 / (8 D^3 Na),  Na = Nb + G/E   (the hooks add G/E of a coil)
    L0  = (2C - 1 + Nb) d      free length inside the hooks (two full-loop hooks)
    tau_i = 8 Fi D / (pi d^3)  initial-tension stress (uncorrected)

``active_coils`` is Na (body coils plus G/E), as in Shigley.

Stresses at three places, each proportional to F:

* body: ``tau = K_B 8 F D / (pi d^3)``, K_B = (4C+2)/(4C-3);
* hook bending at A: ``sigma_A = F [(K)_A 16 D/(pi d^3) + 4/(pi d^2)]`` with
  ``(K)_A = (4 C1^2 - C1 - 1)/(4 C1 (C1 - 1))``, C1 = 2 r1/d; the hook is a full loop
  of the coil diameter, r1 = D/2, so C1 = C;
* hook torsion at B: ``tau_B = (K)_B 8 F D/(pi d^3)`` with ``(K)_B = (4C2-1)/(4C2-4)``,
  C2 = 2 r2/d; the bend from body to hook is taken at r2 = 2d (C2 = 4, the smallest
  Shigley recommends), the conservative end.

Allowables (static, Shigley Table 10-7, % of S_ut): body 45-50 / hook torsion 40 /
hook bending 75 for cold-drawn and hardened-and-tempered steels, 35 / 30 / 55 for
austenitic stainless and non-ferrous. The body share is the material's
``torsion_share`` s; the hook shares are scaled from it by the Table 10-7 ratios,
interpolated linearly in s between the two rows (s = 0.35 and 0.45) and capped at the
steel values: hook torsion ``s * r_t(s)`` <= 0.40 with r_t from 0.30/0.35 to
0.40/0.45, hook bending ``s * r_b(s)`` <= 0.75 with r_b from 0.55/0.35 to 0.75/0.45.
A material without ``torsion_share`` uses 0.577 yield for both torsions and yield for
bending. :meth:`stress` returns one *body-equivalent* stress,
``max_i(stress_i * allowable_body / allowable_i)``, compared with the body allowable,
so that the stress ratio is the largest of the three ratios. Outside the index
range the factors are evaluated at max(C, 2), as for compression springs.

Fatigue (under a duty; :mod:`springsynth.checks.fatigue`): the three places are checked
apart, as in Shigley's extension-spring fatigue example: body shear (with the initial
tension's stress even at rest) and hook torsion at B in torsion, hook bending at A as wire
in bending; the hooks carry no load while the spring is not pulled (u = 0).

Validity (normalised margins, <= 0 inside). ``spring_index`` and ``initial_tension`` are
rules of the trade (``design_rules``): the force law holds beyond them, the spring is only
harder to make (the search still keeps to them):

* ``spring_index`` (design rule): 4 <= C <= 12 (Shigley);
* ``initial_tension`` (design rule): tau_i inside the preferred range of Shigley
  ch. 10 (after spring makers' data), ``33500/exp(0.105 C) +- 1000 (4 - (C-3)/6.5)``
  psi (about ``231/exp(0.105 C) +- 6.9 (4 - (C-3)/6.5)`` MPa), both sides: what a
  coiler can wind in and hold. The range is given for steel wire and applied unscaled
  to every material;
* ``low_index``: C >= 2, where the correction factors are evaluated (held at C = 2 below);
* ``active_coils``: Na >= 3.

Size: along the stroke L0 + 2d (L0 already spans the hooks' inner faces; 2d adds the
hook wire beyond them) + u_max, with Nb taken as Na there (the box has no material;
the G/E ~ 0.4 coil this adds errs on the safe side); across D + d.
Mass: wire for Nb body coils plus one coil of wire per hook.

``initial_tension_N`` is searched on a log scale from 0.01 N: zero initial tension
lies outside the preferred range at every index, and the feasible Fi spans decades
with the wire size (Fi ~ d^2 tau_i / C).
"""

from __future__ import annotations

import math

import numpy as np

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind, FatigueLoad, Param
from springsynth.elements.helical_compression import (
    ACTIVE_COILS_MIN,
    COIL_SEARCH,
    INDEX_FACTOR_FLOOR,
    INDEX_MAX,
    INDEX_MIN,
    VON_MISES_SHEAR,
    bergstrasser_factor,
    spring_rate,
    wire_strength,
)

__all__ = ["KIND", "initial_stress_range", "free_length", "hook_bending_factor", "hook_torsion_factor", "hook_shares"]

#: bend radius ratio at the hook's root, C2 = 2 r2 / d (Shigley: C2 > 4 recommended)
HOOK_C2 = 4.0
#: Table 10-7 rows (Shigley): body share -> hook torsion and hook bending shares
_ROW_BODY = (0.35, 0.45)
_ROW_TORSION = (0.30, 0.40)
_ROW_BENDING = (0.55, 0.75)
#: MPa per psi
PSI_TO_MPA = 6.894757e-3
#: coils of wire each full-loop hook takes
HOOK_COILS = 1.0


def initial_stress_range(C):
    """Preferred initial-tension stress range ``(low, high)``, MPa (Shigley ch. 10).

    ``tau_i = 33500/exp(0.105 C) +- 1000 (4 - (C - 3)/6.5)`` psi, converted with
    1 psi = 6.894757e-3 MPa (about ``231/exp(0.105 C) +- 6.9 (4 - (C-3)/6.5)`` MPa).
    """
    mid = 33500.0 / np.exp(0.105 * C)
    half = 1000.0 * (4.0 - (C - 3.0) / 6.5)
    return (mid - half) * PSI_TO_MPA, (mid + half) * PSI_TO_MPA


def free_length(d, D, Nb):
    """Free length inside the hooks ``L0 = 2(D - d) + (Nb + 1) d = (2C - 1 + Nb) d``, mm (Shigley ch. 10)."""
    return 2.0 * (D - d) + (Nb + 1.0) * d


def hook_bending_factor(C1):
    """``(K)_A = (4 C1^2 - C1 - 1)/(4 C1 (C1 - 1))`` (Shigley ch. 10)."""
    return (4.0 * C1**2 - C1 - 1.0) / (4.0 * C1 * (C1 - 1.0))


def hook_torsion_factor(C2):
    """``(K)_B = (4 C2 - 1)/(4 C2 - 4)`` (Shigley ch. 10)."""
    return (4.0 * C2 - 1.0) / (4.0 * C2 - 4.0)


def hook_shares(s):
    """Hook torsion and hook bending allowables as shares of S_ut, for body share ``s``."""
    s = np.asarray(s, dtype=float)
    r_t = np.interp(s, _ROW_BODY, (_ROW_TORSION[0] / _ROW_BODY[0], _ROW_TORSION[1] / _ROW_BODY[1]))
    r_b = np.interp(s, _ROW_BODY, (_ROW_BENDING[0] / _ROW_BODY[0], _ROW_BENDING[1] / _ROW_BODY[1]))
    return np.minimum(s * r_t, _ROW_TORSION[1]), np.minimum(s * r_b, _ROW_BENDING[1])


class HelicalExtension(ElementKind):
    @staticmethod
    def _rate(p, mat):
        return spring_rate(mat.G, p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"])

    def force(self, p, mat, u):
        f = self._rate(p, mat)[:, None] * u
        f += p["initial_tension_N"][:, None]
        return f

    def _allowables(self, p, mat):
        """Body, hook-torsion and hook-bending allowables, MPa, each shape (n,)."""
        s = mat.torsion_share
        has = np.isfinite(s)
        sut = wire_strength(p["wire_diameter_mm"], mat)
        t_share, b_share = hook_shares(np.where(has, s, _ROW_BODY[1]))
        shear_y = VON_MISES_SHEAR * mat.yield_
        body = np.where(has, s * sut, shear_y)
        torsion = np.where(has, t_share * sut, shear_y)
        bending = np.where(has, b_share * sut, mat.yield_)
        return body, torsion, bending

    def stress(self, p, mat, u):
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        C = np.maximum(D / d, INDEX_FACTOR_FLOOR)
        nominal = 8.0 * D / (math.pi * d**3)
        body_a, tors_a, bend_a = self._allowables(p, mat)
        per_N = np.maximum.reduce([
            bergstrasser_factor(C) * nominal,
            hook_torsion_factor(HOOK_C2) * nominal * (body_a / tors_a),
            (hook_bending_factor(C) * 2.0 * nominal + 4.0 / (math.pi * d**2)) * (body_a / bend_a),
        ])
        return per_N[:, None] * self.force(p, mat, u)

    def allowable(self, p, mat):
        return self._allowables(p, mat)[0]

    def fatigue_loads(self, p, mat, u_lo, u_hi):
        """Body shear, hook torsion at B and hook bending at A over a duty cycle (module notes)."""
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        C = np.maximum(D / d, INDEX_FACTOR_FLOOR)
        nominal = 8.0 * D / (math.pi * d**3)
        k, Fi = self._rate(p, mat), p["initial_tension_N"]
        sut = wire_strength(d, mat)
        one = np.ones(d.shape)

        def force(u, hooks):     # the hooks carry load only once the spring is pulled (u > 0)
            return np.where(u > 0.0, Fi + k * u, 0.0 if hooks else Fi)

        places = {
            "body": ("torsion", bergstrasser_factor(C) * nominal, False),
            "hook_torsion": ("torsion", hook_torsion_factor(HOOK_C2) * nominal, True),
            "hook_bending": ("wire_bending", hook_bending_factor(C) * 2.0 * nominal + 4.0 / (math.pi * d**2), True),
        }
        return {name: FatigueLoad(mode, per_N * force(u_lo, hooks), per_N * force(u_hi, hooks), sut, one)
                for name, (mode, per_N, hooks) in places.items()}

    def validity_margins(self, p, mat, u_max):
        d, D, Na = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"]
        C = D / d
        lo, hi = initial_stress_range(C)
        tau_i = 8.0 * p["initial_tension_N"] * D / (math.pi * d**3)
        below = lo / np.maximum(tau_i, 1e-3 * lo) - 1.0
        return {
            "spring_index": np.maximum(C / INDEX_MAX, INDEX_MIN / C) - 1.0,
            "low_index": INDEX_FACTOR_FLOOR / C - 1.0,
            "active_coils": ACTIVE_COILS_MIN / Na - 1.0,
            "initial_tension": np.maximum(below, tau_i / hi - 1.0),
        }

    def box(self, p, u_max):
        d, D, Na = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"]
        # box() has no material: Nb is taken as Na (G/E ~ 0.4 coil more, on the safe side)
        return free_length(d, D, Na) + 2.0 * d + u_max, D + d, D + d

    def mass(self, p, mat, u_max=None):
        d, D, Na = p["wire_diameter_mm"], p["mean_diameter_mm"], p["active_coils"]
        coils = Na - mat.G / mat.E + 2.0 * HOOK_COILS
        return mat.rho * (math.pi / 4.0) * d**2 * math.pi * D * coils * DENSITY_TO_G_PER_MM3

    # search coordinates that follow the design rules: index instead of coil diameter,
    # initial tension as a position inside the preferred stress range
    @property
    def search_params(self):
        return _SEARCH

    def from_search(self, q):
        d, C = q["wire_diameter_mm"], q["spring_index"]
        D = C * d
        lo, hi = initial_stress_range(C)
        tau_i = lo + q["initial_stress_position"] * (hi - lo)
        return {"wire_diameter_mm": d, "mean_diameter_mm": D, "active_coils": q["active_coils"],
                "initial_tension_N": tau_i * math.pi * d**3 / (8.0 * D)}

    def to_search(self, p):
        d, D = p["wire_diameter_mm"], p["mean_diameter_mm"]
        C = D / d
        lo, hi = initial_stress_range(C)
        tau_i = 8.0 * p["initial_tension_N"] * D / (math.pi * d**3)
        return {"wire_diameter_mm": d, "spring_index": C, "active_coils": p["active_coils"],
                "initial_stress_position": (tau_i - lo) / (hi - lo)}


_SEARCH = COIL_SEARCH + (
    Param("initial_stress_position", "-", 0.0, 1.0, doc="0 = low end, 1 = high end of the preferred range"),
)


KIND = HelicalExtension(
    name="helical_extension",
    glyph="extension_coil",
    verification="coil_extension",
    fatigue="torsion",
    title="helical extension spring, round wire, full-loop hooks; initial tension plus linear rate",
    params=(
        Param("wire_diameter_mm", "mm", 0.1, 6.0, log=True, thickness=True, doc="wire diameter d", tolerance="wire",
              stock="wire"),
        Param("mean_diameter_mm", "mm", 1.0, 60.0, log=True, doc="mean coil diameter D", tolerance="coiling"),
        Param("active_coils", "-", 2.0, 40.0, log=True, doc="active coils Na = body coils + G/E", tolerance="coils"),
        Param("initial_tension_N", "N", 0.01, 200.0, log=True, doc="initial tension Fi", tolerance="tension"),
    ),
    forms=("wire",),
    validity=("active coils >= 3; spring index D/d >= 2. Design rules: spring index 4 <= D/d <= 12; "
              "initial-tension stress 8 Fi D/(pi d^3) inside the preferred range "
              "231/exp(0.105 C) +- 6.9 (4 - (C-3)/6.5) MPa"),
    design_rules=frozenset({"spring_index", "initial_tension"}),
    sources=(
        "R.G. Budynas & J.K. Nisbett, Shigley's Mechanical Engineering Design, 9th ed., ch. 10, "
        "extension springs: rate with Na = Nb + G/E, free length, preferred initial-tension range, "
        "hook stresses at A and B, static allowables (Table 10-7)",
    ),
    stroke_note="u = extension beyond the free length; the force jumps to the initial tension as soon as u > 0",
    stress_note=("body-equivalent stress: the largest of body shear (K_B), hook torsion at B (C2 = 4) and hook "
                 "bending at A (C1 = C), each scaled by body allowable / its own allowable; allowable "
                 "torsion_share x S_ut(d), hooks per Shigley Table 10-7"),
)
