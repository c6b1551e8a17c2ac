"""Clamped-clamped blade loaded at mid-span: bending plus stretching (strong hardening).

Notes
-----
A blade of span L, width b and thickness t (I = b t^3/12, A = b t) is clamped at both
ends, which cannot move towards each other; a transverse force F at mid-span moves it
by the stroke u = delta. Once delta is comparable with t, the blade must stretch to
deflect and the axial tension N makes it harden from ``F = 192 E I delta / L^3``
(Roark; common practice) towards the membrane law ``F = 8 E A delta^3 / L^3``.

Model: moderate-rotation (von Karman) beam with a uniform tension N. With
kappa = sqrt(N / E I) and the tension parameter a = kappa L / 4, the exact solution of
``E I w'''' - N w'' = F delta_D(x - L/2)`` for clamped ends gives, on the half-span,

    w'(x) = F / (2 N) [1 - cosh(kappa x - a) / cosh a]
    delta = F / (2 N) [L/2 - (2/kappa) tanh a]                         (physics sheet sec. 5)
    F     = 192 E I delta / L^3 * R(a),         R = a^3 / (3 (a - tanh a))
    M_clamp = M_centre = E I kappa^2 delta tanh a / (2 (a - tanh a))
    eps   = (1/2L) int w'^2 dx = c(a) delta^2 / L^2,
            c = a (2a - 3 tanh a + a sech^2 a) / (a - tanh a)^2         (2.4 -> 2)

and the stretching closes the system, ``N = E I (4a/L)^2 = A sigma_axial(eps)``. For a
linear material ``sigma_axial = E eps``, so ``(4/3) a^2 = c(a) (delta/t)^2``: a, and with
it ``F L^3 / (E I t)``, depends on delta/t alone. That normalised curve is tabulated
once (lazily, regular grid in delta/t, 0..64, step 1/32) and read with arithmetic
indexing; it reproduces the exact tension solution within 1e-5 and matches the
checked values 327.088 at delta = t and 15324.134 at delta = 5t. The cubic law
k1 x + k3 x^3 (k3 = 11.52 EA/L^3) is not used: it is 19 % high at delta = 5t.

Stress: the two moments are equal, so
``sigma = 6 M / (b t^2) + N / A = E t delta B(a) / L^2 + sigma_axial``, with
B = 4 a^2 tanh a / (a - tanh a) (-> 12, the linear 12 E t delta / L^2).

Hyperelastic strip: the axial force follows the material's own law,
``sigma_axial = P(1 + eps)``, the Ogden-series uniaxial nominal stress at the mean axial
stretch, while bending keeps the small-strain modulus E (bending strains stay small
in the valid range). Writing ``P(1 + eps) = r E eps`` with the secant ratio r, the
closure becomes ``(4/3) a^2 = c(a) (delta sqrt(r) / t)^2``, so the same table applies
at the argument ``y = (delta/t) sqrt(r)``; because eps depends on a only through c
(2 <= c <= 2.4), two fixed-point passes ``eps = c(y) delta^2/L^2 -> r -> y``
converge (within 2e-5 of the exact root for a neo-Hookean strip at 8 % strain). A law that softens in
tension (r < 1, neo-Hookean) flattens the geometric hardening. Approximations: a
uniform axial stretch along the span (the classical uniform-tension assumption of
the stretching beam, exact in moderate-rotation theory for any axial law, since N is
constant), a uniaxial state (narrow strip; a wide strip in plane strain is up to 4/3
stiffer axially for an incompressible material), and linear bending. The nominal
axial stress is converted to a true stress (lambda P) for the stress check.

Validity: delta/t <= 64 (table range; the requirement is >= 5), moderate rotation
delta/L <= 0.08 (the string limit then differs from the finite-rotation extensible
elastica by about 3 (delta/L)^2 <= 2 %), slenderness L/t >= 20 (shear adds
~12.5 (t/L)^2 of the compliance, Timoshenko beam; <= 3 %), and for hyperelastic
materials the peak nominal strain within the material's strain limit.

References: physics sheet sec. 5 (exact tension solution, check column); W.C. Young &
R.G. Budynas, Roark's Formulas for Stress and Strain (192 E I / L^3, FL/8 moments);
S. Timoshenko & J.N. Goodier / S. Timoshenko & S. Woinowsky-Krieger for the
stretching beam (memory); R.W. Ogden, Proc. R. Soc. Lond. A 326:565, 1972.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ._base import DENSITY_TO_G_PER_MM3, ElementKind, Param
from ._stretching import RegularTable, ogden_uniaxial_nominal, secant_ratio

#: Table range and step in delta/t.
X_TABLE = 64.0
X_STEP = 1.0 / 32.0
#: Largest delta/L of the moderate-rotation model (string limit: ~3 (delta/L)^2 error).
ROTATION_LIMIT = 0.08
#: Smallest span / thickness (Timoshenko shear correction ~12.5 (t/L)^2 <= 3 %).
SLENDERNESS_MIN = 20.0
#: Fixed-point passes for the hyperelastic stretching closure.
_HYPER_PASSES = 2


def tension_solution(a: np.ndarray) -> dict[str, np.ndarray]:
    """Exact moderate-rotation solution parametrised by the tension parameter a > 0.

    Parameters
    ----------
    a : ndarray, shape (k,)
        ``a = kappa L / 4``, ``kappa = sqrt(N / E I)``; use a >= 0.02 (cancellation below).

    Returns
    -------
    dict of ndarray, each shape (k,)
        ``x`` = delta/t for a linear material, ``R`` = F / (192 E I delta / L^3),
        ``B`` = sigma_bending L^2 / (E t delta), ``c`` = eps L^2 / delta^2.
    """
    th = np.tanh(a)
    d = a - th
    J = 2.0 * a - 3.0 * th + a / np.cosh(a) ** 2
    c = a * J / d**2
    return {
        "x": np.sqrt(4.0 * a**2 / (3.0 * c)),
        "R": a**3 / (3.0 * d),
        "B": 4.0 * a**2 * th / d,
        "c": c,
    }


@lru_cache(maxsize=1)
def normalised_tables() -> dict[str, RegularTable]:
    """The tension solution resampled on the regular delta/t grid (built once, ~ms).

    Returns
    -------
    dict of RegularTable over x = delta/t in [0, X_TABLE], step X_STEP:
    ``R`` (force ratio), ``B`` (bending stress factor), ``c`` (strain factor) and
    ``S`` = sigma L^2 / (E t^2) for a linear material = x B + c x^2.
    """
    a = np.linspace(0.02, 110.0, 40001)
    sol = tension_solution(a)
    # exact small-deflection limits at a = 0
    xs = np.concatenate(([0.0], sol["x"]))
    grid = np.arange(0.0, X_TABLE + 0.5 * X_STEP, X_STEP)
    out = {}
    for key, lim in (("R", 1.0), ("B", 12.0), ("c", 2.4)):
        out[key] = np.interp(grid, xs, np.concatenate(([lim], sol[key])))
    out["S"] = grid * out["B"] + out["c"] * grid**2
    return {k: RegularTable(0.0, X_STEP, v) for k, v in out.items()}


class BladeClamped(ElementKind):
    """Clamped-clamped blade with stretching; kernels as in the module notes.

    Shapes: ``p`` values (n,), ``u`` (n, m); returns (n, m).
    """

    @staticmethod
    def _argument(p, mat, u):
        """Table argument y = (delta/t) sqrt(r) in grid units (y / X_STEP), shape (n, m).

        r = 1 for linear rows; hyperelastic rows follow the fixed point of the notes.
        """
        t = p["thickness_mm"]
        s = u * (1.0 / (X_STEP * t))[:, None]
        hyper = np.flatnonzero(mat.hyperelastic)
        if hyper.size:
            c = normalised_tables()["c"]
            x = s[hyper]
            d2 = (u[hyper] * (1.0 / p["length_mm"][hyper])[:, None]) ** 2
            E, mu, al = mat.E[hyper], mat.ogden_mu[hyper], mat.ogden_alpha[hyper]
            sh = x
            for _ in range(_HYPER_PASSES):
                eps = c.scaled(sh.copy())
                eps *= d2
                sh = x * np.sqrt(secant_ratio(eps, E, mu, al))
            s[hyper] = sh
        return s

    def force(self, p, mat, u):
        L, b, t = p["length_mm"], p["width_mm"], p["thickness_mm"]
        f = normalised_tables()["R"].scaled(self._argument(p, mat, u))
        f *= u
        f *= (16.0 * mat.E * b * (t / L) ** 3)[:, None]          # 192 E I / L^3
        return f

    def stress(self, p, mat, u):
        L, t = p["length_mm"], p["thickness_mm"]
        tab = normalised_tables()
        s = self._argument(p, mat, u)
        hyper = np.flatnonzero(mat.hyperelastic)
        if not hyper.size:
            sigma = tab["S"].scaled(s)
            sigma *= (mat.E * (t / L) ** 2)[:, None]             # sigma = E t^2/L^2 S(delta/t)
            return sigma
        sh = s[hyper]
        sigma = tab["S"].scaled(s)
        sigma *= (mat.E * (t / L) ** 2)[:, None]
        uh, Lh = u[hyper], L[hyper, None]
        lam = 1.0 + tab["c"].scaled(sh.copy()) * (uh / Lh) ** 2
        axial = lam * ogden_uniaxial_nominal(lam, mat.ogden_mu[hyper], mat.ogden_alpha[hyper])
        bend = (mat.E[hyper] * t[hyper])[:, None] / Lh**2 * uh * tab["B"].scaled(sh)
        sigma[hyper] = bend + axial
        return sigma

    def validity_margins(self, p, mat, u_max):
        L, t = p["length_mm"], p["thickness_mm"]
        x = u_max / t
        out = {
            "deflection_range": x / X_TABLE - 1.0,
            "rotation": (u_max / L) / ROTATION_LIMIT - 1.0,
            "slenderness": SLENDERNESS_MIN * t / L - 1.0,
        }
        strain = np.full(L.shape, -1.0)
        hyper = np.flatnonzero(mat.hyperelastic)
        if hyper.size:
            tab = normalised_tables()
            sub = {k: v[hyper] for k, v in p.items()}
            uh = u_max[hyper, None]
            y = self._argument(sub, mat.subset(hyper), uh)
            eps = tab["c"].scaled(y.copy()) * (uh / L[hyper, None]) ** 2
            eps += (t[hyper] / L[hyper] ** 2)[:, None] * uh * tab["B"].scaled(y)
            strain[hyper] = eps[:, 0] / mat.strain_limit[hyper] - 1.0
        out["strain"] = strain
        return out

    def box(self, p, u_max):
        return u_max + p["thickness_mm"], p["length_mm"].copy(), p["width_mm"].copy()

    def mass(self, p, mat, u_max=None):
        volume = p["length_mm"] * p["width_mm"] * p["thickness_mm"]
        return mat.rho * volume * DENSITY_TO_G_PER_MM3


KIND = BladeClamped(
    name="blade_clamped",
    title="blade clamped at both (axially fixed) ends, loaded at mid-span; bending plus stretching, strong hardening",
    params=(
        Param("length_mm", "mm", 5.0, 200.0, log=True, doc="span L between the clamps"),
        Param("width_mm", "mm", 0.5, 50.0, log=True, doc="blade width b"),
        Param("thickness_mm", "mm", 0.02, 5.0, log=True, thickness=True, doc="blade thickness t (bending direction)"),
    ),
    forms=("strip",),
    validity=(
        f"moderate rotation delta/L <= {ROTATION_LIMIT}; delta/t <= {X_TABLE:g} (exact tension solution, "
        f"tabulated); L/t >= {SLENDERNESS_MIN:g}; elastic; hyperelastic strips: uniform axial stretch, "
        "uniaxial law, peak nominal strain within the material's strain limit"
    ),
    sources=(
        "exact moderate-rotation tension solution of the clamped-clamped centre-loaded beam "
        "(physics reference sheet sec. 5, check values 327.088 and 15324.134)",
        "W.C. Young & R.G. Budynas, Roark's Formulas for Stress and Strain (k = 192 EI/L^3, M = FL/8)",
        "R.W. Ogden, Proc. R. Soc. Lond. A 326:565-584, 1972 (uniaxial law for hyperelastic strips)",
    ),
    stroke_note="u = transverse travel of the mid-span load point",
    stress_note="bending stress at the clamps (= at mid-span) plus the axial stress N/A",
)
