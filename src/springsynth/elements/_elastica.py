"""Large-deflection (elastica) kernels shared by the blade and wire flexure kinds.

One exact solution, that of a cantilever under a tip force of fixed direction
perpendicular to the undeformed beam, serves three kinds:

* ``blade_cantilever``: the solution itself;
* ``blade_guided`` and ``wire_guided``: by antisymmetry, a beam whose far end is
  guided (no rotation, axially free) and loaded perpendicular to the undeformed beam
  has an inflection point at mid-length, so it is two such cantilevers of length
  L/2 in series.

Notes
-----
Exact solution (K.E. Bisshopp & D.C. Drucker, "Large deflection of cantilever
beams", *Q. Appl. Math.* 3(3):272-275, 1945). With s the arc length, theta the slope
and alpha = P L^2 / (E I), the elastica is ``theta'' = -alpha cos(theta)`` (s in units
of L), theta(0) = 0, theta'(1) = 0. For a tip slope theta0, with modulus
k^2 = (1 + sin theta0)/2 and phi1 = arcsin(1 / (k sqrt 2)):

    sqrt(alpha) = K(k) - F(phi1, k)
    delta / L   = 1 - (2 / sqrt(alpha)) [E(k) - E(phi1, k)]     (tip travel along P)
    a / L       = sqrt(2 sin(theta0) / alpha)                    (moment arm of P)

K, E are complete and F, E(phi, .) incomplete elliptic integrals of the first and
second kind. The root moment is M = P a.

Fast map. The kernels do not solve the elliptic equations; they evaluate two even
polynomials of xi = delta / L, fitted (weighted least squares on the relative error,
constant term held at the exact small-deflection value 3) to a dense table of the
exact solution, built once on first use (a few milliseconds):

    A(xi) = alpha / xi        = 3 + c1 xi^2 + c2 xi^4 + ...    (force / deflection)
    B(xi) = M L / (E I xi)    = 3 + d1 xi^2 + d2 xi^4 + ...    (root moment / deflection)

A and B are even because the force and moment are odd in the deflection. Then

    cantilever, length L:   P = (E I / L^3) u A(u/L),        M = (E I / L^2) u B(u/L)
    guided,     length L:   P = 4 (E I / L^3) u A(u/L),      M = 2 (E I / L^2) u B(u/L)

The guided lines follow from two cantilevers of length L/2 carrying P each, each tip
travelling u/2: (u/2)/(L/2) = u/L, so the same xi indexes both, P (L/2)^2/(E I) =
xi A(xi) and the end moment is P a = P (L/2) (a/L)_half. Their small-deflection
limits are 3 E I / L^3 and 12 E I / L^3 (moments P L and 6 E I u / L^2).

Largest relative deviation of the fits from the exact solution over the fitted
range, measured on the dense table (see :func:`fit`):

    ========================  ======  ==========  ===========  ============
    used by                   xi_max  degree in   force A      moment B
                                      xi^2
    ========================  ======  ==========  ===========  ============
    guided kinds              0.50    3           1.6e-4       3.6e-5
    blade_cantilever          0.70    5           3.0e-4       6.0e-5
    ========================  ======  ==========  ===========  ============

Beyond xi_max the polynomials keep rising (all the fits are increasing for xi >= 0),
so forces stay finite, positive and monotonic, but they are no longer the elastica;
each kind reports such strokes through its ``stroke`` validity margin.

Assumptions: Euler-Bernoulli beam (plane sections, no shear or axial strain), linear
elastic material, inextensible centre line, load direction fixed in space.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy.special import ellipe, ellipeinc, ellipk, ellipkinc

from springsynth.elements._base import DENSITY_TO_G_PER_MM3, ElementKind

__all__ = [
    "cantilever_exact",
    "exact_table",
    "Fit",
    "fit",
    "scaled_series",
    "guided_fit",
    "cantilever_fit",
    "stroke_margin",
    "slenderness_margin",
    "GUIDED_XI_MAX",
    "CANTILEVER_XI_MAX",
    "SLENDERNESS_MIN",
    "BISSHOPP_DRUCKER",
    "HOWELL_PRBM",
]

#: Smallest length / thickness (or / wire diameter) for Euler-Bernoulli bending
#: (common practice). Shear (Timoshenko) adds (t/L)^2 E/(kappa G) relative compliance
#: to a guided blade and a quarter of that to a cantilever: about 3 % and 0.8 % at
#: L/t = 10 for a metal (E/G = 2.6, kappa = 5/6).
SLENDERNESS_MIN = 10.0

BISSHOPP_DRUCKER = (
    "K.E. Bisshopp & D.C. Drucker, Large deflection of cantilever beams, "
    "Q. Appl. Math. 3(3):272-275, 1945 (exact elliptic-integral solution)"
)
HOWELL_PRBM = (
    "L.L. Howell, Compliant Mechanisms, Wiley 2001, ch. 5 "
    "(pseudo-rigid-body models of the same beams, a cross-check)"
)

#: Tip slopes sampled for the dense table, rad (theta0 -> pi/2 as alpha -> infinity).
_THETA0_MAX = 1.5
_N_TABLE = 4000
#: The fit domain reaches this far past the declared xi_max so the bound is interior.
_FIT_PAD = 0.01
#: Largest xi_max a fit may be asked for: the table covers xi up to about 0.87.
_XI_MAX_FIT = 0.8


def cantilever_exact(theta0: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Exact end-loaded cantilever (Bisshopp & Drucker 1945) for given tip slopes.

    Parameters
    ----------
    theta0 : ndarray, shape (k,)
        Tip slopes, rad, in (0, pi/2).

    Returns
    -------
    alpha : ndarray, shape (k,)
        Load parameter P L^2 / (E I).
    xi : ndarray, shape (k,)
        Tip travel along the load / L.
    a_over_L : ndarray, shape (k,)
        Moment arm of the load about the root / L (axial tip coordinate).
    """
    theta0 = np.asarray(theta0, dtype=float)
    m = 0.5 * (1.0 + np.sin(theta0))              # parameter m = k^2 of scipy
    phi1 = np.arcsin(np.sqrt(0.5 / m))            # sin(phi1) = 1 / (k sqrt 2)
    sqrt_alpha = ellipk(m) - ellipkinc(phi1, m)
    alpha = sqrt_alpha**2
    xi = 1.0 - 2.0 / sqrt_alpha * (ellipe(m) - ellipeinc(phi1, m))
    a_over_L = np.sqrt(2.0 * np.sin(theta0) / alpha)
    return alpha, xi, a_over_L


@lru_cache(maxsize=1)
def exact_table() -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Dense read-only table of the exact cantilever, increasing in every column.

    Returns
    -------
    theta0, alpha, xi, a_over_L : ndarray, shape (4000,)
        As in :func:`cantilever_exact`, for theta0 evenly spaced in (0, 1.5] rad
        (xi up to about 0.87).
    """
    theta0 = np.linspace(0.0, _THETA0_MAX, _N_TABLE + 1)[1:]
    cols = (theta0, *cantilever_exact(theta0))
    for c in cols:
        c.setflags(write=False)
    return cols


@dataclass(frozen=True)
class Fit:
    """Even polynomial fits of the normalised force and moment of the cantilever.

    Attributes
    ----------
    xi_max : float
        Declared upper end of the range, tip travel / L.
    force : tuple of float
        Coefficients of A(xi) = alpha/xi in powers of xi^2, constant term first.
    moment : tuple of float
        Coefficients of B(xi) = M L/(E I xi) in powers of xi^2, constant term first.
    force_error, moment_error : float
        Largest relative deviation from the exact solution for xi <= xi_max.
    """

    xi_max: float
    force: tuple[float, ...]
    moment: tuple[float, ...]
    force_error: float
    moment_error: float


def _fit_even(xi: np.ndarray, y: np.ndarray, degree: int) -> np.ndarray:
    """Coefficients of y = 3 + sum_j c_j xi^(2j), j = 1..degree, min. relative error."""
    s = xi * xi
    basis = s[:, None] ** np.arange(1, degree + 1)
    c = np.linalg.lstsq(basis / y[:, None], 1.0 - 3.0 / y, rcond=None)[0]
    return np.concatenate(([3.0], c))


@lru_cache(maxsize=8)
def fit(xi_max: float, degree: int) -> Fit:
    """Fit A(xi) and B(xi) on 0 <= xi <= xi_max (plus a small pad) by even polynomials.

    Parameters
    ----------
    xi_max : float
        Largest tip travel / L the fit must serve, at most 0.8.
    degree : int
        Degree in xi^2 (the polynomial in xi has degree 2 * degree).

    Returns
    -------
    Fit
    """
    if not 0.0 < xi_max <= _XI_MAX_FIT:
        raise ValueError(f"xi_max must lie in (0, {_XI_MAX_FIT}], got {xi_max}")
    _, alpha, xi, a_over_L = exact_table()
    A = alpha / xi
    B = A * a_over_L                       # M L / (E I xi) = alpha (a/L) / xi
    inside = xi <= xi_max + _FIT_PAD
    ca = _fit_even(xi[inside], A[inside], degree)
    cb = _fit_even(xi[inside], B[inside], degree)
    used = xi <= xi_max
    s = xi[used] ** 2
    ea = np.max(np.abs(np.polynomial.polynomial.polyval(s, ca) / A[used] - 1.0))
    eb = np.max(np.abs(np.polynomial.polynomial.polyval(s, cb) / B[used] - 1.0))
    return Fit(xi_max, tuple(map(float, ca)), tuple(map(float, cb)), float(ea), float(eb))


def scaled_series(c: tuple[float, ...], u: np.ndarray, inv_L: np.ndarray, scale: np.ndarray) -> np.ndarray:
    """``scale * u * P((u / L)^2)``, P the polynomial with coefficients ``c``.

    The hot path of the kinds: Horner's rule, in place, no fancy indexing.

    Parameters
    ----------
    c : tuple of float, length >= 2
        Coefficients of P, constant term first.
    u : ndarray, shape (n, m)
        Strokes, mm.
    inv_L : ndarray, shape (n,)
        1 / length, 1/mm.
    scale : ndarray, shape (n,)
        Prefactor per design (e.g. 4 E I / L^3 for a guided force).

    Returns
    -------
    ndarray, shape (n, m)
    """
    s = u * u
    s *= (inv_L * inv_L)[:, None]
    r = s * c[-1]
    r += c[-2]
    for ci in c[-3::-1]:
        r *= s
        r += ci
    r *= u
    r *= scale[:, None]
    return r


#: Declared ranges and fit degrees (see the module notes for the measured errors).
GUIDED_XI_MAX = 0.5
GUIDED_DEGREE = 3
CANTILEVER_XI_MAX = 0.7
CANTILEVER_DEGREE = 5


def guided_fit() -> Fit:
    """The fit the guided kinds use (xi <= 0.5, degree 3 in xi^2)."""
    return fit(GUIDED_XI_MAX, GUIDED_DEGREE)


def cantilever_fit() -> Fit:
    """The fit the cantilever kind uses (xi <= 0.7, degree 5 in xi^2)."""
    return fit(CANTILEVER_XI_MAX, CANTILEVER_DEGREE)


def stroke_margin(u_max: np.ndarray, L: np.ndarray, xi_max: float) -> np.ndarray:
    """``(u_max / L) / xi_max - 1``, shape (n,): <= 0 inside the declared stroke."""
    return u_max / (L * xi_max) - 1.0


def slenderness_margin(L: np.ndarray, t: np.ndarray) -> np.ndarray:
    """``SLENDERNESS_MIN / (L / t) - 1``, shape (n,): <= 0 when L/t >= 10."""
    return SLENDERNESS_MIN * t / L - 1.0


class ElasticaBlade(ElementKind):
    """What the rectangular elastica blades share: validity, swept box and mass.

    Subclasses give ``force`` and ``stress``; ``extra["stroke_limit"]`` is the largest
    stroke / length of the kind's declared range.
    """

    def validity_margins(self, p, mat, u_max):
        L, t = p["length_mm"], p["thickness_mm"]
        return {
            "stroke": stroke_margin(u_max, L, self.extra["stroke_limit"]),
            "slenderness": slenderness_margin(L, t),
        }

    def box(self, p, u_max):
        return u_max + p["thickness_mm"], p["length_mm"].copy(), p["width_mm"].copy()

    def mass(self, p, mat, u_max=None):
        volume = p["length_mm"] * p["width_mm"] * p["thickness_mm"]
        return mat.rho * volume * DENSITY_TO_G_PER_MM3
